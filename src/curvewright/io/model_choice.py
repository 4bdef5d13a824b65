"""Whether an analyte's calibration function was chosen by anyone, and the words every output uses
for it: the screen, the workbook and the record say the same thing of a function nobody chose.

An analyte starts with the default calibration function (a straight line, unweighted). A choice is
recorded by :func:`.run_edits.choose_model` (a person in the app, or the person running
``quantify --standards``, which takes the comparison's recommendation) or by applying a validated
method; either leaves a reason with the analyte. A function with no recorded reason and no
``model_chosen`` entry in the audit trail is the default nobody chose.
"""

from __future__ import annotations

from ..core.run import Run

NOT_CHOSEN = "default, not chosen by anyone"
"""What the record and the workbook give as the reason for a function nobody chose."""

NOT_CHOSEN_BY = "nobody (the program's default)"
"""What the record and the workbook give as who chose a function nobody chose."""


def function_words(model: str, weighting: str) -> str:
    """A calibration function in short words: ``linear, unweighted``, ``quadratic, weighted 1/x``."""
    return f"{model}, " + ("unweighted" if weighting == "none" else f"weighted {weighting}")


def chosen(run: Run, analyte: str) -> bool:
    """True when the analyte's calibration function was chosen: a reason is recorded with it, or the
    audit trail records a choice for the analyte (under any name it had; a choice undone and not redone
    does not count)."""
    if run.analyte(analyte).choice_reason.strip():
        return True
    from .analyte_trail import last_entry  # the choice under any name the analyte had, unless undone

    return last_entry(run.audit, analyte, "model_chosen") is not None


def any_not_chosen(run: Run) -> bool:
    """True when an analyte with standards keeps the default calibration function nobody chose."""
    return any(a.standards and not chosen(run, a.name) for a in run.analytes)


def recommendation_reason(comparison, fitted_standards: int, profile_name: str) -> str:  # type: ignore[no-untyped-def]
    """The reason recorded when the comparison's recommendation is taken (in the app or by
    ``quantify --standards``): what it was worked out on, and the comparison's own reasons."""
    return (f"recommended by the model comparison on the {fitted_standards} standards in the fit, acceptance profile "
            f"{profile_name!r}: " + "; ".join(comparison.reasons))
