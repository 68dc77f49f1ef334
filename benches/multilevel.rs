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
    let text = r#"
title = "bench: 50 centres, 20 covariates (invented)"
[model]
template = "logistic-multilevel"
[design]
columns = 20
rows = 1000
clusters = 50
correlation = "exchangeable"
rho = 0.2
seed = 3
standardise = true
[simulation]
draws = 8192
seed = 1
[prior.intercept]
family = "normal"
mean = { fit = [-4.0, 1.0] }
sd = { fit = [0.1, 2.0] }
[prior.cluster_sd]
family = "half-normal"
scale = { fit = [0.05, 3.0] }
[prior.x1]
family = "normal"
mean = { fit = [-1.0, 1.0] }
sd = { fit = [0.01, 1.0] }
[prior.coefficients]
family = "normal"
scale = { fit = [0.001, 1.0] }
[[belief]]
quantity = "event_prob"
quantiles = { "0.1" = 0.052, "0.5" = 0.1, "0.9" = 0.183 }
[[belief]]
quantity = "median_odds_ratio"
quantiles = { "0.05" = 1.04, "0.25" = 1.2, "0.5" = 1.47, "0.75" = 1.93, "0.95" = 3.07 }
[[belief]]
quantity = "odds_ratio"
contrast = "x1"
distribution = { family = "lognormal", meanlog = 0.2231, sdlog = 0.15 }
[[belief]]
quantity = "odds_ratio"
contrast = "x2"
quantiles = { "0.1" = 0.84, "0.5" = 1.0, "0.9" = 1.19 }
"#;
    parse(text, None, &Overrides::default()).expect("bench spec")
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
