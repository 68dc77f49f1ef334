//! Kaplan–Meier estimate with Greenwood standard errors.
//!
//! At each distinct event time t_j with n_j at risk and d_j events,
//! Ŝ(t) = Π_{t_j ≤ t} (1 − d_j/n_j) (Kaplan & Meier 1958, JASA 53) and
//! Var Ŝ(t) = Ŝ(t)² Σ_{t_j ≤ t} d_j / (n_j (n_j − d_j)) (Greenwood 1926; Klein &
//! Moeschberger 2003, *Survival Analysis*, eq. 4.2.2). Censored times tied with an
//! event time count as at risk at that time (the usual convention, ibid. §4.2).
//! Where Ŝ reaches 0 the variance is reported as 0.
//!
//! The median is the smallest time with Ŝ ≤ ½. Its standard error is the delta-
//! method one, se(Ŝ(m̂)) / f̂(m̂), with the density from the slope of Ŝ between the
//! largest time with Ŝ ≥ 0.55 and the smallest with Ŝ ≤ 0.45 (Collett 2015,
//! *Modelling Survival Data in Medical Research*, 3rd ed., §2.4; the interval of
//! Brookmeyer & Crowley 1982, Biometrics 38, inverts the same Greenwood variance).

use super::Obs;

/// Ŝ just after an event time, with its Greenwood standard error.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Step {
    pub time: f64,
    pub at_risk: usize,
    pub events: usize,
    pub surv: f64,
    pub se: f64,
}

#[derive(Debug, Clone)]
pub struct KaplanMeier {
    pub n: usize,
    pub events: usize,
    pub steps: Vec<Step>,
    /// Largest follow-up time (event or censored).
    pub last_time: f64,
}

impl KaplanMeier {
    pub fn new(data: &[Obs]) -> Self {
        let mut d: Vec<Obs> = data.to_vec();
        d.sort_by(|a, b| a.time.total_cmp(&b.time));
        let n = d.len();
        let mut steps = Vec::new();
        let (mut s, mut gw) = (1.0f64, 0.0f64);
        let mut i = 0;
        while i < n {
            let t = d[i].time;
            let at_risk = n - i;
            let mut j = i;
            let mut events = 0;
            while j < n && d[j].time == t {
                events += usize::from(d[j].event);
                j += 1;
            }
            if events > 0 {
                s *= 1.0 - events as f64 / at_risk as f64;
                let se = if events < at_risk {
                    gw += events as f64 / (at_risk as f64 * (at_risk - events) as f64);
                    s * gw.sqrt()
                } else {
                    0.0
                };
                steps.push(Step {
                    time: t,
                    at_risk,
                    events,
                    surv: s,
                    se,
                });
            }
            i = j;
        }
        KaplanMeier {
            n,
            events: d.iter().filter(|o| o.event).count(),
            steps,
            last_time: d.last().map_or(0.0, |o| o.time),
        }
    }

    /// (Ŝ(t), se) — right-continuous; (1, 0) before the first event.
    pub fn at(&self, t: f64) -> (f64, f64) {
        match self.steps.iter().rev().find(|s| s.time <= t) {
            Some(s) => (s.surv, s.se),
            None => (1.0, 0.0),
        }
    }

    /// The plateau: Ŝ and se after the last event, and the last event time.
    pub fn plateau(&self) -> Option<(f64, f64, f64)> {
        self.steps.last().map(|s| (s.surv, s.se, s.time))
    }

    /// The median and its delta-method standard error (None when Ŝ never reaches
    /// ½, or the slope around ½ cannot be estimated).
    pub fn median(&self) -> Option<(f64, Option<f64>)> {
        let m = self.steps.iter().find(|s| s.surv <= 0.5)?;
        let (u_t, u_s) = self
            .steps
            .iter()
            .rev()
            .find(|s| s.surv >= 0.55)
            .map_or((0.0, 1.0), |s| (s.time, s.surv));
        let se = self.steps.iter().find(|s| s.surv <= 0.45).and_then(|l| {
            let f = (u_s - l.surv) / (l.time - u_t);
            // se of Ŝ at the median: Greenwood just before the drop past ½.
            let se_s = self
                .at(m.time - f64::EPSILON * m.time.abs().max(1.0))
                .1
                .max(m.se);
            (f > 0.0 && f.is_finite() && se_s > 0.0).then(|| se_s / f)
        });
        Some((m.time, se))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// 6-MP arm of Freireich et al. (1963, Blood 21), as tabulated by Gehan (1965,
    /// Biometrika 52) and Klein & Moeschberger (2003, Table 4.1A). Weeks; false = censored.
    pub fn six_mp() -> Vec<Obs> {
        let t = [
            (6., 1),
            (6., 1),
            (6., 1),
            (6., 0),
            (7., 1),
            (9., 0),
            (10., 1),
            (10., 0),
            (11., 0),
            (13., 1),
            (16., 1),
            (17., 0),
            (19., 0),
            (20., 0),
            (22., 1),
            (23., 1),
            (25., 0),
            (32., 0),
            (32., 0),
            (34., 0),
            (35., 0),
        ];
        t.iter()
            .map(|(time, e)| Obs {
                time: *time,
                event: *e == 1,
            })
            .collect()
    }

    #[test]
    fn six_mp_matches_klein_moeschberger_and_lifelines() {
        let km = KaplanMeier::new(&six_mp());
        // Ŝ to 4 decimals: Klein & Moeschberger (2003) Table 4.1A.
        let published = [0.8571, 0.8067, 0.7529, 0.6902, 0.6275, 0.5378, 0.4482];
        // Ŝ, Greenwood se and 95 % log(−log) limits from lifelines 0.30.3
        // (KaplanMeierFitter), written by the script in the file's header.
        let table = include_str!("../../tests/data/six_mp_km.csv");
        let rows: Vec<Vec<f64>> = table
            .lines()
            .filter(|l| !l.starts_with('#') && !l.starts_with("time"))
            .map(|l| l.split(',').map(|x| x.parse().unwrap()).collect())
            .collect();
        assert_eq!(km.steps.len(), rows.len());
        assert_eq!(rows.len(), published.len());
        let z = crate::numerics::norm_quantile(0.975);
        for ((s, r), p) in km.steps.iter().zip(&rows).zip(published) {
            assert_eq!(s.time, r[0]);
            assert!((s.surv - p).abs() < 5e-5, "S({}) = {}", s.time, s.surv);
            assert!((s.surv - r[1]).abs() < 1e-9);
            assert!((s.se - r[2]).abs() < 1e-9, "se({}) = {}", s.time, s.se);
            // lifelines' limits: exp(−exp(ln(−ln Ŝ) ± z·se/(Ŝ ln Ŝ))) (Kalbfleisch & Prentice 2002, §1.4).
            let sd = s.se / (s.surv * s.surv.ln()).abs();
            let ll = (-s.surv.ln()).ln();
            let lower = (-(ll + z * sd).exp()).exp();
            let upper = (-(ll - z * sd).exp()).exp();
            assert!((lower - r[3]).abs() < 1e-6 && (upper - r[4]).abs() < 1e-6);
        }
        // Flat from week 23 to 35.
        assert_eq!(km.at(35.0).0, km.at(23.0).0);
        let (p, _, t) = km.plateau().unwrap();
        assert!((p - 0.4482).abs() < 5e-5 && t == 23.0);
        assert_eq!(km.median().unwrap().0, 23.0);
        assert_eq!(km.at(5.9), (1.0, 0.0));
    }
}
