//! Links and the response scale: the mean response at a linear predictor, the
//! residual variance of a design row, the reference residual variance ρ of
//! `r2_marginal` and `effective_nonzero`, and the Bayesian R² of one draw from its
//! design-row linear predictors (formulas and references: [`super`]).

use super::Regression;
use crate::numerics::logistic;

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Link {
    Identity,
    Logit,
    Log,
}

impl Regression {
    pub(super) fn ref_var(&self, alpha: f64, sigma2: f64) -> f64 {
        match self.link {
            Link::Identity => sigma2,
            Link::Logit => 1.0 / (logistic(alpha) * logistic(-alpha)),
            Link::Log => (-alpha).exp() / self.exposure,
        }
    }

    pub(super) fn mean_of(&self, eta: f64) -> f64 {
        match self.link {
            Link::Identity => eta,
            Link::Logit => logistic(eta),
            Link::Log => self.exposure * eta.exp(),
        }
    }

    /// Bayesian R² of one draw from its design-row linear predictors.
    pub(super) fn r2_rows(&self, eta: impl Iterator<Item = f64>, sigma2: f64, nr: usize) -> f64 {
        let (mut s, mut ss, mut res) = (0.0, 0.0, 0.0);
        for e in eta {
            let m = self.mean_of(e);
            s += m;
            ss += m * m;
            res += match self.link {
                Link::Identity => sigma2,
                Link::Logit => logistic(e) * logistic(-e),
                Link::Log => m,
            };
        }
        let n = nr as f64;
        let mean = s / n;
        let var = (ss / n - mean * mean).max(0.0);
        let res = res / n;
        ratio(var, res)
    }
}

/// v/(v + r), 1 when v is infinite, 0 when both vanish.
#[inline]
pub(super) fn ratio(v: f64, r: f64) -> f64 {
    if v.is_infinite() || (v > 0.0 && r == 0.0) {
        1.0
    } else if v > 0.0 {
        v / (v + r)
    } else {
        0.0
    }
}
