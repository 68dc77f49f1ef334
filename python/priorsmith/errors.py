"""Exceptions raised by priorsmith.

Every error carries what a user needs to fix it, as attributes and in the
message: ``file`` (a path, or ``"<string>"`` for beliefs given as a TOML string
or a dict), ``line`` (1-based; ``None`` when unknown, and always for a dict),
``key`` (the key path, e.g. ``belief[2].quantiles."0.5"``, positions from 1),
``value`` (the offending value as TOML text, when the key names one) and
``hint``.

Hierarchy::

    PriorsmithError
    ├── BeliefFileError (also ValueError)   bad input: the command line's exit 3
    ├── FileAccessError (also OSError)      reading or writing failed: exit 4
    ├── ResourceLimitError                  a limit would be exceeded: exit 5
    ├── NumericalFailure                    a numerical procedure failed: exit 70
    ├── InternalFault                       a fault of ours, to report: exit 70
    └── FitCancelled                        the fit's cancellation token was set: exit 130

Ctrl-C during a fit raises Python's own ``KeyboardInterrupt`` (the fit is
stopped first; nothing is written).
"""

from __future__ import annotations

from typing import Optional


class PriorsmithError(Exception):
    """Base class of every error priorsmith raises."""

    exit_code: int = 1

    def __init__(
        self,
        message: str,
        *,
        file: Optional[str] = None,
        line: Optional[int] = None,
        key: Optional[str] = None,
        value: Optional[str] = None,
        hint: Optional[str] = None,
    ) -> None:
        super().__init__(message)
        self.message = message
        self.file = file
        self.line = line
        self.key = key
        self.value = value
        self.hint = hint

    def __str__(self) -> str:
        return self.message


class BeliefFileError(PriorsmithError, ValueError):
    """A belief file (path, TOML string or dict) or an argument failed validation."""

    exit_code = 3


class FileAccessError(PriorsmithError, OSError):
    """Reading or writing a file failed."""

    exit_code = 4


class ResourceLimitError(PriorsmithError):
    """A limit (draws, working memory) would be exceeded."""

    exit_code = 5


class NumericalFailure(PriorsmithError):
    """A numerical procedure failed in a way the input does not explain."""

    exit_code = 70


class InternalFault(PriorsmithError):
    """A fault inside priorsmith: please report it."""

    exit_code = 70


class FitCancelled(PriorsmithError):
    """The work was cancelled."""

    exit_code = 130


__all__ = [
    "PriorsmithError",
    "BeliefFileError",
    "FileAccessError",
    "ResourceLimitError",
    "NumericalFailure",
    "InternalFault",
    "FitCancelled",
]
