"""Changes to a run. Each returns a new run with one audit entry appended; nothing is deleted.

The app's undo stack keeps the runs; the audit trail keeps what was done, by whom, when and why.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any, Mapping, Sequence

from ..core.acceptance import AcceptanceProfile, load_profile
from ..core.method import Method, method_from_mapping
from ..core.models import Model
from ..core.run import Analyte, Reading, Run, RunError, RunSettings, Sample, Standard
from ..core.weighting import Weighting
from .audit import Clock, Identity, append_entry, utc_now
from .integrity import content_sha256


def with_profile_content(settings: RunSettings) -> RunSettings:
    """Settings that hold their acceptance profile by content (a copy of its rules), not by id only, so
    that a run is judged as it was whatever version of Curvewright reopens it."""
    if settings.custom_profile is not None:
        return settings
    return replace(settings, custom_profile=load_profile(settings.acceptance_profile).to_mapping())


def new_run(
    name: str, analytes: tuple[Analyte, ...], *, description: str = "", settings: RunSettings | None = None,
    user: Identity | str | None = None, clock: Clock = utc_now,
) -> Run:
    if not name.strip():
        raise RunError("run name: a run needs a name.")
    run = Run(name=name, analytes=analytes, settings=with_profile_content(settings or RunSettings()),
              description=description)
    return _log(run, "run_created", {"name": name, "analytes": [a.name for a in analytes]}, user, clock)


def record(run: Run, action: str, details: Mapping[str, Any], *, user: Identity | str | None = None, clock: Clock = utc_now) -> Run:
    """Append an entry without changing anything else (imports, exports, reports)."""
    return _log(run, action, details, user, clock)


def note_outside_change(run: Run, *, user: Identity | str | None = None, clock: Clock = utc_now) -> Run:
    """The run with an entry recording that its data no longer match the hash its trail recorded last
    (changed outside Curvewright), naming what changed, when there is such a change; otherwise the same
    run. Every later entry records the hash of the data as they are, so without this entry the outside
    change would vanish from the trail: it is made before any other entry is added to a run read from a
    document (the run as read, which keeps the digest its document carried)."""
    from .integrity import content_change

    change = content_change(run)
    if change is None:
        return run
    details = {"after_entry": change.entry_number, "entry_time": change.entry_time, "entry_by": change.entry_user,
               "changes": list(change.changes)}
    return _log(run, "data_changed_outside", details, user, clock)


def exclude_standard(
    run: Run, analyte: str, standard_id: str, reason: str, *, user: Identity | str | None = None, clock: Clock = utc_now
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


def mark_anchor_points(
    run: Run, analyte: str, standard_ids: list[str], reason: str, *, user: Identity | str | None = None,
    clock: Clock = utc_now,
) -> Run:
    """Mark standards as anchor points of a logistic curve (fitted, never judged), with the reason.

    Whether the curve can take them (a logistic curve, the points outside the other standards' range)
    is the fit's question: a run whose marks it refuses is analysed with that reason as its error."""
    a = _anchor_standards(run, analyte, standard_ids, reason, "marking", marked=False)
    for standard_id in standard_ids:
        a = _with_standard(a, replace(a.standard(standard_id), anchor=True))
    return _log(run.with_analyte(a), "anchor_points_marked",
                {"analyte": analyte, "standards": list(standard_ids), "reason": reason.strip()}, user, clock)


def clear_anchor_points(
    run: Run, analyte: str, standard_ids: list[str], reason: str, *, user: Identity | str | None = None,
    clock: Clock = utc_now,
) -> Run:
    """Take the anchor-point mark off standards, with the reason: they are judged again like any standard."""
    a = _anchor_standards(run, analyte, standard_ids, reason, "clearing", marked=True)
    for standard_id in standard_ids:
        a = _with_standard(a, replace(a.standard(standard_id), anchor=False))
    return _log(run.with_analyte(a), "anchor_points_cleared",
                {"analyte": analyte, "standards": list(standard_ids), "reason": reason.strip()}, user, clock)


def _anchor_standards(run: Run, analyte: str, standard_ids: list[str], reason: str, doing: str, *,
                      marked: bool) -> Analyte:
    """The analyte whose standards ``standard_ids`` change their anchor mark, checked: a reason, at least
    one standard, each named once and each now marked (``marked``) or not."""
    if not reason.strip():
        raise RunError(f"{doing} anchor points of {analyte}: give the reason.")
    if not standard_ids:
        raise RunError(f"{doing} anchor points of {analyte}: name at least one standard.")
    twice = sorted({i for i in standard_ids if list(standard_ids).count(i) > 1})
    if twice:
        raise RunError(f"{doing} anchor points of {analyte}: standard(s) {', '.join(twice)} named more than once.")
    a = run.analyte(analyte)
    wrong = [i for i in standard_ids if a.standard(i).anchor != marked]
    if wrong:
        state = "is not an anchor point" if marked else "is already an anchor point"
        raise RunError(f"{doing} anchor points of {analyte}: standard(s) {', '.join(wrong)} {state}.")
    return a


def include_standard(
    run: Run, analyte: str, standard_id: str, reason: str, *, user: Identity | str | None = None, clock: Clock = utc_now
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
    *, user: Identity | str | None = None, clock: Clock = utc_now,
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
    change = {"standard": standard_id, "field": field, "old": old, "new": new}
    refuse_if_locked(run, refused_change("value_edited", {"analyte": analyte, **change}))  # before a reason is asked
    _require_reason(raw_changes([change], STANDARD_RAW_FIELDS), reason, analyte)
    return _log(run.with_analyte(_with_standard(a, updated)), "value_edited",
                {"analyte": analyte, "standard": standard_id, "field": field, "old": old, "new": new,
                 "reason": reason.strip()}, user, clock)


def choose_model(
    run: Run, analyte: str, model: str, weighting: str, reason: str, *,
    recommended: tuple[str, str] | None = None, user: Identity | str | None = None, clock: Clock = utc_now,
) -> Run:
    """Record the calibration function chosen for an analyte. A choice against the recommendation, or
    against the model the run's validated method fixes, needs a reason; so does any choice where no
    model is recommended (``recommended`` empty: no candidate is acceptable)."""
    m, w = Model.parse(model).value, Weighting.parse(weighting).value
    fixed = method_of(run)
    fixed_analyte = fixed.analyte(analyte) if fixed is not None else None
    if fixed_analyte is not None and (m, w) != (fixed_analyte.model, fixed_analyte.weighting) and not reason.strip():
        raise RunError(
            f"{analyte}: {m}, {w} departs from the {fixed_analyte.model}, {fixed_analyte.weighting} that method "
            f"{fixed.label} fixes; give the reason for departing from the validated method."  # type: ignore[union-attr]
        )
    if fixed_analyte is None and recommended is not None and (m, w) != tuple(recommended) and not reason.strip():
        raise RunError(
            f"{analyte}: {m}, {w} differs from the recommended {recommended[0]}, {recommended[1]}; give the reason for the choice."
            if recommended else f"{analyte}: no model is recommended (no candidate is acceptable); give the reason for "
            f"choosing {m}, {w}."
        )
    a = run.analyte(analyte)
    changed = replace(a, model=m, weighting=w, choice_reason=reason.strip())
    return _log(run.with_analyte(changed), "model_chosen",
                {"analyte": analyte, "old": [a.model, a.weighting], "new": [m, w], "reason": reason.strip(),
                 "recommended": list(recommended) if recommended else None}, user, clock)


def change_profile(
    run: Run, profile: str | AcceptanceProfile, reason: str, *, user: Identity | str | None = None, clock: Clock = utc_now
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


def edit_analyte(
    run: Run, analyte: str, *, name: str, concentration_unit: str, response_unit: str, reason: str = "",
    user: Identity | str | None = None, clock: Clock = utc_now,
) -> Run:
    """Rename an analyte or set its units as one audited step (old → new in the trail).

    A new name is carried into every sample's responses and nominal values of that analyte. Units are
    kept exactly as typed (µ stays the micro sign), stripped of surrounding spaces.
    """
    a = run.analyte(analyte)
    new_name = name.strip()
    if not new_name:
        raise RunError(f"analyte {analyte!r}: the name cannot be empty.")
    if new_name != analyte and new_name in {x.name for x in run.analytes}:
        raise RunError(f"analyte name {new_name!r} is already used by another analyte of this run.")
    after = {"name": new_name, "concentration_unit": concentration_unit.strip(), "response_unit": response_unit.strip()}
    before = {"name": a.name, "concentration_unit": a.concentration_unit, "response_unit": a.response_unit}
    changes = {k: {"old": before[k], "new": v} for k, v in after.items() if before[k] != v}
    if not changes:
        return run
    changed = replace(a, **after)
    analytes = tuple(changed if x.name == analyte else x for x in run.analytes)
    samples = run.samples
    if new_name != analyte:
        samples = tuple(
            replace(s, measurements=tuple(replace(m, analyte=new_name) if m.analyte == analyte else m for m in s.measurements),
                    nominal=tuple((new_name if n == analyte else n, v) for n, v in s.nominal))
            for s in run.samples
        )
    return _log(replace(run, analytes=analytes, samples=samples), "analyte_edited",
                {"analyte": analyte, "changes": changes, "reason": reason.strip()}, user, clock)


VALUE_CHANGE_REASONS = (
    "first entry: the value was not recorded yet",
    "data entry error corrected against the raw data",
    "value re-read from the instrument's record",
    "re-integration documented in the raw data",
    "other (describe below)",
)
"""Reasons offered when a raw value that was already entered is changed (the analyst may type another)."""
STANDARD_RAW_FIELDS = ("concentration", "response", "internal_standard_response")
SAMPLE_RAW_FIELDS = ("dilution_factor", "nominal", "responses", "internal_standard_responses", "additions")


class ReasonRequired(RunError):
    """A raw value that was already entered is changed without a reason; ``changes`` names them."""

    def __init__(self, message: str, changes: list[dict[str, Any]]) -> None:
        super().__init__(message)
        self.changes = changes


def raw_changes(changes: list[dict[str, Any]], raw_fields: tuple[str, ...]) -> list[dict[str, Any]]:
    """The changes of raw values that had been entered (an empty value filled in for the first time is
    an entry, not a change)."""
    def entered(value: Any) -> bool:
        if isinstance(value, dict):
            return any(entered(v) for v in value.values())
        return value not in (None, "") and not (isinstance(value, str) and not value.strip())

    out = []
    for c in changes:
        if c["field"] not in raw_fields:
            continue
        if c["field"] in _PER_REPLICATE:
            replaced = {k: v for k, v in (c["old"] or {}).items() if entered(v) and (c["new"] or {}).get(k) != v}
            if replaced:
                out.append(c)
        elif c["field"] == "dilution_factor" or entered(c["old"]):
            out.append(c)
    return out


def _require_reason(changes: list[dict[str, Any]], reason: str, what: str) -> None:
    if changes and not reason.strip():
        first = changes[0]
        raise ReasonRequired(
            f"{what}: changing the {first['field'].replace('_', ' ')} of {first.get('standard') or first.get('sample')!r} "
            f"from {first['old']!r} to {first['new']!r} needs a reason (a raw value that was entered is changed"
            + (f", with {len(changes) - 1} more" if len(changes) > 1 else "") + ").", changes)


def edit_run_details(
    run: Run, *, name: str, instrument: str, description: str, reason: str = "",
    user: Identity | str | None = None, clock: Clock = utc_now,
) -> Run:
    """Rename the run, or set the instrument it was measured on or its description (old → new recorded)."""
    after = {"name": name.strip(), "instrument": instrument.strip(), "description": description.strip()}
    if not after["name"]:
        raise RunError("run name: a run needs a name.")
    before = {"name": run.name, "instrument": run.instrument, "description": run.description}
    changes = {k: {"old": before[k], "new": v} for k, v in after.items() if before[k] != v}
    if not changes:
        return run
    return _log(replace(run, **after), "settings_changed", {"changes": changes, "reason": reason.strip()}, user, clock)


def _with_standard(analyte: Analyte, standard: Standard) -> Analyte:
    return replace(analyte, standards=tuple(standard if s.id == standard.id else s for s in analyte.standards))


class RunLocked(RunError):
    """The run is approved: its content cannot change until the approval is withdrawn, with a reason."""


RECORDS_ONLY = ("export_written", "report_written", "recovered_after_crash", "document_migrated",
                "data_changed_outside")
"""Entries that record what was done with the run without changing its content (allowed on an
approved run)."""


def refuse_if_locked(run: Run, what: str) -> None:
    """Raise :class:`RunLocked` when the run is approved; ``what`` is the change refused, as the analyst
    would ask for it ("exclude standard S-3")."""
    approval = run.approval
    if approval is not None:
        raise RunLocked(
            f"Cannot {what}: the run was approved by {approval.name} ({approval.time_utc}) and is locked; withdraw "
            "the approval, with a reason, to change it.")


def refused_change(action: str, details: Mapping[str, Any]) -> str:
    """The change an audit entry of ``action`` would record, in the words of a refusal ("exclude
    standard S-3 of nitrate")."""
    analyte = f" of {details['analyte']}" if details.get("analyte") else ""
    standard = details.get("standard")
    if isinstance(standard, dict):
        standard = standard.get("id")
    if action == "standard_excluded":
        return f"exclude standard {standard}{analyte}"
    if action == "standard_included":
        return f"include standard {standard}{analyte} again"
    if action == "standard_removed_before_review":
        return f"remove standard {standard}{analyte}"
    if action == "value_edited" and standard:
        return f"change the {str(details.get('field', 'value')).replace('_', ' ')} of standard {standard}{analyte}"
    words = {
        "value_edited": "change values of the standards", "standard_added": "add a standard",
        "samples_edited": "change the samples", "anchor_points_marked": "mark anchor points",
        "anchor_points_cleared": "clear anchor points", "model_chosen": "choose the model",
        "profile_changed": "change the acceptance profile", "settings_changed": "change the run settings",
        "analyte_edited": "change the analyte's name or units", "method_applied": "apply a method",
    }
    return words.get(action, action.replace("_", " ")) + analyte


def _log(run: Run, action: str, details: Mapping[str, Any], user: Identity | str | None, clock: Clock) -> Run:
    """The run with one audit entry: the person, the change, and the hash of the content after it. An
    approved run takes only entries that record without changing its content."""
    if action not in RECORDS_ONLY:
        refuse_if_locked(run, refused_change(action, details))
    return replace(run, audit=append_entry(run.audit, action, details, user=user, clock=clock,
                                           content_sha256=content_sha256(run)))


def _standard_fields(s: Standard) -> dict[str, Any]:
    return {
        "id": s.id, "level": s.level, "replicate": s.replicate,
        "concentration": s.concentration if s.has_concentration else s.concentration_text,
        "response": s.response.text,
        "internal_standard_response": s.internal_standard_response.text if s.internal_standard_response else None,
    }


def repeated_id(ids: Sequence[str]) -> str | None:
    """The first id in ``ids`` that an earlier one already has (the one a reader finds repeated first,
    going down the table), or None when every id is its own."""
    if len(set(ids)) == len(ids):
        return None
    seen: set[str] = set()
    for i in ids:
        if i in seen:
            return i
        seen.add(i)
    return None


def update_standards(
    run: Run, analyte: str, standards: tuple[Standard, ...], note: str, *, reason: str = "",
    user: Identity | str | None = None, clock: Clock = utc_now,
) -> Run:
    """Replace an analyte's standards (typed or pasted values, added rows) as one audited step.

    The entry lists every changed field old → new and every added standard; inclusion flags and
    exclusion reasons cannot change here (see :func:`exclude_standard`), and no standard may vanish
    (see :func:`remove_standard`). Changing a concentration or response that was already entered
    needs a ``reason`` (:class:`ReasonRequired` otherwise); filling in an empty one does not.
    """
    a = run.analyte(analyte)
    old = {s.id: s for s in a.standards}
    ids = [s.id for s in standards]
    id_set = set(ids)
    if (duplicate := repeated_id(ids)) is not None:
        raise RunError(f"{analyte}: standard id {duplicate!r} is used twice; each standard needs its own id.")
    missing = [i for i in old if i not in id_set]
    if missing:
        raise RunError(f"{analyte}: standard {missing[0]!r} would be lost; remove standards one at a time, with a reason.")
    changes, added = [], []
    for s in standards:
        before = old.get(s.id)
        if before is None:
            added.append(_standard_fields(s))
            continue
        if (s.included, s.exclusion_reason) != (before.included, before.exclusion_reason):
            raise RunError(f"{analyte}: standard {s.id!r}: exclude or include it with a reason, not by editing.")
        new_fields, old_fields = _standard_fields(s), _standard_fields(before)
        for field_name, value in new_fields.items():
            if value != old_fields[field_name]:
                changes.append({"standard": s.id, "field": field_name, "old": old_fields[field_name], "new": value})
    if not changes and not added:
        return run
    action = "value_edited" if changes else "standard_added"
    one = changes[0] if len(changes) == 1 and not added else {}
    refuse_if_locked(run, refused_change(action, {"analyte": analyte, **one}))  # before a reason is asked
    _require_reason(raw_changes(changes, STANDARD_RAW_FIELDS), reason, analyte)
    changed = replace(a, standards=standards)
    return _log(run.with_analyte(changed), action,
                {"analyte": analyte, "note": note, "changes": changes, "added": added, "reason": reason.strip()},
                user, clock)


def remove_standard(
    run: Run, analyte: str, standard_id: str, reason: str, *, user: Identity | str | None = None, clock: Clock = utc_now
) -> Run:
    """Remove a standard entered by mistake. Its values stay in the audit entry; to keep a measured
    standard out of the fit, exclude it instead."""
    if not reason.strip():
        raise RunError(f"removing standard {standard_id!r}: give the reason.")
    a = run.analyte(analyte)
    s = a.standard(standard_id)
    changed = replace(a, standards=tuple(x for x in a.standards if x.id != standard_id))
    return _log(run.with_analyte(changed), "standard_removed_before_review",
                {"analyte": analyte, "standard": _standard_fields(s), "reason": reason.strip()}, user, clock)


def _sample_fields(s: Sample) -> dict[str, Any]:
    return {
        "kind": s.kind.value, "run_order": s.run_order, "dilution_factor": s.dilution_factor,
        "nominal": dict(s.nominal),
        "responses": {f"{m.analyte}/{m.replicate}": m.response.text for m in s.measurements},
        # internal-standard responses, only where entered (so the audit of other samples reads as before)
        **({"internal_standard_responses": {f"{m.analyte}/{m.replicate}": m.internal_standard_response.text
                                            for m in s.measurements if m.internal_standard_response is not None}}
           if any(m.internal_standard_response is not None for m in s.measurements) else {}),
        # standard additions, only where measured (so the audit of other samples reads as before)
        **({"additions": {f"{a.analyte}/{a.added!r}/{a.replicate}": a.response.text for a in s.additions}}
           if s.additions else {}),
    }


_PER_REPLICATE = ("responses", "internal_standard_responses", "additions")
"""Sample fields that hold one value per replicate: a change lists only the replicates that changed."""


def _sample_change(sample: str, field_name: str, old: Any, new: Any, old_internal: dict[str, str] | None,
                   new_internal: dict[str, str] | None) -> dict[str, Any]:
    """One changed field of a sample, old → new. A field held per replicate lists only the replicates
    that changed (a replicate added or removed shows as empty on the other side); a corrected response
    whose internal-standard response stayed names it as kept (``internal_standard_kept``)."""
    change: dict[str, Any] = {"sample": sample, "field": field_name, "old": old, "new": new}
    if field_name not in _PER_REPLICATE:
        return change
    before, after = old or {}, new or {}
    change["old"] = {k: v for k, v in before.items() if k not in after or after[k] != v}
    change["new"] = {k: v for k, v in after.items() if k not in before or before[k] != v}
    if field_name == "responses":
        held_before, held_after = old_internal or {}, new_internal or {}
        kept = {k: held_after[k] for k in change["new"] if k in held_after and held_before.get(k) == held_after[k]}
        if kept:
            change["internal_standard_kept"] = kept
    return change


def update_samples(
    run: Run, samples: tuple[Sample, ...], note: str, *, reason: str = "", removed_reason: str = "",
    user: Identity | str | None = None, clock: Clock = utc_now,
) -> Run:
    """Replace the run's samples as one audited step (changed fields old → new, added, removed).

    Removing a sample needs a reason (``removed_reason``), and so does changing a dilution factor, a
    nominal value or a response that was already entered (``reason``; :class:`ReasonRequired`)."""
    ids = [s.id for s in samples]
    if (duplicate := repeated_id(ids)) is not None:
        raise RunError(f"sample id {duplicate!r} is used twice; each sample needs its own id.")
    known = {a.name for a in run.analytes}
    for s in samples:
        for m in (*s.measurements, *s.additions):
            if m.analyte not in known:
                raise RunError(f"sample {s.id!r}: analyte {m.analyte!r} is not in this run.")
        if not s.dilution_factor > 0:
            raise RunError(f"sample {s.id!r}: dilution factor {s.dilution_factor!r} must be above zero.")
    old = {s.id: s for s in run.samples}
    new = {s.id: s for s in samples}
    removed = [{"id": i, **_sample_fields(s)} for i, s in old.items() if i not in new]
    if removed and not removed_reason.strip():
        raise RunError(f"removing sample {removed[0]['id']!r}: give the reason.")
    added = [{"id": i, **_sample_fields(s)} for i, s in new.items() if i not in old]
    changes = []
    for i, s in new.items():
        was = old.get(i)
        if was is not None and was is not s:  # samples are immutable: the same object has the same fields
            before, after = _sample_fields(was), _sample_fields(s)
            for field_name in dict.fromkeys([*after, *before]):
                if after.get(field_name) != before.get(field_name):
                    changes.append(_sample_change(i, field_name, before.get(field_name), after.get(field_name),
                                                  before.get("internal_standard_responses"),
                                                  after.get("internal_standard_responses")))
    if not (changes or added or removed) and tuple(old) == tuple(new):
        return run
    refuse_if_locked(run, refused_change("samples_edited", {}))  # before a reason is asked
    _require_reason(raw_changes(changes, SAMPLE_RAW_FIELDS), reason, "samples")
    why = "; ".join(r.strip() for r in (reason, removed_reason) if r.strip())
    return _log(replace(run, samples=samples), "samples_edited",
                {"note": note, "changes": changes, "added": added, "removed": removed, "reason": why}, user, clock)


def method_of(run: Run) -> Method | None:
    """The validated method the run follows, from the copy it stores."""
    return None if run.settings.method is None else method_from_mapping(run.settings.method, "the run's method")


def apply_method(run: Run, method: Method, *, user: Identity | str | None = None, clock: Clock = utc_now) -> Run:
    """The run following a validated method: its profile (by content), rounding, confidence level,
    interval and limits method, and for each of its analytes the units and the calibration function
    the method fixes. The method's copy and SHA-256 are kept in the run and the audit trail."""
    settings = replace(run.settings, custom_profile=method.profile.to_mapping(), acceptance_profile=method.profile.id,
                       method=dict(method.mapping))
    for key, value in (("rounding", method.rounding), ("confidence_level", method.confidence_level),
                       ("interval", method.interval), ("limits_method", method.limits_method)):
        if value is not None:
            settings = replace(settings, **{key: value})
    analytes = []
    for a in run.analytes:
        fixed = method.analyte(a.name)
        if fixed is None:
            analytes.append(a)
            continue
        analytes.append(replace(a, model=fixed.model, weighting=fixed.weighting,
                                concentration_unit=fixed.concentration_unit or a.concentration_unit,
                                response_unit=fixed.response_unit or a.response_unit,
                                choice_reason=f"fixed by the validated method {method.label}"))
    missing = [a.name for a in method.analytes if a.name not in {x.name for x in run.analytes}]
    details = {"method": method.id, "version": method.version, "name": method.name, "sha256": method.sha256,
               "profile": method.profile.id, "profile_sha256": method.profile.sha256,
               "analytes_not_in_run": missing}
    return _log(replace(run, settings=settings, analytes=tuple(analytes)), "method_applied", details, user, clock)


def run_from_method(method: Method, name: str, *, user: Identity | str | None = None, clock: Clock = utc_now) -> Run:
    """A new, empty run of a validated method: its analytes with their units and fixed calibration
    functions, its settings, and the method's copy."""
    analytes = tuple(Analyte(a.name, a.concentration_unit, a.response_unit, model=a.model, weighting=a.weighting,
                             choice_reason=f"fixed by the validated method {method.label}",
                             uses_internal_standard=a.uses_internal_standard) for a in method.analytes)
    run = new_run(name, analytes, description=f"a run of method {method.label}: {method.name}", user=user, clock=clock)
    return apply_method(run, method, user=user, clock=clock)


def change_settings(
    run: Run, settings: RunSettings, reason: str, *, user: Identity | str | None = None, clock: Clock = utc_now
) -> Run:
    """New settings (confidence level, interval, limits method, profile, rounding) as one audited step."""
    settings = with_profile_content(settings)
    before, after = _settings_fields(run.settings), _settings_fields(settings)
    changes = {k: {"old": before[k], "new": v} for k, v in after.items() if before[k] != v}
    if not changes:
        return run
    action = "profile_changed" if set(changes) == {"acceptance_profile"} else "settings_changed"
    return _log(replace(run, settings=settings), action, {"changes": changes, "reason": reason.strip()}, user, clock)


def _settings_fields(s: RunSettings) -> dict[str, Any]:
    return {"confidence_level": s.confidence_level, "interval": s.interval, "limits_method": s.limits_method,
            "acceptance_profile": s.acceptance_profile,
            "profile_sha256": None if s.custom_profile is None else AcceptanceProfile.from_mapping(s.custom_profile).sha256,
            "rounding": s.rounding.description, "level_tolerance": s.level_tolerance}
