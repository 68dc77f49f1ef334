//! Display labels: readable names of quantities for summary.txt, the report,
//! the plots and the terminal. Display only — keys in belief files, fit.json
//! and CSV headers keep the quantity names (`cure_fraction`, `r2`).
//!
//! A belief's default label is built by its template from the quantity name
//! and its options ("survival_prob at 36 months", "event_prob (treated)"); the
//! display label replaces the leading quantity name by its readable form from
//! [`NAMES`], and keeps a label the user wrote. A quantity missing from the
//! table (one added by a template later) reads as its name with spaces for
//! underscores, so new quantities display sensibly without an edit here.

use crate::fit::verdict::BeliefReport;

/// Readable names of the quantities the templates define.
pub const NAMES: &[(&str, &str)] = &[
    ("cure_fraction", "cure fraction"),
    ("cure_difference", "difference in cure fraction"),
    ("survival_prob", "survival probability"),
    ("event_prob", "event probability"),
    ("median_survival", "median survival"),
    ("median_uncured", "median survival of the uncured"),
    ("rmst", "restricted mean survival time"),
    ("r2", "R²"),
    ("r2_marginal", "marginal R²"),
    ("r2_latent", "latent-scale R²"),
    (
        "effective_nonzero",
        "effective number of non-zero coefficients",
    ),
    ("mean_response", "mean response"),
    ("rate", "event rate"),
    ("prevalence", "prevalence"),
    ("odds_ratio", "odds ratio"),
    ("rate_ratio", "rate ratio"),
    ("signal_sd", "signal standard deviation"),
    ("r2_fixed", "marginal R² (fixed effects)"),
    ("r2_conditional", "conditional R²"),
    ("icc", "intraclass correlation"),
    ("median_odds_ratio", "median odds ratio"),
    ("median_rate_ratio", "median rate ratio"),
    ("cluster_spread", "spread between clusters"),
];

/// The readable name of a quantity (its name with spaces when unknown).
pub fn quantity(name: &str) -> String {
    NAMES
        .iter()
        .find(|(k, _)| *k == name)
        .map_or_else(|| name.replace('_', " "), |(_, v)| v.to_string())
}

/// A belief's label for display: the template's default label with the
/// quantity's readable name, or the label the user wrote.
pub fn belief(b: &BeliefReport) -> String {
    match b.label.strip_prefix(b.quantity.as_str()) {
        Some(rest) if rest.is_empty() || rest.starts_with(' ') => {
            format!("{}{rest}", quantity(&b.quantity))
        }
        _ => b.label.clone(),
    }
}

/// The display label with the unit, for an axis: "median survival (months)".
pub fn with_unit(b: &BeliefReport) -> String {
    match &b.unit {
        Some(u) => format!("{} ({u})", belief(b)),
        None => belief(b),
    }
}

/// "per month" from a plural unit "months" (an English plural "s" dropped;
/// other units kept as written).
pub fn per_unit(unit: &str) -> String {
    let one = unit
        .strip_suffix('s')
        .filter(|s| s.len() > 1)
        .unwrap_or(unit);
    format!("per {one}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn readable_names_and_graceful_fallback() {
        assert_eq!(quantity("r2"), "R²");
        assert_eq!(quantity("cure_fraction"), "cure fraction");
        // A quantity this table does not know yet.
        assert_eq!(quantity("hazard_ratio_at_peak"), "hazard ratio at peak");
        assert_eq!(per_unit("months"), "per month");
        assert_eq!(per_unit("kg"), "per kg");
    }

    /// Default labels get the readable name; labels the user wrote are kept.
    #[test]
    fn belief_labels() {
        let mut b: BeliefReport = serde_json::from_value(serde_json::json!({
            "label": "survival_prob at 36 months", "quantity": "survival_prob",
            "stated_as": "", "unit": null, "weight": 1.0, "in_sample": 0.0, "fresh": 0.0,
            "noise_floor": 1.0, "ratio": 0.0, "rms_cdf_gap": 0.0, "verdict": "met_within_noise",
            "how": [], "probs": [], "believed_quantiles": [], "implied_quantiles": [],
            "atoms": [], "implied_mean": null, "implied_sd": null, "implied_mass_at_inf": 0.0,
            "believed_curve": {"x": [], "cdf": [], "pdf": [], "atoms": []},
            "ess": null, "believed_ess": null
        }))
        .unwrap();
        assert_eq!(belief(&b), "survival probability at 36 months");
        b.label = "survival_probability_5y".into();
        assert_eq!(belief(&b), "survival_probability_5y");
        b.label = "PFS at 2 years".into();
        assert_eq!(belief(&b), "PFS at 2 years");
        b.label = "survival_prob".into();
        b.unit = Some("months".into());
        assert_eq!(with_unit(&b), "survival probability (months)");
    }
}
