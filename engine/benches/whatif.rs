//! Speed of the what-if layer inside the engine (the end-to-end figures
//! with csv output come from `scripts/bench-whatif`):
//! - a sweep of the steam turbine example (IF97), points per second
//!   (target: at least 100 000);
//! - a `find` on the steam turbine (IF97): the solve alone (the worksheet
//!   is checked once; each solve is an input change and `evaluate`).
//!
//! Run: `cargo bench -p sheaf-engine --bench whatif`

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use sheaf_engine::Model;

fn turbine() -> String {
    std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../worksheets/steam_turbine.sheaf"
    ))
    .unwrap_or_default()
}

fn sweep(c: &mut Criterion) {
    let src = turbine().replace(
        "## Acceptance",
        "sweep p2 from 2 barg to 8 barg count 1000 show W_el, T2, dT_sh\n## Acceptance",
    );
    let mut m = Model::new(src).unwrap_or_else(|d| panic!("{d:?}"));
    m.evaluate();
    let mut g = c.benchmark_group("whatif");
    g.throughput(Throughput::Elements(1000));
    g.bench_function("sweep steam turbine 1000 points", |b| {
        b.iter(|| {
            let mut sum = 0.0;
            let _ = m.run_sweep(0, |p| {
                if let Ok(v) = p.result {
                    sum += v[0];
                }
            });
            sum
        })
    });
    g.finish();
}

fn find(c: &mut Criterion) {
    let src = turbine().replace(
        "## Acceptance",
        "find T1 in 300 degC .. 500 degC where dT_sh = 25 K\n## Acceptance",
    );
    let mut m = Model::new(src).unwrap_or_else(|d| panic!("{d:?}"));
    m.evaluate();
    let t1 = m.node_index("T1").unwrap_or(0);
    if let Some(f) = m.found(t1) {
        eprintln!(
            "find T1: {} Brent steps, residual {:e} K",
            f.iterations, f.residual
        );
    }
    let mut flip = false;
    c.bench_function("whatif/find on the steam turbine (solve + evaluate)", |b| {
        b.iter(|| {
            // A change of the exhaust pressure: the find is solved again.
            flip = !flip;
            let p2 = if flip { 5.4e5 } else { 5.5e5 };
            let _ = m.set_input("p2", p2);
            m.evaluate();
            m.number("T1")
        })
    });
}

criterion_group!(benches, sweep, find);
criterion_main!(benches);
