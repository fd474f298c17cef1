//! Pipeline benchmark: parse, check, evaluate and incremental re-evaluation
//! of synthetic worksheets of 1k, 10k and 100k statements.
//!
//! `cargo bench -p sheaf-engine --bench pipeline`; restrict the sizes with
//! `SHEAF_BENCH_N=1000,10000`. Results: docs/PERFORMANCE.md.

use std::hint::black_box;
use std::time::Duration;

use criterion::{BatchSize, Criterion, SamplingMode, Throughput, criterion_group, criterion_main};
use sheaf_engine::Model;

#[path = "gen/mod.rs"]
mod synth;

const SEED: u64 = 42;

fn sizes() -> Vec<usize> {
    match std::env::var("SHEAF_BENCH_N") {
        Ok(s) => s.split(',').filter_map(|x| x.trim().parse().ok()).collect(),
        Err(_) => vec![1_000, 10_000, 100_000],
    }
}

fn pipeline(c: &mut Criterion) {
    for n in sizes() {
        let s = synth::worksheet(n, SEED);
        let src = s.source.as_str();
        let ws = match sheaf_grammar::parse(src) {
            Ok(ws) => ws,
            Err(e) => panic!("generated worksheet does not parse: {:?}", e.first()),
        };
        let new_model = || match Model::new(src) {
            Ok(m) => m,
            Err(d) => panic!("generated worksheet does not check: {:?}", d.first()),
        };

        // An input from the middle of the dependency order; how many nodes
        // a change to it re-evaluates is printed for the record.
        let (input, si) = s.inputs[s.inputs.len() / 2].clone();
        let mut model = new_model();
        model.evaluate();
        if let Err(e) = model.set_input(&input, si * 1.01) {
            panic!("{e}");
        }
        let touched = model.evaluate();
        eprintln!(
            "N = {n}: {} bytes, {} nodes ({} inputs); changing `{input}` re-evaluates {touched} nodes",
            src.len(),
            s.nodes,
            s.inputs.len()
        );

        let mut g = c.benchmark_group(format!("pipeline_{n}"));
        g.throughput(Throughput::Elements(n as u64));
        if n >= 50_000 {
            g.sample_size(10)
                .sampling_mode(SamplingMode::Flat)
                .warm_up_time(Duration::from_secs(1))
                .measurement_time(Duration::from_secs(10));
        } else if n >= 5_000 {
            g.sample_size(20).measurement_time(Duration::from_secs(5));
        }

        g.bench_function("parse", |b| b.iter(|| sheaf_grammar::parse(black_box(src))));
        g.bench_function("check", |b| {
            b.iter(|| sheaf_engine::check::check(black_box(&ws), black_box(src)))
        });
        g.bench_function("evaluate", |b| {
            b.iter_batched(
                new_model,
                |mut m| {
                    black_box(m.evaluate());
                    m
                },
                BatchSize::PerIteration,
            )
        });
        g.bench_function("total", |b| {
            b.iter(|| {
                let mut m = new_model();
                black_box(m.evaluate());
                m
            })
        });
        let mut k = 0u32;
        g.bench_function("incremental", |b| {
            b.iter(|| {
                k += 1;
                let v = if k % 2 == 0 { si } else { si * 1.01 };
                if let Err(e) = model.set_input(&input, v) {
                    panic!("{e}");
                }
                black_box(model.evaluate())
            })
        });
        g.finish();
    }
}

criterion_group!(benches, pipeline);
criterion_main!(benches);
