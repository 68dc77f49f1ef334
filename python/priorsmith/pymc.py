"""The PyMC hand-off: the fitted priors as PyMC random variables.

Inside a ``pm.Model()`` context, :func:`add_priors` (or ``Fit.to_pymc()``)
creates one random variable per fitted prior statement, named as in the PyMC
export (``fit.export(to="pymc")``), and returns them in a dict. Scalar priors
are built from the family's PyMC form at full precision (the export writes 6
significant digits); a family PyMC lacks is stated on its helper scale
(``<name>_<suffix>``, e.g. a logit-normal as a normal on the logit scale) with
the parameter as a ``pm.Deterministic``, exactly as the export writes it.
Statements a template writes itself (vector priors of the regression
templates) run the export's own PyMC lines.

PyMC is optional: without it the call raises ImportError saying how to install it.

The fitted prior is a proposal: review it with the responsible statistician,
check prior–data conflict and sensitivity, and follow applicable regulatory
guidance and local practice.
"""

from __future__ import annotations

from typing import Any, Dict


def _import_pymc():
    try:
        import pymc as pm  # noqa: F401
    except ImportError as e:
        raise ImportError(
            "the PyMC hand-off needs PyMC 5, which is not installed: "
            "pip install pymc  (or pip install 'priorsmith[pymc]'); "
            "fit.export(to='pymc') gives the same priors as code without it"
        ) from e
    return pm


def add_priors(fit: Any, model: Any = None) -> Dict[str, Any]:
    """Create the fitted priors of ``fit`` as PyMC random variables in the current
    model context (or in ``model``) and return them by name: the parameter's
    variable, and for a family on a helper scale the helper variable too."""
    pm = _import_pymc()
    if model is None:
        model = pm.modelcontext(None)
    forms = fit._core.pymc_forms()
    out: Dict[str, Any] = {}
    with model:
        for f in forms:
            name = f["parameter"]
            if "code" in f:
                import numpy as np
                import pytensor.tensor as pt

                scope: Dict[str, Any] = {"pm": pm, "np": np, "pt": pt, "model": model}
                scope.update(out)
                exec("\n".join(f["code"]), scope)  # the export's own lines for this statement
                for k, v in scope.items():
                    if k not in ("pm", "np", "pt", "model", "__builtins__") and k not in out:
                        out[k] = v
                continue
            cls = getattr(pm, f["class"])
            if f["helper"] is None:
                out[name] = cls(name, **f["kwargs"])
            else:
                suffix, inverse = f["helper"]
                helper = f"{name}_{suffix}"
                out[helper] = cls(helper, **f["kwargs"])
                out[name] = pm.Deterministic(name, getattr(pm.math, inverse)(out[helper]))
    return out


__all__ = ["add_priors"]
