"""The README's commands, CI and the examples stay in step."""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def readme_commands() -> list[str]:
    return re.findall(r"^    (python3? .+)$", (ROOT / "README.md").read_text(encoding="utf-8"), flags=re.M)


def test_readme_has_exactly_the_two_setup_commands_and_the_caution() -> None:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    commands = readme_commands()
    assert len(commands) == 2
    assert "pip install" in commands[0] and "pytest" in commands[1]
    assert "qualified laboratory personnel" in text


def test_ci_runs_the_readme_test_command() -> None:
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert readme_commands()[1] in ci.splitlines()


def test_examples_run() -> None:
    for script in sorted((ROOT / "examples").glob("*.py")):
        result = subprocess.run([sys.executable, str(script)], capture_output=True, text=True, timeout=120)
        assert result.returncode == 0, f"{script.name}: {result.stderr}"
        assert "qualified laboratory personnel" in result.stdout
