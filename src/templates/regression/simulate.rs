//! One evaluation of a regression template: the parameter draws at λ, the design
//! products scaled to them (cached kinds: a global multiplier per draw on the
//! cached products; recomputed kinds: the products at λ, from the table when one
//! covers λ), then one function per quantity (formulas and references:
//! [`super`]).

use super::base::RegBase;
use super::coef::{self, Eff, Kind, Products};
use super::link::ratio;
use super::quantity::RegQuantity;
use super::request::RegDetail;
use super::Regression;
use crate::error::{Error, Result};
use crate::numerics::logistic;
use crate::templates::{BaseDraws, Request};

/// The products of one evaluation: the cached ones, or those computed at λ.
enum Prod<'a> {
    Cached(&'a Products),
    Fresh(Products),
}

/// One evaluation at λ: the per-draw values every quantity reads.
pub(super) struct Eval<'a> {
    model: &'a Regression,
    n: usize,
    /// Intercept draws α.
    alpha: Vec<f64>,
    /// Noise variances σ² (empty without a noise scale).
    sigma2: Vec<f64>,
    /// Reference residual variances ρ.
    rho: Vec<f64>,
    /// Multiplier of the products per draw (the global scale, or 1).
    g: Vec<f64>,
    prod: Prod<'a>,
    /// Draws of each covariate-specific coefficient, per unit of the stored
    /// design (in the order of [`Regression::own`]).
    own: Vec<Vec<f64>>,
    /// Random-intercept variances σ_u² (multilevel templates; else empty).
    su2: Vec<f64>,
    /// Random-slope variances per unit of the stored design, (σ_{v,k}·to_stored)²,
    /// one vector per slope (in the order of [`Regression::slopes`]).
    sv2: Vec<Vec<f64>>,
    /// Groups of covariates ([`super::groups`]): the number of groups G (1
    /// without), each draw's shares φ (draws × G) and their square roots, the
    /// groups' multipliers relative to `g`.
    ng: usize,
    phi: Vec<f64>,
    sphi: Vec<f64>,
}

impl Regression {
    /// The evaluation at hyperparameters `h` on `base`
    /// ([`crate::templates::Model::simulate`] then fills each quantity).
    pub(super) fn evaluation<'a>(&'a self, h: &[f64], base: &'a BaseDraws) -> Result<Eval<'a>> {
        let ex = RegBase::of(base)?;
        let n = base.n;
        let k = self.priors.priors.len();
        let mut par = vec![Vec::new(); k];
        self.priors.fill(h, &base.cols[..k], &mut par)?;
        let (gu, cu, ru) = (&base.cols[k], &base.cols[k + 1], &base.cols[k + 2]);
        let sigma2: Vec<f64> = match self.sigma {
            Some((s, true)) => par[s].clone(),
            Some((s, false)) => par[s].iter().map(|x| x * x).collect(),
            None => Vec::new(),
        };
        let alpha = std::mem::take(&mut par[self.intercept]);
        let own: Vec<Vec<f64>> = self
            .own
            .iter()
            .map(|o| par[o.prior].iter().map(|b| b * o.to_stored).collect())
            .collect();
        let su2: Vec<f64> = match self.cluster {
            Some(c) => par[c].iter().map(|s| s * s).collect(),
            None => Vec::new(),
        };
        let sv2: Vec<Vec<f64>> = self
            .slopes
            .iter()
            .map(|sl| {
                par[sl.prior]
                    .iter()
                    .map(|s| (s * sl.to_stored).powi(2))
                    .collect()
            })
            .collect();
        let rho: Vec<f64> = (0..n)
            .map(|i| self.ref_var(alpha[i], sigma2.get(i).copied().unwrap_or(0.0)))
            .collect();
        let c = &self.coef;
        if let (Some(ind), Some(gr)) = (&c.indep, &c.groups) {
            // Independent priors per group ([`super::indep`]): unit global, the
            // group multipliers in place of the joint prior's √φ_g.
            let m = ind.count();
            let u = &base.cols[k + 3..k + 3 + 3 * m];
            let (prod, sphi) = if c.cached {
                let prod = ex
                    .cached
                    .as_ref()
                    .ok_or_else(|| Error::Numeric("cached design products missing".into()))?;
                (Prod::Cached(prod), ind.multipliers(h, u, &rho)?)
            } else {
                let pr = super::indep::recompute(
                    ind,
                    gr,
                    &self.design,
                    h,
                    u,
                    &rho,
                    &ex.z,
                    &ex.loc,
                    &self.needs,
                )?;
                (Prod::Fresh(pr), vec![1.0; n * m])
            };
            let phi = sphi.iter().map(|x| x * x).collect();
            return Ok(Eval {
                model: self,
                n,
                alpha,
                sigma2,
                rho,
                g: vec![1.0; n],
                prod,
                own,
                su2,
                sv2,
                ng: m,
                phi,
                sphi,
            });
        }
        let wr2 = c.r2d2_w(h, ru)?;
        let (g, prod) = if c.cached {
            let g = (0..n)
                .map(|i| c.global(h, gu[i], wr2.get(i).copied().unwrap_or(0.0), rho[i]))
                .collect();
            let prod = ex
                .cached
                .as_ref()
                .ok_or_else(|| Error::Numeric("cached design products missing".into()))?;
            (g, Prod::Cached(prod))
        } else {
            let (g, p) = self.recomputed(h, ex, n, gu, cu, &rho)?;
            (g, Prod::Fresh(p))
        };
        let (ng, phi) = match &c.groups {
            Some(gr) => (gr.count(), gr.shares(h, &base.cols[k + 3..], n)?),
            None => (1, Vec::new()),
        };
        let sphi = phi.iter().map(|x| x.sqrt()).collect();
        Ok(Eval {
            model: self,
            n,
            alpha,
            sigma2,
            rho,
            g,
            prod,
            own,
            su2,
            sv2,
            ng,
            phi,
            sphi,
        })
    }

    /// Recomputed kinds: the global scales τ and the products at λ — from the
    /// table where it covers λ (then scaled by τ per draw), otherwise exactly.
    fn recomputed(
        &self,
        h: &[f64],
        ex: &RegBase,
        n: usize,
        gu: &[f64],
        cu: &[f64],
        rho: &[f64],
    ) -> Result<(Vec<f64>, Products)> {
        let c = &self.coef;
        let d = &self.design;
        let p = d.cols();
        let needs = &self.needs;
        let tau: Vec<f64> = (0..n).map(|i| c.global(h, gu[i], 0.0, rho[i])).collect();
        let slabs = if ex.kappa.len() == n {
            let s = h[c.idx[1]];
            ex.kappa.iter().map(|k| s * k).collect()
        } else {
            c.slabs(h, cu)?
        };
        let irho: Vec<f64> = rho.iter().map(|r| 1.0 / r).collect();
        let kind = c.kind;
        let fill = |i: usize, w: &mut [f64], z: &mut [f64]| {
            z.copy_from_slice(&ex.z[i * p..(i + 1) * p]);
            let loc = &ex.loc[i * p..(i + 1) * p];
            match kind {
                Kind::RegHorseshoe => {
                    let (t, cs) = (tau[i], slabs[i]);
                    for (w, l) in w.iter_mut().zip(loc) {
                        *w = coef::reg_horseshoe_scale(cs, t * l);
                    }
                }
                _ => {
                    let (pi, s) = (h[c.idx[0]], h[c.idx[1]]);
                    for (w, l) in w.iter_mut().zip(loc) {
                        *w = coef::spike_slab_scale(*l, pi, s);
                    }
                }
            }
        };
        let eff = if needs.eff {
            Eff::Direct(&irho)
        } else {
            Eff::None
        };
        let parallel = rayon::current_thread_index().is_none();
        let u = (h[c.idx[0]] / h[c.idx[1]]).ln();
        Ok(match ex.table.as_ref().filter(|t| t.covers(u)) {
            Some(t) => {
                // β = τ·f(τ0/s): the quadratic forms from the table, the cheap
                // O(p) parts (linear forms, effective_nonzero) exactly.
                let (q, v) = t.eval(u, n);
                let mut pr = if needs.eff {
                    coef::products(d, n, &[], false, false, eff, parallel, &fill)
                } else {
                    Products::default()
                };
                pr.q = q;
                pr.v = v;
                let mut w = vec![0.0; p];
                let mut z = vec![0.0; p];
                pr.forms = vec![vec![0.0; n]; needs.forms.len()];
                if !needs.forms.is_empty() {
                    for i in 0..n {
                        fill(i, &mut w, &mut z);
                        for (f, o) in needs.forms.iter().zip(pr.forms.iter_mut()) {
                            o[i] = f.iter().map(|(j, a)| a * w[*j] * z[*j]).sum::<f64>() / tau[i];
                        }
                    }
                }
                (tau, pr)
            }
            None => {
                let pr = coef::products(
                    d,
                    n,
                    &needs.forms,
                    needs.rows,
                    needs.q,
                    eff,
                    parallel,
                    &fill,
                );
                (vec![1.0; n], pr)
            }
        })
    }
}

impl Eval<'_> {
    /// Draws of the quantity of `r` into `o` (resized to the draws).
    pub(super) fn fill(&self, r: &Request, o: &mut Vec<f64>) -> Result<()> {
        o.resize(self.n, 0.0);
        let q = r.detail.get::<RegDetail>()?.quantity;
        match q {
            RegQuantity::R2 => self.r2(r, o)?,
            RegQuantity::R2Marginal => match r.detail.get::<RegDetail>()?.group {
                Some(k) => self.r2_marginal_group(k, o)?,
                None => self.r2_marginal(o),
            },
            RegQuantity::R2Latent => self.r2_latent(o),
            RegQuantity::EffectiveNonzero => self.effective_nonzero(o)?,
            RegQuantity::MeanResponse | RegQuantity::EventProb | RegQuantity::Rate => {
                self.at_profile(q, r, o)?
            }
            RegQuantity::OddsRatio | RegQuantity::RateRatio => self.ratio(r, o)?,
            RegQuantity::Prevalence => self.prevalence(r, o)?,
            RegQuantity::SignalSd => self.signal_sd(o),
            RegQuantity::Icc
            | RegQuantity::MedianRatio
            | RegQuantity::R2Fixed
            | RegQuantity::R2Conditional => self.multilevel(q, o)?,
            RegQuantity::ClusterSpread => self.cluster_spread(r, o)?,
            RegQuantity::SlopeSpread => self.slope_spread(r, o)?,
            RegQuantity::R2Share => {
                let k = r.detail.get::<RegDetail>()?.group.unwrap_or(usize::MAX);
                self.share(k, o)?
            }
        }
        Ok(())
    }

    /// The design variance of the linear predictor of draw i: the shared part
    /// g²q plus the covariate-specific terms ([`super::own`]).
    fn q_total(&self, i: usize) -> f64 {
        let g = self.g[i];
        let prod = self.prod();
        let mut q = self.q_shared(i);
        let k = self.own.len();
        if k == 0 {
            return q;
        }
        let cross = self.model.needs.cross;
        for a in 0..k {
            let ba = self.own[a][i];
            if let Some(c) = prod.forms.get(cross + a) {
                if self.ng == 1 {
                    q += 2.0 * g * ba * c[i];
                } else {
                    // groups: G values of the cross form per draw
                    q += 2.0 * ba * self.lin(c, i);
                }
            }
            for b in 0..k {
                q += ba * self.own[b][i] * self.model.own_cov[a * k + b];
            }
        }
        q.max(0.0)
    }

    /// The shared coefficients' design variance of draw i: g²q, or with groups
    /// g²·Σ_ab √(φ_a φ_b) Q_ab.
    fn q_shared(&self, i: usize) -> f64 {
        let g = self.g[i];
        let q = &self.prod().q;
        let m = self.ng;
        if m == 1 {
            return g * g * q[i];
        }
        let s = &self.sphi[i * m..(i + 1) * m];
        let qq = &q[i * m * m..(i + 1) * m * m];
        let mut t = 0.0;
        for a in 0..m {
            for b in 0..m {
                t += s[a] * s[b] * qq[a * m + b];
            }
        }
        g * g * t
    }

    /// The shared part of a linear form for draw i: g·f_i, or with groups
    /// g·Σ_a √φ_a f_ia.
    fn lin(&self, f: &[f64], i: usize) -> f64 {
        let m = self.ng;
        if m == 1 {
            return self.g[i] * f[i];
        }
        let s = &self.sphi[i * m..(i + 1) * m];
        self.g[i]
            * s.iter()
                .zip(&f[i * m..(i + 1) * m])
                .map(|(a, b)| a * b)
                .sum::<f64>()
    }

    /// The share of the explained variance of group `k`, per draw: φ_k under
    /// the joint R2D2, V_k/Σ_h V_h with independent priors per group (the same
    /// quantity: under the joint prior V_k = ρWφ_k).
    fn share(&self, k: usize, o: &mut [f64]) -> Result<()> {
        if self.phi.len() != self.n * self.ng || k >= self.ng {
            return Err(Error::Numeric(
                "r2_share asked without coefficient groups".into(),
            ));
        }
        let m = self.ng;
        let indep = self.model.coef.indep.is_some();
        for (i, v) in o.iter_mut().enumerate() {
            *v = if indep {
                let vv = &self.prod().v[i * m..(i + 1) * m];
                let ph = &self.phi[i * m..(i + 1) * m];
                let tot: f64 = (0..m).map(|a| ph[a] * vv[a]).sum();
                if tot > 0.0 {
                    ph[k] * vv[k] / tot
                } else {
                    // No group has signal (spike-and-slab groups with every
                    // coefficient out): no split to speak of; an equal one.
                    1.0 / m as f64
                }
            } else {
                self.phi[i * m + k]
            };
        }
        Ok(())
    }

    /// Group `k`'s own marginal R², V_k/(V_k + ρ), V_k = Σ_{j∈k} s_j²ω_j².
    fn r2_marginal_group(&self, k: usize, o: &mut [f64]) -> Result<()> {
        let m = self.ng;
        if self.phi.len() != self.n * m || k >= m {
            return Err(Error::Numeric(
                "r2_marginal of a group asked without coefficient groups".into(),
            ));
        }
        for (i, v) in o.iter_mut().enumerate() {
            let vk = self.g[i] * self.g[i] * self.phi[i * m + k] * self.prod().v[i * m + k];
            *v = ratio(vk, self.rho[i]);
        }
        Ok(())
    }

    /// The linear predictor minus α at every design row of draw i, formed
    /// explicitly (tests compare its variance with [`Eval::q_total`]).
    #[cfg(test)]
    pub(super) fn eta_rows(&self, i: usize) -> Vec<f64> {
        let nr = self.model.design.rows();
        let rows = &self.prod().rows[i * nr..(i + 1) * nr];
        rows.iter()
            .enumerate()
            .map(|(row, x)| self.g[i] * x + self.row_extra(i, row))
            .collect()
    }

    #[cfg(test)]
    pub(super) fn q_total_of(&self, i: usize) -> f64 {
        self.q_total(i)
    }

    /// The covariate-specific part of a linear form aᵀβ for draw i.
    fn own_part(&self, r: &Request, i: usize) -> Result<f64> {
        if self.own.is_empty() {
            return Ok(0.0);
        }
        let d = r.detail.get::<RegDetail>()?;
        let mut s = 0.0;
        if let Some(form) = &d.form {
            for (j, a) in form {
                if let Some(k) = self.model.own.iter().position(|o| o.col == *j) {
                    s += a * self.own[k][i];
                }
            }
        }
        Ok(s)
    }

    /// The linear predictor minus α at design row `row` of draw i: the shared
    /// part from the rows plus the covariate-specific columns.
    fn row_extra(&self, i: usize, row: usize) -> f64 {
        let xc = &self.model.design.xc;
        self.model
            .own
            .iter()
            .zip(&self.own)
            .map(|(o, b)| xc[(row, o.col)] * b[i])
            .sum()
    }

    /// ICC, median odds / rate ratio and the two multilevel R²
    /// ([`super::multilevel`]).
    fn multilevel(&self, q: RegQuantity, o: &mut [f64]) -> Result<()> {
        use super::multilevel::{median_ratio, obs_var};
        if self.su2.len() != self.n {
            return Err(Error::Numeric(
                "a multilevel quantity asked of a template without clusters".into(),
            ));
        }
        let m = self.model;
        for (i, v) in o.iter_mut().enumerate() {
            let su2 = self.su2[i];
            let d = obs_var(m.link, self.alpha[i], self.s2(i), su2, m.exposure);
            *v = match q {
                RegQuantity::Icc => ratio(su2, d),
                RegQuantity::MedianRatio => median_ratio(su2.sqrt()),
                // With random slopes the random part is the mean random-effect
                // variance over the design rows (Johnson 2014).
                RegQuantity::R2Fixed => ratio(self.q_total(i), self.random_mean(i) + d),
                _ => {
                    let f = self.q_total(i);
                    ratio(f + self.random_mean(i), d)
                }
            };
        }
        Ok(())
    }

    /// The 5–95 % range over clusters of the response at a profile.
    fn cluster_spread(&self, r: &Request, o: &mut [f64]) -> Result<()> {
        use super::multilevel::{response, Z95};
        if self.su2.len() != self.n {
            return Err(Error::Numeric(
                "cluster_spread asked of a template without clusters".into(),
            ));
        }
        let f = self.form(r)?;
        let link = self.model.link;
        // The profile's centred values (stored units) of the slope columns.
        let at: Vec<f64> = match &r.detail.get::<RegDetail>()?.form {
            Some(form) => self
                .model
                .slopes
                .iter()
                .map(|sl| {
                    form.iter()
                        .find(|(j, _)| *j == sl.col)
                        .map_or(0.0, |(_, a)| *a)
                })
                .collect(),
            None => vec![0.0; self.sv2.len()],
        };
        for (i, v) in o.iter_mut().enumerate() {
            let eta = self.alpha[i] + self.lin(f, i) + self.own_part(r, i)?;
            let slope: f64 = self.sv2.iter().zip(&at).map(|(s, a)| s[i] * a * a).sum();
            let h = Z95 * (self.su2[i] + slope).sqrt();
            *v = (response(link, eta + h) - response(link, eta - h)).max(0.0);
        }
        Ok(())
    }

    /// The mean over the design rows of the random-effect variance of draw i,
    /// σ_u² + Σ_k σ_{v,k}² var(x_k) (Johnson 2014; σ_u² without slopes).
    fn random_mean(&self, i: usize) -> f64 {
        let var = &self.model.design.var;
        self.su2[i]
            + self
                .model
                .slopes
                .iter()
                .zip(&self.sv2)
                .map(|(sl, s)| s[i] * var[sl.col])
                .sum::<f64>()
    }

    /// The 5–95 % range over clusters of a contrast's effect when its covariate
    /// has a random slope ([`super::multilevel`]): δ·(β + v_j) has sd |δ|σ_v,
    /// so the range is h(c + z|δ|σ_v) − h(c − z|δ|σ_v) with c = δβ and h the
    /// identity (mean difference) or exp (odds or rate ratio).
    fn slope_spread(&self, r: &Request, o: &mut [f64]) -> Result<()> {
        use super::multilevel::Z95;
        let d = r.detail.get::<RegDetail>()?;
        let (col, a) = d
            .form
            .as_ref()
            .and_then(|f| f.first().copied())
            .ok_or_else(|| Error::Numeric("slope_spread without a contrast".into()))?;
        let k = self
            .model
            .slopes
            .iter()
            .position(|s| s.col == col)
            .ok_or_else(|| Error::Numeric("slope_spread on a column without a slope".into()))?;
        let f = self.form(r)?;
        let identity = self.model.link == super::Link::Identity;
        for (i, v) in o.iter_mut().enumerate() {
            let c = self.lin(f, i) + self.own_part(r, i)?;
            let h = Z95 * a.abs() * self.sv2[k][i].sqrt();
            *v = if identity {
                2.0 * h
            } else {
                ((c + h).exp() - (c - h).exp()).max(0.0)
            };
        }
        Ok(())
    }

    fn prod(&self) -> &Products {
        match &self.prod {
            Prod::Cached(p) => p,
            Prod::Fresh(p) => p,
        }
    }

    fn s2(&self, i: usize) -> f64 {
        self.sigma2.get(i).copied().unwrap_or(0.0)
    }

    /// a_kᵀβ per draw for the linear form of `r`'s profiles.
    fn form(&self, r: &Request) -> Result<&[f64]> {
        self.model
            .needs
            .form_of(&r.profiles)
            .map(|k| self.prod().forms[k].as_slice())
            .ok_or_else(|| {
                Error::Numeric(format!(
                    "{}: profile not prepared in the base draws",
                    r.label
                ))
            })
    }

    /// X_cβ at the design rows, draw i at i·rows.
    fn rows(&self, r: &Request) -> Result<&[f64]> {
        if self.model.needs.rows && self.prod().rows.len() == self.n * self.model.design.rows() {
            Ok(&self.prod().rows)
        } else {
            Err(Error::Numeric(format!(
                "{}: design rows not prepared in the base draws",
                r.label
            )))
        }
    }

    fn r2(&self, r: &Request, o: &mut [f64]) -> Result<()> {
        let (g, m) = (&self.g, self.model);
        if m.link == super::Link::Identity {
            for (i, v) in o.iter_mut().enumerate() {
                *v = ratio(self.q_total(i), self.s2(i));
            }
            return Ok(());
        }
        let rw = self.rows(r)?;
        let nr = m.design.rows();
        for (i, v) in o.iter_mut().enumerate() {
            let x = &rw[i * nr..(i + 1) * nr];
            let a = self.alpha[i];
            *v = m.r2_rows(
                x.iter()
                    .enumerate()
                    .map(|(row, x)| a + g[i] * x + self.row_extra(i, row)),
                self.s2(i),
                nr,
            );
        }
        Ok(())
    }

    fn r2_marginal(&self, o: &mut [f64]) {
        let g = &self.g;
        let var = &self.model.design.var;
        for (i, v) in o.iter_mut().enumerate() {
            // Covariate-specific coefficients count with their drawn values.
            let own: f64 = self
                .model
                .own
                .iter()
                .zip(&self.own)
                .map(|(c, b)| var[c.col] * b[i] * b[i])
                .sum();
            let m = self.ng;
            let vs = if m == 1 {
                g[i] * g[i] * self.prod().v[i]
            } else {
                let vv = &self.prod().v[i * m..(i + 1) * m];
                g[i] * g[i] * (0..m).map(|a| self.phi[i * m + a] * vv[a]).sum::<f64>()
            };
            *v = ratio(vs + own, self.rho[i]);
        }
    }

    fn r2_latent(&self, o: &mut [f64]) {
        let r3 = std::f64::consts::PI.powi(2) / 3.0;
        for (i, v) in o.iter_mut().enumerate() {
            *v = ratio(self.q_total(i), r3);
        }
    }

    fn effective_nonzero(&self, o: &mut [f64]) -> Result<()> {
        let (g, prod) = (&self.g, self.prod());
        if !self.model.coef.cached && self.model.coef.indep.is_none() {
            o.copy_from_slice(&prod.eff);
            return Ok(());
        }
        let p = self.model.design.cols();
        if prod.eff_store.len() != self.n * p {
            return Err(Error::Numeric(
                "effective_nonzero not prepared in the base draws".into(),
            ));
        }
        if let Some(gr) = &self.model.coef.groups {
            let m = self.ng;
            for (i, v) in o.iter_mut().enumerate() {
                let t = g[i] * g[i] / self.rho[i];
                let ph = &self.phi[i * m..(i + 1) * m];
                *v = prod.eff_store[i * p..(i + 1) * p]
                    .iter()
                    .zip(&gr.of)
                    .map(|(e, a)| coef::shrink_term(*e as f64 * t * ph[*a]))
                    .sum();
            }
            return Ok(());
        }
        for (i, v) in o.iter_mut().enumerate() {
            let t = g[i] * g[i] / self.rho[i];
            *v = prod.eff_store[i * p..(i + 1) * p]
                .iter()
                .map(|e| coef::shrink_term(*e as f64 * t))
                .sum();
        }
        Ok(())
    }

    /// The mean response, event probability or rate at a profile.
    fn at_profile(&self, q: RegQuantity, r: &Request, o: &mut [f64]) -> Result<()> {
        let f = self.form(r)?;
        for (i, v) in o.iter_mut().enumerate() {
            let eta = self.alpha[i] + self.lin(f, i) + self.own_part(r, i)?;
            *v = match q {
                RegQuantity::EventProb => logistic(eta),
                RegQuantity::Rate => eta.exp(),
                _ => self.model.mean_of(eta),
            };
        }
        Ok(())
    }

    /// The odds or rate ratio of a contrast, exp(δ·β).
    fn ratio(&self, r: &Request, o: &mut [f64]) -> Result<()> {
        let f = self.form(r)?;
        for (i, v) in o.iter_mut().enumerate() {
            *v = (self.lin(f, i) + self.own_part(r, i)?).exp();
        }
        Ok(())
    }

    fn prevalence(&self, r: &Request, o: &mut [f64]) -> Result<()> {
        let rw = self.rows(r)?;
        let nr = self.model.design.rows();
        for (i, v) in o.iter_mut().enumerate() {
            let x = &rw[i * nr..(i + 1) * nr];
            let (a, g) = (self.alpha[i], self.g[i]);
            *v = x
                .iter()
                .enumerate()
                .map(|(row, x)| logistic(a + g * x + self.row_extra(i, row)))
                .sum::<f64>()
                / nr as f64;
        }
        Ok(())
    }

    fn signal_sd(&self, o: &mut [f64]) {
        let g = &self.g;
        for (i, v) in o.iter_mut().enumerate() {
            *v = if self.ng > 1 {
                self.q_total(i).sqrt()
            } else if self.own.is_empty() {
                g[i].abs() * self.prod().q[i].sqrt()
            } else {
                self.q_total(i).sqrt()
            };
        }
    }
}
