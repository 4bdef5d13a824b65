"""The app's verdict on a QC sample it cannot judge: imported from a file without its nominal value,
the QC sample is named as not judged and the run is not accepted (offscreen, as an analyst imports)."""

from __future__ import annotations

from pathlib import Path

from tests.app.conftest import ROOT, settle

NITRATE = ROOT / "sample_runs" / "nitrate_water_linear.json"


def import_one_sample(window, qtbot, monkeypatch, tmp_path: Path, row: str) -> None:  # type: ignore[no-untyped-def]
    """Import a samples file of one ``row`` under the header Sample;Type;Nominal;Absorbance, written as
    a spreadsheet in a decimal-comma locale saves it (semicolons, CRLF), its import dialog accepted."""
    from curvewright.app import main_window

    path = tmp_path / "qc.csv"
    path.write_text(f"Sample;Type;Nominal;Absorbance\r\n{row}\r\n", encoding="utf-8")
    monkeypatch.setattr(main_window.ImportDialog, "exec", lambda self: main_window.ImportDialog.DialogCode.Accepted)
    assert window.import_table("samples", path=str(path))
    settle(qtbot, window)


def test_a_qc_sample_without_its_nominal_is_named_and_the_run_not_accepted(make_window, qtbot, tmp_path,
                                                                            monkeypatch, answer_dialogs) -> None:
    window = make_window(NITRATE)
    assert "Run ACCEPTED" in window.verdict.text()
    import_one_sample(window, qtbot, monkeypatch, tmp_path, "QC check 7;QC;;0,41")  # the nominal cell left empty
    text = window.verdict.text()
    assert "Run NOT ACCEPTED" in text
    assert "QC sample 'QC check 7' not judged: no nominal concentration" in text
    assert not window.session.result.accepted


def test_a_nominal_given_to_a_sample_of_kind_unknown_is_pointed_out(make_window, qtbot, tmp_path,
                                                                    monkeypatch, answer_dialogs) -> None:
    window = make_window(NITRATE)
    assert "nominal is not used" not in window.attention.text()
    # the kind cell left empty while the nominal is typed: the sample is an unknown, its nominal unused
    import_one_sample(window, qtbot, monkeypatch, tmp_path, "QC check 8;;2;0,41")
    said = window.attention.text()
    assert "'QC check 8' (2 mg/L)" in said and "its nominal is not used" in said, said
    assert window.attention.isVisible()
