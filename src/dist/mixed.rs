//! Distributions on the extended real line with atoms: a continuous part of mass
//! 1 − Σ m_k plus point masses m_k at locations a_k (finite, or +∞ for "never
//! reached"). CDF F(x) = Σ_{a_k ≤ x} m_k + (1 − Σ m_k)·F_c(x); the left limit
//! F(x−) counts only atoms strictly below x. The quantile is the generalised
//! inverse inf{x : F(x) ≥ p}. Atoms are handled exactly, never by jittering
//! (see `discrepancy` for how the discrepancy treats them).

use super::Dist;

#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Atom {
    #[serde(with = "crate::numerics::ext::num")]
    pub at: f64,
    pub mass: f64,
}

#[derive(Debug, Clone)]
pub struct Mixed {
    /// Sorted by location, masses in (0, 1), total mass < 1 when `cont` is present.
    pub atoms: Vec<Atom>,
    pub cont: Option<Dist>,
}

impl Mixed {
    /// Validates masses: each in (0, 1], total ≤ 1; total exactly 1 only without a
    /// continuous part. Locations must be distinct and not −∞ or NaN.
    pub fn new(mut atoms: Vec<Atom>, cont: Option<Dist>) -> Result<Self, String> {
        for a in &atoms {
            if a.at.is_nan() || a.at == f64::NEG_INFINITY {
                return Err(format!("atom location {} is not allowed", a.at));
            }
            if !(a.mass > 0.0 && a.mass <= 1.0) {
                return Err(format!(
                    "atom mass {} at {} must be in (0, 1]",
                    a.mass, a.at
                ));
            }
        }
        atoms.sort_by(|a, b| a.at.total_cmp(&b.at));
        if atoms.windows(2).any(|w| w[0].at == w[1].at) {
            return Err("two atoms share a location".into());
        }
        let total: f64 = atoms.iter().map(|a| a.mass).sum();
        match &cont {
            Some(_) if total >= 1.0 => Err(format!(
                "atom masses sum to {total}; with a continuous part they must sum below 1"
            )),
            None if (total - 1.0).abs() > 1e-9 => Err(format!(
                "atom masses sum to {total}; without a continuous part they must sum to 1"
            )),
            _ => Ok(Self { atoms, cont }),
        }
    }

    pub fn continuous(d: Dist) -> Self {
        Self {
            atoms: Vec::new(),
            cont: Some(d),
        }
    }

    pub fn atom_mass(&self) -> f64 {
        self.atoms.iter().map(|a| a.mass).sum()
    }

    pub fn cont_mass(&self) -> f64 {
        if self.cont.is_some() {
            1.0 - self.atom_mass()
        } else {
            0.0
        }
    }

    fn fc(&self, x: f64) -> f64 {
        match &self.cont {
            Some(d) => {
                if x == f64::INFINITY {
                    1.0
                } else {
                    d.cdf(x)
                }
            }
            None => 0.0,
        }
    }

    /// F(x) = P(X ≤ x).
    pub fn cdf(&self, x: f64) -> f64 {
        let a: f64 = self
            .atoms
            .iter()
            .filter(|a| a.at <= x)
            .map(|a| a.mass)
            .sum();
        (a + self.cont_mass() * self.fc(x)).min(1.0)
    }

    /// F(x−) = P(X < x).
    pub fn cdf_left(&self, x: f64) -> f64 {
        let a: f64 = self.atoms.iter().filter(|a| a.at < x).map(|a| a.mass).sum();
        let c = if x == f64::INFINITY {
            self.cont_mass()
        } else {
            self.cont_mass() * self.fc(x)
        };
        (a + c).min(1.0)
    }

    /// The atom at exactly `x`, if any.
    pub fn atom_at(&self, x: f64) -> Option<&Atom> {
        self.atoms.iter().find(|a| a.at == x)
    }

    /// inf{x : F(x) ≥ p}.
    pub fn quantile(&self, p: f64) -> f64 {
        let p = p.clamp(0.0, 1.0);
        // Walk the atoms in order; between atoms the continuous part carries the mass.
        let cm = self.cont_mass();
        let mut below = 0.0; // atom mass strictly below the current segment
        let mut lo = f64::NEG_INFINITY;
        for a in &self.atoms {
            let left = below + cm * self.fc_left_of(a.at);
            if p <= left && cm > 0.0 {
                return self.cont_quantile((p - below) / cm, lo, a.at);
            }
            if p <= left + a.mass {
                return a.at;
            }
            below += a.mass;
            lo = a.at;
        }
        if cm > 0.0 {
            self.cont_quantile(((p - below) / cm).min(1.0), lo, f64::INFINITY)
        } else {
            self.atoms.last().map(|a| a.at).unwrap_or(f64::NAN)
        }
    }

    fn fc_left_of(&self, x: f64) -> f64 {
        if x == f64::INFINITY {
            1.0
        } else {
            self.fc(x)
        }
    }

    fn cont_quantile(&self, p: f64, lo: f64, hi: f64) -> f64 {
        match &self.cont {
            Some(d) => d.quantile(p.clamp(0.0, 1.0)).clamp(lo, hi),
            None => f64::NAN,
        }
    }

    /// Mean, when finite (an atom at +∞ makes it infinite).
    pub fn mean(&self) -> Option<f64> {
        let mut s = 0.0;
        for a in &self.atoms {
            if a.at.is_infinite() {
                return None;
            }
            s += a.mass * a.at;
        }
        if let Some(d) = &self.cont {
            s += self.cont_mass() * d.mean()?;
        }
        Some(s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::dist::lognormal::LogNormal;
    use std::sync::Arc;

    #[test]
    fn atom_at_infinity() {
        let d = Mixed::new(
            vec![Atom {
                at: f64::INFINITY,
                mass: 0.3,
            }],
            Some(Arc::new(LogNormal::new(2.0, 0.5).unwrap())),
        )
        .unwrap();
        assert!((d.cdf(2f64.exp()) - 0.35).abs() < 1e-12);
        assert!((d.cdf_left(f64::INFINITY) - 0.7).abs() < 1e-12);
        assert_eq!(d.cdf(f64::INFINITY), 1.0);
        assert_eq!(d.quantile(0.8), f64::INFINITY);
        assert!((d.quantile(0.35) - 2f64.exp()).abs() < 1e-9);
    }

    #[test]
    fn finite_atom_inside_support() {
        let d = Mixed::new(
            vec![Atom { at: 0.0, mass: 0.2 }],
            Some(Arc::new(
                crate::dist::normal::Normal::new(0.0, 1.0).unwrap(),
            )),
        )
        .unwrap();
        assert!((d.cdf_left(0.0) - 0.4).abs() < 1e-12);
        assert!((d.cdf(0.0) - 0.6).abs() < 1e-12);
        assert_eq!(d.quantile(0.5), 0.0);
        assert!(d.quantile(0.3) < 0.0 && d.quantile(0.7) > 0.0);
    }

    #[test]
    fn rejects_bad_masses() {
        let c: Dist = Arc::new(LogNormal::new(0.0, 1.0).unwrap());
        assert!(Mixed::new(vec![Atom { at: 1.0, mass: 1.0 }], Some(c.clone())).is_err());
        assert!(Mixed::new(
            vec![Atom {
                at: 1.0,
                mass: -0.1
            }],
            Some(c)
        )
        .is_err());
    }
}
