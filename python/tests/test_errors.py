"""Bad input becomes an exception of priorsmith.errors carrying the file, line, key
path and bad value — as attributes and in the message — for a path, a TOML string
and a dict (whose file is "<string>")."""

from __future__ import annotations

import pytest

import priorsmith
from priorsmith.errors import BeliefFileError, FileAccessError, PriorsmithError
from conftest import DEMO

GOOD = (DEMO / "relapse-free-cure.toml").read_text()


def bad_text():
    # The cure fraction's median quantile moved to 1.7: a probability above 1.
    t = GOOD.replace('"0.5" = 0.25', '"0.5" = 1.7')
    assert t != GOOD
    return t


def line_of(text, needle):
    return next(i for i, l in enumerate(text.splitlines(), 1) if needle in l)


def test_a_bad_value_in_a_file_names_file_line_key_value_as_the_command_line_does(tmp_path, cli):
    p = tmp_path / "bad.toml"
    p.write_text(bad_text())
    with pytest.raises(BeliefFileError) as ei:
        priorsmith.fit(p)
    e = ei.value
    assert e.file == str(p)
    assert e.line == line_of(bad_text(), '"0.5" = 1.7')
    assert e.key is not None and e.key.startswith("belief[1]")
    assert e.value is not None and "1.7" in e.value
    assert str(p) in str(e) and "1.7" in str(e)
    assert isinstance(e, ValueError) and e.exit_code == 3
    r = cli("check", p, check=False)
    assert r.returncode == 3
    # The command line's message is the exception's (which may add the value line).
    assert str(e).startswith(r.stderr.strip().removeprefix("error: "))


def test_a_toml_string_names_string_and_the_line():
    with pytest.raises(BeliefFileError) as ei:
        priorsmith.check(bad_text())
    e = ei.value
    assert e.file == "<string>"
    assert e.line == line_of(bad_text(), '"0.5" = 1.7')
    assert "<string>:" in str(e) and e.key in str(e)


def test_a_dict_names_string_and_the_key_path_without_a_line():
    import tomllib

    d = tomllib.loads(GOOD)
    d["prior"]["cure_logit"]["sd"] = {"fit": [2.0, 0.5]}  # bounds the wrong way round
    with pytest.raises(BeliefFileError) as ei:
        priorsmith.check(d)
    e = ei.value
    assert e.file == "<string>" and e.line is None
    assert e.key.startswith("prior.cure_logit.sd")
    assert e.value is not None and "2" in e.value and "0.5" in e.value
    assert str(e).startswith("<string>: key `prior.cure_logit.sd")


def test_an_unknown_key_in_a_dict_gets_a_hint():
    import tomllib

    d = tomllib.loads(GOOD)
    d["model"]["templat"] = d["model"].pop("template")
    with pytest.raises(BeliefFileError) as ei:
        priorsmith.check(d)
    assert ei.value.file == "<string>"
    assert "template" in str(ei.value)


def test_a_value_toml_cannot_hold_is_a_type_error():
    with pytest.raises(TypeError, match="<string>: key `model.template`"):
        priorsmith.check({"model": {"template": object()}})


def test_a_missing_file_is_an_os_error():
    with pytest.raises(FileAccessError) as ei:
        priorsmith.check("no/such/beliefs.toml")
    assert isinstance(ei.value, OSError) and isinstance(ei.value, PriorsmithError)
    assert ei.value.file == "no/such/beliefs.toml" and ei.value.exit_code == 4


def test_unknown_hyperparameter_in_simulate_and_unknown_export_language():
    with pytest.raises(BeliefFileError, match="did you mean"):
        priorsmith.simulate(DEMO / "relapse-free-cure.toml", {"cure_logit.meen": 0.0})
    f = priorsmith.fit(DEMO / "relapse-free-cure.toml", draws=2000)
    with pytest.raises(BeliefFileError) as ei:
        f.export(to="stann")
    assert ei.value.key == "to" and ei.value.file is None
    assert str(ei.value).startswith("key `to`: unknown export language") and "stan" in str(ei.value)


def test_replicates_out_of_range():
    with pytest.raises(BeliefFileError, match="between 2 and 100"):
        priorsmith.fit(DEMO / "relapse-free-cure.toml", replicates=1)
