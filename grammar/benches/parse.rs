//! Parser and formatter speed on 100 000 statements, by statement kind and
//! mixed (was a pair of ignored timing tests).
//!
//! `cargo bench -p sheaf-grammar --bench parse`. Results: grammar/README.md
//! ("One pest rule set and the hand-written first try") and docs/PERFORMANCE.md.

use std::hint::black_box;
use std::time::Duration;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};

const N: usize = 100_000;

#[path = "../tests/common/mix.rs"]
mod mix;

fn parse(c: &mut Criterion) {
    let mut g = c.benchmark_group("grammar");
    g.sample_size(10).measurement_time(Duration::from_secs(5));
    let src = mix::worksheet(N);
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
        // Lines the hand-written parser leaves to the pest rules.
        ("if", "y = if a > b then a else b"),
        ("degC", "input T1 = 25 °C \"inlet\""),
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
