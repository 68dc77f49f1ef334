//! Beliefs the template cannot meet at any hyperparameters, named before fitting
//! ([`crate::templates::Model::warnings`]), each with its remedy:
//!
//! * a contrast (`odds_ratio`, `rate_ratio`) of a covariate under the shared
//!   coefficient prior: every shared prior is symmetric about zero, so
//!   P(ratio < 1) = ½ at any hyperparameters; a belief putting a clearly
//!   different share below 1 (|F(1) − ½| ≥ 0.05) needs a prior of its own for
//!   that covariate ([`super::own`]);
//! * belief mass where the quantity cannot go: below 1 for the median odds or rate
//!   ratio, outside (0, 1) for a probability or R², below 0 for a positive
//!   quantity (more than 5 % of the belief's mass: a quantile belief's
//!   extrapolated tail may spill a little);
//! * a narrow R² belief under a horseshoe (no slab) with a half-Cauchy global
//!   scale τ ~ C⁺(0, τ0): logit R² ≈ 2 ln τ + const, and ln τ = ln τ0 + ln|C|, whose
//!   median-to-lower-quartile distance is ln(tan(π/4)/tan(π/8)) = 0.881 whatever
//!   τ0 (quartiles of the half-Cauchy: tan(π/8), 1, tan(3π/8)); the independent
//!   parts (design, σ) only add spread. (A regularised horseshoe's slab caps
//!   large τ, so its R² can be narrow: no warning there.) So the implied logit R² has a
//!   median-to-lower-quartile distance of about 1.76 or more, and a belief with
//!   less than three quarters of that is out of reach (remedy: an R2D2 prior,
//!   whose R² is Beta(a, b) directly, or a fixed global scale).

use super::coef::Kind;
use super::quantity::RegQuantity;
use super::request::RegDetail;
use super::{Link, Regression};
use crate::dist::Support;
use crate::target::Target;
use crate::templates::Request;

/// ln(tan(π/4)/tan(π/8)) = ln(1 + √2): the half-Cauchy's log median minus log
/// lower quartile.
const HALF_CAUCHY_LOWER: f64 = 0.881_373_587_019_543;

fn logit(p: f64) -> f64 {
    (p / (1.0 - p)).ln()
}

impl Regression {
    /// The warnings of [`crate::templates::Model::warnings`].
    pub(super) fn reach(&self, beliefs: &[(&Request, &Target)]) -> Vec<String> {
        let mut out = Vec::new();
        for (r, t) in beliefs {
            let Ok(d) = r.detail.get::<RegDetail>() else {
                continue;
            };
            let q = d.quantity;
            // 1. A non-null contrast under the shared, zero-centred symmetric prior.
            if matches!(q, RegQuantity::OddsRatio | RegQuantity::RateRatio) {
                if let Some(form) = &d.form {
                    let shared = form
                        .iter()
                        .all(|(j, _)| !self.own.iter().any(|o| o.col == *j));
                    let below = t.cdf(1.0);
                    if shared && (below - 0.5).abs() >= 0.05 {
                        let name = form
                            .first()
                            .map_or("?", |(j, _)| self.design.names[*j].as_str());
                        out.push(format!(
                            "{}: the belief puts {:.0} % of its mass below 1 (median {:.4}), but `{name}` \
                             has the shared coefficient prior, symmetric about zero, which puts exactly \
                             50 % below 1 at any hyperparameters; remedy: give it a prior of its own, \
                             e.g. [prior.{name}] family = \"normal\", mean = {{ fit = [-2, 2] }}, \
                             sd = {{ fit = [0.01, 2] }}",
                            r.label,
                            100.0 * below,
                            t.quantile(0.5)
                        ));
                    }
                }
            }
            // 2. Belief mass outside what the quantity can reach.
            let (lo, hi) = match (q, r.support) {
                (RegQuantity::MedianRatio, _) => (1.0, f64::INFINITY),
                (_, Support::Unit) => (0.0, 1.0),
                (_, Support::Positive) => (0.0, f64::INFINITY),
                _ => (f64::NEG_INFINITY, f64::INFINITY),
            };
            let outside = if lo.is_finite() { t.cdf(lo) } else { 0.0 }
                + if hi.is_finite() { 1.0 - t.cdf(hi) } else { 0.0 };
            if outside > 0.05 {
                out.push(format!(
                    "{}: {:.1} % of the belief's mass lies outside [{lo}, {hi}], where the quantity \
                     cannot go at any hyperparameters; remedy: state the belief on that range \
                     (e.g. a distribution whose support is the quantity's, or quantiles inside it)",
                    r.label,
                    100.0 * outside
                ));
            }
            // 3. A narrow R² under a half-Cauchy global scale.
            let r2 = matches!(q, RegQuantity::R2Latent | RegQuantity::R2Marginal)
                || (q == RegQuantity::R2 && self.link == Link::Identity);
            let hs = self.coef.kind == Kind::Horseshoe && !self.coef.global_fixed;
            if r2 && hs && self.own.is_empty() {
                let (q25, q50) = (t.quantile(0.25), t.quantile(0.5));
                if q25 > 0.0 && q50 < 1.0 {
                    let believed = logit(q50) - logit(q25);
                    let least = 2.0 * HALF_CAUCHY_LOWER;
                    if believed < 0.75 * least {
                        out.push(format!(
                            "{}: the belief is too narrow for a half-Cauchy global scale: its logit \
                             lower quartile lies {believed:.2} below its logit median, while under \
                             τ ~ C⁺(0, global_scale) the implied distance is about {least:.2} or more \
                             at any global_scale; remedy: family = \"r2d2\" (R² ~ Beta(a, b) directly) \
                             or global = \"fixed\"",
                            r.label
                        ));
                    }
                }
            }
        }
        out
    }
}
