"""Start-up: each command loads only what it uses.

``curvewright --version`` and ``--help`` load neither numpy, scipy nor argparse (the help is kept as
text in ``curvewright.cli_help``, checked against the parser in ``tests/test_cli_help.py``); ``quantify RUN --json`` loads
nothing of Qt, pyqtgraph or openpyxl (nor scipy.optimize, which no run of the demo needs); an export
loads the library it writes with. Checked in a fresh process with ``python -X importtime``, which
lists every module the process imported. How long start-up takes is measured in
``benchmarks/bench_cli_start.py``, not here.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

import curvewright
from curvewright import __version__

ROOT = Path(__file__).resolve().parents[1]
RUN = ROOT / "sample_runs" / "veltaprine_plasma_weighted.json"
NUMERICS = {"numpy", "scipy"}
FRONT_END = {"PySide6", "shiboken6", "pyqtgraph", "openpyxl"}


def imported(*args: str, module: str = "curvewright", cwd: Path = ROOT) -> tuple[set[str], subprocess.CompletedProcess]:
    """The modules a fresh ``python -m MODULE ARGS`` imports, and its result."""
    done = subprocess.run([sys.executable, "-X", "importtime", "-m", module, *args], capture_output=True,
                          text=True, cwd=cwd, timeout=300)
    names = {line.rsplit("|", 1)[1].strip() for line in done.stderr.splitlines()
             if line.startswith("import time:") and "|" in line}
    names.discard("imported package")  # the header line of the listing
    return names, done


def tops(names: set[str]) -> set[str]:
    return {n.split(".")[0] for n in names}


def test_version_loads_no_numerics_and_no_command_line() -> None:
    names, done = imported("--version")
    assert done.returncode == 0, done.stderr[-2000:]
    assert done.stdout == f"curvewright {__version__}\n"
    assert "curvewright._version" in names  # the listing is read correctly
    assert not tops(names) & (NUMERICS | FRONT_END)
    assert "argparse" not in names and "curvewright.cli" not in names


def test_version_line_is_the_same_as_the_full_command_lines() -> None:
    _, short = imported("--version")
    _, full = imported("--version", module="curvewright.cli")
    assert full.returncode == 0 and short.stdout == full.stdout


@pytest.mark.parametrize("args", [("--help",), ("quantify", "--help"), ("archive", "--help")])
def test_help_loads_no_numerics_and_no_command_line(args: tuple[str, ...]) -> None:
    names, done = imported(*args)
    assert done.returncode == 0, done.stderr[-2000:]
    assert "usage: curvewright" in done.stdout and curvewright.CAUTION.split()[0] in done.stdout
    assert "curvewright.cli_help" in names  # the listing is read correctly
    assert not tops(names) & (NUMERICS | FRONT_END)
    assert "argparse" not in names and "curvewright.cli" not in names


def test_quantify_json_loads_no_front_end_and_no_optimiser() -> None:
    names, done = imported("quantify", str(RUN), "--json")
    assert done.returncode == 0, done.stderr[-2000:]
    assert done.stdout.lstrip().startswith("{")
    assert {"numpy", "scipy"} <= tops(names)  # it does compute
    assert not tops(names) & FRONT_END
    assert "scipy.optimize" not in names and "scipy.stats" not in names
    # what other commands use, loaded when they run: the archive commands, glob patterns, quoting
    assert not names & {"curvewright.cli_archive", "glob", "shlex"}, sorted(names & {"curvewright.cli_archive", "glob", "shlex"})


def test_quantify_json_loads_the_parts_a_run_reaches_only() -> None:
    """A run without calibration checks, standard additions or signatures does not load their judges,
    and the JSON does not load the result tables (the chain's words come with the audit trail)."""
    run = json.loads(RUN.read_text(encoding="utf-8"))
    assert not run.get("signatures") and all(not s.get("additions") and s["kind"] in ("unknown", "qc", "blank")
                                             for s in run["samples"])
    names, done = imported("quantify", str(RUN), "--json")
    assert done.returncode == 0, done.stderr[-2000:]
    lazy = {"curvewright.core.checks", "curvewright.core.addition_series", "curvewright.core.standard_additions",
            "curvewright.io.signatures", "curvewright.io.result_tables"}
    assert not names & lazy, sorted(names & lazy)
    assert json.loads(done.stdout)["chain_check"].startswith("verified")
    # nor a validated method's reader, nor the whole-curve rules, for a run whose settings and profile have none
    assert run["settings"].get("method") is None and run["settings"]["custom_profile"].get("curve") is None
    assert not names & {"curvewright.core.method", "curvewright.core.curve_rules"}


def test_a_run_with_curve_rules_or_a_method_loads_their_readers(tmp_path: Path) -> None:
    """The rules on the whole curve and a validated method are read where a run has them: the results are
    those of the same run analysed in this process, where every module is loaded."""
    from curvewright.core.run_analysis import analyse_run
    from curvewright.io.run_document import open_run

    with_curve = ROOT / "sample_runs" / "volatiles_water_average_rf.json"
    assert json.loads(with_curve.read_text(encoding="utf-8"))["settings"]["custom_profile"].get("curve") is not None
    names, done = imported("quantify", str(with_curve), "--json")
    assert done.returncode in (0, 1), done.stderr[-2000:]
    assert "curvewright.core.curve_rules" in names
    result = analyse_run(open_run(with_curve).run)
    assert result.profile.curve is not None
    assert json.loads(done.stdout)["accepted"] == result.accepted
    assert json.loads(done.stdout)["profile_sha256"] == result.profile.sha256

    nitrate = ROOT / "sample_runs" / "nitrate_water_linear.json"
    method = ROOT / "sample_runs" / "methods" / "demo_nitrate_uv_method.json"
    names, done = imported("quantify", str(nitrate), "--json", "--method", str(method))
    assert done.returncode in (0, 1), done.stderr[-2000:]
    assert "curvewright.core.method" in names
    stored = json.loads(method.read_text(encoding="utf-8"))
    assert json.loads(done.stdout)["method"]["id"] == stored["id"] == "DEMO-NO3-UV"
    assert any("method DEMO-NO3-UV" in r for r in json.loads(done.stdout)["reasons"])


def test_the_lazily_loaded_parts_still_serve_their_commands(tmp_path: Path) -> None:
    """A glob pattern of runs, a table given where a run is expected (its message quotes the name) and
    the archive's parser: each loads what it needs when it is used."""
    names, done = imported("quantify", str(ROOT / "sample_runs" / "veltaprine_*.json"), "--json")
    assert done.returncode == 0, done.stderr[-2000:]
    assert "glob" in names and done.stdout.lstrip().startswith("{")
    table = tmp_path / "my standards.csv"
    table.write_text("Concentration,Response\n1,2\n", encoding="utf-8")
    names, done = imported("quantify", str(table))
    assert done.returncode == 2 and "shlex" in names
    assert f"--standards '{table}'" in done.stderr, done.stderr
    names, done = imported("archive", "list", "--at", str(tmp_path / "no archive here"))
    assert "curvewright.cli_archive" in names and "invalid choice" not in done.stderr, done.stderr


def test_an_export_loads_what_it_writes_with(tmp_path: Path) -> None:
    workbook = tmp_path / "results.xlsx"
    names, done = imported("quantify", str(RUN), "--json", "--export", str(workbook))
    assert done.returncode == 0, done.stderr[-2000:]
    assert workbook.stat().st_size > 0
    assert "openpyxl" in tops(names)
    assert not tops(names) & {"PySide6", "pyqtgraph"}


def test_the_package_loads_its_public_names_on_first_use() -> None:
    code = ("import sys, curvewright as cw; before = 'numpy' in sys.modules; "
            "cal = cw.fit([1, 2, 4, 8], [0.1, 0.2, 0.41, 0.79]); "
            "print(before, 'numpy' in sys.modules, type(cal).__name__, sorted(set(cw.__all__) - set(dir(cw))))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=120)
    assert done.returncode == 0, done.stderr[-2000:]
    assert done.stdout.split() == ["False", "True", "Calibration", "[]"]


def test_every_public_name_resolves() -> None:
    for name in curvewright.__all__:
        assert getattr(curvewright, name) is not None
    with pytest.raises(AttributeError, match="no attribute 'nothing_here'"):
        curvewright.nothing_here  # noqa: B018 - the access is the check


ENDS = ("import atexit, sys\n"
        "atexit.register(lambda: print('interpreter teardown', file=sys.stderr))\n"
        "from curvewright.__main__ import main\n"
        "sys.exit(main())\n")


@pytest.mark.parametrize("args", [(str(RUN), "--json"), (str(RUN),), ("no-such-run.json", "--json"),
                                  (str(RUN), str(RUN), "--json", "--jobs", "2")])
def test_quantify_as_the_program_ends_without_teardown_and_loses_nothing(args: tuple[str, ...]) -> None:
    """``quantify`` started as the program ends its process once its output is written (the
    interpreter's teardown, here an exit handler, never runs); its output and exit code are those
    of the command run within a process that carries on."""
    ended = subprocess.run([sys.executable, "-c", ENDS, "quantify", *args], capture_output=True, text=True,
                           cwd=ROOT, timeout=300)
    within = subprocess.run([sys.executable, "-c", "import sys\nfrom curvewright.cli import main\n"
                             "code = main(sys.argv[1:])\nprint('carried on', file=sys.stderr)\nsys.exit(code)",
                             "quantify", *args], capture_output=True, text=True, cwd=ROOT, timeout=300)
    assert "interpreter teardown" not in ended.stderr
    assert "carried on" in within.stderr
    assert ended.returncode == within.returncode
    assert ended.stdout == within.stdout and (ended.stdout.strip() or ended.returncode == 2)
    assert ended.stderr == within.stderr.replace("carried on\n", "")


def test_other_commands_and_calls_with_arguments_end_as_usual() -> None:
    """Only ``quantify`` started as the program skips the teardown: ``main`` given its arguments
    returns, and other commands end through the interpreter."""
    given = subprocess.run([sys.executable, "-c", "from curvewright.__main__ import main\n"
                            f"code = main(['quantify', {str(RUN)!r}, '--json'])\nprint('returned', code)"],
                           capture_output=True, text=True, cwd=ROOT, timeout=300)
    assert given.stdout.rstrip().endswith("returned 0")
    other = subprocess.run([sys.executable, "-c", ENDS, "compare", str(RUN)], capture_output=True, text=True,
                           cwd=ROOT, timeout=300)
    assert other.returncode == 0, other.stderr
    assert "interpreter teardown" in other.stderr


@pytest.mark.parametrize("collecting", [True, False])
def test_the_collector_is_left_as_it_was_found(collecting: bool) -> None:
    """The cyclic garbage collector is paused while quantify loads the engine and scipy.special, and
    afterwards collects (or not) as before the command."""
    code = ("import contextlib, gc, io, sys\n"
            f"{'gc.enable()' if collecting else 'gc.disable()'}\n"
            "from curvewright.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            f"    code = main(['quantify', {str(RUN)!r}, '--json'])\n"
            "print(code, gc.isenabled(), 'scipy.special' in sys.modules)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=300)
    assert done.stdout.split() == ["0", str(collecting), "True"], done.stderr


_WATCHED_COLLECTIONS = (
    "import contextlib, gc, io, sys\n"
    "{before}\n"
    "passes = []  # at each pass of the collector: the objects frozen, and whether the engine is loaded\n"
    "gc.callbacks.append(lambda phase, info: passes.append((gc.get_freeze_count(),\n"
    "                    'curvewright.core.run_analysis' in sys.modules)) if phase == 'start' else None)\n"
    "from curvewright.cli import main\n"
    "start = gc.get_freeze_count()\n"
    "with contextlib.redirect_stdout(io.StringIO()):\n"
    "    code = main({argv!r})\n"
    "during = [frozen for frozen, loaded in passes if loaded]\n"
    "print(code, start, sum(n > 20_000 for n in during), len(during), gc.get_freeze_count(), gc.isenabled())"
)
"""A command run in a fresh process that watches the collector: the exit code, the objects frozen before the
command, the collector's passes in this process after the engine was loaded that left more than 20,000 objects
alone (frozen) and all such passes, the objects frozen after the command, and whether the collector runs."""


@pytest.mark.parametrize("jobs", ["1", "2"])
def test_the_loaded_modules_are_left_alone_by_the_collector_while_runs_are_analysed(tmp_path: Path, jobs: str) -> None:
    """The objects made in loading the engine, numpy and scipy.special (tens of thousands) are not walked by
    the collector's passes while the runs are analysed, and are collected as before once the command is done."""
    folder = tmp_path / "runs"
    folder.mkdir()
    for i in range(6):
        (folder / f"run_{i}.json").write_bytes(RUN.read_bytes())
    code = _WATCHED_COLLECTIONS.format(before="gc.set_threshold(50)  # passes during every run",
                                       argv=["quantify", str(folder), "--json", "--jobs", jobs])
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=300)
    exit_code, start, passes_left_alone, passes, after, enabled = done.stdout.split()
    assert (exit_code, start, after, enabled) == ("0", "0", "0", "True"), done.stderr
    # all but the few passes after the runs, while their JSON is written
    assert int(passes) > 6 and int(passes_left_alone) >= 0.8 * int(passes), done.stdout


def test_objects_frozen_by_the_caller_stay_frozen() -> None:
    """A program that froze objects of its own before calling the command finds them frozen after it."""
    code = _WATCHED_COLLECTIONS.format(before="gc.freeze()", argv=["quantify", str(RUN), "--json"])
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=300)
    exit_code, start, _, _, after, enabled = done.stdout.split()
    # the frozen objects that died meanwhile are no longer counted
    assert exit_code == "0" and int(after) > int(start) * 0.9 > 0 and enabled == "True", (done.stdout, done.stderr)
