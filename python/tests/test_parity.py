"""The Python package and the command line give the same fit, to the last digit:
both call the same library on the same belief file, seed and draws (the library's
results do not depend on the thread count)."""

from __future__ import annotations

import csv
import math
import os
import re

import numpy as np
import pytest

import priorsmith
from conftest import DEMO, SCENARIOS, read_json

_py_fits: dict = {}


def py_fit(name):
    if name not in _py_fits:
        _py_fits[name] = priorsmith.fit(DEMO / f"{name}.toml")
    return _py_fits[name]


@pytest.mark.parametrize("name", SCENARIOS)
def test_demo_hyperparameters_equal_the_command_line_exactly(name, cli_fit):
    rec = read_json(cli_fit(name) / "fit.json")
    f = py_fit(name)
    # Exact equality of floats: both sides are the same computation; fit.json
    # keeps every digit (serde_json float_roundtrip) and Python reads it exactly.
    assert f.hyperparameters == rec["hyperparameters"]
    assert list(f.hyperparameters) == rec["order"]
    assert f.free == rec["free"]
    assert f.verdict == rec["verdict"]
    assert f.record["prior"] == rec["prior"]
    assert f.record["total"] == rec["total"]
    assert f.record["mc_error"] == rec["mc_error"]
    assert f.identifiability == rec["identifiability"]
    ours = {k: v for k, v in f.record.items() if k != "wall_time_s"}
    theirs = {k: v for k, v in rec.items() if k != "wall_time_s"}
    assert ours == theirs


@pytest.mark.parametrize("name", ["relapse-free-cure", "two-arm-hazard-ratio"])
def test_fresh_draws_equal_draws_csv(name, cli_fit):
    f = py_fit(name)
    with open(cli_fit(name) / "draws.csv", newline="") as fh:
        rows = list(csv.reader(fh))
    header, body = rows[0], rows[1:]
    draws = f.fresh_draws
    assert list(draws) == header[1:]
    for j, label in enumerate(header[1:], start=1):
        col = np.array([float(r[j]) for r in body])
        a = draws[label]
        assert a.dtype == np.float64 and a.shape == col.shape
        assert np.array_equal(a, col)


def test_text_and_dict_sources_fit_the_same_numbers_as_the_file():
    path = DEMO / "relapse-free-cure.toml"
    text = path.read_text()
    by_path = py_fit("relapse-free-cure")
    by_text = priorsmith.fit(text)
    assert by_text.hyperparameters == by_path.hyperparameters
    try:
        import tomllib
    except ImportError:  # Python < 3.11
        pytest.skip("tomllib (Python 3.11+) is needed to turn the file into a dict")
    with open(path, "rb") as fh:
        d = tomllib.load(fh)
    by_dict = priorsmith.fit(d)
    assert by_dict.hyperparameters == by_path.hyperparameters
    assert by_dict.record["prior"] == by_path.record["prior"]


def test_belief_table_rows_follow_the_record(cli_fit):
    rec = read_json(cli_fit("relapse-free-cure") / "fit.json")
    rows = py_fit("relapse-free-cure").belief_table(as_frame=False)
    assert [r["label"] for r in rows] == [b["label"] for b in rec["beliefs"]]
    for r, b in zip(rows, rec["beliefs"]):
        assert r["verdict"] == b["verdict"]
        assert r["fresh"] == b["fresh"] and r["floor"] == b["noise_floor"]
        assert r["ess"] == b["ess"]
        assert b["probs"][3] == 0.5
        assert r["implied_q50"] == float(b["implied_quantiles"][3])
    # the median survival's believed 95 % quantile is +inf (an atom of 5 % at inf)
    assert math.isinf(rows[2]["believed_q95"])


def test_belief_table_is_a_dataframe_with_pandas():
    pd = pytest.importorskip("pandas")
    t = py_fit("relapse-free-cure").belief_table()
    assert isinstance(t, pd.DataFrame)
    assert list(t["label"]) == ["cure_fraction", "survival_prob at 36 months", "median_survival"]


@pytest.mark.parametrize("lang", ["stan", "pymc", "brms", "json"])
def test_export_equals_the_command_lines_export(lang, cli, cli_fit, monkeypatch):
    # Fix the export date on both sides (SOURCE_DATE_EPOCH, reproducible-builds convention).
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    out = cli_fit("relapse-free-cure")
    theirs = cli("export", out, "--to", lang).stdout
    ours = py_fit("relapse-free-cure").export(to=lang)
    assert ours == theirs


def test_export_with_likelihood(cli, cli_fit, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    out = cli_fit("relapse-free-cure")
    theirs = cli("export", out, "--to", "stan", "--with-likelihood").stdout
    assert py_fit("relapse-free-cure").export(to="stan", with_likelihood=True) == theirs


def test_write_report_writes_the_command_lines_folder(tmp_path, cli, cli_fit):
    f = py_fit("relapse-free-cure")
    out = f.write_report(tmp_path / "rfc")
    for name in ["fit.json", "summary.txt", "draws.csv", "spec.toml", "report.html"]:
        assert (out / name).is_file(), name
    rec = read_json(out / "fit.json")
    assert rec["hyperparameters"] == read_json(cli_fit("relapse-free-cure") / "fit.json")["hyperparameters"]
    # The folder is one the command line reads: export it, and refit its spec.toml.
    assert "set_prior" in cli("export", out, "--to", "brms").stdout
    refit = priorsmith.fit(out / "spec.toml")
    assert refit.hyperparameters == f.hyperparameters
    # The same summary, but for the wall time of the fit.
    def summary(d):
        return re.sub(r"\d+\.\d+ s\b", "<time> s", (d / "summary.txt").read_text())

    assert summary(out) == summary(cli_fit("relapse-free-cure"))


def test_simulate_equals_the_command_line(cli):
    path = DEMO / "relapse-free-cure.toml"
    theirs = __import__("json").loads(
        cli("simulate", path, "--json", "--set", "cure_logit.mean=-1.2", "--set", "log_scale.sd=0.3").stdout
    )
    ours = priorsmith.simulate(path, {"cure_logit.mean": -1.2, "log_scale.sd": 0.3})
    assert ours == theirs


def test_check_summarises_the_file(cli):
    path = DEMO / "two-arm-cure.toml"
    s = priorsmith.check(path)
    out = cli("check", path).stdout
    first = out.splitlines()[0]
    assert f"template {s['template']}" in first
    n_free = sum(h["free"] for h in s["hyperparameters"])
    assert f"{len(s['hyperparameters'])} hyperparameters ({n_free} free)" in first
    assert f"{len(s['beliefs'])} beliefs" in first
    assert [l.split(" — ")[0].strip() for l in out.splitlines()[1:]] == [
        f"belief: {b['label']}" for b in s["beliefs"]
    ]


def test_seed_and_draws_override_as_on_the_command_line(cli, tmp_path):
    path = DEMO / "relapse-free-cure.toml"
    out = tmp_path / "o"
    cli("fit", path, "--out", out, "--seed", "5", "--draws", "4000", "--quiet")
    f = priorsmith.fit(path, seed=5, draws=4000)
    assert f.record["seed"] == 5 and f.record["draws"] == 4000
    assert f.hyperparameters == read_json(out / "fit.json")["hyperparameters"]
