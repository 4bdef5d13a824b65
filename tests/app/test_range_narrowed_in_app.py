"""The app says when a failing end level narrows the range: tables imported as an analyst imports
them (offscreen), the verdict names the narrowed range and the sample above it reads "> ULOQ".

Invented scenario: the Harrowgate drozafen assay (ng/mL), both 800 ng/mL standards about 29 % low,
so the highest level fails and the range ends at 400 ng/mL (ICH M10 and TNI practice, recalled)."""

from __future__ import annotations

from tests.app.conftest import settle
from tests.test_cli_range_narrowed import samples, standards


def test_the_narrowed_range_is_said_on_screen(make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    from curvewright.app import main_window

    std = standards(tmp_path / "std.csv")
    smp = samples(tmp_path / "smp.csv", ("High-1", 6.5), (350, 4.38))
    monkeypatch.setattr(main_window.ImportDialog, "exec", lambda self: main_window.ImportDialog.DialogCode.Accepted)
    window = make_window(None)
    assert window.import_table("standards", path=str(std))
    settle(qtbot, window)
    assert window.import_table("samples", path=str(smp))
    settle(qtbot, window)
    assert window.choose_model("linear", "1/x^2", None)  # as the model evidence's "use selected" does
    settle(qtbot, window)
    said = window.attention.text()
    assert ("the highest level (800) fails; the reporting range is narrowed to the passing levels 1–400 (LLOQ–ULOQ): "
            "results outside it are not reported as numbers (the standards in the fit span 1–800)" in said), said
    assert window.attention.isVisible()
    assert "the reporting range is narrowed to the passing levels 1–400" in window.verdict.toolTip()
    shown = window.results_model
    cells = [[shown.index(r, c).data() for c in range(shown.columnCount())] for r in range(shown.rowCount())]
    row = next(r for r in cells if "High-1" in r)
    assert any(str(v).startswith("> 400") for v in row), row
    window.grab().save(str(tmp_path / "narrowed.png"))
