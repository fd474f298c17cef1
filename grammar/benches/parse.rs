//! Parser and formatter speed on 100 000 statements, by statement kind and
//! mixed (was a pair of ignored timing tests).
//!
//! `cargo bench -p sheaf-grammar --bench parse`. Results: grammar/README.md
//! ("Two rule sets") and docs/PERFORMANCE.md.

use std::hint::black_box;
use std::time::Duration;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};

const N: usize = 100_000;

fn mixed() -> String {
    let mut src = String::new();
    for i in 0..N {
        match i % 4 {
            0 => src += &format!("input x{i} = {i}.5 kJ/(kg K) \"value {i}\"\n"),
            1 => src += &format!("y{i} : kW = mdot * (st2.h - x{}) // note\n", i - 1),
            2 => src += &format!("s{i} = state(gas, T: T1, p: {i} bar)\n"),
            _ => src += &format!("check y{} <= 2 ^ 3 * s{}.h\n", i - 2, i - 1),
        }
    }
    src
}

fn parse(c: &mut Criterion) {
    let mut g = c.benchmark_group("grammar");
    g.sample_size(10).measurement_time(Duration::from_secs(5));
    let src = mixed();
    g.throughput(Throughput::Bytes(src.len() as u64));
    g.bench_function("parse 100k mixed", |b| {
        b.iter(|| {
            let w = sheaf_grammar::parse(black_box(&src));
            assert!(w.is_ok_and(|w| w.statements.len() == N));
        })
    });
    g.bench_function("format 100k mixed", |b| {
        b.iter(|| black_box(sheaf_grammar::format(black_box(&src)).is_ok()))
    });
    for (name, line) in [
        ("blank", ""),
        ("comment", "// hello"),
        ("tiny", "x = 1"),
        ("input", "input x1 = 1.5 kJ/(kg K) \"value\""),
        ("define", "y : kW = mdot * (st2.h - x1) // note"),
        ("call", "s = state(gas, T: T1, p: 2 bar)"),
        ("check", "check y <= 2 ^ 3 * s.h"),
    ] {
        let src = format!("{line}\n").repeat(N);
        g.throughput(Throughput::Bytes(src.len() as u64));
        g.bench_function(format!("parse 100k {name}"), |b| {
            b.iter(|| black_box(sheaf_grammar::parse(black_box(&src)).is_ok()))
        });
    }
    g.finish();
}

criterion_group!(benches, parse);
criterion_main!(benches);
