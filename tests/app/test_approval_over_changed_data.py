"""An approved run whose data were changed in a text editor after approval, opened in the app as an
analyst opens a file: besides the one-off warning on opening, the window keeps saying that the approval
does not cover the current data (and that it still locks the run), not the plain approved-and-locked line."""

from __future__ import annotations

from pathlib import Path

from tests.app.conftest import ROOT, settle
from tests.cli_runs import run_cli

NITRATE = ROOT / "sample_runs" / "nitrate_water_linear.json"


def _approved_then_edited(tmp_path: Path) -> Path:
    path = tmp_path / "approved.json"
    path.write_text(NITRATE.read_text(encoding="utf-8"), encoding="utf-8")
    key = tmp_path / "lab.key"
    for args in (("keys", "new", "--private", str(key), "--public", str(tmp_path / "lab.pub")),
                 ("sign", str(path), "--role", "approver", "--analyst", "Tomas Reyes", "--key", str(key))):
        done = run_cli(*args)
        assert done.returncode == 0, done.stdout + done.stderr
    text = path.read_text(encoding="utf-8")
    edited = text.replace('"value": 0.1008,', '"value": 0.1108,', 1).replace('"text": "0.1008"', '"text": "0.1108"', 1)
    assert edited != text
    path.write_text(edited, encoding="utf-8")
    return path


def test_the_window_keeps_saying_the_approval_does_not_cover_the_data(make_window, qtbot, tmp_path,
                                                                     answer_dialogs) -> None:
    path = _approved_then_edited(tmp_path)
    window = make_window(NITRATE)
    assert window.open_path(path)
    settle(qtbot, window)
    assert any(title == "Not as Curvewright left it" for title, _ in answer_dialogs.seen), answer_dialogs.seen

    for _ in range(2):  # still there after the window is redrawn, not only on opening
        shown = window.attention.text()
        assert window.attention.isVisible()
        assert "Approved by Tomas Reyes" in shown and "the approval does NOT hold" in shown, shown
        assert "the approved data were changed after approval" in shown
        assert "locks the run until it is withdrawn" in shown
        assert "the run is locked (Review" not in shown
        window._show_verdict(window.session.result)
