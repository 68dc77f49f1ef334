//! Numerical robustness of the objective on extreme but valid hyperparameters:
//! the mixture-cure starter with its bounds widened to sd 1e-6 … 50, shapes
//! 0.05 … 50, cure fractions 1e-9 … 1 − 1e-9 (cure_logit means ±20) and horizons
//! up to 1e6, evaluated at random η (the optimiser's scale, including ±30, where
//! `from_eta` clamps). `Objective::cost` must be finite or +inf, never NaN, and
//! `Objective::per_belief` must give a number (no NaN) for every belief at every
//! finite hyperparameter vector inside the bounds.

use priorsmith::discrepancy::Kind;
use priorsmith::fit::objective::Objective;
use priorsmith::spec::{parse, Overrides, Spec};
use proptest::prelude::*;
use proptest::test_runner::{Config, RngAlgorithm, TestRng, TestRunner};

const LATENCIES: [&str; 4] = ["weibull", "exponential", "lognormal", "loglogistic"];

/// The starter's shape of file with extreme bounds; `shape` picks the shape prior.
fn extreme_spec(latency: &str, shape: usize, horizon: f64) -> Spec {
    let shape_block = match (latency, shape) {
        ("exponential", _) => String::new(),
        (_, 0) => "[prior.shape]\nfamily = \"lognormal\"\nmeanlog = { fit = [-3.0, 3.9] }\n\
                   sdlog = { fit = [0.000001, 3.0] }\n"
            .to_string(),
        _ => "[prior.shape]\nfamily = \"gamma\"\nshape = { fit = [0.05, 50.0] }\n\
              rate = { fit = [0.05, 50.0] }\n"
            .to_string(),
    };
    let text = format!(
        r#"title = "extreme bounds (test)"
[model]
template = "mixture-cure"
latency = "{latency}"
[simulation]
draws = 400
seed = 5
[prior.cure_logit]
family = "normal"
mean = {{ fit = [-20.0, 20.0] }}
sd = {{ fit = [0.000001, 50.0] }}
[prior.log_scale]
family = "normal"
mean = {{ fit = [-5.0, 14.0] }}
sd = {{ fit = [0.000001, 50.0] }}
{shape_block}
[[belief]]
quantity = "cure_fraction"
quantiles = {{ "0.1" = 0.000000001, "0.5" = 0.25, "0.9" = 0.999999999 }}
[[belief]]
quantity = "survival_prob"
horizon = {horizon}
distribution = {{ family = "beta", alpha = 12, beta = 18 }}
[[belief]]
quantity = "event_prob"
horizon = {horizon}
distribution = {{ family = "beta", alpha = 2, beta = 2 }}
[[belief]]
quantity = "median_survival"
distribution = {{ family = "lognormal", meanlog = 3.0, sdlog = 0.4 }}
atoms = [{{ at = inf, mass = 0.05 }}]
[[belief]]
quantity = "median_uncured"
distribution = {{ family = "lognormal", meanlog = 3.0, sdlog = 2.0 }}
[[belief]]
quantity = "rmst"
horizon = {horizon}
distribution = {{ family = "lognormal", meanlog = 2.0, sdlog = 1.0 }}
"#
    );
    parse(&text, None, &Overrides::default()).unwrap_or_else(|e| panic!("{e}\n{text}"))
}

fn eta_value() -> impl Strategy<Value = f64> {
    prop_oneof![
        3 => -30.0..30.0f64,
        1 => prop::sample::select(vec![-30.0, 30.0, -1e3, 1e3, 0.0]),
    ]
}

#[test]
fn objective_is_never_nan_at_extreme_hyperparameters() {
    let mut runner = TestRunner::new_with_rng(
        Config {
            cases: 1200,
            failure_persistence: None,
            ..Config::default()
        },
        TestRng::from_seed(RngAlgorithm::ChaCha, &[9; 32]),
    );
    let horizons = [1e-6, 36.0, 1e6];
    let mut specs: Vec<(String, Spec)> = Vec::new();
    for l in LATENCIES {
        for s in 0..2 {
            for h in horizons {
                specs.push((format!("{l}/shape{s}/h={h}"), extreme_spec(l, s, h)));
            }
        }
    }
    let kinds = [Kind::CramerVonMises, Kind::AndersonDarling];
    let objs: Vec<(String, Objective)> = specs
        .iter()
        .flat_map(|(name, s)| {
            kinds.iter().map(move |k| {
                (
                    format!("{name}/{k:?}"),
                    Objective::new(s, s.draws, &s.plan(), *k),
                )
            })
        })
        .collect();
    let strategy = (
        0..objs.len(),
        prop::collection::vec(eta_value(), 7),
        prop::bool::ANY,
    );
    runner
        .run(&strategy, |(k, eta, tie)| {
            let (name, o) = &objs[k];
            let eta = &eta[..o.free.len()];
            let h = o.full(eta);
            prop_assert!(h.iter().all(|x| x.is_finite()), "{name}: h = {h:?}");
            let per = o.per_belief(&h, o.kind);
            match &per {
                Ok(v) => prop_assert!(
                    v.iter().all(|d| !d.is_nan()),
                    "{name}: per_belief {v:?} at h = {h:?}"
                ),
                Err(e) => prop_assert!(false, "{name}: per_belief failed at h = {h:?}: {e}"),
            }
            // The tie-breaking term must not bring NaN in either.
            let mut o2 = Objective::new(
                o.spec,
                200,
                &priorsmith::rng::Plan::fit(3, o.spec.points),
                o.kind,
            );
            o2.kappa = if tie { 0.05 } else { 0.0 };
            for c in [o.cost(eta), o2.cost(eta)] {
                prop_assert!(
                    !c.is_nan() && c != f64::NEG_INFINITY,
                    "{name}: cost {c} at h = {h:?}"
                );
            }
            Ok(())
        })
        .unwrap();
}
