"""Many runs through ``quantify --jobs``: how the work is shared, and the same text as one process.

With ``--jobs N`` on a system that forks, the first process is one of the N: it analyses the first
run, forks N - 1 processes, and every process takes the next run from one shared counter, so that
none waits for another at the end. Whoever analyses a run, the JSON is the same byte for byte as one
process writes it.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys

import pytest

from curvewright.io.run_document import open_run, save_run
from tests.cli_runs import run_cli
from tests.io.helpers import DEMO_RUNS, ROOT

SHARING = """
import contextlib, io, json, multiprocessing, os, sys, time
from curvewright import cli

first = os.getpid()
here, started = [], []
analyse = cli._quantify_file_in_list
def counted(path, options):
    if os.getpid() == first:
        here.append(path.name)
    else:
        time.sleep(float(sys.argv[3]))  # a slower process
    return analyse(path, options)
cli._quantify_file_in_list = counted
start = multiprocessing.context.ForkProcess.start
def forked(self):
    started.append(self.name)
    start(self)
multiprocessing.context.ForkProcess.start = forked
with contextlib.redirect_stdout(io.StringIO()) as out, contextlib.redirect_stderr(io.StringIO()) as err:
    code = cli.main(["quantify", sys.argv[1], "--json", "--jobs", sys.argv[2]])
print(json.dumps({"code": code, "here": here, "started": started, "out": out.getvalue(), "err": err.getvalue()}))
"""


def _folder(tmp_path, count: int):
    folder = tmp_path / "incoming"
    folder.mkdir()
    runs = [open_run(path).run for path in DEMO_RUNS[:3]]
    for i in range(count):
        save_run(runs[i % len(runs)], folder / f"run_{i:03d}.json")
    return folder


def _serial(folder) -> subprocess.CompletedProcess:
    return run_cli("quantify", str(folder), "--json")


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="processes are forked on Linux only")
@pytest.mark.parametrize("jobs, slower", [(2, 0.0), (3, 0.0), (2, 0.2)])
def test_the_first_process_is_one_of_the_jobs_and_the_text_is_that_of_one_process(tmp_path, jobs, slower) -> None:
    folder = _folder(tmp_path, 40)
    done = subprocess.run([sys.executable, "-c", SHARING, str(folder), str(jobs), str(slower)], capture_output=True,
                          text=True, cwd=ROOT, timeout=300)
    assert done.returncode == 0, done.stderr
    shared = json.loads(done.stdout)
    serial = _serial(folder)
    assert shared["code"] == serial.returncode == 0, serial.stderr
    assert shared["out"] == serial.stdout  # byte for byte
    assert len(json.loads(serial.stdout)) == 40
    assert len(shared["started"]) == jobs - 1  # this process is the N-th
    # the first run, then runs taken as they come: each once, in the order of the list
    here = shared["here"]
    assert here[0] == "run_000.json" and len(here) > 1
    assert here == sorted(set(here))
    if slower:  # the slower process takes fewer runs: this one does most of them
        assert len(here) > 20
    # the progress counts every run once
    steps = [line for line in shared["err"].splitlines() if "/40 " in line]
    assert len(steps) == 40 and steps[-1].startswith("[" + "#" * 30 + "] 40/40")
    assert sorted(line.rsplit(" ", 1)[1] for line in steps) == [f"run_{i:03d}.json" for i in range(40)]


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="processes are forked on Linux only")
def test_runs_of_a_process_that_dies_are_analysed_by_the_first(tmp_path) -> None:
    """A forked process that ends before sending its outcomes loses nothing: the first process
    analyses the runs whose outcomes never came."""
    folder = _folder(tmp_path, 12)
    dying = SHARING.replace("        time.sleep(float(sys.argv[3]))  # a slower process",
                            "        os._exit(3)  # the forked process dies at its first run")
    done = subprocess.run([sys.executable, "-c", dying, str(folder), "2", "0"], capture_output=True, text=True,
                          cwd=ROOT, timeout=300)
    assert done.returncode == 0, done.stderr
    shared = json.loads(done.stdout)
    assert shared["out"] == _serial(folder).stdout
    assert len(shared["here"]) == 12
    steps = [line for line in shared["err"].splitlines() if "/12 " in line]
    assert len(steps) == 12


def test_a_command_asks_for_one_blas_thread_unless_the_user_chose(tmp_path) -> None:
    """A command started afresh asks numpy's linear algebra library for one thread (its matrices are
    small); a number the user set is kept."""
    code = ("import os, sys; from curvewright.cli import main; "
            f"code = main(['quantify', {str(DEMO_RUNS[0])!r}, '--json']); "
            "print(os.environ.get('OPENBLAS_NUM_THREADS'), file=sys.stderr); sys.exit(code)")
    env = {k: v for k, v in os.environ.items() if k != "OPENBLAS_NUM_THREADS"}
    chosen = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=300,
                            env=env)
    assert chosen.returncode == 0, chosen.stderr
    assert chosen.stderr.splitlines()[-1] == "1"
    kept = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=300,
                          env={**env, "OPENBLAS_NUM_THREADS": "2"})
    assert kept.stderr.splitlines()[-1] == "2"
    assert kept.stdout == chosen.stdout  # the same results either way


POOLED = """
import json, sys
from pathlib import Path
from curvewright import cli

folder, forked = Path(sys.argv[1]), sys.argv[2] == "fork"
paths = sorted(folder.glob("*.json"))
settings = cli._options(cli.build_parser("quantify").parse_args(["quantify", str(folder), "--json"]))
pooled = cli._share_runs(paths, settings, 2, forked, None)
here = [cli._quantify_file_in_list(path, settings) for path in paths]
print(json.dumps([[[o.code, o.data.text, o.error, list(o.warnings)] for o in outcomes] for outcomes in (pooled, here)]))
"""


@pytest.mark.parametrize("start", ["fork", "spawn"] if sys.platform.startswith("linux") else ["spawn"])
def test_a_pool_of_processes_gives_the_outcomes_of_one_process(tmp_path, start) -> None:
    """Where this process does not analyse runs itself (it draws records, or cannot fork), the runs go
    to a pool in chunks; the outcomes come back in the list's order, the same as analysed here."""
    folder = _folder(tmp_path, 9)
    done = subprocess.run([sys.executable, "-c", POOLED, str(folder), start], capture_output=True, text=True,
                          cwd=ROOT, timeout=300)
    assert done.returncode == 0, done.stderr
    pooled, here = json.loads(done.stdout)
    assert len(pooled) == 9 and pooled == here
