"""Shared fixtures: the repository, the command-line binary built by cargo, and a
runner for it. The comparisons run the real binary, never a copy of its logic."""

from __future__ import annotations

import json
import os
import pathlib
import subprocess

import pytest

REPO = pathlib.Path(__file__).resolve().parents[2]
DEMO = REPO / "demo-data"
# The demo scenarios (invented data, see demo-data/) that `priorsmith demo` fits.
SCENARIOS = ["relapse-free-cure", "two-arm-cure", "two-arm-hazard-ratio", "wide-design-r2"]


def binary() -> pathlib.Path:
    """PRIORSMITH_BIN, else target/release/priorsmith (built by `cargo test --release`)."""
    p = pathlib.Path(os.environ.get("PRIORSMITH_BIN", REPO / "target" / "release" / "priorsmith"))
    if not p.exists():
        raise RuntimeError(
            f"the priorsmith binary is missing at {p}: run `cargo build --release` first "
            "or set PRIORSMITH_BIN"
        )
    return p


@pytest.fixture(scope="session")
def cli():
    exe = binary()

    def run(*args, check=True):
        r = subprocess.run(
            [str(exe), *map(str, args)], capture_output=True, text=True, env=os.environ.copy()
        )
        if check and r.returncode != 0:
            raise AssertionError(f"priorsmith {' '.join(map(str, args))} failed: {r.stderr}")
        return r

    return run


_cli_fits: dict = {}


@pytest.fixture(scope="session")
def cli_fit(cli, tmp_path_factory):
    """The command line's fit folder of a demo scenario (fitted once per session)."""

    def get(name: str) -> pathlib.Path:
        if name not in _cli_fits:
            out = tmp_path_factory.mktemp("cli") / name
            cli("fit", DEMO / f"{name}.toml", "--out", out, "--quiet")
            _cli_fits[name] = out
        return _cli_fits[name]

    return get


def read_json(p: pathlib.Path):
    return json.loads(p.read_text())
