//! Benchmarks of the hot path: one objective evaluation of the README example
//! (mixture-cure, 3 beliefs, 20,000 draws; also with a beta prior on the cured
//! fraction instead of cure_logit), of the piecewise-hazard starter, and a
//! whole fit of each demo scenario.
//! Run: `cargo bench --bench objective`. Figures: BENCHMARKS.md.

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use priorsmith::fit::objective::Objective;
use priorsmith::spec::{parse, Overrides};
use std::hint::black_box;

const EXAMPLE: &str = include_str!("../model-templates/mixture-cure.toml");

fn objective(c: &mut Criterion) {
    let spec = parse(EXAMPLE, None, &Overrides::default()).expect("example parses");
    let obj = Objective::fitting(&spec);
    let eta0 = obj.eta(&obj.full0);
    let mut g = c.benchmark_group("objective");
    g.throughput(Throughput::Elements(spec.draws as u64));
    // Nearby points, as inside a local search (order reuse applies).
    let mut k = 0u64;
    g.bench_function("mixture-cure 3 beliefs 20k draws", |b| {
        b.iter(|| {
            k += 1;
            let eta: Vec<f64> = eta0.iter().map(|e| e + 1e-3 * ((k % 7) as f64)).collect();
            black_box(obj.cost(&eta))
        })
    });
    // Far-apart points (global stage): full re-sorts.
    g.bench_function("mixture-cure 3 beliefs 20k draws, random points", |b| {
        b.iter(|| {
            k += 1;
            let eta: Vec<f64> = eta0
                .iter()
                .enumerate()
                .map(|(i, e)| e + (((k * 31 + i as u64 * 17) % 13) as f64 - 6.0) * 0.3)
                .collect();
            black_box(obj.cost(&eta))
        })
    });
    g.finish();
    // The same starter with a beta prior on the cured fraction itself
    // ([prior.cure_fraction]): the beta quantiles of a whole column through a
    // checked table per evaluation (`dist::beta::logit_quantiles`).
    let text = EXAMPLE.replace(
        "[prior.cure_logit]",
        "[prior.cure_fraction]\nfamily = \"beta\"\nalpha = { fit = [0.5, 60.0] }\nbeta = { fit = [0.5, 60.0] }\n[unused_cure_logit]",
    );
    let text = cut_table(&text, "[unused_cure_logit]");
    let spec = parse(&text, None, &Overrides::default()).expect("cure_fraction example parses");
    let obj = Objective::fitting(&spec);
    let eta0 = obj.eta(&obj.full0);
    let mut g = c.benchmark_group("objective");
    g.throughput(Throughput::Elements(spec.draws as u64));
    g.bench_function(
        "mixture-cure 3 beliefs 20k draws, cure_fraction beta",
        |b| {
            b.iter(|| {
                k += 1;
                let eta: Vec<f64> = eta0.iter().map(|e| e + 1e-3 * ((k % 7) as f64)).collect();
                black_box(obj.cost(&eta))
            })
        },
    );
    g.finish();
}

/// `text` without the table that starts at `head` (up to the next blank line).
fn cut_table(text: &str, head: &str) -> String {
    let i = text.find(head).expect("table present");
    let j = i + text[i..].find("\n\n").expect("blank line after the table");
    format!("{}{}", &text[..i], &text[j + 1..])
}

fn whole_fits(c: &mut Criterion) {
    let mut g = c.benchmark_group("fit");
    g.sample_size(10);
    for s in priorsmith::demo::SCENARIOS {
        let spec = parse(s.text, None, &Overrides::default()).expect("demo parses");
        g.bench_function(s.name, |b| {
            b.iter(|| black_box(priorsmith::fit::fit(&spec, None).expect("fit runs")))
        });
    }
    // Six free hyperparameters, three beliefs, one flat direction settled by the
    // tie-break, precision mode (the seed-proof fixture).
    let six = include_str!("../tests/fixtures/six-free-cure.toml");
    let spec = parse(six, None, &Overrides::default()).expect("fixture parses");
    g.bench_function("six-free-cure", |b| {
        b.iter(|| black_box(priorsmith::fit::fit(&spec, None).expect("fit runs")))
    });
    g.finish();
}

/// One objective evaluation of the piecewise-hazard starter (4 intervals, 4
/// beliefs, 20,000 draws): the walk, the per-draw interval sums and the median
/// search.
fn piecewise(c: &mut Criterion) {
    let text = include_str!("../model-templates/piecewise-hazard.toml");
    let spec = parse(text, None, &Overrides::default()).expect("starter parses");
    let obj = Objective::fitting(&spec);
    let eta0 = obj.eta(&obj.full0);
    let mut g = c.benchmark_group("objective");
    g.throughput(Throughput::Elements(spec.draws as u64));
    let mut k = 0u64;
    g.bench_function("piecewise-hazard 4 beliefs 20k draws", |b| {
        b.iter(|| {
            k += 1;
            let eta: Vec<f64> = eta0.iter().map(|e| e + 1e-3 * ((k % 7) as f64)).collect();
            black_box(obj.cost(&eta))
        })
    });
    g.finish();
}

criterion_group!(benches, objective, piecewise, whole_fits);
criterion_main!(benches);
