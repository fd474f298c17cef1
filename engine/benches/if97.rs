//! Speed of the IAPWS-IF97 water/steam model.
//!
//! Targets (release build): forward (T, p) -> h at most 150 ns per call;
//! (p, h) -> T and (p, s) -> T at most 400 ns per call.
//!
//! Run: `cargo bench -p sheaf-engine --bench if97`

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use sheaf_engine::thermo::if97;

/// (label, T in K, p in Pa): one state per region.
const POINTS: [(&str, f64, f64); 5] = [
    ("region1 300K 3MPa", 300.0, 3e6),
    ("region2 673K 3MPa", 673.15, 3e6),
    ("region2 800K 30MPa", 800.0, 30e6),
    ("region3 650K 25MPa", 650.0, 25e6),
    ("region5 1500K 10MPa", 1500.0, 10e6),
];

fn forward(c: &mut Criterion) {
    let mut g = c.benchmark_group("tp_to_h");
    for (label, t, p) in POINTS {
        g.bench_function(label, |b| {
            b.iter(|| if97::state_tp(black_box(t), black_box(p)).map(|s| s.h))
        });
    }
    g.finish();
}

fn backward(c: &mut Criterion) {
    let mut g = c.benchmark_group("ph_to_t");
    for (label, t, p) in POINTS {
        let Ok(st) = if97::state_tp(t, p) else {
            continue;
        };
        g.bench_function(label, |b| {
            b.iter(|| if97::state_ph(black_box(p), black_box(st.h)).map(|s| s.t))
        });
    }
    g.finish();
    let mut g = c.benchmark_group("ps_to_t");
    for (label, t, p) in POINTS {
        let Ok(st) = if97::state_tp(t, p) else {
            continue;
        };
        g.bench_function(label, |b| {
            b.iter(|| if97::state_ps(black_box(p), black_box(st.s)).map(|s| s.t))
        });
    }
    g.finish();
}

fn saturation(c: &mut Criterion) {
    let mut g = c.benchmark_group("saturation");
    g.bench_function("px 1MPa x=0.5", |b| {
        b.iter(|| if97::state_px(black_box(1e6), black_box(0.5)).map(|s| s.h))
    });
    g.bench_function("px 21MPa x=0.5 (region 3)", |b| {
        b.iter(|| if97::state_px(black_box(21e6), black_box(0.5)).map(|s| s.h))
    });
    g.bench_function("ph 1MPa two-phase", |b| {
        b.iter(|| if97::state_ph(black_box(1e6), black_box(2e6)).map(|s| s.x))
    });
    g.finish();
}

/// The pairs solved for the pressure: (h, s), (T, s), (T, v). No target
/// yet (each is a few dozen (p, h) or (T, p) evaluations).
fn pairs(c: &mut Criterion) {
    let mut g = c.benchmark_group("pairs");
    for (label, t, p) in POINTS {
        let Ok(st) = if97::state_tp(t, p) else {
            continue;
        };
        g.bench_function(format!("hs {label}"), |b| {
            b.iter(|| if97::state_hs(black_box(st.h), black_box(st.s)).map(|s| s.p))
        });
        g.bench_function(format!("ts {label}"), |b| {
            b.iter(|| if97::state_ts(black_box(t), black_box(st.s)).map(|s| s.p))
        });
        g.bench_function(format!("tv {label}"), |b| {
            b.iter(|| if97::state_tv(black_box(t), black_box(st.v)).map(|s| s.p))
        });
    }
    // Wet (h, s): x = 0.9 starts from T_sat(h,s) inside its range, x = 0.1
    // (s < s''(623.15 K)) from it extrapolated.
    for x in [0.9, 0.1] {
        let Ok(st) = if97::state_px(1e6, x) else {
            continue;
        };
        g.bench_function(format!("hs wet 1MPa x={x}"), |b| {
            b.iter(|| if97::state_hs(black_box(st.h), black_box(st.s)).map(|s| s.p))
        });
    }
    g.finish();
}

criterion_group!(benches, forward, backward, saturation, pairs);
criterion_main!(benches);
