"""PyMC is optional: without it the hand-off says how to install it. (The hand-off
with PyMC installed is checked by scripts/check-pymc-handoff.sh.)"""

from __future__ import annotations

import sys

import pytest

import priorsmith
from conftest import DEMO


def test_without_pymc_the_hand_off_raises_a_clear_import_error(monkeypatch):
    f = priorsmith.fit(DEMO / "relapse-free-cure.toml", draws=2000)
    monkeypatch.setitem(sys.modules, "pymc", None)  # makes `import pymc` fail
    with pytest.raises(ImportError, match="pip install pymc"):
        f.to_pymc()


def test_the_pymc_forms_match_the_export():
    f = priorsmith.fit(DEMO / "relapse-free-cure.toml", draws=2000)
    forms = f._core.pymc_forms()
    code = f.export(to="pymc")
    for fm in forms:
        assert f'{fm["parameter"]} = pm.{fm["class"]}("{fm["parameter"]}"' in code
    # Full precision: the fitted prior's numbers, not the export's 6 digits.
    by_name = {p["parameter"]: p for p in f.prior}
    normal = next(fm for fm in forms if fm["parameter"] == "cure_logit")
    assert normal["kwargs"] == {
        "mu": by_name["cure_logit"]["params"]["mean"],
        "sigma": by_name["cure_logit"]["params"]["sd"],
    }
