"""What the response-factor calibration and the standard-addition series add to every output.

The command line (text and JSON), the workbook and the printed record all take their rows from here,
so that each shows the same numbers in the same words.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from ..core.level_text import percent_label
from ..core.fitted_curve import FittedCurve
from .number_text import full_number
from ..core.notation import figures, fixed

if TYPE_CHECKING:  # pragma: no cover
    from ..core.run_analysis import AnalyteResult
    from .result_tables import Table, Value


def factor_name(uses_internal_standard: bool) -> str:
    """What the factor is called: the relative response factor when the response is a ratio to an internal standard."""
    return ("relative response factor (response ratio to the internal standard per unit concentration)"
            if uses_internal_standard else "response factor (response per unit concentration)")


def response_factor_rows(cal: FittedCurve, uses_internal_standard: bool) -> list[tuple[Value, Value, Value]]:
    """(item, value, standard error) rows describing an average response factor calibration; none for other models."""
    rf = cal.response_factors
    if rf is None:
        return []
    name = factor_name(uses_internal_standard)
    short = "RRF" if uses_internal_standard else "RF"
    return [
        (f"Mean {name}", rf.mean, rf.standard_error),
        (f"{short} standard deviation (n − 1)", rf.sd, None),
        (f"{short} %RSD", rf.rsd_percent, None),
        (f"{short} of each standard", " | ".join(f"{figures(v, 6)}" for v in rf.factors), None),
    ]


def response_factor_lines(cal: FittedCurve, uses_internal_standard: bool) -> list[str]:
    """The average response factor in words for the command line (empty for other models)."""
    rf = cal.response_factors
    if rf is None:
        return []
    short = "RRF" if uses_internal_standard else "RF"
    return [
        f"  mean {factor_name(uses_internal_standard)} {figures(rf.mean, 6)} (standard error {figures(rf.standard_error, 3)}); "
        f"{short} SD {figures(rf.sd, 4)}, %RSD {figures(rf.rsd_percent, 3)} % over {rf.n} standards",
    ]


def response_factor_json(cal: FittedCurve, uses_internal_standard: bool) -> dict[str, Any] | None:
    rf = cal.response_factors
    if rf is None:
        return None
    return {"relative": uses_internal_standard, "mean": rf.mean, "standard_error": rf.standard_error, "sd": rf.sd,
            "rsd_percent": rf.rsd_percent, "factors": [float(v) for v in rf.factors]}


def curve_words(cal: FittedCurve, uses_internal_standard: bool) -> str:
    """The calibration in one line for the app: model, weighting (with the variance function its weights
    use, when they are estimated from all standards), equation, each parameter with its standard error, and
    the model's own diagnostic (the RF %RSD for the average response factor, R² otherwise)."""
    fitted = cal.weight_model.variance_fit
    weights = cal.weighting.description + (f" ({fitted.function.words})" if fitted is not None else "")
    parts = [f"{cal.model.description}, {weights}: {cal.equation(6)}"]
    rf = cal.response_factors
    if rf is not None:
        short = "RRF" if uses_internal_standard else "RF"
        parts.append(f"mean {short} = {figures(rf.mean, 6)} (standard error {figures(rf.standard_error, 3)}), {short} %RSD = "
                     f"{figures(rf.rsd_percent, 3)} % over {rf.n} standards")
    else:
        if cal.model.is_polynomial:  # b0 … b2; a line through the origin has no b0 to show
            terms = [f"b{p} = {figures(b, 6)} (SE {figures(se, 3)})" for p, (b, se) in enumerate(zip(cal.coefficients, cal.standard_errors))
                     if not cal.through_origin or p > 0]
        else:  # the curve's own named parameters
            terms = [f"{name} = {figures(b, 6)} (SE {figures(se, 3)})"
                     for name, b, se in zip(cal.coefficient_names, cal.coefficients, cal.standard_errors)]
        parts.append(", ".join(terms))
        parts.append(f"R² = {fixed(cal.r_squared, 6)}")
    parts.append(f"residual SD {figures(cal.residual_sd, 4)} on {cal.df_residual} df")
    return "; ".join(parts)


def additions_table(a: "AnalyteResult", level: float) -> Table:
    """One row per sample measured by standard additions: the line, the extrapolated concentration, its interval."""
    from .result_tables import Column, Table  # loaded with the tables that hold it, not for the JSON

    unit = a.analyte.concentration_unit
    columns = (
        Column("Sample id"), Column("Additions", kind="int"), Column("Added", unit), Column("Mean responses"),
        Column("Replicates per addition"), Column("Intercept a", kind="number", display="sig:6"),
        Column("Slope b", kind="number", display="sig:6"), Column("Residual SD", kind="number", display="sig:4"),
        Column("Concentration a/b", unit, "number", "sig:5"), Column("Standard error", unit, "number", "sig:3"),
        Column("Dilution factor", kind="number", display="full"),
        Column("Reported concentration", unit, "number", "sig:5"),
        Column(f"Lower limit ({percent_label(level)})", unit, "number", "sig:5"), Column(f"Upper limit ({percent_label(level)})", unit, "number", "sig:5"),
        Column("Warnings"), Column("Note"),
    )
    rows = []
    for s in a.additions:
        r = s.result
        rows.append((
            s.sample_id, len(s.added), " | ".join(full_number(x) for x in s.added),
            " | ".join(f"{figures(y, 6)}" for y in s.mean_response), " | ".join(str(m) for m in s.replicates),
            None if r is None else r.intercept, None if r is None else r.slope, None if r is None else r.residual_sd,
            None if r is None else r.concentration, None if r is None else r.standard_error, s.dilution_factor,
            s.reported, s.reported_lower, s.reported_upper, "" if r is None else "; ".join(r.warnings), s.note,
        ))
    return Table(f"Standard additions – {a.analyte.name}", columns, tuple(rows))


def additions_lines(a: "AnalyteResult", level: float) -> list[str]:
    """The standard-addition series in words for the command line (empty when there are none)."""
    if not a.additions:
        return []
    unit = a.analyte.concentration_unit.strip()
    in_unit = f" {unit}" if unit else ""
    lines = ["  standard additions (x-intercept of the line through the spiked portions; "
             "matrix-matched linearity is assumed):"]
    for s in a.additions:
        r = s.result
        if r is None:
            lines.append(f"    {s.sample_id}: {s.note}")
            continue
        lines.append(
            f"    {s.sample_id}: {figures(s.reported, 5)}{in_unit} ({percent_label(level)} interval {figures(s.reported_lower, 5)} to "
            f"{figures(s.reported_upper, 5)}; standard error {figures(s.reported_standard_error, 3)}); line {r.equation(6)} over "
            f"{len(s.added)} additions" + (f"; dilution factor {full_number(s.dilution_factor)}" if s.dilution_factor != 1 else "")
        )
        lines += [f"      warning: {w}" for w in r.warnings[1:]]
        if s.note:
            lines.append(f"      note: {s.note}")
    return lines


def additions_json(a: "AnalyteResult") -> list[dict[str, Any]]:
    out = []
    for s in a.additions:
        r = s.result
        out.append({
            "id": s.sample_id, "added": list(s.added), "mean_response": list(s.mean_response),
            "replicates": list(s.replicates), "dilution_factor": s.dilution_factor, "note": s.note,
            "intercept": None if r is None else r.intercept, "slope": None if r is None else r.slope,
            "residual_sd": None if r is None else r.residual_sd, "df": None if r is None else r.df,
            "concentration": None if r is None else r.concentration,
            "standard_error": None if r is None else r.standard_error,
            "lower": None if r is None else r.lower, "upper": None if r is None else r.upper,
            "reported": s.reported, "reported_standard_error": s.reported_standard_error,
            "reported_lower": s.reported_lower, "reported_upper": s.reported_upper,
            "warnings": [] if r is None else list(r.warnings),
        })
    return out


__all__ = [
    "curve_words",
    "additions_json", "additions_lines", "additions_table", "factor_name", "response_factor_json",
    "response_factor_lines", "response_factor_rows",
]
