//! Ideal-gas isentropic outlet temperature per call (target: <= 300 ns).
//!
//! Run: `cargo bench -p sheaf-engine --bench ideal_gas`.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use sheaf_engine::thermo::ideal_gas::IdealGas;
use sheaf_engine::thermo::{Spec, Substance, process};

fn bench(c: &mut Criterion) {
    let air = IdealGas::by_name("air").expect("air is a known gas");
    // Compression from 300 K, 1 bar to 8 bar (stays in the low range).
    c.bench_function("ideal_gas air isentropic T2, 300 K 1 bar -> 8 bar", |b| {
        b.iter(|| air.isentropic_t(black_box(300.0), black_box(1.0e5), black_box(8.0e5)))
    });
    // Expansion from 1400 K, 12 bar to 1.2 bar (crosses 1000 K).
    c.bench_function(
        "ideal_gas air isentropic T2, 1400 K 12 bar -> 1.2 bar",
        |b| b.iter(|| air.isentropic_t(black_box(1400.0), black_box(1.2e6), black_box(1.2e5))),
    );
    // The whole device path: inlet state, isentropic state, compressor outlet.
    let sub = Substance::IdealGas(air);
    c.bench_function(
        "ideal_gas air compressor outlet state (TP + PS + PH)",
        |b| {
            b.iter(|| {
                let inlet = sub.state(Spec::TP {
                    t: black_box(300.0),
                    p: black_box(1.0e5),
                })?;
                process::compressor(&sub, &inlet, black_box(8.0e5), black_box(0.85))
            })
        },
    );
}

criterion_group!(benches, bench);
criterion_main!(benches);
