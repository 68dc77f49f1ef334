//! Same beliefs, same prior: fits on different seeds agree, the identifiability
//! calls do not depend on the seed, a hyperparameter capped by the beliefs near a
//! bound is not called undetermined, and the verdict keeps its nominal rate.
//!
//! The fixtures are invented (tests/fixtures/). Agreement targets: determined
//! hyperparameters within 1 % relative range over 10 seeds (location
//! hyperparameters — means and meanlogs — within 0.01 on the optimiser's scale),
//! tie-broken ones within 5 %.

use priorsmith::fit::{self, objective, FitResult, SetBy};
use priorsmith::spec::{parse, Overrides, Spec};

fn spec(text: &str, seed: u64) -> Spec {
    let ov = Overrides {
        seed: Some(seed),
        ..Overrides::default()
    };
    parse(text, None, &ov).expect("fixture parses")
}

fn fits(text: &str) -> (Spec, Vec<FitResult>) {
    let s = spec(text, 1);
    let r = (1..=10u64)
        .map(|seed| fit::fit(&spec(text, seed), None).expect("fit runs"))
        .collect();
    (s, r)
}

/// Checks the 10-seed agreement targets and that the calls are identical.
fn agree(text: &str) {
    let (s, r) = fits(text);
    let hy = s.hypers();
    for &i in &s.free() {
        let h = &hy[i];
        let name = &h.name;
        let v: Vec<f64> = r.iter().map(|f| f.hyperparameters[name]).collect();
        let set: Vec<SetBy> = r.iter().map(|f| f.set_by[name]).collect();
        assert!(set.iter().all(|x| *x == set[0]), "{name}: set by {set:?}");
        let (lo, hi) = v
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
                (a.min(*x), b.max(*x))
            });
        let positive =
            matches!(h.value, priorsmith::templates::HyperValue::Free { lo, .. } if lo > 0.0);
        match set[0] {
            SetBy::Beliefs if !positive => {
                let e: Vec<f64> = v.iter().map(|x| objective::to_eta(h, *x)).collect();
                let range = e.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
                    - e.iter().cloned().fold(f64::INFINITY, f64::min);
                assert!(
                    range <= 0.01,
                    "{name}: optimiser-scale range {range} ({v:?})"
                );
            }
            SetBy::Beliefs => {
                let rel = (hi - lo) / lo.abs();
                assert!(rel <= 0.01, "{name}: relative range {rel} ({v:?})");
            }
            SetBy::TieBreak => {
                let rel = (hi - lo) / lo.abs();
                assert!(rel <= 0.05, "{name}: relative range {rel} ({v:?})");
            }
            _ => {}
        }
    }
    let calls = |f: &FitResult| {
        let id = &f.identifiability;
        (
            id.undetermined.clone(),
            id.borderline.clone(),
            id.at_bound.clone(),
        )
    };
    for f in &r {
        assert_eq!(
            calls(f),
            calls(&r[0]),
            "identifiability calls differ between seeds"
        );
    }
}

#[test]
fn mixture_cure_starter_agrees_across_seeds() {
    agree(include_str!("../model-templates/mixture-cure.toml"));
}

#[test]
fn six_free_cure_with_a_flat_direction_agrees_across_seeds() {
    let text = include_str!("fixtures/six-free-cure.toml");
    agree(text);
    // The flat direction is the shape's spread, settled by the tie-break.
    let f = fit::fit(&spec(text, 3), None).unwrap();
    assert_eq!(
        f.identifiability.undetermined,
        vec!["shape.sdlog".to_string()]
    );
    assert_eq!(f.set_by["shape.sdlog"], SetBy::TieBreak);
}

#[test]
fn r2d2_recovery_agrees_across_seeds() {
    agree(include_str!("fixtures/r2d2-recovery.toml"));
}

/// Beliefs that pull the shape's spread down: it ends near its lower bound, and
/// raising it costs more than a reference floor within a few percent of its range,
/// so it is "pushed to a bound", not undetermined, on every seed.
#[test]
fn capped_near_a_bound_is_not_undetermined() {
    let text = include_str!("fixtures/six-free-cure.toml")
        .replace("alpha = 15, beta = 44", "alpha = 20, beta = 60")
        .replace("alpha = 10.6, beta = 18.5", "alpha = 40, beta = 60")
        .replace("meanlog = 2.29, sdlog = 0.31", "meanlog = 2.5, sdlog = 0.3");
    for seed in [1, 2, 3] {
        let f = fit::fit(&spec(&text, seed), None).unwrap();
        let id = &f.identifiability;
        assert!(
            !id.undetermined.contains(&"shape.sdlog".to_string()),
            "seed {seed}: {:?}",
            id.undetermined
        );
        assert_eq!(id.at_bound, vec!["shape.sdlog".to_string()], "seed {seed}");
        assert_eq!(f.set_by["shape.sdlog"], SetBy::Bound);
    }
}

/// At a prior that reproduces the belief exactly (cure_logit ~ normal(−1, 0.5)
/// makes the cured fraction logit-normal(−1, 0.5)), "met within noise" is the
/// verdict at its nominal rate: the fresh draws are independent, so the
/// discrepancy's null distribution is the classical one and the 95 % point
/// (Stephens 1974) gives 95 % over seeds. 200 seeds: expected 190, binomial
/// sd 3.08; accepted within 4 sd.
#[test]
fn verdict_keeps_its_nominal_rate() {
    let text = r#"
title = "exact prior (test)"
[model]
template = "mixture-cure"
latency = "exponential"
[simulation]
draws = 2048
[prior.cure_logit]
family = "normal"
mean = -1.0
sd = 0.5
[prior.log_scale]
family = "normal"
mean = 2.0
sd = 0.3
[[belief]]
quantity = "cure_fraction"
distribution = { family = "logit-normal", mu = -1.0, sigma = 0.5 }
"#;
    let met = (1..=200u64)
        .filter(|&seed| {
            let f = fit::fit(&spec(text, seed), None).unwrap();
            f.verdict == fit::Verdict::MetWithinNoise
        })
        .count();
    assert!(
        (178..=200).contains(&met),
        "met within noise on {met} of 200 seeds"
    );
}

/// The reported Monte Carlo errors against the seed-to-seed spread over 40 seeds
/// (release-only: about a minute). For each hyperparameter set by the beliefs or
/// the tie-break, 39·s²/σ² (s the observed sd, σ² the mean reported variance)
/// must lie in the central 99.9 % of χ²₃₉ (quantiles from statrs 0.19). At fixed
/// draws: in precision mode a few seeds refit at 4× the draws, whose optimum
/// differs by the objective's finite-N bias, which the error of one fit does not
/// include (measured: cure_logit.mean's sd over 40 seeds 1.6e-5 against 4.4e-6
/// reported, all other hyperparameters inside the interval). Run with
/// `--nocapture` to see each ratio (BENCHMARKS.md, "Seed-proof fits").
#[test]
#[ignore]
fn reported_errors_match_the_seed_to_seed_spread() {
    use statrs::distribution::{ChiSquared, ContinuousCDF};
    let chi = ChiSquared::new(39.0).unwrap();
    let (lo, hi) = (chi.inverse_cdf(0.0005), chi.inverse_cdf(0.9995));
    let six =
        include_str!("fixtures/six-free-cure.toml").replace("seed = 1", "seed = 1\ndraws = 8192");
    for text in [
        include_str!("../model-templates/mixture-cure.toml"),
        six.as_str(),
    ] {
        let s = spec(text, 1);
        let r: Vec<FitResult> = (1..=40u64)
            .map(|seed| fit::fit(&spec(text, seed), None).unwrap())
            .collect();
        for &i in &s.free() {
            let name = &s.hypers()[i].name;
            let v: Vec<f64> = r.iter().map(|f| f.hyperparameters[name]).collect();
            let m = v.iter().sum::<f64>() / 40.0;
            let s2 = v.iter().map(|x| (x - m).powi(2)).sum::<f64>() / 39.0;
            let rep: Vec<f64> = r.iter().filter_map(|f| f.mc_error[name]).collect();
            assert_eq!(rep.len(), 40, "{name}: errors reported on every seed");
            let sigma2 = rep.iter().map(|e| e * e).sum::<f64>() / 40.0;
            let stat = 39.0 * s2 / sigma2;
            eprintln!(
                "{name}: observed sd {:.3e}, reported {:.3e}, ratio {:.2}, 39 s²/σ² = {stat:.1}",
                s2.sqrt(),
                sigma2.sqrt(),
                (s2 / sigma2).sqrt()
            );
            assert!(
                (lo..=hi).contains(&stat),
                "{name}: observed sd {:.3e}, reported {:.3e}, 39 s²/σ² = {stat:.1} not in [{lo:.1}, {hi:.1}]",
                s2.sqrt(),
                sigma2.sqrt()
            );
        }
    }
}
