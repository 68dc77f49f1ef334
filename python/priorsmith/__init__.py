"""priorsmith: fit prior hyperparameters to beliefs about the quantities a model implies.

The package calls the compiled priorsmith library directly (no subprocess):

>>> import priorsmith
>>> fit = priorsmith.fit("beliefs.toml")          # a path, a TOML string or a dict
>>> fit.hyperparameters                            # {"cure_logit.mean": -1.09, ...}
>>> fit.belief_table()                             # DataFrame when pandas is installed
>>> print(fit.export(to="pymc"))
>>> fit.write_report("out")                        # fit.json, summary.txt, report.html ...

A belief source is one of:

* a ``pathlib.Path`` (or ``os.PathLike``): a belief file;
* a ``str``: TOML text when it contains a line break, otherwise a path;
* a ``dict`` of the belief file's shape (``{"model": {"template": ...}, "prior": {...},
  "belief": [...]}``).

Errors are the exceptions of :mod:`priorsmith.errors`; for a TOML string or a dict
the file is ``"<string>"``. Fits release the interpreter lock; Ctrl-C stops a fit
within a few objective evaluations and raises ``KeyboardInterrupt``.

Fitted priors are proposals: they must be reviewed by the responsible
statistician, checked for prior–data conflict and sensitivity, and used within
applicable regulatory guidance and local practice.
"""

from __future__ import annotations

from .errors import (
    BeliefFileError,
    FileAccessError,
    FitCancelled,
    InternalFault,
    NumericalFailure,
    PriorsmithError,
    ResourceLimitError,
)
from ._api import Beliefs, Fit, check, fit, load, simulate
from ._core import library_version as _library_version

__version__: str = _library_version()

__all__ = [
    "Beliefs",
    "Fit",
    "check",
    "fit",
    "load",
    "simulate",
    "PriorsmithError",
    "BeliefFileError",
    "FileAccessError",
    "ResourceLimitError",
    "NumericalFailure",
    "InternalFault",
    "FitCancelled",
    "__version__",
]
