"""The app's tables show a QC recovery and a standard's %RE with the decimals that tell on which side
of the acceptance limit they lie (offscreen, the tables imported from CSV files as an analyst imports
them; invented data, the same tables as tests/test_cli_limit_digits.py)."""

from __future__ import annotations

from tests.test_cli_limit_digits import SAMPLES, STANDARDS


def test_recovery_and_relative_error_in_the_app_tables(make_window, settings, import_csv, answer_dialogs) -> None:
    from PySide6.QtCore import Qt

    from curvewright.app import results_model, standards_model

    settings.setValue("defaults/profile", "ich-m10-chromatographic")  # a new run's profile, as last chosen
    window = make_window(None)
    assert window.session.run.settings.acceptance_profile == "ich-m10-chromatographic"
    import_csv(window, standards=STANDARDS, samples=SAMPLES)

    model = window.results_model
    ids = {model.data(model.index(r, 0), Qt.ItemDataRole.DisplayRole): r for r in range(model.rowCount())}
    qc = {sid: model.data(model.index(ids[sid], results_model.QC), Qt.ItemDataRole.DisplayRole)
          for sid in ("QA", "QB", "QC3", "QD")}
    assert qc == {"QA": "115.0 % pass", "QB": "115.01 % FAIL", "QC3": "114.99 % pass", "QD": "84.99 % FAIL"}

    table = window.standards_model
    relative = [table.data(table.index(r, standards_model.RE), Qt.ItemDataRole.DisplayRole) for r in range(table.rowCount())]
    # two decimals as the app shows a %RE, three where two would read as the ±15 % limit itself
    assert relative[2:8] == ["+15.01", "−15.01", "+14.999", "−14.999", "+15.00", "−15.00"]
