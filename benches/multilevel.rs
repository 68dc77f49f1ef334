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
//! * `fit/logistic-multilevel-slope/50x20`: the same with a random slope of x1
//!   (`[prior.cluster_slope_sd.x1]`, scale fitted) and a `slope_spread` belief
//!   on it (invented); the slope adds O(draws) per evaluation.
//!
//! Run: `cargo bench --bench multilevel` (about a minute).

use criterion::{criterion_group, criterion_main, Criterion};
use priorsmith::spec::{parse, Overrides, Spec};
use std::time::Duration;

const FIXTURE: &str = include_str!("../tests/fixtures/multilevel-50x20.toml");

fn spec(text: &str) -> Spec {
    // The scenario `tests/regression_priors.rs` fits in precision mode, here at
    // the 8,192 draws where precision mode stops.
    let ov = Overrides {
        draws: Some(8192),
        ..Overrides::default()
    };
    parse(text, None, &ov).expect("bench spec")
}

/// The fixture with a random slope of x1 and a belief on its spread.
fn with_slope() -> String {
    FIXTURE.replace(
        "[prior.coefficients]",
        "[prior.cluster_slope_sd.x1]\nfamily = \"half-normal\"\nscale = { fit = [0.005, 2.0] }\n[prior.coefficients]",
    ) + "[[belief]]\nquantity = \"slope_spread\"\ncontrast = \"x1\"\nquantiles = { \"0.1\" = 0.08, \"0.5\" = 0.4, \"0.9\" = 1.0 }\n"
}

fn bench(c: &mut Criterion) {
    let mut g = c.benchmark_group("fit");
    g.sample_size(10).measurement_time(Duration::from_secs(15));
    let s = spec(FIXTURE);
    g.bench_function("logistic-multilevel/50x20", |b| {
        b.iter(|| priorsmith::fit::fit(&s, None).expect("fit"))
    });
    let s = spec(&with_slope());
    g.bench_function("logistic-multilevel-slope/50x20", |b| {
        b.iter(|| priorsmith::fit::fit(&s, None).expect("fit"))
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
