//! Export code of the piecewise-exponential template: the random walk's prior
//! statement (non-centred: `log_hazard_z` ~ N(0, 1), log_hazard = cumulative
//! sum of (log_hazard_1, hazard_walk_sd·log_hazard_z)), and the right-censored
//! likelihood for `export --with-likelihood`.
//!
//! Data (documented names, as for the other survival templates): `N`
//! patients, `time` (follow-up, > 0, in the template's time unit), `event` (1 =
//! event, 0 = right-censored), one vector per covariate named as the covariate
//! and coded as in the belief file's profiles. The cut points are written into
//! the code (they are part of the model, not data).
//!
//! With lp = Σ_c hazard_effect_c·x_c, H_0(t) = Σ_j h_j·Δ_j(t) and j(t) the
//! interval holding t (c_j ≤ t < c_{j+1}), one patient contributes
//! δ·(lp + ln h_{j(t)}) − e^{lp}·H_0(t) (right-censored likelihood
//! ∏ f^δ S^{1−δ} with f = h·S; Klein & Moeschberger, Survival Analysis, 2nd
//! ed., §3.5, section number from memory). brms has no piecewise-exponential
//! family and no prior class for a random walk across coefficients: its export
//! is refused with the reason and the mapping.

use super::Piecewise;
use crate::numerics::format::code as code_num;
use crate::templates::{Code, PriorStatement};
use std::collections::BTreeMap;

/// Why brms cannot take this prior, and how the model maps onto brms.
const BRMS_REFUSAL: &str = "brms has no piecewise-exponential family and no prior class for a \
    random walk across coefficients: the model maps to brms as a Poisson regression of the \
    episode-split data, brm(event_j ~ 0 + interval + <covariates> + offset(log(exposure_j)), \
    family = poisson()), with b_interval<j> = log_hazard[j] and b_<c> = hazard_effect_<c>, but \
    brms's priors on class b are independent, so log_hazard[j+1] - log_hazard[j] ~ \
    normal(0, hazard_walk_sd) with hazard_walk_sd itself uncertain cannot be stated; use \
    export --to stan or --to pymc";

fn section(code: &mut Code, lang: &str, sec: &str, lines: Vec<String>) {
    code.entry(lang.to_string())
        .or_default()
        .insert(sec.to_string(), lines);
}

/// A cut point in code: every digit (shortest round-trip form), with a decimal
/// point so Stan reads it as real.
fn cut(x: f64) -> String {
    format!("{x:?}")
}

impl Piecewise {
    /// The random walk's prior statement (code for Stan and PyMC; brms refused).
    pub(super) fn walk_statement(&self) -> PriorStatement {
        let j = self.intervals();
        let mut code = BTreeMap::new();
        section(
            &mut code,
            "stan",
            "parameters",
            vec![format!(
                "vector[{}] log_hazard_z;  // standardised steps of the random walk on the log hazards",
                j - 1
            )],
        );
        section(
            &mut code,
            "stan",
            "transformed_parameters",
            vec![format!(
                "vector[{j}] log_hazard = cumulative_sum(append_row(log_hazard_1, hazard_walk_sd * log_hazard_z));  // ln h_j on interval j"
            )],
        );
        section(
            &mut code,
            "stan",
            "model",
            vec![
                "// log_hazard[j+1] - log_hazard[j] ~ normal(0, hazard_walk_sd), non-centred"
                    .into(),
                "log_hazard_z ~ std_normal();".into(),
            ],
        );
        section(
            &mut code,
            "pymc",
            "model",
            vec![
                format!(
                    "log_hazard_z = pm.Normal(\"log_hazard_z\", mu=0, sigma=1, shape={})  # standardised steps of the random walk",
                    j - 1
                ),
                "log_hazard = pm.Deterministic(\"log_hazard\", pm.math.concatenate([pm.math.stack([log_hazard_1]), log_hazard_1 + pm.math.cumsum(hazard_walk_sd * log_hazard_z)]))  # ln h_j on interval j".into(),
            ],
        );
        section(&mut code, "brms", "unsupported", vec![BRMS_REFUSAL.into()]);
        PriorStatement {
            parameter: "log_hazard_z".into(),
            family: String::new(),
            params: Vec::new(),
            about: format!(
                "random walk on the log hazards of the {j} intervals starting at {} {}",
                self.cuts
                    .iter()
                    .map(|c| code_num(*c))
                    .collect::<Vec<_>>()
                    .join(", "),
                self.time_unit
            ),
            code: Some(code),
        }
    }

    /// The comment lines every export states.
    fn about_lines(&self) -> Vec<String> {
        let unit = &self.time_unit;
        let cuts: Vec<String> = self.cuts.iter().map(|c| code_num(*c)).collect();
        let lp = if self.covariates.is_empty() {
            "0 (no covariates)".to_string()
        } else {
            self.covariates
                .iter()
                .map(|c| format!("hazard_effect_{c} * {c}"))
                .collect::<Vec<_>>()
                .join(" + ")
        };
        vec![
            "Likelihood in priorsmith's parameterisation (piecewise-hazard template).".into(),
            format!(
                "Piecewise exponential: hazard h_j = exp(log_hazard[j]) on [cut_j, cut_j+1), cuts = {} {unit}, the last interval open-ended.",
                cuts.join(", ")
            ),
            "log_hazard[1] = log_hazard_1, log_hazard[j+1] = log_hazard[j] + hazard_walk_sd * log_hazard_z[j] (random walk).".into(),
            format!("S(t) = exp(-exp(lp) * sum_j h_j * (time spent in interval j before t)), lp = {lp}."),
            crate::templates::survival::code::data_about(unit, &self.covariates),
        ]
    }

    /// The Stan and PyMC likelihood sections.
    pub(super) fn code(&self) -> Code {
        let j = self.intervals();
        let cuts: Vec<String> = self.cuts.iter().map(|c| cut(*c)).collect();
        let lp = |x: &dyn Fn(&str) -> String| -> String {
            if self.covariates.is_empty() {
                "0.0".into()
            } else {
                self.covariates
                    .iter()
                    .map(|c| format!("hazard_effect_{c} * {}", x(c)))
                    .collect::<Vec<_>>()
                    .join(" + ")
            }
        };
        let mut code = Code::new();
        // Stan.
        let mut stan: BTreeMap<String, Vec<String>> = BTreeMap::new();
        stan.insert("about".into(), self.about_lines());
        stan.insert(
            "functions".into(),
            [
                "// H_0(t) = sum_j h_j * (time spent in [cut[j], cut[j+1]) before t), the last interval open-ended.",
                "real pw_cum_hazard(real t, vector hazard, vector cut) {",
                "  int J = num_elements(cut);",
                "  real H = 0;",
                "  for (j in 1:J) {",
                "    real end = j < J ? cut[j + 1] : positive_infinity();",
                "    if (t <= cut[j]) break;",
                "    H += hazard[j] * (fmin(t, end) - cut[j]);",
                "  }",
                "  return H;",
                "}",
                "// ln h_0(t): the log hazard of the interval holding t (cut[j] <= t < cut[j+1]).",
                "real pw_log_hazard(real t, vector log_hazard, vector cut) {",
                "  int J = num_elements(cut);",
                "  int j = 1;",
                "  while (j < J && t >= cut[j + 1]) j += 1;",
                "  return log_hazard[j];",
                "}",
            ]
            .map(String::from)
            .to_vec(),
        );
        stan.insert(
            "data".into(),
            crate::templates::survival::code::stan_data(&self.time_unit, &self.covariates),
        );
        let model = vec![
            "// likelihood: right-censored piecewise exponential".to_string(),
            "{".into(),
            format!(
                "  vector[{j}] cut = [{}]';  // interval starts, in {}",
                cuts.join(", "),
                self.time_unit
            ),
            format!("  vector[{j}] hazard = exp(log_hazard);"),
            "  for (n in 1:N) {".into(),
            format!("    real lp = {};", lp(&|c| format!("{c}[n]"))),
            "    target += -exp(lp) * pw_cum_hazard(time[n], hazard, cut);".into(),
            "    if (event[n] == 1) {".into(),
            "      target += lp + pw_log_hazard(time[n], log_hazard, cut);".into(),
            "    }".into(),
            "  }".into(),
            "}".into(),
        ];
        stan.insert("model".into(), model);
        stan.insert(
            "locals".into(),
            [
                "n",
                "cut",
                "hazard",
                "lp",
                "log_hazard",
                "pw_cum_hazard",
                "pw_log_hazard",
            ]
            .map(String::from)
            .to_vec(),
        );
        code.insert("stan".into(), stan);

        // PyMC.
        let mut py: BTreeMap<String, Vec<String>> = BTreeMap::new();
        py.insert("about".into(), self.about_lines());
        py.insert(
            "args".into(),
            crate::templates::survival::code::pymc_args(&self.covariates),
        );
        let m = vec![
            "# likelihood: right-censored piecewise exponential".to_string(),
            format!(
                "cut = np.array([{}])  # interval starts, in {}",
                cuts.join(", "),
                self.time_unit
            ),
            "cut_end = np.append(cut[1:], np.inf)".into(),
            "# time spent in each interval before time (N x J), and the interval holding time"
                .into(),
            "exposure = np.clip(time[:, None], cut[None, :], cut_end[None, :]) - cut[None, :]"
                .into(),
            "holding = np.searchsorted(cut, time, side=\"right\") - 1".into(),
            format!("lp = {}", lp(&|c| c.to_string())),
            "loglik = -pt.exp(lp) * pt.dot(exposure, pt.exp(log_hazard)) + event * (lp + log_hazard[holding])".into(),
            "pm.Potential(\"loglik\", pt.sum(loglik))".into(),
        ];
        py.insert("model".into(), m);
        py.insert(
            "locals".into(),
            [
                "cut",
                "cut_end",
                "exposure",
                "holding",
                "lp",
                "loglik",
                "log_hazard",
                "make_model",
            ]
            .map(String::from)
            .to_vec(),
        );
        code.insert("pymc".into(), py);
        code
    }
}
