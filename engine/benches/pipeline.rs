//! Pipeline benchmark: parse, check, evaluate and incremental re-evaluation
//! of synthetic worksheets of 1k, 10k and 100k statements.
//!
//! `cargo bench -p sheaf-engine --bench pipeline`; restrict the sizes with
//! `SHEAF_BENCH_N=1000,10000`. Results: docs/PERFORMANCE.md.

use std::hint::black_box;
use std::time::Duration;

use criterion::{BatchSize, Criterion, SamplingMode, Throughput, criterion_group};
use sheaf_engine::{Externals, Model, Parsed};

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
        let parsed = match Parsed::new(src) {
            Ok(p) => p,
            Err(e) => panic!("generated worksheet does not parse: {:?}", e.first()),
        };
        let new_model = || match Model::new(src) {
            Ok(m) => m,
            Err(d) => panic!("generated worksheet does not check: {:?}", d.first()),
        };

        // Incremental re-evaluation after changing one input: the input whose
        // change reaches the median number of nodes among inputs that have
        // any dependents (a typical edit), and the one reaching the most.
        let mut model = new_model();
        model.evaluate();
        let reach = downstream_sizes(&model);
        let mut inputs: Vec<(usize, &(String, f64))> = s
            .inputs
            .iter()
            .filter_map(|inp| model.node_index(&inp.0).map(|i| (reach[i], inp)))
            .filter(|(r, _)| *r > 1)
            .collect();
        inputs.sort_by_key(|(r, _)| *r);
        let Some(&(median_reach, median)) = inputs.get(inputs.len() / 2) else {
            panic!("no input has dependents")
        };
        let Some(&(max_reach, max)) = inputs.last() else {
            panic!("no input has dependents")
        };
        eprintln!(
            "N = {n}: {} bytes, {} nodes ({} inputs); a change to `{}` re-evaluates {median_reach} nodes (median), to `{}` {max_reach} (most)",
            src.len(),
            s.nodes,
            s.inputs.len(),
            median.0,
            max.0,
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
            b.iter_batched(
                || parsed.clone(),
                |p| p.check(black_box(&Externals::none())),
                BatchSize::LargeInput,
            )
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
        for (label, (input, si)) in [("incremental_median", median), ("incremental_most", max)] {
            let mut k = 0u32;
            g.bench_function(label, |b| {
                b.iter(|| {
                    k += 1;
                    let v = if k.is_multiple_of(2) { *si } else { si * 1.01 };
                    if let Err(e) = model.set_input(input, v) {
                        panic!("{e}");
                    }
                    black_box(model.evaluate())
                })
            });
        }
        g.finish();
    }
}

/// For every input node, how many nodes a change to it re-evaluates (itself
/// and everything downstream); 0 for other nodes.
fn downstream_sizes(model: &Model) -> Vec<usize> {
    let nodes = model.nodes();
    let mut users = vec![Vec::new(); nodes.len()];
    for (i, node) in nodes.iter().enumerate() {
        for &d in &node.deps {
            users[d].push(i);
        }
    }
    let mut seen = vec![usize::MAX; nodes.len()];
    (0..nodes.len())
        .map(|start| {
            if nodes[start].kind != sheaf_engine::check::NodeKind::Input {
                return 0;
            }
            let mut count = 0;
            let mut stack = vec![start];
            while let Some(i) = stack.pop() {
                if seen[i] == start {
                    continue;
                }
                seen[i] = start;
                count += 1;
                stack.extend(users[i].iter().copied().filter(|&u| seen[u] != start));
            }
            count
        })
        .collect()
}

/// `SHEAF_BENCH_PROFILE=PHASE:N[:REPS]` (PHASE one of parse, check,
/// evaluate, total) runs only that phase REPS times (default 5) on a
/// worksheet of N statements and prints the fastest wall time, without
/// criterion: a short, quiet target for `perf record` or callgrind.
fn profile(spec: &str) {
    let mut parts = spec.split(':');
    let phase = parts.next().unwrap_or("total").to_string();
    let n: usize = parts.next().and_then(|x| x.parse().ok()).unwrap_or(100_000);
    let reps: usize = parts.next().and_then(|x| x.parse().ok()).unwrap_or(5);
    let s = synth::worksheet(n, SEED);
    let src = s.source.as_str();
    let Ok(ws) = Parsed::new(src) else {
        panic!("generated worksheet does not parse")
    };
    let mut best = Duration::MAX;
    for _ in 0..reps {
        let model = match phase.as_str() {
            "evaluate" => Model::new(src).ok(),
            _ => None,
        };
        let t = std::time::Instant::now();
        match phase.as_str() {
            "parse" => drop(black_box(sheaf_grammar::parse(src))),
            "check" => drop(black_box(ws.clone().check(&Externals::none()))),
            "evaluate" => {
                if let Some(mut m) = model {
                    black_box(m.evaluate());
                    let el = t.elapsed();
                    drop(m);
                    best = best.min(el);
                    continue;
                }
            }
            _ => {
                if let Ok(mut m) = Model::new(src) {
                    black_box(m.evaluate());
                }
            }
        }
        best = best.min(t.elapsed());
    }
    println!("{phase} N = {n}: best of {reps}: {best:?}");
}

criterion_group!(benches, pipeline);

fn main() {
    if let Ok(spec) = std::env::var("SHEAF_BENCH_PROFILE") {
        profile(&spec);
        return;
    }
    benches();
    Criterion::default().configure_from_args().final_summary();
}
