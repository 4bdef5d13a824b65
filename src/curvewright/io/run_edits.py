"""Changes to a run. Each returns a new run with one audit entry appended; nothing is deleted.

The app's undo stack keeps the runs; the audit trail keeps what was done, by whom, when and why.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any, Mapping

from ..core.acceptance import AcceptanceProfile, load_profile
from ..core.models import Model
from ..core.run import Analyte, Reading, Run, RunError, RunSettings, Standard
from ..core.weighting import Weighting
from .audit import Clock, append_entry, utc_now


def new_run(
    name: str, analytes: tuple[Analyte, ...], *, description: str = "", settings: RunSettings | None = None,
    user: str | None = None, clock: Clock = utc_now,
) -> Run:
    if not name.strip():
        raise RunError("run name: a run needs a name.")
    run = Run(name=name, analytes=analytes, settings=settings or RunSettings(), description=description)
    return _log(run, "run_created", {"name": name, "analytes": [a.name for a in analytes]}, user, clock)


def record(run: Run, action: str, details: Mapping[str, Any], *, user: str | None = None, clock: Clock = utc_now) -> Run:
    """Append an entry without changing anything else (imports, exports, reports)."""
    return _log(run, action, details, user, clock)


def exclude_standard(
    run: Run, analyte: str, standard_id: str, reason: str, *, user: str | None = None, clock: Clock = utc_now
) -> Run:
    if not reason.strip():
        raise RunError(f"excluding standard {standard_id!r} of {analyte}: give the reason for the exclusion.")
    a = run.analyte(analyte)
    s = a.standard(standard_id)
    if not s.included:
        raise RunError(f"standard {standard_id!r} of {analyte} is already excluded ({s.exclusion_reason}).")
    changed = _with_standard(a, replace(s, included=False, exclusion_reason=reason.strip()))
    return _log(run.with_analyte(changed), "standard_excluded",
                {"analyte": analyte, "standard": standard_id, "reason": reason.strip()}, user, clock)


def include_standard(
    run: Run, analyte: str, standard_id: str, reason: str, *, user: str | None = None, clock: Clock = utc_now
) -> Run:
    a = run.analyte(analyte)
    s = a.standard(standard_id)
    if s.included:
        raise RunError(f"standard {standard_id!r} of {analyte} is already included.")
    changed = _with_standard(a, replace(s, included=True, exclusion_reason=""))
    return _log(run.with_analyte(changed), "standard_included",
                {"analyte": analyte, "standard": standard_id, "previous_reason": s.exclusion_reason,
                 "reason": reason.strip()}, user, clock)


def edit_standard(
    run: Run, analyte: str, standard_id: str, field: str, value: float | Reading, reason: str = "",
    *, user: str | None = None, clock: Clock = utc_now,
) -> Run:
    """Change the concentration, response or IS response of one standard (old → new in the trail)."""
    a = run.analyte(analyte)
    s = a.standard(standard_id)
    if field == "concentration":
        if isinstance(value, Reading):
            if not value.is_number:
                raise RunError(f"standard {standard_id!r}: the concentration must be a number, not {value.text!r}.")
            value = float(value.value)  # type: ignore[arg-type]
        old, new = s.concentration, float(value)
        updated = replace(s, concentration=new)
    elif field in ("response", "internal_standard_response"):
        reading = value if isinstance(value, Reading) else Reading.of(value)
        before = getattr(s, field)
        old, new = (before.text if before else None), reading.text
        updated = replace(s, **{field: reading})
    else:
        raise RunError(f"standard field {field!r} cannot be edited (concentration, response, internal_standard_response).")
    return _log(run.with_analyte(_with_standard(a, updated)), "value_edited",
                {"analyte": analyte, "standard": standard_id, "field": field, "old": old, "new": new,
                 "reason": reason.strip()}, user, clock)


def choose_model(
    run: Run, analyte: str, model: str, weighting: str, reason: str, *,
    recommended: tuple[str, str] | None = None, user: str | None = None, clock: Clock = utc_now,
) -> Run:
    """Record the calibration function chosen for an analyte; a choice against the recommendation needs a reason."""
    m, w = Model.parse(model).value, Weighting.parse(weighting).value
    if recommended is not None and (m, w) != tuple(recommended) and not reason.strip():
        raise RunError(
            f"{analyte}: {m}, {w} differs from the recommended {recommended[0]}, {recommended[1]}; give the reason for the choice."
        )
    a = run.analyte(analyte)
    changed = replace(a, model=m, weighting=w, choice_reason=reason.strip())
    return _log(run.with_analyte(changed), "model_chosen",
                {"analyte": analyte, "old": [a.model, a.weighting], "new": [m, w], "reason": reason.strip(),
                 "recommended": list(recommended) if recommended else None}, user, clock)


def change_profile(
    run: Run, profile: str | AcceptanceProfile, reason: str, *, user: str | None = None, clock: Clock = utc_now
) -> Run:
    if isinstance(profile, AcceptanceProfile):
        settings = replace(run.settings, acceptance_profile=profile.id, custom_profile=profile.to_mapping())
        name = profile.name
    else:
        name = load_profile(profile).name
        settings = replace(run.settings, acceptance_profile=profile, custom_profile=None)
    return _log(replace(run, settings=settings), "profile_changed",
                {"old": run.settings.acceptance_profile, "new": settings.acceptance_profile, "name": name,
                 "reason": reason.strip()}, user, clock)


def _with_standard(analyte: Analyte, standard: Standard) -> Analyte:
    return replace(analyte, standards=tuple(standard if s.id == standard.id else s for s in analyte.standards))


def _log(run: Run, action: str, details: Mapping[str, Any], user: str | None, clock: Clock) -> Run:
    return replace(run, audit=append_entry(run.audit, action, details, user=user, clock=clock))
