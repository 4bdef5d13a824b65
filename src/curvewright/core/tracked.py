"""What the calibration history tracks of each run and analyte, read from the run's analysis.

For one analyte of an analysed run (:func:`~.run_analysis.analyse_run`):

=====================  ======================================================================
``slope``              b1 of the fitted curve, in response units per concentration unit (the
                       mean RF for the average response factor)
``intercept``          b0, in response units (None for a curve through the origin, which has none)
``curvature``          b2 of a quadratic, in response units per concentration unit squared
                       (None for the straight lines)
``residual_sd``        the residual SD s of the fit, in response units (weights sum to n)
``r``                  the correlation coefficient, sign(b1)·√R² (R² as the fit reports it:
                       weighted when the fit is; about the mean response for every model)
``rf_rsd_percent``     the %RSD of the response factors of an average-response-factor model;
                       None for any other model: it is never made up from another fit

The 4PL, 5PL and power curves have no slope, intercept or curvature coefficient (their parameters
are asymptotes, an inflection point, a slope factor and exponents), so those, and r, are None for
them rather than a parameter of another meaning under the same name; their residual SD, LLOQ,
internal-standard response and recoveries are tracked.
``lloq``               the lowest non-zero standard in the fit (:mod:`.reporting`), in the
                       concentration unit
``is_response``        the mean internal-standard response of the standards in the fit, in
                       the IS response unit, when the analyte is calibrated against an IS
``recoveries``         the mean recovery (100·found/nominal, %) per QC nominal level, and per
                       calibration-check kind (ICV, CCV, check standard, reporting-limit check)
                       and nominal, each with the number of results averaged
=====================  ======================================================================

The trends (:mod:`.trends`) follow each of these through the runs filed for one analyte and method.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from .run import SampleKind
from .run_analysis import AnalyteResult, RunResult
from .notation import entered

CALIBRATION_QUANTITIES = ("slope", "intercept", "curvature", "residual_sd", "r", "rf_rsd_percent", "lloq",
                          "is_response")
"""The quantities held once per run and analyte, in the order they are listed."""

RECOVERY_KINDS = ("qc", "icv", "ccv", "check_standard", "low_level_check")
"""The kinds of sample whose recovery is tracked (a calibration blank has no recovery)."""


@dataclass(frozen=True)
class Recovery:
    """The mean recovery (%) of the samples of one kind at one nominal concentration in one run."""

    kind: str
    nominal: float
    recovery_percent: float
    count: int


@dataclass(frozen=True)
class TrackedValues:
    """The tracked quantities of one analyte in one run (None where the run gives none), with the
    method they belong to: the acceptance profile, the model and the weighting."""

    analyte: str
    concentration_unit: str
    response_unit: str
    profile_id: str
    model: str
    weighting: str
    accepted: bool
    error: str | None
    slope: float | None = None
    intercept: float | None = None
    curvature: float | None = None
    residual_sd: float | None = None
    r: float | None = None
    rf_rsd_percent: float | None = None
    lloq: float | None = None
    is_response: float | None = None
    is_response_count: int | None = None
    recoveries: tuple[Recovery, ...] = ()
    method: str | None = None
    """The validated method the run followed (its label, e.g. ``"ENV-NO3 v2"``), None without one."""

    @property
    def method_key(self) -> str:
        """The method the values belong to, until runs carry a method of their own."""
        return method_key(self.profile_id, self.model, self.weighting)

    def value(self, quantity: str) -> float | None:
        """The value of a quantity key (:func:`quantity_key`), None when this run has none."""
        if quantity in CALIBRATION_QUANTITIES:
            return getattr(self, quantity)
        for rec in self.recoveries:
            if recovery_key(rec.kind, rec.nominal) == quantity:
                return rec.recovery_percent
        return None


def method_key(profile_id: str, model: str, weighting: str) -> str:
    """``"profile | model | weighting"``: the values of runs judged and fitted alike are comparable."""
    return f"{profile_id} | {model} | {weighting}"


def recovery_key(kind: str, nominal: float) -> str:
    """The quantity key of a recovery, e.g. ``qc_recovery@150`` or ``ccv_recovery@5``."""
    return f"{kind}_recovery@{nominal:g}"


def parse_recovery_key(quantity: str) -> tuple[str, float] | None:
    """(kind, nominal) of a recovery key, None for any other text."""
    head, at, nominal = quantity.partition("_recovery@")
    if not at or head not in RECOVERY_KINDS:
        return None
    try:
        value = float(nominal)
    except ValueError:
        return None
    return (head, value) if math.isfinite(value) else None


_KIND_WORDS = {"qc": "QC", "icv": "ICV", "ccv": "CCV", "check_standard": "check standard",
               "low_level_check": "reporting-limit check"}


def quantity_words(quantity: str, concentration_unit: str = "", response_unit: str = "") -> str:
    """A quantity key in words, with its unit (``"slope (AU per mg/L)"``, ``"QC recovery at 150 ng/mL (%)"``)."""
    c, y = concentration_unit.strip(), response_unit.strip()
    per = f"{y or 'response'} per {c or 'concentration unit'}"
    words = {
        "slope": f"slope b1 ({per})",
        "intercept": f"intercept b0 ({y})" if y else "intercept b0 (response)",
        "curvature": f"curvature b2 ({y or 'response'} per ({c or 'concentration unit'})²)",
        "residual_sd": f"residual SD ({y})" if y else "residual SD (response)",
        "r": "correlation coefficient r",
        "rf_rsd_percent": "response-factor %RSD (%)",
        "lloq": f"LLOQ ({c})" if c else "LLOQ",
        "is_response": "mean internal-standard response",
    }
    if quantity in words:
        return words[quantity]
    parsed = parse_recovery_key(quantity)
    if parsed is None:
        return quantity
    kind, nominal = parsed
    return f"{_KIND_WORDS[kind]} recovery at {entered(nominal)}{' ' + c if c else ''} (%)"


def tracked_values(result: RunResult) -> tuple[TrackedValues, ...]:
    """The tracked quantities of every analyte of an analysed run."""
    method = result.method.label if result.method is not None else None
    return tuple(replace(_of_analyte(a, result.profile.id), method=method) for a in result.analytes)


def _of_analyte(a: AnalyteResult, profile_id: str) -> TrackedValues:
    analyte = a.analyte
    cal = a.calibration
    base = dict(analyte=analyte.name, concentration_unit=analyte.concentration_unit,
                response_unit=analyte.response_unit, profile_id=profile_id, accepted=a.accepted, error=a.error)
    if cal is None:
        return TrackedValues(model=analyte.model, weighting=analyte.weighting, **base)
    polynomial = cal.model.is_polynomial  # b0, b1[, b2]; a curve's named parameters are none of these
    b = [float(v) for v in cal.coefficients] if polynomial else []
    slope = b[1] if polynomial else None
    r = (math.copysign(math.sqrt(cal.r_squared), slope) if slope is not None and cal.r_squared >= 0 and slope != 0
         else None)
    is_values = [float(s.internal_standard_response.value) for s in a.fitted_standards  # type: ignore[arg-type]
                 if analyte.uses_internal_standard and s.internal_standard_response is not None
                 and s.internal_standard_response.is_number]
    return TrackedValues(
        model=cal.model.value, weighting=cal.weighting.value, **base,
        slope=slope,
        intercept=b[0] if polynomial and not cal.through_origin else None,
        curvature=b[2] if len(b) > 2 else None,
        residual_sd=float(cal.residual_sd),
        r=r,
        rf_rsd_percent=cal.rf_rsd_percent,
        lloq=a.reporting.lloq if a.reporting is not None else None,
        is_response=float(np.mean(is_values)) if is_values else None,
        is_response_count=len(is_values) if is_values else None,
        recoveries=_recoveries(a),
    )


def _recoveries(a: AnalyteResult) -> tuple[Recovery, ...]:
    """Mean recovery per (kind, nominal): QC samples from the samples, calibration checks from the
    checks judged for the analyte."""
    groups: dict[tuple[str, float], list[float]] = {}
    for s in a.samples:
        if s.kind is SampleKind.QC and s.nominal is not None and s.recovery_percent is not None:
            groups.setdefault(("qc", float(s.nominal)), []).append(float(s.recovery_percent))
    for c in a.checks.checks if a.checks is not None else ():
        if c.recovery_percent is not None and c.nominal is not None and c.kind.value in RECOVERY_KINDS:
            groups.setdefault((c.kind.value, float(c.nominal)), []).append(float(c.recovery_percent))
    return tuple(Recovery(kind, nominal, float(np.mean(values)), len(values))
                 for (kind, nominal), values in sorted(groups.items(), key=lambda kv: (RECOVERY_KINDS.index(kv[0][0]),
                                                                                       kv[0][1])))
