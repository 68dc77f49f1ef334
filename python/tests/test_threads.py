"""The interpreter lock is released while fitting, and Ctrl-C stops a fit cleanly."""

from __future__ import annotations

import os
import subprocess
import sys
import textwrap
import threading
import time

import priorsmith
from conftest import DEMO


def test_other_python_threads_run_while_a_fit_runs():
    done = threading.Event()
    result = {}

    def work():
        result["fit"] = priorsmith.fit(DEMO / "two-arm-cure.toml")
        done.set()

    t = threading.Thread(target=work)
    t.start()
    ticks = 0
    while not done.is_set():
        ticks += 1  # Python bytecode on this thread: needs the lock
        time.sleep(0.001)
    t.join()
    # A fit of a few hundred ms: with the lock held throughout, this loop would
    # get only the switch interval's few slices; released, it runs hundreds of times.
    assert ticks > 50, ticks
    assert result["fit"].free


SCRIPT = textwrap.dedent(
    """
    import os, signal, threading, sys
    import priorsmith
    path = sys.argv[1]
    # A fit that would run for half an hour (400,000 draws, 50 replicate fits):
    # only the interrupt ends it within the test's timeout.
    beliefs = priorsmith.load(path, draws=400000, max_draws=400000)
    threading.Timer(0.5, lambda: os.kill(os.getpid(), signal.SIGINT)).start()
    try:
        beliefs.fit(replicates=50)
        print("finished")
    except KeyboardInterrupt:
        print("interrupted")
    # The process is usable afterwards: a small fit runs to the end.
    f = priorsmith.fit(path, draws=2000)
    print("after", f.verdict)
    """
)


def test_ctrl_c_interrupts_a_fit_and_leaves_the_process_usable(tmp_path):
    s = tmp_path / "interrupt.py"
    s.write_text(SCRIPT)
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(sys.path))
    r = subprocess.run(
        [sys.executable, str(s), str(DEMO / "relapse-free-cure.toml")],
        capture_output=True, text=True, env=env, timeout=300,
    )
    assert r.returncode == 0, r.stderr
    lines = r.stdout.split()
    assert lines[0] == "interrupted", r.stdout
    assert lines[1] == "after"
