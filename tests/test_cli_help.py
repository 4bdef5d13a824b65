"""The help the program prints without its parser (:mod:`curvewright.cli_help`) is the parser's own.

If ``test_kept_texts_are_what_the_parser_prints_now`` fails, an option or a help text changed:
regenerate the kept texts with ``python -m curvewright.cli_help --write`` and commit the result.
"""

from __future__ import annotations

import ast
import os
import subprocess
import sys
from pathlib import Path

import pytest

from curvewright import cli_help
from curvewright.cli import HELP_COLUMNS

ROOT = Path(__file__).resolve().parents[1]
PARSER_TEXTS = cli_help.parser_texts()
SAME_RELEASE = sys.version_info[:2] == cli_help.PYTHON


def run(*args: str, module: str = "curvewright", columns: int | None = None) -> subprocess.CompletedProcess:
    env = dict(os.environ)
    env.pop("COLUMNS", None)
    if columns is not None:
        env["COLUMNS"] = str(columns)
    return subprocess.run([sys.executable, "-m", module, *args], capture_output=True, text=True, encoding="utf-8",
                          cwd=ROOT, env=env, timeout=300)


def test_every_command_has_its_help() -> None:
    assert set(PARSER_TEXTS) == {(), ("quantify",), ("compare",), ("check",), ("sign",), ("withdraw-approval",),
                                 ("keys",), ("archive",), ("archive", "add"), ("archive", "list"),
                                 ("archive", "show"), ("trend",)}


def test_kept_texts_are_what_the_parser_prints_now() -> None:
    if not SAME_RELEASE:  # kept for another release of Python: the parser answers instead
        assert cli_help.help_text(["--help"]) is None
        return
    changed = [" ".join(key) or "(the program)" for key in PARSER_TEXTS if cli_help.TEXTS.get(key) != PARSER_TEXTS[key]]
    extra = [" ".join(key) for key in cli_help.TEXTS if key not in PARSER_TEXTS]
    assert not changed and not extra, (
        f"the kept help differs from the parser's for {changed + extra}: run 'python -m curvewright.cli_help --write'")


@pytest.mark.parametrize("key", sorted(PARSER_TEXTS))
@pytest.mark.parametrize("flag", ["--help", "-h"])
def test_help_from_outside_is_the_parsers_help(key: tuple[str, ...], flag: str) -> None:
    done = run(*key, flag)
    assert done.returncode == 0, done.stderr[-2000:]
    assert done.stderr == ""
    assert done.stdout == PARSER_TEXTS[key]
    assert done.stdout.startswith("usage: curvewright")


@pytest.mark.parametrize("columns", [40, 200])
def test_help_is_laid_out_for_a_fixed_width_whatever_the_console(columns: int) -> None:
    fast, parsed = run("quantify", "--help", columns=columns), run("quantify", "--help", module="curvewright.cli",
                                                                    columns=columns)
    assert fast.returncode == parsed.returncode == 0
    assert fast.stdout == parsed.stdout == PARSER_TEXTS[("quantify",)]
    option_lines = [line for line in fast.stdout.splitlines() if line.startswith("  --")]
    assert option_lines and max(map(len, option_lines)) <= HELP_COLUMNS - 2


PROBE = ("import sys; from curvewright.__main__ import main; code = main(sys.argv[1:]); "
         "sys.stdout.flush(); print(repr([code, sorted(sys.modules)]), file=sys.stderr)")


@pytest.mark.parametrize("args", [("--help",), ("quantify", "--help"), ("archive", "add", "-h")])
def test_help_loads_neither_argparse_nor_the_numerics(args: tuple[str, ...]) -> None:
    done = subprocess.run([sys.executable, "-c", PROBE, *args], capture_output=True, text=True, encoding="utf-8",
                          cwd=ROOT, timeout=300)
    code, modules = ast.literal_eval(done.stderr.splitlines()[-1])
    assert code == 0 and done.stdout == PARSER_TEXTS[args[:-1]]
    assert "curvewright.cli_help" in modules  # the listing is read correctly
    heavy = {"argparse", "curvewright.cli", "json", "pathlib", "dataclasses", "typing", "numpy", "scipy", "PySide6",
             "pyqtgraph", "openpyxl"}
    if SAME_RELEASE:
        assert not heavy & set(modules)


@pytest.mark.parametrize("args", [["quantify", "x.json", "--help"], ["--help", "--version"], ["nosuch", "--help"],
                                  ["quantify"], []])
def test_other_command_lines_go_to_the_parser(args: list[str]) -> None:
    assert cli_help.help_text(args) is None


def test_the_readme_and_the_help_give_exit_code_1_the_same_causes() -> None:
    readme = " ".join((ROOT / "README.md").read_text(encoding="utf-8").split())
    said = readme[readme.index("Exit codes: 0 accepted"):].split(", 2 input error")[0]
    for key in (("quantify",), ()):
        helped = " ".join(PARSER_TEXTS[key].split())
        one = helped[helped.index(" 1 completed"):helped.index(" 2 input error")]
        assert "acceptance profile" in one and "acceptance profile" in said
        assert "the run's record is not intact" in one and "the run's record is not intact" in said
        assert "check" in one and "curvewright check" in said
