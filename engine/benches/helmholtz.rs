//! Speed of the refrigerant and CO2 equations of state (module
//! `thermo::helmholtz`), per call: (T, p), (p, h) and (p, s) states of
//! R134a and CO2 in the liquid, vapour, supercritical and two-phase regions.
//!
//! Goal (issue 12): at least 3 times faster than CoolProp 8.0.0 called
//! through its vectorised Python API on the same machine; the CoolProp side
//! is measured by `engine/benches/helmholtz_coolprop.py` on the same states.
//! Results: docs/PERFORMANCE.md.
//!
//! Run: `cargo bench -p sheaf-engine --bench helmholtz`

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use sheaf_engine::thermo::Spec;
use sheaf_engine::thermo::fluid::RealFluid;
use sheaf_engine::thermo::helmholtz::{CO2, Fluid, R134A};

/// (fluid, label, T in K, p in Pa); the two-phase point's (p, h) and (p, s)
/// come from x = 0.5 at this T.
const POINTS: [(&str, &str, f64, f64); 8] = [
    ("R134a", "liquid 300K 1.5MPa", 300.0, 1.5e6),
    ("R134a", "vapour 300K 0.3MPa", 300.0, 0.3e6),
    ("R134a", "supercritical 400K 5MPa", 400.0, 5e6),
    ("R134a", "two-phase 263K x=0.5", 263.15, f64::NAN),
    ("CO2", "liquid 270K 5MPa", 270.0, 5e6),
    ("CO2", "vapour 300K 3MPa", 300.0, 3e6),
    ("CO2", "supercritical 320K 10MPa", 320.0, 10e6),
    ("CO2", "two-phase 263K x=0.5", 263.15, f64::NAN),
];

fn fluid(name: &str) -> &'static Fluid {
    if name == "CO2" { &CO2 } else { &R134A }
}

fn states(c: &mut Criterion) {
    for (name, label, t, p) in POINTS {
        let f = fluid(name);
        let st = if p.is_nan() {
            f.state(Spec::TX { t, x: 0.5 })
        } else {
            f.state(Spec::TP { t, p })
        };
        let Ok(st) = st else {
            continue;
        };
        let mut g = c.benchmark_group(format!("{name} {label}"));
        if !p.is_nan() {
            g.bench_function("(T,p)", |b| {
                b.iter(|| {
                    f.state(Spec::TP {
                        t: black_box(t),
                        p: black_box(p),
                    })
                    .map(|s| s.h)
                })
            });
        }
        g.bench_function("(p,h)", |b| {
            b.iter(|| {
                f.state(Spec::PH {
                    p: black_box(st.p),
                    h: black_box(st.h),
                })
                .map(|s| s.t)
            })
        });
        g.bench_function("(p,s)", |b| {
            b.iter(|| {
                f.state(Spec::PS {
                    p: black_box(st.p),
                    s: black_box(st.s),
                })
                .map(|s| s.t)
            })
        });
        g.finish();
    }
}

fn kernels(c: &mut Criterion) {
    let mut g = c.benchmark_group("kernels");
    g.bench_function("R134a equation at (T, rho), all properties", |b| {
        b.iter(|| R134A.point(black_box(300.0), black_box(12.0)).cp())
    });
    g.bench_function("CO2 equation at (T, rho), all properties", |b| {
        b.iter(|| CO2.point(black_box(300.0), black_box(60.0)).cp())
    });
    g.bench_function("R134a saturation at T", |b| {
        b.iter(|| R134A.saturation_t(black_box(263.15)).map(|s| s.p))
    });
    g.bench_function("R134a saturation at p", |b| {
        b.iter(|| R134A.saturation_p(black_box(0.2e6)).map(|s| s.t))
    });
    g.bench_function("CO2 saturation at T", |b| {
        b.iter(|| CO2.saturation_t(black_box(263.15)).map(|s| s.p))
    });
    g.bench_function("CO2 saturation at p", |b| {
        b.iter(|| CO2.saturation_p(black_box(3e6)).map(|s| s.t))
    });
    g.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default()
        .warm_up_time(std::time::Duration::from_millis(300))
        .measurement_time(std::time::Duration::from_secs(1));
    targets = states, kernels
}
criterion_main!(benches);
