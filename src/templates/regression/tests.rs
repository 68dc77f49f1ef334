//! Tests of the regression templates against closed forms and recomputation.

use super::base::RegBase;
use super::*;
use crate::discrepancy::{discrepancy, noise_floor, Kind as DKind};
use crate::dist::{Continuous, Mixed};
use crate::numerics::logistic;
use crate::spec::{parse, Overrides, Spec};
use crate::target::Target;
use std::sync::Arc;

/// W² upper 0.1 % point 1.168 (Stephens 1974, JASA 69, Table 1A) over the null
/// mean 1/6: a CvM distance above 7.0 × the noise floor rejects P = T at 0.1 %.
pub(super) const CVM_999_OVER_MEAN: f64 = 1.168 * 6.0;

pub(super) fn spec(text: &str) -> Spec {
    parse(text, None, &Overrides::default()).unwrap()
}

pub(super) fn draws(s: &Spec, h: &[f64], n: usize) -> Vec<Vec<f64>> {
    let base = s
        .model
        .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
    let reqs: Vec<&Request> = s.beliefs.iter().map(|b| &b.request).collect();
    let mut out = vec![Vec::new(); reqs.len()];
    s.model.simulate(h, &base, &reqs, &mut out).unwrap();
    out
}

/// The regression of `text` as its concrete type (not prepared for requests),
/// built as template `info` with `link` and quantity table `quantities`.
pub(super) fn concrete_as(
    text: &str,
    info: &'static TemplateInfo,
    link: Link,
    quantities: &'static [RegDef],
) -> Regression {
    let raw: crate::input::raw::RawSpec = toml::from_str(text).unwrap();
    let map = crate::input::SourceMap::new(text);
    let ctx = crate::input::Ctx::new(None, &map, &raw);
    make(&ctx, info, link, quantities, false).unwrap()
}

/// The linear regression of `text` as its concrete type.
pub(super) fn linear(text: &str) -> Regression {
    concrete_as(text, &crate::templates::linear::INFO, Link::Identity, &[])
}

pub(super) fn h0(s: &Spec) -> Vec<f64> {
    s.hypers().iter().map(Hyper::default_value).collect()
}

pub(super) fn cvm_vs(d: Arc<dyn Continuous>, mut x: Vec<f64>) -> (f64, f64) {
    let t = Target::new(Mixed::continuous(d));
    x.sort_by(f64::total_cmp);
    (
        discrepancy(DKind::CramerVonMises, &t, &x),
        noise_floor(DKind::CramerVonMises, &t, x.len()),
    )
}

fn mean_sd(x: &[f64]) -> (f64, f64) {
    let n = x.len() as f64;
    let m = x.iter().sum::<f64>() / n;
    (
        m,
        (x.iter().map(|v| (v - m).powi(2)).sum::<f64>() / (n - 1.0)).sqrt(),
    )
}

const R2D2: &str = r#"
[model]
template = "linear"
[design]
columns = 60
rows = 80
correlation = "ar1"
rho = 0.5
seed = 3
[prior.intercept]
family = "normal"
mean = 0.0
sd = 1.0
[prior.sigma]
family = "half-normal"
scale = 2.0
[prior.coefficients]
family = "r2d2"
a = 2.0
b = 5.0
concentration = 0.5
[[belief]]
quantity = "r2_marginal"
distribution = { family = "beta", alpha = 2, beta = 5 }
"#;

#[test]
fn r2d2_marginal_r2_is_exactly_beta() {
    // Zhang, Naughton, Bondell & Reich (2022, JASA 117, §2): R² ~ Beta(a, b) by
    // construction. On an unstandardised, correlated design our r2_marginal is
    // that R² draw by draw, so its CvM distance to Beta(2, 5) is pure Monte Carlo
    // noise, and each draw equals the Beta quantile of its uniform.
    let s = spec(R2D2);
    let n = 20_000;
    let x = draws(&s, &h0(&s), n).remove(0);
    let base = s
        .model
        .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
    let u = &base.cols[2 + 2];
    let b = crate::dist::beta::Beta::new(2.0, 5.0).unwrap();
    // The quantiles come from a table with |Δ logit R²| ≤ TABLE_TOL, so
    // |ΔR²| ≤ R²(1 − R²)·TABLE_TOL (plus rounding).
    let tol = |r: f64| r * (1.0 - r) * crate::dist::beta::TABLE_TOL + 1e-12;
    for i in (0..n).step_by(997) {
        assert!((x[i] - b.quantile(u[i])).abs() < tol(x[i]), "draw {i}");
    }
    let (d, floor) = cvm_vs(Arc::new(b), x);
    assert!(d < CVM_999_OVER_MEAN * floor, "CvM {d} vs floor {floor}");
}

#[test]
fn horseshoe_fixed_global_gives_p0_effective_nonzero() {
    // Piironen & Vehtari (2017, EJS 11, eq. 3.12): with τ fixed at
    // τ0 = p0/(D − p0)·σ/√n, E[m_eff] = p0. Here D = 100, p0 = 5, n = 200,
    // standardised design (s_j = 1) and σ² ~ Inv-Gamma(10001, 10000) (σ ≈ 1,
    // sd(σ) ≈ 0.005). For fixed σ the identity is exact: E[κ] = 1/(1 + √a) for
    // λ ~ C⁺(0, 1), a = nσ⁻²τ² (checked by quadrature with scipy 1.17:
    // 0.3420513 at a = 3.7), so E[m_eff] = D√a/(1 + √a) = p0. The spread of σ
    // adds a bias ≈ ½ f''(1) var(σ) ≈ 1e-4 (f(σ) = Dk/(σ + k), k = p0/(D − p0));
    // tolerance 4 Monte Carlo SE + 0.001.
    let tau0 = 5.0 / 95.0 / 200f64.sqrt();
    let text = format!(
        r#"
[model]
template = "linear"
[design]
columns = 100
rows = 200
seed = 5
standardise = true
[prior.intercept]
family = "normal"
mean = 0.0
sd = 1.0
[prior.sigma]
family = "inverse-gamma"
shape = 10001.0
scale = 10000.0
[prior.coefficients]
family = "horseshoe"
global = "fixed"
global_scale = {tau0}
[[belief]]
quantity = "effective_nonzero"
quantiles = {{ "0.1" = 2, "0.5" = 5, "0.9" = 9 }}
"#
    );
    let s = spec(&text);
    let n = 20_000;
    let x = draws(&s, &h0(&s), n).remove(0);
    let (m, sd) = mean_sd(&x);
    let se = sd / (n as f64).sqrt();
    assert!(
        (m - 5.0).abs() < 4.0 * se + 1e-3,
        "mean m_eff {m} (SE {se})"
    );
    // With a half-Cauchy global scale C⁺(0, τ0) instead, the mean is not p0:
    // 10.1147 by quadrature (scipy 1.17) for σ = 1 — about twice p0.
    let text = text.replace("global = \"fixed\"", "global = \"half-cauchy\"");
    let s = spec(&text);
    let x = draws(&s, &h0(&s), n).remove(0);
    let (m, sd) = mean_sd(&x);
    let se = sd / (n as f64).sqrt();
    assert!(
        (m - 10.1147).abs() < 4.0 * se + 5e-3,
        "half-Cauchy mean m_eff {m} (SE {se})"
    );
}

fn hadamard_csv(dir: &std::path::Path) -> std::path::PathBuf {
    // Columns 2..9 of the 16 × 16 Sylvester–Hadamard matrix: orthogonal ±1
    // columns with mean 0 and variance 1, so S = XᵀX/n = I exactly.
    let mut h = vec![vec![1.0f64]];
    while h.len() < 16 {
        let m = h.len();
        let mut g = vec![vec![0.0; 2 * m]; 2 * m];
        for i in 0..m {
            for j in 0..m {
                g[i][j] = h[i][j];
                g[i][j + m] = h[i][j];
                g[i + m][j] = h[i][j];
                g[i + m][j + m] = -h[i][j];
            }
        }
        h = g;
    }
    let mut s = (1..=8)
        .map(|j| format!("h{j}"))
        .collect::<Vec<_>>()
        .join(",");
    s.push('\n');
    for row in &h {
        let r: Vec<String> = row[1..9].iter().map(|v| format!("{v}")).collect();
        s.push_str(&r.join(","));
        s.push('\n');
    }
    let p = dir.join("hadamard.csv");
    std::fs::write(&p, s).unwrap();
    p
}

#[test]
fn ridge_signal_variance_is_scaled_chi_square() {
    // Derivation: β ~ N(0, s²I) and var_rows(Xβ) = βᵀSβ with S = X_cᵀX_c/n. For
    // S = I (orthogonal standardised columns) βᵀSβ = s²·Σ z_j² ~ s²χ²_p exactly
    // (in general s²·Σ_k μ_k χ²_1 over the eigenvalues μ_k of S, mean s²·tr S).
    // Here p = 8, s = 0.7: signal_sd²/s² ~ χ²_8 = Gamma(shape 4, rate 1/2).
    let dir = tempfile::tempdir().unwrap();
    let csv = hadamard_csv(dir.path());
    let text = format!(
        r#"
[model]
template = "linear"
[design]
file = "{}"
[prior.intercept]
family = "normal"
mean = 0.0
sd = 1.0
[prior.sigma]
family = "half-normal"
scale = 1.0
[prior.coefficients]
family = "normal"
scale = 0.7
[[belief]]
quantity = "signal_sd"
quantiles = {{ "0.1" = 1, "0.5" = 2, "0.9" = 3 }}
"#,
        csv.display()
    );
    let s = spec(&text);
    let x: Vec<f64> = draws(&s, &h0(&s), 20_000)
        .remove(0)
        .iter()
        .map(|v| v * v / 0.49)
        .collect();
    let chi2 = crate::dist::gamma::Gamma::new(4.0, 0.5).unwrap();
    let (d, floor) = cvm_vs(Arc::new(chi2), x);
    assert!(d < CVM_999_OVER_MEAN * floor, "CvM {d} vs floor {floor}");

    // Independent synthetic standardised design, p = 50, n = 200: E[βᵀSβ] =
    // s²·tr S = s²p exactly; sd(βᵀSβ) = s²√(2 tr S²), tolerance 4 SE.
    let text = R2D2
        .replace(
            "family = \"r2d2\"\na = 2.0\nb = 5.0\nconcentration = 0.5",
            "family = \"normal\"\nscale = 0.7",
        )
        .replace("correlation = \"ar1\"\nrho = 0.5\n", "standardise = true\n")
        .replace("columns = 60\nrows = 80", "columns = 50\nrows = 200")
        .replace("quantity = \"r2_marginal\"", "quantity = \"signal_sd\"")
        .replace(
            "family = \"beta\", alpha = 2, beta = 5",
            "family = \"lognormal\", meanlog = 1, sdlog = 1",
        );
    let s = spec(&text);
    let n = 20_000;
    let x: Vec<f64> = draws(&s, &h0(&s), n)
        .remove(0)
        .iter()
        .map(|v| v * v)
        .collect();
    let (m, sd) = mean_sd(&x);
    assert!(
        (m - 0.49 * 50.0).abs() < 4.0 * sd / (n as f64).sqrt(),
        "mean {m}"
    );
}

const LOGISTIC: &str = r#"
[model]
template = "logistic"
[design]
columns = 40
rows = 120
correlation = "exchangeable"
rho = 0.3
seed = 8
[profile.older]
x1 = 1.5
x7 = -0.4
[prior.intercept]
family = "normal"
mean = -1.5
sd = 0.8
[prior.coefficients]
family = "laplace"
scale = 0.3
[[belief]]
quantity = "event_prob"
profile = "older"
quantiles = { "0.1" = 0.05, "0.5" = 0.2, "0.9" = 0.4 }
[[belief]]
quantity = "event_prob"
quantiles = { "0.1" = 0.05, "0.5" = 0.2, "0.9" = 0.4 }
[[belief]]
quantity = "odds_ratio"
contrast = "x7:2"
quantiles = { "0.1" = 0.5, "0.5" = 1, "0.9" = 2 }
"#;

#[test]
fn logistic_event_prob_is_logistic_of_linear_predictor() {
    // Draw by draw: event_prob(profile) = logistic(α + (x − x̄)ᵀβ), with β rebuilt
    // here from the base variates independently of the cached products.
    let s = spec(LOGISTIC);
    let h = h0(&s);
    let n = 300;
    let x = draws(&s, &h, n);
    let base = s
        .model
        .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
    let z0: Vec<f64> = base.cols[0].clone();
    let alpha: Vec<f64> = z0.iter().map(|z| -1.5 + 0.8 * z).collect();
    let d =
        crate::design::synthetic_rows(120, 40, crate::design::Correlation::Exchangeable(0.3), 8);
    let mean = |j: usize| (0..120).map(|r| d[r * 40 + j]).sum::<f64>() / 120.0;
    let (m1, m7) = (mean(0), mean(6));
    let cp = CoefPrior {
        kind: Kind::Laplace,
        global_fixed: false,
        idx: vec![2],
        names: vec!["scale"],
        shape: 0.0,
        cached: true,
        skip: Vec::new(),
        groups: None,
        indep: None,
    };
    let des = crate::design::Design::from_rows(
        "t".into(),
        (1..=40).map(|j| format!("x{j}")).collect(),
        120,
        &d,
        false,
    )
    .unwrap();
    let (mut z, mut w) = (vec![0.0; 40], vec![0.0; 40]);
    // 40 columns: every one on its Sobol column (here independent points), in order.
    let plan = rng::Plan::fit(s.seed, rng::Points::Independent);
    let sob = super::coef::SobolCols::draw(&cp, 40, std::iter::empty(), n, &plan);
    for i in 0..n {
        cp.base_draw(&des, s.seed, 0, i, &mut z, &mut w, &sob);
        let beta = |j: usize| 0.3 * w[j] * z[j];
        let eta = alpha[i] + (1.5 - m1) * beta(0) + (-0.4 - m7) * beta(6);
        assert!((x[0][i] - logistic(eta)).abs() < 1e-12, "draw {i}");
        assert!((x[1][i] - logistic(alpha[i])).abs() < 1e-15);
        assert!((x[2][i] - (2.0 * beta(6)).exp()).abs() < 1e-12 * x[2][i]);
    }
}

#[test]
fn intercept_only_event_prob_is_logit_normal() {
    // At the reference profile (the design mean) η = α ~ N(−1.5, 0.8), so the
    // event probability is LogitNormal(−1.5, 0.8): mean 0.2091412, variance
    // 0.0155056 (quadrature, scipy 1.17; crate::dist::logit_normal agrees).
    let s = spec(LOGISTIC);
    let n = 40_000;
    let x = draws(&s, &h0(&s), n).remove(1);
    let ln = crate::dist::logit_normal::LogitNormal::new(-1.5, 0.8).unwrap();
    let (mu, var) = (ln.mean().unwrap(), ln.variance().unwrap());
    assert!((mu - 0.2091412).abs() < 1e-6 && (var - 0.0155056).abs() < 1e-6);
    let (m, sd) = mean_sd(&x);
    let se = sd / (n as f64).sqrt();
    assert!((m - mu).abs() < 4.0 * se, "mean {m} vs {mu}");
    // sd of the sample variance ≈ √((μ4 − σ⁴)/n) ≤ √(E[(p − μ)⁴]/n); use the draws' own.
    let m4 = x.iter().map(|v| (v - m).powi(4)).sum::<f64>() / n as f64;
    let se_v = ((m4 - sd.powi(4)) / n as f64).sqrt();
    assert!(
        (sd * sd - var).abs() < 4.0 * se_v,
        "var {} vs {var}",
        sd * sd
    );
    let (d, floor) = cvm_vs(Arc::new(ln), x);
    assert!(d < CVM_999_OVER_MEAN * floor, "CvM {d} vs floor {floor}");
}

#[test]
fn scale_only_cache_matches_recomputation_and_threads() {
    // The cached path (ω = g·w) and the recomputed path agree: a spike-and-slab
    // prior with inclusion fixed is cached, with inclusion free it is recomputed.
    let text = R2D2
        .replace(
            "family = \"r2d2\"\na = 2.0\nb = 5.0\nconcentration = 0.5",
            "family = \"spike-and-slab\"\ninclusion = 0.3\nslab_scale = 0.5",
        )
        .replace("quantity = \"r2_marginal\"", "quantity = \"r2\"");
    let cached = spec(&text);
    let free = spec(&text.replace("inclusion = 0.3", "inclusion = { fit = [0.01, 0.9] }"));
    let mut h = h0(&free);
    let k = free
        .hypers()
        .iter()
        .position(|x| x.name == "coefficients.inclusion")
        .unwrap();
    h[k] = 0.3;
    let a = draws(&cached, &h0(&cached), 1000).remove(0);
    let b = draws(&free, &h, 1000).remove(0);
    for (x, y) in a.iter().zip(&b) {
        assert!((x - y).abs() < 1e-12);
    }
    // Same numbers on one thread as on the default pool.
    let one = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    let c = one.install(|| draws(&free, &h, 1000).remove(0));
    assert_eq!(b, c);
}

#[test]
fn table_matches_exact() {
    // The tabulated regularised-horseshoe products (table.rs) against the exact
    // recomputation at random (global_scale, slab_scale) within the bounds, on
    // the benchmark design (p = 1,000, n = 200, bounds spanning 5.7 decades of
    // τ0/s). Relative error < 1e-6 on every draw: far below the Monte Carlo
    // error of any CDF estimated from 4,000 draws (≈ 1/√4000 ≈ 1.6e-2).
    let text = r#"
[model]
template = "linear"
[design]
columns = 1000
rows = 200
correlation = "ar1"
rho = 0.3
standardise = true
[simulation]
draws = 400
seed = 3
[prior.intercept]
family = "normal"
mean = 0.0
sd = 1.0
[prior.sigma]
family = "half-normal"
scale = 1.0
[prior.coefficients]
family = "regularised-horseshoe"
global_scale = { fit = [0.00001, 0.1] }
slab_scale = { fit = [0.1, 5.0] }
slab_df = 4
[[belief]]
quantity = "r2"
distribution = { family = "beta", alpha = 3, beta = 9 }
[[belief]]
quantity = "r2_marginal"
distribution = { family = "beta", alpha = 3, beta = 9 }
[[belief]]
quantity = "signal_sd"
distribution = { family = "half-normal", scale = 1.0 }
[[belief]]
quantity = "effective_nonzero"
distribution = { family = "half-normal", scale = 10.0 }
"#;
    let s = spec(text);
    let n = 400;
    let base = s
        .model
        .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
    let ex = base
        .extra
        .as_ref()
        .unwrap()
        .downcast_ref::<RegBase>()
        .unwrap();
    assert!(ex.table.is_some(), "the table is built");
    let mut exact = s
        .model
        .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
    exact
        .extra
        .as_mut()
        .unwrap()
        .downcast_mut::<RegBase>()
        .unwrap()
        .table = None;
    let reqs: Vec<&Request> = s.beliefs.iter().map(|b| &b.request).collect();
    let kt = s
        .hypers()
        .iter()
        .position(|x| x.name == "coefficients.global_scale")
        .unwrap();
    let ks = s
        .hypers()
        .iter()
        .position(|x| x.name == "coefficients.slab_scale")
        .unwrap();
    let mut r = rng::stream(11, 0);
    let mut worst = 0.0f64;
    for trial in 0..12 {
        let mut h = h0(&s);
        // Log-uniform within the bounds; the first two at the interval's ends.
        let (ut, us) = match trial {
            0 => (0.0, 1.0),
            1 => (1.0, 0.0),
            _ => (rng::open01(&mut r), rng::open01(&mut r)),
        };
        h[kt] = (1e-5f64.ln() + ut * (0.1f64 / 1e-5).ln()).exp();
        h[ks] = (0.1f64.ln() + us * 50f64.ln()).exp();
        let mut a = vec![Vec::new(); reqs.len()];
        let mut b = vec![Vec::new(); reqs.len()];
        s.model.simulate(&h, &base, &reqs, &mut a).unwrap();
        s.model.simulate(&h, &exact, &reqs, &mut b).unwrap();
        for (x, y) in a.iter().zip(&b) {
            for (x, y) in x.iter().zip(y) {
                let e = (x - y).abs() / y.abs().max(1e-300);
                worst = worst.max(if *y == 0.0 && *x == 0.0 { 0.0 } else { e });
            }
        }
    }
    eprintln!("table vs exact: worst relative error {worst:.3e}");
    assert!(worst < 1e-6, "worst relative error {worst}");
    // Same numbers on one thread as on the default pool.
    let h = h0(&s);
    let mut a = vec![Vec::new(); reqs.len()];
    s.model.simulate(&h, &base, &reqs, &mut a).unwrap();
    let one = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    let b = one.install(|| draws(&s, &h, n));
    assert_eq!(a, b);
}
