"""Negative numbers the app shows a person carry the minus sign U+2212, as the command's text and the
record write them (core/notation.py): the standards table's %RE column and the curve's hover text at a
standard, where a standard reads below the curve.

Invented scenario: a zinc line of about 12 counts per µg/L, one reading per level, the 5 µg/L standard
read low and the 20 µg/L standard read high, so that some back-calculated values fall below nominal."""

from __future__ import annotations

from PySide6.QtCore import Qt

from curvewright.core.notation import MINUS

ZINC = ("Std,Concentration (µg/L),Response\n"
        "Z1,1,14.1\nZ2,2,24.6\nZ5,5,55.2\nZ10,10,124.9\nZ20,20,247.3\nZ40,40,481.0\n")


def test_a_negative_relative_error_is_shown_with_the_minus_sign(make_window, qtbot, import_csv, answer_dialogs) -> None:
    from curvewright.app import standards_model

    window = make_window(None)
    import_csv(window, standards=ZINC)
    table = window.standards_model
    shown = [table.data(table.index(r, standards_model.RE), Qt.ItemDataRole.DisplayRole) for r in range(table.rowCount())]
    errors = window.session.result.analytes[0].calibration.relative_error
    assert (errors < -0.01).any() and (errors > 0.01).any(), errors
    for text, value in zip(shown, errors):
        assert "-" not in text, shown  # never the hyphen-minus
        assert text.startswith(MINUS if value < -0.005 else "+"), (text, value)
        assert float(text.replace(MINUS, "-")) == round(float(value), 2), (text, value)
    # the hover text at the standard read lowest against its nominal value says the same
    lowest = int(errors.argmin())
    hover = window.curve_view.hover_text_at(float(window.session.run.analytes[0].standards[lowest].concentration),
                                            float(window.session.result.analytes[0].calibration.response[lowest]))
    assert hover is not None and f"({shown[lowest]} %)" in hover and shown[lowest].startswith(MINUS), hover
