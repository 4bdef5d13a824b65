"""Many runs through ``quantify --jobs``: how the work is shared, and the same text as one process.

With ``--jobs N`` on a system that forks, the first process is one of the N: it analyses the first
run, starts N - 1 pool processes, and takes the chunks from the end of the list that no pool process
has started. Whoever analyses a run, the JSON is the same byte for byte as one process writes it.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys

import pytest

from curvewright.io.run_document import open_run, save_run
from tests.io.helpers import DEMO_RUNS, ROOT

SHARING = """
import contextlib, io, json, multiprocessing, os, sys
from concurrent import futures
from curvewright import cli

first = os.getpid()
here, pools = [], []
analyse = cli._quantify_file_in_list
def counted(path, options):
    if os.getpid() == first:
        here.append(path.name)
    return analyse(path, options)
cli._quantify_file_in_list = counted
start_pool = futures.ProcessPoolExecutor.__init__
def pool(self, max_workers=None, **kw):
    pools.append(max_workers)
    start_pool(self, max_workers=max_workers, **kw)
futures.ProcessPoolExecutor.__init__ = pool
with contextlib.redirect_stdout(io.StringIO()) as out, contextlib.redirect_stderr(io.StringIO()) as err:
    code = cli.main(["quantify", sys.argv[1], "--json", "--jobs", sys.argv[2]])
print(json.dumps({"code": code, "here": here, "pools": pools, "out": out.getvalue(), "err": err.getvalue()}))
"""


def _folder(tmp_path, count: int):
    folder = tmp_path / "incoming"
    folder.mkdir()
    runs = [open_run(path).run for path in DEMO_RUNS[:3]]
    for i in range(count):
        save_run(runs[i % len(runs)], folder / f"run_{i:03d}.json")
    return folder


def _serial(folder) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "curvewright.cli", "quantify", str(folder), "--json"],
                          capture_output=True, text=True, cwd=ROOT, timeout=300)


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="the pool is forked on Linux only")
@pytest.mark.parametrize("jobs", [2, 3])
def test_the_first_process_is_one_of_the_jobs_and_the_text_is_that_of_one_process(tmp_path, jobs) -> None:
    folder = _folder(tmp_path, 40)
    done = subprocess.run([sys.executable, "-c", SHARING, str(folder), str(jobs)], capture_output=True, text=True,
                          cwd=ROOT, timeout=300)
    assert done.returncode == 0, done.stderr
    shared = json.loads(done.stdout)
    serial = _serial(folder)
    assert shared["code"] == serial.returncode == 0, serial.stderr
    assert shared["out"] == serial.stdout  # byte for byte
    assert len(json.loads(serial.stdout)) == 40
    assert shared["pools"] == [jobs - 1]  # this process is the N-th
    # the first run, then whole chunks taken from the end of the list
    assert shared["here"][0] == "run_000.json" and len(shared["here"]) > 1
    taken = sorted(shared["here"][1:])
    assert taken == [f"run_{i:03d}.json" for i in range(40 - len(taken), 40)]
    # the progress counts every run once
    steps = [line for line in shared["err"].splitlines() if "/40 " in line]
    assert len(steps) == 40 and steps[-1].startswith("[" + "#" * 30 + "] 40/40")


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
