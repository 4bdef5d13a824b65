"""Opening a run that is already open: in a window of this program, that window is brought forward
and nothing is opened twice; in another Curvewright (its ``.NAME.open`` marker), the user is told who
has it open, where and since when, and opens it only on saying so. A marker left by a program that
crashed is ignored."""

from __future__ import annotations

import shutil
import subprocess
import sys
import time
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

from PySide6.QtWidgets import QFileDialog, QMessageBox

from curvewright.io import open_marker
from tests.app.conftest import DEMOS, ROOT

HOLDER = """
import sys, time
from pathlib import Path
from curvewright.io import open_marker
from curvewright.io.audit import Identity
open_marker.hold(Path(sys.argv[1]), Identity("Ines Varga", "QA-7", "ivarga"), "2026-12-03T09:15:00Z")
print("holding", flush=True)
time.sleep(120)
"""


def demo_copy(tmp_path: Path) -> Path:
    """A copy of the first demo run, ``tmp_path/run.json``."""
    path = tmp_path / "run.json"
    shutil.copy(DEMOS[0], path)
    return path


@contextmanager
def held_elsewhere(path: Path) -> Iterator[None]:
    """``path`` held open by another Curvewright (a process holding its open marker) for the ``with``
    block; that process is then killed, as a crash ends it, which leaves its marker behind."""
    holder = subprocess.Popen([sys.executable, "-c", HOLDER, str(path)], cwd=ROOT, stdout=subprocess.PIPE, text=True)
    try:
        assert holder.stdout.readline().strip() == "holding"
        yield
    finally:
        holder.kill()
        holder.wait(timeout=60)
        holder.stdout.close()


def open_from_menu(window, monkeypatch, path) -> None:  # type: ignore[no-untyped-def]
    monkeypatch.setattr(QFileDialog, "getOpenFileName", lambda *a, **k: (str(path), ""))
    window.actions_by_name["open"].trigger()


def test_a_run_open_in_another_window_is_brought_forward(make_window, tmp_path, monkeypatch, answer_dialogs) -> None:
    path = demo_copy(tmp_path)
    first = make_window(path)
    second = make_window(None)
    open_from_menu(second, monkeypatch, path)
    assert second.session.path is None  # not opened twice
    assert first.statusBar().currentMessage() == f"{path} is already open in this window."


def test_a_run_open_in_another_program_is_named_before_it_opens(make_window, tmp_path, monkeypatch,
                                                                answer_dialogs) -> None:
    path = demo_copy(tmp_path)
    with held_elsewhere(path):
        window = make_window(None)
        answer_dialogs["question"] = QMessageBox.StandardButton.Cancel
        open_from_menu(window, monkeypatch, path)
        title, text = answer_dialogs.seen[-1]
        assert title == "The run is open elsewhere" and window.session.path is None
        assert "Ines Varga (ivarga) on computer " in text and "since 2026-12-03 09:15:00 UTC" in text
        answer_dialogs["question"] = QMessageBox.StandardButton.Open  # open it anyway
        open_from_menu(window, monkeypatch, path)
        assert window.session.path == path


def test_a_marker_left_by_a_crashed_program_is_ignored(make_window, tmp_path, monkeypatch, answer_dialogs) -> None:
    path = demo_copy(tmp_path)
    with held_elsewhere(path):
        pass  # then a crash: the marker stays behind
    assert open_marker.marker_path(path).exists()
    window = make_window(None)
    open_from_menu(window, monkeypatch, path)
    assert window.session.path == path
    assert not any(title == "The run is open elsewhere" for title, _text in answer_dialogs.seen)


def test_a_marker_from_another_computer_counts_until_it_is_no_longer_refreshed(tmp_path) -> None:
    path = demo_copy(tmp_path)
    open_marker.marker_path(path).write_text('{"name": "Ines Varga", "login": "ivarga", "host": "bench-pc-7", '
                                             '"pid": 4242, "opened_utc": "2026-12-03T09:15:00Z"}', encoding="utf-8")
    now = time.time()
    assert open_marker.current(path, now=now).host == "bench-pc-7"
    assert open_marker.current(path, now=now + open_marker.STALE_AFTER_SECONDS + 1) is None


def test_a_run_open_in_another_program_given_at_start_up_is_named_first(make_window, tmp_path, answer_dialogs) -> None:
    path = demo_copy(tmp_path)
    with held_elsewhere(path):
        answer_dialogs["question"] = QMessageBox.StandardButton.Cancel
        window = make_window(path)  # as when the program is started with the run's file
        assert answer_dialogs.seen[-1][0] == "The run is open elsewhere" and window.session.path is None


def test_a_closed_window_holds_nothing_open(make_window, tmp_path, monkeypatch, answer_dialogs) -> None:
    path = demo_copy(tmp_path)
    first = make_window(path)
    first.close()  # closed; the object lives on until it is deleted
    second = make_window(None)
    open_from_menu(second, monkeypatch, path)
    assert second.session.path == path and not first.isVisible()
