//! Linear opinion pool of several experts' beliefs, atoms included:
//! F = Σ_e w_e F_e with weights normalised to 1 (Stone 1961; O'Hagan et al. 2006,
//! Uncertain Judgements, §9.2). Atoms at the same location add their pooled masses.

use crate::dist::{Atom, Dist, Mixed, Mixture};
use std::sync::Arc;

pub fn linear_pool(experts: Vec<(f64, Mixed)>) -> Result<Mixed, String> {
    if experts.is_empty() {
        return Err("a pool needs at least one expert".into());
    }
    if let Some((w, _)) = experts.iter().find(|e| !(e.0.is_finite() && e.0 > 0.0)) {
        return Err(format!("expert weight {w} must be finite and > 0"));
    }
    let total: f64 = experts.iter().map(|e| e.0).sum();
    let mut atoms: Vec<Atom> = Vec::new();
    let mut comps: Vec<(f64, Dist)> = Vec::new();
    for (w, m) in &experts {
        let w = w / total;
        for a in &m.atoms {
            match atoms.iter_mut().find(|b| b.at == a.at) {
                Some(b) => b.mass += w * a.mass,
                None => atoms.push(Atom {
                    at: a.at,
                    mass: w * a.mass,
                }),
            }
        }
        if let Some(c) = &m.cont {
            let cm = w * m.cont_mass();
            if cm > 0.0 {
                comps.push((cm, c.clone()));
            }
        }
    }
    let cont: Option<Dist> = match comps.len() {
        0 => None,
        1 => Some(comps.remove(0).1),
        _ => Some(Arc::new(Mixture::new(comps)?)),
    };
    Mixed::new(atoms, cont)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::dist::normal::Normal;

    #[test]
    fn pooled_cdf_is_weighted_average() {
        let a = Mixed::new(
            vec![Atom { at: 0.0, mass: 0.5 }],
            Some(Arc::new(Normal::new(1.0, 1.0).unwrap())),
        )
        .unwrap();
        let b = Mixed::continuous(Arc::new(Normal::new(-1.0, 2.0).unwrap()));
        let p = linear_pool(vec![(1.0, a.clone()), (3.0, b.clone())]).unwrap();
        for x in [-2.0, -0.1, 0.0, 0.7, 3.0] {
            let want = 0.25 * a.cdf(x) + 0.75 * b.cdf(x);
            assert!((p.cdf(x) - want).abs() < 1e-12, "x {x}");
        }
        assert!((p.atom_mass() - 0.125).abs() < 1e-15);
    }
}
