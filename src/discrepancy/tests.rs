use super::*;
use crate::dist::uniform::Uniform;
use crate::dist::{Atom, Mixed};
use std::sync::Arc;

fn uniform_target() -> Target {
    Target::continuous(Arc::new(Uniform::new(0.0, 1.0).unwrap()))
}

/// Brute-force ∫₀¹ (G(u) − u)² w(u) du on a fine midpoint grid.
fn brute(kind: Kind, t: &Target, q: &[f64]) -> f64 {
    let m = 400_000;
    let n = q.len() as f64;
    let spans = t.spans();
    let mut s = 0.0;
    for k in 0..m {
        let u = (k as f64 + 0.5) / m as f64;
        // G(u): points below u, plus spans partially covered.
        let mut g = 0.0;
        for &x in q {
            if let Some(a) = t.atoms().iter().position(|a| a.at == x) {
                let (lo, hi) = spans[a];
                g += ((u - lo) / (hi - lo)).clamp(0.0, 1.0);
            } else if t.cdf(x) <= u {
                g += 1.0;
            }
        }
        g /= n;
        let w = match kind {
            Kind::CramerVonMises => 1.0,
            Kind::AndersonDarling => 1.0 / (u * (1.0 - u)),
        };
        s += (g - u).powi(2) * w;
    }
    s / m as f64
}

const U: [f64; 10] = [0.05, 0.18, 0.27, 0.39, 0.52, 0.61, 0.73, 0.84, 0.91, 0.97];

#[test]
fn classical_statistics_match_scipy() {
    // scipy 1.17: cramervonmises(U, 'uniform').statistic = 0.0382333 and the
    // Anderson–Darling A² = 0.2590724. Here d = W²/N and A²/N.
    let t = uniform_target();
    let n = U.len() as f64;
    let w2 = discrepancy(Kind::CramerVonMises, &t, &U) * n;
    let a2 = discrepancy(Kind::AndersonDarling, &t, &U) * n;
    assert!((w2 - 0.0382333).abs() < 5e-7, "W² = {w2}");
    assert!((a2 - 0.2590724).abs() < 5e-7, "A² = {a2}");
}

#[test]
fn closed_forms_agree_with_textbook_formulas() {
    // W² = 1/(12N) + Σ(u_(i) − (2i−1)/(2N))²; A² = −N − (1/N)Σ(2i−1)[ln u_(i) + ln(1 − u_(N+1−i))]
    // (Stephens 1974, JASA 69, eqs. for W² and A²).
    let t = uniform_target();
    let u: Vec<f64> = crate::rng::uniforms(3, 0, 500)
        .into_iter()
        .map(|x| x * 0.9 + 0.05)
        .collect();
    let mut u = u;
    u.sort_by(f64::total_cmp);
    let n = u.len() as f64;
    let w2: f64 = 1.0 / (12.0 * n)
        + u.iter()
            .enumerate()
            .map(|(i, x)| (x - (2.0 * i as f64 + 1.0) / (2.0 * n)).powi(2))
            .sum::<f64>();
    let a2 = -n
        - u.iter()
            .enumerate()
            .map(|(i, x)| (2.0 * i as f64 + 1.0) * (x.ln() + (1.0 - u[u.len() - 1 - i]).ln()))
            .sum::<f64>()
            / n;
    let d_cvm = discrepancy(Kind::CramerVonMises, &t, &u);
    let d_ad = discrepancy(Kind::AndersonDarling, &t, &u);
    assert!((d_cvm * n - w2).abs() < 1e-10 * w2.max(1.0));
    assert!(
        (d_ad * n - a2).abs() < 1e-8 * a2.max(1.0),
        "{} vs {a2}",
        d_ad * n
    );
}

fn atom_target() -> Target {
    // 30 % "never reached" (+∞), 20 % exactly at 2, the rest log-normal(1, 0.5).
    Target::new(
        Mixed::new(
            vec![
                Atom {
                    at: f64::INFINITY,
                    mass: 0.3,
                },
                Atom { at: 2.0, mass: 0.2 },
            ],
            Some(Arc::new(
                crate::dist::lognormal::LogNormal::new(1.0, 0.5).unwrap(),
            )),
        )
        .unwrap(),
    )
}

#[test]
fn mixed_closed_form_matches_brute_force() {
    let t = atom_target();
    let q = {
        let mut q = vec![
            1.0,
            2.0,
            2.0,
            3.5,
            f64::INFINITY,
            0.7,
            2.0,
            5.0,
            f64::INFINITY,
        ];
        q.sort_by(f64::total_cmp);
        q
    };
    for kind in [Kind::CramerVonMises, Kind::AndersonDarling] {
        let exact = discrepancy(kind, &t, &q);
        let b = brute(kind, &t, &q);
        assert!(
            (exact - b).abs() < 2e-4 * b.max(1e-3),
            "{kind:?}: {exact} vs {b}"
        );
    }
}

#[test]
fn zero_exactly_when_distributions_agree_with_atoms() {
    // Take the population quantile draws q_i = T⁻(p_i) on a fine stratified grid:
    // their distribution converges to T, and d shrinks like the grid's 1/N² bias
    // (no Monte Carlo noise), atoms included: about 1/(12N²) for a continuous
    // belief (the W² of a perfectly stratified sample), less with atoms.
    let t = atom_target();
    let d_at = |n: usize| {
        let q: Vec<f64> = (0..n)
            .map(|i| t.quantile((i as f64 + 0.5) / n as f64))
            .collect();
        discrepancy(Kind::CramerVonMises, &t, &q)
    };
    let (d1, d2) = (d_at(1000), d_at(4000));
    assert!(d1 < 1.0 / (12.0 * 1000f64.powi(2)), "{d1}");
    assert!(d2 < d1 / 8.0, "{d2} vs {d1}");
}

#[test]
fn positive_when_an_atom_is_missing_or_extra() {
    let t = atom_target();
    let n = 4000;
    let grid = |m: &dyn Fn(f64) -> f64| -> Vec<f64> {
        let mut q: Vec<f64> = (0..n).map(|i| m((i as f64 + 0.5) / n as f64)).collect();
        q.sort_by(f64::total_cmp);
        q
    };
    // Same continuous shape but no mass at +∞: a large discrepancy.
    let ln = crate::dist::lognormal::LogNormal::new(1.0, 0.5).unwrap();
    use crate::dist::Continuous;
    let q = grid(&|p| ln.quantile(p));
    assert!(discrepancy(Kind::CramerVonMises, &t, &q) > 1e-3);
    // An atom where the belief has none.
    let c = Target::continuous(Arc::new(ln));
    let q = grid(&|p| if p < 0.1 { 2.0 } else { ln.quantile(p) });
    assert!(discrepancy(Kind::AndersonDarling, &c, &q) > 1e-3);
}

#[test]
fn noise_floor_matches_simulation() {
    // Continuous: E[d] = 1/(6N) and 1/N (Stephens 1974). With atoms: compare the
    // integrated floor with the mean over seeded replicate samples, within 4 MC
    // standard errors.
    let t = uniform_target();
    assert!((noise_floor(Kind::CramerVonMises, &t, 100) - 1.0 / 600.0).abs() < 1e-15);
    assert!((noise_floor(Kind::AndersonDarling, &t, 100) - 0.01).abs() < 1e-12);
    let t = atom_target();
    let n = 200;
    let reps = 2000;
    for kind in [Kind::CramerVonMises, Kind::AndersonDarling] {
        let floor = noise_floor(kind, &t, n);
        let ds: Vec<f64> = (0..reps)
            .map(|r| {
                let mut q: Vec<f64> = crate::rng::uniforms(99, r as u64, n)
                    .into_iter()
                    .map(|u| t.quantile(u))
                    .collect();
                q.sort_by(f64::total_cmp);
                discrepancy(kind, &t, &q)
            })
            .collect();
        let m = ds.iter().sum::<f64>() / reps as f64;
        let sd = (ds.iter().map(|d| (d - m).powi(2)).sum::<f64>() / (reps - 1) as f64).sqrt();
        let se = sd / (reps as f64).sqrt();
        assert!(
            (m - floor).abs() < 4.0 * se,
            "{kind:?}: mean {m}, floor {floor}, se {se}"
        );
        assert!(floor < noise_floor(kind, &uniform_target(), n));
    }
}
