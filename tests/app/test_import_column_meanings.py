"""The import dialog says which column is which, and the import uses what the analyst chose.

Invented scenario: an instrument's sample export with the sample name, the peak area, the peak height and
a second reading of the height ("Height rerun"); the method quantifies on heights. Opened from File →
Import samples, the dialog shows each column's meaning as guessed from its header (the area taken for
the response, the height columns for nothing); the analyst chooses
"response" for both height columns (the second a further replicate) and "not used" for the area, and
the samples table then holds the heights as the replicates of each sample.
"""

from __future__ import annotations

from pathlib import Path

from PySide6.QtWidgets import QDialog, QFileDialog

from curvewright.app import dialogs
from curvewright.app import samples_model as sm
from tests.app.conftest import settle


def _choose(combo, meaning: str) -> None:  # type: ignore[no-untyped-def]
    index = combo.findData(meaning)
    assert index >= 0, meaning
    combo.setCurrentIndex(index)


def test_the_import_uses_the_column_meanings_chosen(make_window, answer_dialogs, qtbot, tmp_path, monkeypatch) -> None:
    export = tmp_path / "sequence_export.csv"
    export.write_bytes("\ufeffSample name,Peak area,Peak height,Height rerun\r\nV-01,5021.4,412.5,409.1\r\n"
                       "V-02,7740.2,630.8,633.0\r\n".encode("utf-8"))
    monkeypatch.setattr(QFileDialog, "getOpenFileName", lambda *a, **k: (str(export), ""))
    seen: dict[str, object] = {}

    def answer(self) -> int:  # type: ignore[no-untyped-def]
        guessed = [combo.currentText() for combo in self.meanings]
        seen["guessed"] = guessed
        _choose(self.meanings[1], "skip")
        _choose(self.meanings[2], "response")
        _choose(self.meanings[3], "response")
        seen["summary"] = self.summary.toPlainText()
        seen["can_accept"] = self.buttons.button(self.buttons.StandardButton.Ok).isEnabled()
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.ImportDialog, "exec", answer)
    window = make_window(None)
    window.actions_by_name["import-samples"].trigger()
    settle(qtbot, window)

    assert seen["guessed"] == ["id (by its header)", "response (by its header)", "(by its header)", "(by its header)"]
    assert seen["can_accept"], seen["summary"]
    samples = {s.id: s for s in window.session.run.samples}
    assert list(samples) == ["V-01", "V-02"]
    assert [m.response.text for m in samples["V-01"].measurements] == ["412.5", "409.1"]
    assert [m.response.text for m in samples["V-02"].measurements] == ["630.8", "633.0"]
    model = window.samples_model
    row = next(r for r in range(model.rowCount()) if model.index(r, sm.ID).data() == "V-01")
    assert model.index(row, sm.RESPONSES).data() == "412.5; 409.1"
