"""Benchmark: a fit called from Python against the same fit from the command line.

For each demo scenario (invented data, demo-data/) and each of --repeats rounds
(alternating the order), it times:

* end to end: ``priorsmith fit FILE --out DIR --quiet`` as a subprocess against
  ``priorsmith.fit(FILE).write_report(DIR)`` in this process (the same work:
  read, validate, fit, write fit.json, summary.txt, draws.csv, spec.toml,
  report.html);
* the fit alone: the fit record's ``wall_time_s`` (timed inside the library,
  from the start of the fit to the result) on both sides, and the Python call
  ``priorsmith.fit(FILE)`` around it.

Prints medians and the Python/CLI ratio. Not a test: run it on a quiet machine
(check ``uptime``)::

    python python/bench/bench_fit.py --bin target/release/priorsmith --repeats 5
"""

from __future__ import annotations

import argparse
import json
import pathlib
import statistics
import subprocess
import tempfile
import time

import priorsmith

REPO = pathlib.Path(__file__).resolve().parents[2]
SCENARIOS = ["relapse-free-cure", "two-arm-cure", "two-arm-hazard-ratio", "wide-design-r2"]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--bin", default=str(REPO / "target" / "release" / "priorsmith"))
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--scenarios", nargs="*", default=SCENARIOS)
    a = ap.parse_args()
    tmp = pathlib.Path(tempfile.mkdtemp(prefix="bench-fit-"))
    print(f"priorsmith {priorsmith.__version__}; {a.repeats} rounds; medians in seconds")
    print(f"{'scenario':<22}{'CLI e2e':>9}{'Py e2e':>9}{'ratio':>8}   {'CLI fit':>9}{'Py fit':>9}{'Py call':>9}{'ratio':>8}")
    for name in a.scenarios:
        spec = REPO / "demo-data" / f"{name}.toml"
        cli_e2e, py_e2e, cli_fit, py_fit, py_call = [], [], [], [], []
        for r in range(a.repeats):
            order = ["cli", "py"] if r % 2 == 0 else ["py", "cli"]
            for who in order:
                out = tmp / f"{name}-{who}-{r}"
                if who == "cli":
                    t = time.perf_counter()
                    subprocess.run([a.bin, "fit", str(spec), "--out", str(out), "--quiet"], check=True)
                    cli_e2e.append(time.perf_counter() - t)
                    cli_fit.append(json.loads((out / "fit.json").read_text())["wall_time_s"])
                else:
                    t = time.perf_counter()
                    f = priorsmith.fit(spec)
                    t_fit = time.perf_counter() - t
                    f.write_report(out)
                    py_e2e.append(time.perf_counter() - t)
                    py_call.append(t_fit)
                    py_fit.append(f.record["wall_time_s"])
        m = statistics.median
        print(
            f"{name:<22}{m(cli_e2e):>9.3f}{m(py_e2e):>9.3f}{m(py_e2e) / m(cli_e2e):>8.3f}   "
            f"{m(cli_fit):>9.3f}{m(py_fit):>9.3f}{m(py_call):>9.3f}{m(py_fit) / m(cli_fit):>8.3f}"
        )


if __name__ == "__main__":
    main()
