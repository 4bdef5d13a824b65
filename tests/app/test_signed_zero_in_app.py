"""The app's standards table and the curve's hover text show a %RE that rounds to zero at two decimals as
"0.00", with no sign (common practice in printed tables: a sign on zero states a direction the digits do
not have). The copper table is invented (the same as tests/test_cli_signed_zero.py): responses exactly on
y = 5 + 10·x counts per mg/L, so each %RE is zero up to the fit's binary round-off, of either sign."""

from __future__ import annotations

from PySide6.QtCore import Qt

from tests.app.conftest import settle
from tests.app.test_user_journeys import select_standard
from tests.test_cli_signed_zero import COPPER


def test_a_relative_error_of_zero_has_no_sign_in_the_app(make_window, qtbot, import_csv, answer_dialogs) -> None:
    from curvewright.app import standards_model

    window = make_window(None)
    import_csv(window, standards=COPPER)
    table = window.standards_model

    def relative_errors() -> list[str]:
        return [table.data(table.index(r, standards_model.RE), Qt.ItemDataRole.DisplayRole)
                for r in range(table.rowCount())]

    errors = window.session.result.analytes[0].calibration.relative_error
    assert (errors > 0).any() and (errors < 0).any()  # round-off of both signs, as the fit leaves it
    assert relative_errors() == ["0.00"] * 12
    # the curve's hover text at a standard says the same
    hover = window.curve_view.hover_text_at(1.0, 15.0)
    assert hover is not None and "(0.00 %)" in hover, hover
    # an excluded standard is read off the curve for the table too
    assert select_standard(window, 11) == "Cu32-2"
    answer_dialogs["reason"] = "autosampler skipped the vial (sequence log line 12)"
    window.actions_by_name["exclude"].trigger()
    settle(qtbot, window)
    assert relative_errors()[11] == "0.00"
