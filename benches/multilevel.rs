//! Multilevel and covariate-specific regression priors: a whole fit at 8,192
//! draws, the first stage of the default draws mode. With the coefficients'
//! Sobol columns (`regression::coef::SobolCols`) precision mode stops there for
//! this spec (0.6 s in one CLI run at load ≈ 8); before them it raised the draws
//! to 262,144 (about 42 s wall, 20 s CPU; see BENCHMARKS.md).
//!
//! * `fit/logistic-multilevel/50x20`: random-intercept logistic model, 50 centres
//!   of 20 rows (n = 1,000), 20 covariates under a normal prior, one covariate
//!   with a prior of its own; beliefs on the baseline risk, the median odds
//!   ratio, the ICC and that covariate's odds ratio (invented scenario).
//!   Aim: ≤ 2 s.
//!
//! Run: `cargo bench --bench multilevel` (about a minute).

use criterion::{criterion_group, criterion_main, Criterion};
use priorsmith::spec::{parse, Overrides, Spec};
use std::time::Duration;

fn spec() -> Spec {
    // The scenario `tests/regression_priors.rs` fits in precision mode, here at
    // the 8,192 draws where precision mode stops.
    let text = include_str!("../tests/fixtures/multilevel-50x20.toml");
    let ov = Overrides {
        draws: Some(8192),
        ..Overrides::default()
    };
    parse(text, None, &ov).expect("bench spec")
}

fn bench(c: &mut Criterion) {
    let mut g = c.benchmark_group("fit");
    g.sample_size(10).measurement_time(Duration::from_secs(15));
    let s = spec();
    g.bench_function("logistic-multilevel/50x20", |b| {
        b.iter(|| priorsmith::fit::fit(&s, None).expect("fit"))
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
