"""Benchmark 8: many run documents through the command line.

* 200 run documents (copies of the three demo runs) through
  ``curvewright quantify DIR --json --jobs 2``, against the peer script
  ``benchmarks/peer_statsmodels_batch.py`` on the same files: statsmodels WLS with get_prediction and
  a root finder, one model per run, no comparison of candidates. Both as fresh processes, timed in
  interleaved rounds after a warm-up; every sample's estimate and interval must agree to 1e-9.
  Target: ≤ 0.3× the peer's time. Beside the wall time, each side's CPU time (user + system of the
  process and its pool processes, from the operating system). The program's bytecode is written in
  the warm-up round, as an installed program has it (the peer's libraries have theirs).
* Runs per batch (1 … 500) through the same command: the slope of log(time) against log(runs).
  Target ≤ 1.1.

Run: python benchmarks/bench_many_runs.py [--smoke]
"""

from __future__ import annotations

import json
import math
import os
import resource
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np
from common import ROOT, interleaved, print_table, smoke_requested

def _peer_can_fit(path: Path) -> bool:
    """The peer script fits straight lines and quadratics; the demo runs on other curves are left out."""
    return all(a["model"] in ("linear", "quadratic") for a in json.loads(path.read_text(encoding="utf-8"))["analytes"])


DEMOS = [p for p in sorted((ROOT / "sample_runs").glob("*.json")) if _peer_can_fit(p)]
ENV = {**os.environ, "PYTHONPATH": str(ROOT / "src") + os.pathsep + os.environ.get("PYTHONPATH", "")}
ENV.pop("PYTHONDONTWRITEBYTECODE", None)  # an installed program has its bytecode
CPU: dict[str, list[float]] = {}
"""CPU seconds of each timed process (with its children), by the first word of its command's label."""


def batch(folder: Path, count: int) -> Path:
    """``count`` run documents in a folder of their own, copies of the demo runs in turn."""
    target = folder / f"runs_{count}"
    target.mkdir()
    for i in range(count):
        shutil.copyfile(DEMOS[i % len(DEMOS)], target / f"run_{i:04d}.json")
    return target


def engine_command(folder: Path) -> list[str]:
    return [sys.executable, "-m", "curvewright.cli", "quantify", str(folder), "--json", "--jobs", "2"]


def peer_command(folder: Path) -> list[str]:
    return [sys.executable, str(ROOT / "benchmarks" / "peer_statsmodels_batch.py"),
            *map(str, sorted(folder.glob("*.json")))]


def run(command: list[str], label: str | None = None) -> str:
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    result = subprocess.run(command, capture_output=True, text=True, env=ENV, cwd=ROOT)
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if result.returncode not in (0, 1):  # 1: some run not accepted, results still printed
        raise RuntimeError(result.stderr[-2000:])
    if label is not None:
        CPU.setdefault(label, []).append(after.ru_utime - before.ru_utime + after.ru_stime - before.ru_stime)
    return result.stdout


def largest_difference(engine_out: str, peer_out: str) -> tuple[float, int]:
    ours = json.loads(engine_out)
    ours = ours if isinstance(ours, list) else [ours]
    theirs = {(Path(r["source"]).name, a["name"], s["id"]): s
              for r in json.loads(peer_out) for a in r["analytes"] for s in a["samples"]}
    worst, compared = 0.0, 0
    for r in ours:
        for a in r["analytes"]:
            for s in a.get("samples", []):
                peer = theirs.get((Path(r["source"]).name, a["name"], s["id"]))
                if peer is None:
                    continue
                for key in ("estimate", "lower", "upper"):
                    mine, other = s.get(key), peer[key]
                    if mine is None or not (math.isfinite(mine) and math.isfinite(other)):
                        continue
                    worst = max(worst, abs(mine - other) / max(abs(other), 1e-300))
                    compared += 1
    return worst, compared


def main() -> None:
    smoke = smoke_requested()
    count = 3 if smoke else 200
    sizes = [1, 3] if smoke else [1, 10, 100, 500]
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        many = batch(folder, count)
        run(engine_command(many))  # the bytecode written, as an installed program has it
        timing = interleaved({"engine": lambda: run(engine_command(many), "engine"),
                              "peer": lambda: run(peer_command(many), "peer")},
                             rounds=1 if smoke else 5, warmup=1)
        difference, compared = largest_difference(run(engine_command(many)), run(peer_command(many)))
        ratio = timing["engine"].median / timing["peer"].median
        cpu = {side: float(np.median(CPU[side][1:])) for side in ("engine", "peer")}  # the warm-up left out
        print_table(f"{count} run documents, quantify --json --jobs 2 against the statsmodels peer script",
                    [(timing["engine"].describe(), f"CPU {cpu['engine']:.2f} s"),
                     (timing["peer"].describe(), f"CPU {cpu['peer']:.2f} s"),
                     (f"{ratio:.2f}× the peer's time (target ≤ 0.3×: {'met' if ratio <= 0.3 else 'NOT met'})",
                      f"CPU {cpu['engine'] / cpu['peer']:.2f}×"),
                     (f"{compared} estimates and interval ends agree to {difference:.1e} (relative)", "")],
                    ("result", "CPU time (median)"))
        folders = {n: batch(folder, n) if n != count else many for n in sizes}
        scaling = interleaved({str(n): (lambda f=f: run(engine_command(f))) for n, f in folders.items()},
                              rounds=1 if smoke else 3, warmup=0)
        seconds = [scaling[str(n)].median for n in sizes]
        s = float(np.polyfit(np.log(sizes), np.log(seconds), 1)[0])
        print_table("Runs per batch through quantify --json --jobs 2",
                    [(f"{n:,}", f"{t:.2f} s") for n, t in zip(sizes, seconds)], ("runs", "median time"))
        print(f"\nslope of log(time) against log(runs): {s:.2f} (target ≤ 1.1: {'met' if s <= 1.1 else 'NOT met'}); "
              f"engine {ratio:.2f}× the peer")
    assert compared > 0 and difference < 1e-9, (difference, compared)


if __name__ == "__main__":
    main()
