"""Benchmark 3b: command-line start-up, each command against the floor it cannot go below.

- ``curvewright --version``, ``--help`` and ``quantify --help`` against ``python -c pass`` (target ≤ 1.5×);
- ``curvewright quantify RUN --json`` on a demo run against ``python -c "import numpy, scipy.special"``,
  the libraries its statistics need (target ≤ 1.3×).

Every start is a fresh process running the program's entry point (``curvewright.__main__:main``).
Bytecode is written once in a warm-up round, as an installed program has it. The sides are timed
in interleaved rounds and the medians compared; the modules each command loaded are listed.

Run: python benchmarks/bench_cli_start.py [--smoke]
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import time

from common import ROOT, print_table, smoke_requested

ENTRY = "import sys; from curvewright.__main__ import main; sys.exit(main())"
RUN = str(ROOT / "sample_runs" / "veltaprine_plasma_weighted.json")

SIDES = {
    "python -c pass": ["-c", "pass"],
    "python -c 'import numpy, scipy.special'": ["-c", "import numpy, scipy.special"],
    "curvewright --version": ["-c", ENTRY, "--version"],
    "curvewright --help": ["-c", ENTRY, "--help"],
    "curvewright quantify --help": ["-c", ENTRY, "quantify", "--help"],
    "curvewright quantify RUN --json": ["-c", ENTRY, "quantify", RUN, "--json"],
}
TARGETS = [  # (command, floor, target ratio)
    ("curvewright --version", "python -c pass", 1.5),
    ("curvewright --help", "python -c pass", 1.5),
    ("curvewright quantify --help", "python -c pass", 1.5),
    ("curvewright quantify RUN --json", "python -c 'import numpy, scipy.special'", 1.3),
]
WATCHED = ("numpy", "scipy", "PySide6", "pyqtgraph", "openpyxl", "argparse")


def environment() -> dict[str, str]:
    env = {**os.environ, "PYTHONPATH": str(ROOT / "src")}
    env.pop("PYTHONDONTWRITEBYTECODE", None)  # an installed program has its bytecode
    return env


def start(args: list[str]) -> float:
    begin = time.perf_counter()
    done = subprocess.run([sys.executable, *args], stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                          env=environment(), cwd=ROOT, timeout=300)
    elapsed = time.perf_counter() - begin
    assert done.returncode == 0, done.stderr.decode()[-2000:]
    return elapsed


def loaded(args: list[str]) -> str:
    done = subprocess.run([sys.executable, "-X", "importtime", *args], capture_output=True, text=True,
                          env=environment(), cwd=ROOT, timeout=300)
    names = {line.rsplit("|", 1)[1].strip().split(".")[0] for line in done.stderr.splitlines()
             if line.startswith("import time:")}
    return ", ".join(m for m in WATCHED if m in names) or "none of them"


def main() -> None:
    rounds = 3 if smoke_requested() else 21
    for args in SIDES.values():  # warm-up: bytecode and file-system cache
        start(args)
    times: dict[str, list[float]] = {label: [] for label in SIDES}
    for _ in range(rounds):
        for label, args in SIDES.items():
            times[label].append(start(args))
    median = {label: statistics.median(t) for label, t in times.items()}
    print_table("Command-line start-up (fresh process each; medians of interleaved rounds)", [
        (label, f"{median[label] * 1e3:.1f} ms", f"{min(t) * 1e3:.1f}–{max(t) * 1e3:.1f} ms", loaded(SIDES[label]))
        for label, t in times.items()
    ], ("", f"median of {rounds}", "min–max", f"loads (of {', '.join(WATCHED)})"))
    rows = []
    for command, floor, target in TARGETS:
        ratio = median[command] / median[floor]
        rows.append((command, floor, f"{ratio:.2f}×", f"≤ {target}×", "met" if ratio <= target else "NOT met"))
    print_table("Ratios", rows, ("command", "against", "ratio", "target", "status"))


if __name__ == "__main__":
    main()
