//! Speed sanity (not a timed assertion): run with
//! `cargo test -p sheaf-grammar --release --test speed -- --ignored --nocapture`.

#[test]
#[ignore]
fn parse_100k_simple_statements() {
    let mut src = String::new();
    for i in 0..100_000 {
        match i % 4 {
            0 => src += &format!("input x{i} = {i}.5 kJ/(kg K) \"value {i}\"\n"),
            1 => src += &format!("y{i} : kW = mdot * (st2.h - x{}) // note\n", i - 1),
            2 => src += &format!("s{i} = state(gas, T: T1, p: {i} bar)\n"),
            _ => src += &format!("check y{} <= 2 ^ 3 * s{}.h\n", i - 2, i - 1),
        }
    }
    let t = std::time::Instant::now();
    let w = sheaf_grammar::parse(&src).unwrap();
    let dt = t.elapsed();
    assert_eq!(w.statements.len(), 100_000);
    println!("parsed 100k statements ({} bytes) in {dt:?}", src.len());
    let t = std::time::Instant::now();
    let out = sheaf_grammar::format(&src).unwrap();
    println!("formatted them in {:?} ({} bytes)", t.elapsed(), out.len());
}

#[test]
#[ignore]
fn parse_100k_by_kind() {
    for (name, line) in [
        ("blank", ""),
        ("comment", "// hello"),
        ("tiny", "x = 1"),
        ("input", "input x1 = 1.5 kJ/(kg K) \"value\""),
        ("define", "y : kW = mdot * (st2.h - x1) // note"),
        ("call", "s = state(gas, T: T1, p: 2 bar)"),
        ("check", "check y <= 2 ^ 3 * s.h"),
    ] {
        let src = format!("{line}\n").repeat(100_000);
        let t = std::time::Instant::now();
        let w = sheaf_grammar::parse(&src).unwrap();
        println!("{name:8} {:?}", t.elapsed());
        assert_eq!(w.statements.len(), 100_000);
    }
}
