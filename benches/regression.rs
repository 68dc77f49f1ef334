//! Regression templates: one objective evaluation and a whole fit, for a design
//! of n = 200 rows and p = 1,000 or 5,000 columns with 4,000 draws.
//!
//! * `eval/horseshoe-fixed/p`: scale-only case (global scale of a horseshoe with
//!   fixed global): the design products are cached, an evaluation is O(draws).
//! * `eval/reg-horseshoe/p`: regularised horseshoe with global and slab scale
//!   free: the design products are tabulated on 64 Chebyshev nodes of log(τ0/s)
//!   when the objective is built (templates/regression/table.rs), an evaluation
//!   interpolates them, O(draws × 64): 0.68 ms at p = 1,000 (load ≈ 7.5). Before
//!   the table: 119 ms (p = 1,000) and 668 ms (p = 5,000) per evaluation, load ≈ 7.
//! * `eval/r2d2-groups/5000`: R2D2 with two groups of covariates (20 and 4,980
//!   columns), the weight of one group varied: cached per-group products; the
//!   two Beta quantiles per draw (R² and the group share) come from a checked
//!   table per evaluation (`dist::beta::QuantileTable`): 5.61 ms before it.
//! * `eval/indep-groups/5000`: independent priors per group (x1–x20 normal, the
//!   rest a horseshoe with its own half-Cauchy global scale), the normal's scale
//!   varied: cached per-group products rescaled by per-draw group multipliers.
//! * `fit/...`: a whole fit (set-up, global stage, local searches, fresh judgement);
//!   `fit/r2d2-groups/5000` the grouped R2D2 fit at 4,000 draws (slow: run alone);
//!   `fit/r2d2-groups-precision/5000` the same prior in the default draws mode
//!   (precision mode, no `draws` given), with beliefs on R2D2's own total R²
//!   (`r2_marginal`, exactly Beta(a, b)) and on one group's share;
//!   `fit/indep-groups/5000` the independent groups' fit at 4,000 draws.
//!
//! Run a subset: `cargo bench --bench regression -- eval` (keep runs under a minute).

use criterion::{criterion_group, criterion_main, Criterion};
use priorsmith::discrepancy::Kind;
use priorsmith::fit::objective::Objective;
use priorsmith::spec::{parse, Overrides, Spec};
use priorsmith::templates::Hyper;
use std::time::Duration;

fn spec(p: usize, coef: &str) -> Spec {
    spec_beliefs(
        p,
        coef,
        "[[belief]]\nquantity = \"r2\"\ndistribution = { family = \"beta\", alpha = 3, beta = 9 }",
    )
}

/// The bench design's linear template with `coef` and the given beliefs, at
/// 4,000 draws.
fn spec_beliefs(p: usize, coef: &str, beliefs: &str) -> Spec {
    spec_text(p, coef, beliefs, "draws = 4000")
}

/// The same with `draws` the `[simulation]` line setting the draws (empty: the
/// default draws mode).
fn spec_text(p: usize, coef: &str, beliefs: &str, draws: &str) -> Spec {
    let text = format!(
        r#"
title = "bench"
[model]
template = "linear"
[design]
columns = {p}
rows = 200
correlation = "ar1"
rho = 0.3
standardise = true
[simulation]
{draws}
seed = 1
[prior.intercept]
family = "normal"
mean = 0.0
sd = 1.0
[prior.sigma]
family = "half-normal"
scale = 1.0
[prior.coefficients]
{coef}
{beliefs}
"#
    );
    parse(&text, None, &Overrides::default()).expect("bench spec")
}

/// R2D2 over two groups: x1–x20 ("clinical") and the other p − 20 columns.
fn grouped(_p: usize) -> String {
    let cols: Vec<String> = (1..=20).map(|j| format!("\"x{j}\"")).collect();
    format!(
        "family = \"r2d2\"\na = {{ fit = [0.2, 20.0] }}\nb = {{ fit = [0.2, 40.0] }}\nconcentration = 0.5\n\
         [prior.coefficients.groups.clinical]\ncovariates = [{}]\nweight = {{ fit = [0.1, 50.0] }}\n\
         [prior.coefficients.groups.omics]\ncovariates = \"rest\"\nweight = {{ fit = [0.1, 50.0] }}",
        cols.join(", ")
    )
}

const GROUPED_BELIEFS: &str = r#"
[[belief]]
quantity = "r2"
distribution = { family = "beta", alpha = 3, beta = 9 }
[[belief]]
quantity = "r2_share"
group = "clinical"
distribution = { family = "beta", alpha = 6, beta = 4 }
"#;

/// Beliefs on the R2D2 prior's own R² (total `r2_marginal`, W/(1 + W)) and on
/// the clinical group's share: what the default draws mode fits quickly.
const GROUPED_MARGINAL_BELIEFS: &str = r#"
[[belief]]
quantity = "r2_marginal"
distribution = { family = "beta", alpha = 3, beta = 9 }
[[belief]]
quantity = "r2_share"
group = "clinical"
distribution = { family = "beta", alpha = 6, beta = 4 }
"#;

/// Independent priors per group: x1–x20 ("clinical") under a normal with its
/// scale fitted, the other p − 20 columns under a horseshoe with its own
/// half-Cauchy global scale fitted (both cached: per-group products once per set
/// of base draws, an evaluation O(draws·G²)).
fn indep(_p: usize) -> String {
    let cols: Vec<String> = (1..=20).map(|j| format!("\"x{j}\"")).collect();
    format!(
        "[prior.coefficients.clinical]\ncovariates = [{}]\nfamily = \"normal\"\nscale = {{ fit = [0.01, 3.0] }}\n\
         [prior.coefficients.omics]\ncovariates = \"rest\"\nfamily = \"horseshoe\"\nglobal_scale = {{ fit = [0.00001, 0.1] }}",
        cols.join(", ")
    )
}

const INDEP_BELIEFS: &str = r#"
[[belief]]
quantity = "r2"
distribution = { family = "beta", alpha = 3, beta = 9 }
[[belief]]
quantity = "r2_marginal"
group = "clinical"
distribution = { family = "beta", alpha = 2, beta = 6 }
[[belief]]
quantity = "r2_share"
group = "omics"
distribution = { family = "beta", alpha = 3, beta = 4 }
"#;

const HS: &str =
    "family = \"horseshoe\"\nglobal = \"fixed\"\nglobal_scale = { fit = [0.00001, 0.1] }";
const RHS: &str = "family = \"regularised-horseshoe\"\nglobal = \"fixed\"\nglobal_scale = { fit = [0.00001, 0.1] }\nslab_scale = { fit = [0.1, 5.0] }\nslab_df = 4";

fn bench(c: &mut Criterion) {
    let mut g = c.benchmark_group("eval");
    g.sample_size(10).measurement_time(Duration::from_secs(3));
    for p in [1000, 5000] {
        for (name, coef) in [("horseshoe-fixed", HS), ("reg-horseshoe", RHS)] {
            let s = spec(p, coef);
            // Built on first use, so that a filtered run skips the others' set-up.
            let mut obj = None;
            let mut h: Vec<f64> = s.hypers().iter().map(Hyper::default_value).collect();
            let mut k = 0u32;
            g.bench_function(format!("{name}/{p}"), |b| {
                let obj = obj.get_or_insert_with(|| {
                    Objective::new(
                        &s,
                        4000,
                        &priorsmith::rng::Plan::fit(1, s.points),
                        Kind::CramerVonMises,
                    )
                });
                b.iter(|| {
                    // A new scale each time, as the optimiser would propose.
                    k += 1;
                    h[3] = 1e-3 * (1.0 + 0.01 * (k % 50) as f64);
                    obj.total(&h).expect("objective")
                })
            });
        }
    }
    // R2D2 with two groups (x1–x20 and the rest), p = 5,000: the per-group
    // products are cached; an evaluation is O(draws·G²) plus one Beta quantile
    // per draw for W and one per draw for the group share.
    {
        let s = spec_beliefs(5000, &grouped(5000), GROUPED_BELIEFS);
        let mut obj = None;
        let mut h: Vec<f64> = s.hypers().iter().map(Hyper::default_value).collect();
        let mut k = 0u32;
        g.bench_function("r2d2-groups/5000", |b| {
            let obj = obj.get_or_insert_with(|| {
                Objective::new(
                    &s,
                    4000,
                    &priorsmith::rng::Plan::fit(1, s.points),
                    Kind::CramerVonMises,
                )
            });
            b.iter(|| {
                k += 1;
                h[6] = 2.0 * (1.0 + 0.01 * (k % 50) as f64);
                obj.total(&h).expect("objective")
            })
        });
    }
    // Independent priors per group, p = 5,000 (normal x1–x20, horseshoe on the rest).
    {
        let s = spec_beliefs(5000, &indep(5000), INDEP_BELIEFS);
        let mut obj = None;
        let mut h: Vec<f64> = s.hypers().iter().map(Hyper::default_value).collect();
        let mut k = 0u32;
        g.bench_function("indep-groups/5000", |b| {
            let obj = obj.get_or_insert_with(|| {
                Objective::new(
                    &s,
                    4000,
                    &priorsmith::rng::Plan::fit(1, s.points),
                    Kind::CramerVonMises,
                )
            });
            b.iter(|| {
                k += 1;
                h[3] = 0.1 * (1.0 + 0.01 * (k % 50) as f64);
                obj.total(&h).expect("objective")
            })
        });
    }
    g.finish();
    let mut g = c.benchmark_group("fit");
    g.sample_size(10).measurement_time(Duration::from_secs(10));
    for (name, p, coef) in [
        ("horseshoe-fixed", 1000, HS),
        ("horseshoe-fixed", 5000, HS),
        ("reg-horseshoe", 1000, RHS),
    ] {
        let s = spec(p, coef);
        g.bench_function(format!("{name}/{p}"), |b| {
            b.iter(|| priorsmith::fit::fit(&s, None).expect("fit"))
        });
    }
    // Grouped R2D2, p = 5,000, a whole fit at 4,000 draws (≈ 15 s CPU per
    // iteration: run it alone, `cargo bench --bench regression -- fit/r2d2`).
    let s = spec_beliefs(5000, &grouped(5000), GROUPED_BELIEFS);
    g.bench_function("r2d2-groups/5000", |b| {
        b.iter(|| priorsmith::fit::fit(&s, None).expect("fit"))
    });
    // The default draws mode: precision mode raises the draws until every
    // determined hyperparameter's Monte Carlo error is within its target.
    let s = spec_text(5000, &grouped(5000), GROUPED_MARGINAL_BELIEFS, "");
    g.bench_function("r2d2-groups-precision/5000", |b| {
        b.iter(|| priorsmith::fit::fit(&s, None).expect("fit"))
    });
    // Independent priors per group, p = 5,000, a whole fit at 4,000 draws.
    let s = spec_beliefs(5000, &indep(5000), INDEP_BELIEFS);
    g.bench_function("indep-groups/5000", |b| {
        b.iter(|| priorsmith::fit::fit(&s, None).expect("fit"))
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
