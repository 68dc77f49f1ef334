"""The Python face of the library: belief sources, check, simulate, fit and the Fit object."""

from __future__ import annotations

import json
import os
import pathlib
from typing import Any, Dict, List, Mapping, Optional, Union

import numpy as np

from . import _core

Source = Union[str, "os.PathLike[str]", Mapping[str, Any]]


def _core_spec(
    source: Source,
    seed: Optional[int] = None,
    draws: Optional[int] = None,
    max_draws: Optional[int] = None,
    max_memory_mb: Optional[int] = None,
):
    kw = dict(seed=seed, draws=draws, max_draws=max_draws, max_memory_mb=max_memory_mb)
    if isinstance(source, Mapping):
        return _core.load_dict(dict(source), **kw)
    if isinstance(source, os.PathLike):
        return _core.load_path(os.fspath(source), **kw)
    if isinstance(source, str):
        if "\n" in source:
            return _core.load_text(source, **kw)
        return _core.load_path(source, **kw)
    raise TypeError(
        "a belief source is a path (str or os.PathLike), TOML text (a str with a line break) "
        f"or a dict; got {type(source).__name__}"
    )


class Beliefs:
    """A validated belief file, ready to check, simulate or fit (see :func:`load`)."""

    def __init__(self, core: Any) -> None:
        self._core = core

    def summary(self) -> Dict[str, Any]:
        """Template, hyperparameters (free or fixed), beliefs, draws, seed and warnings."""
        return self._core.summary()

    def simulate(self, values: Optional[Mapping[str, float]] = None) -> Dict[str, Any]:
        """What the hyperparameters imply (defaults for those not in ``values``):
        per belief, the implied mean, sd, quantiles and atom masses beside the
        believed quantiles (the JSON of ``priorsmith simulate --json``)."""
        pairs = [(str(k), float(v)) for k, v in (values or {}).items()]
        return json.loads(self._core.simulate(pairs))

    def fit(self, replicates: Optional[int] = None) -> "Fit":
        """Fit the free hyperparameters. Releases the interpreter lock; Ctrl-C stops
        the fit and raises KeyboardInterrupt. ``replicates`` (2–100) adds that many
        independent-seed refits to judge the hyperparameters' spread."""
        return Fit(self._core.fit(replicates))


def load(
    source: Source,
    *,
    seed: Optional[int] = None,
    draws: Optional[int] = None,
    max_draws: Optional[int] = None,
    max_memory_mb: Optional[int] = None,
) -> Beliefs:
    """Read and validate beliefs from a path, TOML text or a dict.

    ``seed`` and ``draws`` override ``[simulation]`` as the command line's
    ``--seed``/``--draws`` do; ``max_draws`` raises the cap on draws and
    ``max_memory_mb`` sets the working-memory budget (``--max-draws``,
    ``--max-memory``). Raises :class:`priorsmith.BeliefFileError` (file, line,
    key, value) on bad input."""
    return Beliefs(_core_spec(source, seed, draws, max_draws, max_memory_mb))


def check(source: Source, **options: Any) -> Dict[str, Any]:
    """Validate beliefs (as ``priorsmith check``) and return their summary."""
    return load(source, **options).summary()


def simulate(
    source: Source, values: Optional[Mapping[str, float]] = None, **options: Any
) -> Dict[str, Any]:
    """What given hyperparameters imply (as ``priorsmith simulate --json``)."""
    return load(source, **options).simulate(values)


def fit(source: Source, *, replicates: Optional[int] = None, **options: Any) -> "Fit":
    """Fit the free hyperparameters of a belief source (as ``priorsmith fit``).

    Options are those of :func:`load`. The result is the same, number for
    number, as the command line's fit.json for the same file, seed and draws."""
    return load(source, **options).fit(replicates)


class Fit:
    """A finished fit: the fit record (what fit.json holds) and the fresh draws."""

    def __init__(self, core: Any) -> None:
        self._core = core
        self.record: Dict[str, Any] = json.loads(core.record_json())
        """The whole fit record, as fit.json holds it."""

    def __repr__(self) -> str:
        return (
            f"<priorsmith.Fit {self.record['template']} '{self.record['title']}': "
            f"{self.verdict}, {len(self.free)} free hyperparameters>"
        )

    @property
    def hyperparameters(self) -> Dict[str, float]:
        """Every hyperparameter (fixed ones too), keyed ``<parameter>.<hyperparameter>``,
        in the template's order."""
        h = self.record["hyperparameters"]
        return {k: h[k] for k in self.record["order"]}

    @property
    def free(self) -> List[str]:
        """The hyperparameters the fit chose."""
        return list(self.record["free"])

    @property
    def verdict(self) -> str:
        """The overall verdict: ``met_within_noise``, ``met_approximately`` or ``not_met``."""
        return self.record["verdict"]

    @property
    def prior(self) -> List[Dict[str, Any]]:
        """The fitted prior: per parameter its family and parameters (a dict in the
        family's order), or, for statements a template writes itself (vector
        priors), the family empty and the code per language under ``code``."""
        out = []
        for p in self.record["prior"]:
            e = {
                "parameter": p["parameter"],
                "family": p.get("family", ""),
                "params": {k: v for k, v in p.get("params", [])},
                "about": p.get("about", ""),
            }
            if p.get("code") is not None:
                e["code"] = p["code"]
            out.append(e)
        return out

    @property
    def identifiability(self) -> Dict[str, Any]:
        """The curvature analysis: ``undetermined``, ``borderline`` and ``at_bound``
        hyperparameters, the directions with their calls, and the profiles."""
        return self.record["identifiability"]

    @property
    def set_by(self) -> Dict[str, str]:
        """What set each hyperparameter: beliefs, tie-break, bound, undetermined, fixed."""
        return dict(self.record["set_by"])

    @property
    def mc_error(self) -> Dict[str, Optional[float]]:
        """Monte Carlo standard error of each free hyperparameter (None: undetermined)."""
        return dict(self.record["mc_error"])

    @property
    def fresh_draws(self) -> Dict[str, np.ndarray]:
        """Fresh draws of each belief's quantity at the fitted prior (draws.csv's columns),
        keyed by belief label; +inf marks a quantity never reached (a median of a cured
        population)."""
        labels = [b["label"] for b in self.record["beliefs"]]
        arrays = [np.frombuffer(b, dtype="<f8") for b in self._core.fresh_draws()]
        return dict(zip(labels, arrays))

    def belief_table(self, as_frame: Optional[bool] = None):
        """One row per belief: label, quantity, verdict, fresh and in-sample
        discrepancy, noise floor, their ratio, RMS CDF gap, prior ESS (implied and
        believed, for probability-type quantities) and the believed and implied
        quantiles at 5, 10, 25, 50, 75, 90, 95 % (``believed_q50``, ``implied_q50``).

        A pandas DataFrame when pandas is installed (``as_frame=None``) or asked for
        (``as_frame=True``), else a list of dicts."""
        rows = []
        for b in self.record["beliefs"]:
            r: Dict[str, Any] = {
                "label": b["label"],
                "quantity": b["quantity"],
                "verdict": b["verdict"],
                "fresh": b["fresh"],
                "in_sample": b["in_sample"],
                "floor": b["noise_floor"],
                "ratio": b["ratio"],
                "rms_cdf_gap": b["rms_cdf_gap"],
                "ess": b.get("ess"),
                "believed_ess": b.get("believed_ess"),
                "implied_mass_at_inf": b["implied_mass_at_inf"],
            }
            for p, bq, iq in zip(b["probs"], b["believed_quantiles"], b["implied_quantiles"]):
                tag = f"q{round(p * 100):02d}"
                r[f"believed_{tag}"] = _num(bq)
                r[f"implied_{tag}"] = _num(iq)
            rows.append(r)
        if as_frame is False:
            return rows
        try:
            import pandas as pd
        except ImportError:
            if as_frame:
                raise ImportError(
                    "belief_table(as_frame=True) needs pandas: pip install pandas"
                ) from None
            return rows
        return pd.DataFrame(rows)

    def export(self, to: str = "pymc", with_likelihood: bool = False) -> str:
        """Ready-to-paste code for the fitted prior: ``to`` is ``"stan"``, ``"pymc"``,
        ``"brms"`` or ``"json"`` (as ``priorsmith export``); ``with_likelihood`` adds
        the template's likelihood (Stan and PyMC)."""
        return self._core.export(to, with_likelihood)

    def write_report(self, folder: Union[str, "os.PathLike[str]"]) -> pathlib.Path:
        """Write the fit's folder as ``priorsmith fit --out`` does: fit.json,
        summary.txt, draws.csv, spec.toml, report.html and plots/. The folder is
        replaced as a whole (its previous files are kept beside it, as the command
        line does). Returns the folder."""
        self._core.write_report(os.fspath(folder))
        return pathlib.Path(folder)

    def to_pymc(self, model: Any = None) -> Dict[str, Any]:
        """Create the fitted priors as PyMC random variables inside the current
        ``pm.Model()`` context (or ``model``) and return them by name (the names of
        the PyMC export). See :func:`priorsmith.pymc.add_priors`."""
        from .pymc import add_priors

        return add_priors(self, model=model)


def _num(x: Any) -> float:
    """fit.json writes ±inf and NaN as strings; numbers as numbers."""
    if isinstance(x, str):
        return float(x)
    return x
