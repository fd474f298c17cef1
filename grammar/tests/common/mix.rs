//! The statement mix of the parser benchmark and memory test: inputs with
//! units and descriptions, definitions with comments, state calls, checks.

/// `n` statements, cycling through the four kinds.
pub fn worksheet(n: usize) -> String {
    let mut src = String::new();
    for i in 0..n {
        match i % 4 {
            0 => src += &format!("input x{i} = {i}.5 kJ/(kg K) \"value {i}\"\n"),
            1 => src += &format!("y{i} : kW = mdot * (st2.h - x{}) // note\n", i - 1),
            2 => src += &format!("s{i} = state(gas, T: T1, p: {i} bar)\n"),
            _ => src += &format!("check y{} <= 2 ^ 3 * s{}.h\n", i - 2, i - 1),
        }
    }
    src
}
