"""Opt-in check of `export --with-likelihood` (run by check-survival-exports.sh).

For each fitted folder given: build the exported Stan program (pystan/httpstan)
and PyMC model, sample their prior (Stan: NUTS with N = 0 patients; PyMC:
sample_prior_predictive), evaluate the likelihood once on five invented
patients (finite log density), and compare the implied survival at the
horizon of the fit's `survival_prob` belief with priorsmith's own fresh draws
of that belief (draws.csv): quantiles at 10/50/90 % and the two-sample
Kolmogorov-Smirnov statistic (scipy.stats.ks_2samp). S(h) is computed here
from the parameter draws with the formulas of docs/survival.md (numpy, scipy);
for the piecewise-hazard template from the exported log_hazard vector.
"""
import csv, json, sys, types
import numpy as np
from scipy import stats

INVENTED = {"time": [3.0, 12.5, 20.0, 36.0, 48.0], "event": [1, 1, 0, 1, 0]}


def gengamma_sf(z, q):
    """Prentice's generalised gamma S_u at w = z (scipy.special incomplete gammas)."""
    from scipy import special
    if abs(q) < 0.01:
        return stats.norm.sf(z)
    a = q ** -2
    u = a * np.exp(q * z)
    return special.gammaincc(a, u) if q > 0 else special.gammainc(a, u)


def surv_piecewise(cuts, draws, x, h):
    """Piecewise exponential: S(h) = exp(-exp(x'beta) sum_j h_j Delta_j(h)), draws["log_hazard"] n x J."""
    cuts = np.asarray(cuts, dtype=float)
    end = np.append(cuts[1:], np.inf)
    delta = np.clip(h, cuts, end) - cuts
    eta = sum(draws[f"hazard_effect_{c}"] * v for c, v in x.items()) if x else 0.0
    return np.exp(-np.exp(eta) * (np.exp(draws["log_hazard"]) @ delta))


def piecewise_loglik(cuts, lh, beta):
    """Right-censored piecewise-exponential log likelihood of the INVENTED patients
    (covariates 0, 1, 0, 1, 0): sum_i delta_i (lp_i + ln h_j(t_i)) - exp(lp_i) H_0(t_i)."""
    cut = np.asarray(cuts, dtype=float)
    t = np.asarray(INVENTED["time"])
    ev = np.asarray(INVENTED["event"])
    x = np.array([0.0, 1.0, 0.0, 1.0, 0.0])
    lp = sum(b * x for b in beta.values()) if beta else np.zeros(len(t))
    h0 = np.array([(np.exp(lh) * (np.clip(ti, cut, np.append(cut[1:], np.inf)) - cut)).sum() for ti in t])
    j = np.searchsorted(cut, t, side="right") - 1
    return float(np.sum(ev * (lp + lh[j]) - np.exp(lp) * h0))


def surv(template, latency, draws, x, h, q=None, cuts=None):
    """S(h) per draw at covariate values x (dict), from parameter draws (dict of arrays)."""
    if template == "piecewise-hazard":
        return surv_piecewise(cuts, draws, x, h)
    n = len(draws["log_scale"])
    k = draws.get("shape", np.ones(n))
    ls = draws["log_scale"].copy()
    eta = None
    for c, v in x.items():
        if f"latency_effect_{c}" in draws:
            ls += draws[f"latency_effect_{c}"] * v
        if f"hazard_effect_{c}" in draws:
            ls -= draws[f"hazard_effect_{c}"] * v / k
    z = k * (np.log(h) - ls)
    su = {"weibull": np.exp(-np.exp(z)), "exponential": np.exp(-np.exp(z)),
          "lognormal": stats.norm.sf(z), "loglogistic": 1 / (1 + np.exp(z)),
          "gengamma": gengamma_sf(z, q) if q is not None else None}[latency]
    if "cure_fraction" in draws:
        # A prior on the cured fraction pi itself: cure_logit = logit(pi),
        # log_theta = log(-log(pi)) (docs/survival.md).
        pi0 = draws["cure_fraction"]
        base = np.log(pi0) - np.log1p(-pi0) if template == "mixture-cure" else np.log(-np.log(pi0))
        draws = {**draws, "cure_logit": base, "log_theta": base}
    if template == "mixture-cure":
        eta = draws["cure_logit"] + sum(draws.get(f"cure_effect_{c}", 0) * v for c, v in x.items())
        pi = 1 / (1 + np.exp(-eta))
        return pi + (1 - pi) * su
    if template == "promotion-time-cure":
        eta = draws["log_theta"] + sum(draws.get(f"theta_effect_{c}", 0) * v for c, v in x.items())
        return np.exp(-np.exp(eta) * (1 - su))
    return su


def main(folder, spec_file, stan_file, pymc_file):
    import tomllib
    spec = tomllib.load(open(spec_file, "rb"))
    fit = json.load(open(f"{folder}/fit.json"))
    model = spec["model"]
    template = model["template"]
    latency = model.get("latency", "piecewise" if template == "piecewise-hazard" else "weibull")
    covs = model.get("covariates", [])
    # Every survival_prob belief (the piecewise starter has two horizons).
    ks = [i for i, b in enumerate(spec["belief"]) if b["quantity"] == "survival_prob"]
    with open(f"{folder}/draws.csv") as f:
        rows = list(csv.reader(f))
    checks = []
    for k in ks:
        b = spec["belief"][k]
        h = float(b["horizon"])
        x = {c: float(spec.get("profile", {}).get(b.get("profile", "reference"), {}).get(c, 0.0)) for c in covs}
        col = 1 + k  # draws.csv: a draw index, then one column per belief in file order
        ours = np.array([float(r[col]) for r in rows[1:]])
        print(f"== {fit['title']} ({template}, {latency}); S({h:g}) at {b.get('profile', 'reference')}: "
              f"{len(ours)} priorsmith fresh draws (column {rows[0][col]!r})")
        checks.append((h, x, ours))
    params = [p["parameter"] for p in fit["prior"]]

    # Stan.
    import stan
    code = open(stan_file).read()
    data0 = {"N": 0, "time": [], "event": [], **{c: [] for c in covs}}
    post = stan.build(code, data=data0, random_seed=1)
    fitd = post.sample(num_chains=4, num_samples=5000, num_warmup=1000)
    draws = {p: np.asarray(fitd[p]).ravel() for p in params}
    cuts = model.get("cuts")
    if cuts is not None:
        # pystan 3 puts a vector's index first: (J, draws).
        draws["log_hazard"] = np.asarray(fitd["log_hazard"]).reshape(len(cuts), -1).T
    stan_draws = draws
    data5 = {"N": 5, **INVENTED, **{c: [0.0, 1.0, 0.0, 1.0, 0.0] for c in covs}}
    post5 = stan.build(code, data=data5, random_seed=1)
    f5 = post5.sample(num_chains=1, num_samples=200, num_warmup=200)
    print(f"   stan: compiled, prior sampled ({len(draws[params[0]])} draws, 4 chains); "
          f"5 invented patients: lp__ mean {np.mean(f5['lp__']):.3f} (finite: {np.isfinite(f5['lp__']).all()})")
    if cuts is not None:
        # The log likelihood of the 5 invented patients at one prior draw: the log
        # density with the data less the log density without (the prior terms cancel).
        i0 = 7
        par = {p: np.asarray(fitd[p])[..., i0] for p in params}
        par = {p: v.item() if v.size == 1 else v.tolist() for p, v in par.items()}
        u = post5.unconstrain_pars(par)
        got = post5.log_prob(u) - post.log_prob(u)
        lh = np.asarray(fitd["log_hazard"])[..., i0]
        want = piecewise_loglik(cuts, lh, {c: par[f"hazard_effect_{c}"] for c in covs})
        print(f"   stan: log likelihood of the 5 invented patients at prior draw {i0}: {got:.6f}, "
              f"formula {want:.6f} (difference {abs(got - want):.2e})")

    # PyMC.
    import pymc as pm
    mod = types.ModuleType("exported")
    exec(open(pymc_file).read(), mod.__dict__)
    m0 = mod.make_model(time=[], event=[], **{c: [] for c in covs})
    with m0:
        pp = pm.sample_prior_predictive(draws=20000, random_seed=1)
    draws = {p: np.asarray(pp.prior[p]).ravel() for p in params}
    if cuts is not None:
        draws["log_hazard"] = np.asarray(pp.prior["log_hazard"]).reshape(-1, len(cuts))
    pymc_draws = draws
    m5 = mod.make_model(time=INVENTED["time"], event=INVENTED["event"],
                        **{c: [0.0, 1.0, 0.0, 1.0, 0.0] for c in covs})
    lp = m5.compile_logp()(m5.initial_point())
    print(f"   pymc: built, prior sampled (20000 draws); 5 invented patients: logp at the initial point {lp:.3f}")
    if cuts is not None:
        # The exported log likelihood at one prior draw against the formula written
        # here: sum_i delta_i (lp_i + ln h_j(t_i)) - exp(lp_i) H_0(t_i).
        pt_ = {k: np.asarray(v) for k, v in m5.initial_point().items()}
        i0 = 7
        for p in params:
            for key in pt_:
                if key == p or key.startswith(p + "_"):
                    val = np.asarray(pp.prior[p]).reshape(-1, *np.shape(pt_[key]))[i0]
                    pt_[key] = np.log(val) if key.endswith("_log__") else val
        loglik = m5.replace_rvs_by_values([m5.potentials[0]])[0]
        got = float(m5.compile_fn(loglik, inputs=m5.value_vars, on_unused_input="ignore")(pt_))
        lh = np.asarray(pp.prior["log_hazard"]).reshape(-1, len(cuts))[i0]
        want = piecewise_loglik(cuts, lh, {c: np.asarray(pp.prior[f"hazard_effect_{c}"]).ravel()[i0] for c in covs})
        print(f"   pymc: log likelihood of the 5 invented patients at prior draw {i0}: {got:.6f}, "
              f"formula {want:.6f} (difference {abs(got - want):.2e})")

    for h, x, ours in checks:
        for name, draws in (("stan", stan_draws), ("pymc", pymc_draws)):
            s = surv(template, latency, draws, x, h, model.get("gengamma_q"), cuts)
            d = stats.ks_2samp(s, ours)
            q = np.quantile(s, [0.1, 0.5, 0.9])
            qo = np.quantile(ours, [0.1, 0.5, 0.9])
            print(f"   {name:5s} S({h:g}) quantiles 10/50/90 %: {q.round(4)} vs priorsmith {qo.round(4)}; "
                  f"mean {s.mean():.4f} vs {ours.mean():.4f}; KS D = {d.statistic:.4f} (p = {d.pvalue:.3f})")


if __name__ == "__main__":
    main(*sys.argv[1:])
