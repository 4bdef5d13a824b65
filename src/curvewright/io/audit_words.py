"""The audit trail in words, as a reviewer reads it: who, when, what changed from what to what, and why."""

from __future__ import annotations

from dataclasses import replace
from typing import Any, Mapping

from ..core.limits import LIMIT_METHOD_NAMES
from ..core.run import AuditEntry, Run
from .number_text import full_number


def who(e: AuditEntry) -> str:
    """The person of an entry: full name with laboratory ID and login, or the login alone."""
    if e.analyst:
        return f"{e.analyst} ({'ID ' + e.analyst_id + ', ' if e.analyst_id else ''}login {e.user})"
    return f"{e.user} (login; full name not recorded)"


def when(e: AuditEntry) -> str:
    """'2026-11-02 08:03:00 UTC' from the entry's ISO time."""
    return e.time_utc.replace("T", " ").split(".")[0].rstrip("Z") + " UTC"


def _value(v: Any) -> str:
    if v is None or v == "":
        return "(empty)"
    if isinstance(v, float):
        return full_number(v)  # every digit recorded: a change in the 7th digit is seen
    if isinstance(v, dict):
        return "; ".join(f"{k}: {_value(x)}" for k, x in v.items()) or "(none)"
    if isinstance(v, list):
        return ", ".join(_value(x) for x in v) or "(none)"
    return str(v)


def _because(d: Mapping[str, Any]) -> str:
    reason = str(d.get("reason") or "").strip()
    return f" Reason: {reason}." if reason else ""


def _setting(key: str, value: Any) -> str:
    """A setting's recorded value, a limits method with its name beside it (as every list of the
    methods names it: :data:`~..core.limits.LIMIT_METHOD_NAMES`)."""
    if key == "limits_method" and isinstance(value, str) and value in LIMIT_METHOD_NAMES:
        return f"{_value(value)} ({LIMIT_METHOD_NAMES[value]})"
    return _value(value)


def _changes(changes: Any, subject: str) -> str:
    if isinstance(changes, dict):
        return "; ".join(f"{k.replace('_', ' ')} from {_setting(k, c.get('old'))} to {_setting(k, c.get('new'))}"
                         if isinstance(c, dict) else f"{k.replace('_', ' ')}: {_value(c)}" for k, c in changes.items())
    parts = []
    for c in changes or []:
        item = c.get(subject) or c.get("standard") or c.get("sample") or ""
        kept = c.get("internal_standard_kept")
        parts.append(f"{c.get('field', '').replace('_', ' ')} of {item} from {_value(c.get('old'))} to {_value(c.get('new'))}"
                     + (f" (internal-standard response kept: {_value(kept)})" if kept else ""))
    return "; ".join(parts)


def entry_words(e: AuditEntry) -> str:
    """What one entry did, in a sentence. Details of a shape this version does not expect (a document
    written by another program, or damaged) are said as recorded, never dropped and never an error."""
    try:
        return _entry_words(e)
    except (AttributeError, IndexError, KeyError, TypeError, ValueError):
        return f"{e.action.replace('_', ' ')} (details as recorded: {_value(e.details)})."


def _entry_words(e: AuditEntry) -> str:
    d = e.details
    a = e.action
    if a == "run_created":
        return f"created the run “{d.get('name', '')}” with analyte(s) {_value(d.get('analytes'))}."
    if a == "imported":
        source = d.get("source") or "a table"
        sha = f" (file SHA-256 {str(d['sha256'])[:16]}…)" if d.get("sha256") else ""
        return f"imported the {d.get('what', 'data')} from {source}{sha}."
    if a == "value_edited":
        if "changes" in d:
            added = f"; added {len(d.get('added') or [])} standard(s)" if d.get("added") else ""
            return (f"changed, for {d.get('analyte', '')}: {_changes(d.get('changes'), 'standard')}{added}."
                    + _because(d))
        return (f"changed the {str(d.get('field', '')).replace('_', ' ')} of standard {d.get('standard', '')} of "
                f"{d.get('analyte', '')} from {_value(d.get('old'))} to {_value(d.get('new'))}." + _because(d))
    if a == "standard_added":
        ids = ", ".join(str(s.get("id", "")) for s in d.get("added") or [])
        return f"added standard(s) {ids} to {d.get('analyte', '')}."
    if a == "standard_removed_before_review":
        s = d.get("standard") or {}
        return f"removed standard {s.get('id', '')} of {d.get('analyte', '')} (entered by mistake)." + _because(d)
    if a == "standard_excluded":
        return f"excluded standard {d.get('standard', '')} of {d.get('analyte', '')} from the fit." + _because(d)
    if a == "anchor_points_marked":
        return (f"marked standard(s) {_value(d.get('standards'))} of {d.get('analyte', '')} as anchor points (fitted, "
                "not judged for acceptance)." + _because(d))
    if a == "anchor_points_cleared":
        return (f"cleared the anchor-point mark of standard(s) {_value(d.get('standards'))} of {d.get('analyte', '')} "
                "(judged for acceptance again)." + _because(d))
    if a == "standard_included":
        return (f"put standard {d.get('standard', '')} of {d.get('analyte', '')} back in the fit (it had been excluded: "
                f"{d.get('previous_reason', '')})." + _because(d))
    if a == "model_chosen":
        old, new = d.get("old") or ["", ""], d.get("new") or ["", ""]
        rec = d.get("recommended")
        return (f"chose {new[0]}, {new[1]} for {d.get('analyte', '')} (before: {old[0]}, {old[1]}"
                + (f"; recommended: {rec[0]}, {rec[1]}" if rec else "") + ")." + _because(d))
    if a in ("settings_changed", "profile_changed"):
        return f"changed the run's settings: {_changes(d.get('changes'), '')}." + _because(d)
    if a == "analyte_edited":
        return f"changed analyte {d.get('analyte', '')}: {_changes(d.get('changes'), '')}." + _because(d)
    if a == "samples_edited":
        parts = []
        if d.get("changes"):
            parts.append("changed " + _changes(d.get("changes"), "sample"))
        if d.get("added"):
            parts.append("added sample(s) " + ", ".join(str(s.get("id", "")) for s in d["added"]))
        if d.get("removed"):
            parts.append("removed sample(s) " + ", ".join(str(s.get("id", "")) for s in d["removed"]))
        return ("; ".join(parts) or "edited the samples") + "." + _because(d)
    if a in ("export_written", "report_written"):
        what = "the calibration record" if a == "report_written" else f"the {d.get('format', 'workbook')} export"
        sha = f" (SHA-256 {str(d['sha256'])[:16]}…)" if d.get("sha256") else ""
        return f"wrote {what} to {d.get('path', '')}{sha}."
    if a == "signed":
        keyed = f", keyed with key {d['key_fingerprint']}" if d.get("key_fingerprint") else ", not keyed"
        problems = "; ".join(str(p) for p in d.get("record_problems") or ())
        return (f"signed as {d.get('role', '')}: “{d.get('meaning', '')}”{keyed}."
                + (f" The record was NOT intact when signed: {problems}." if problems else ""))
    if a == "approval_withdrawn":
        return f"withdrew the approval by {d.get('approval_by', '')} ({d.get('approved_at', '')})." + _because(d)
    if a == "method_applied":
        return f"applied the validated method {d.get('method', '')} version {d.get('version', '')} ({d.get('name', '')})."
    if a in ("change_undone", "change_redone"):
        return _undo_words(a, d)
    if a == "data_changed_outside":
        changes = "; ".join(str(c) for c in d.get("changes") or ()) or "which values cannot be said"
        return (f"found the data changed outside Curvewright after entry {d.get('after_entry', '')} "
                f"({d.get('entry_time', '')}, {d.get('entry_by', '')}): {changes}.")
    if a == "recovered_after_crash":
        return "restored unsaved work after the program did not close normally."
    if a == "document_migrated":
        return f"opened the document in a newer format ({_value(dict(d))})."
    return f"{a.replace('_', ' ')}: {_value(dict(d))}."


def _undo_words(action: str, d: Mapping[str, Any]) -> str:
    """An undo or a redo: the change's label, and what it restored or made again in the words of the
    entries it acted on (an undo reads each entry reversed, new → old; a redo as written). Entries of
    earlier versions name the label alone."""
    undoing = action == "change_undone"
    label = d.get("change", "")
    acted = d.get("entries")
    if not isinstance(acted, list) or not acted:
        return f"{'undid' if undoing else 'redid'}: {label}."
    said = []
    for x in acted:
        entry = AuditEntry("", "", str(x.get("action", "")), x.get("details") or {}, "", str(x.get("hash", "")))
        said.append(_reversed_words(entry) if undoing else entry_words(entry))
    if undoing:
        return f"undid “{label}”, restoring what it changed: " + " ".join(said)
    return f"redid “{label}”: " + " ".join(said)


def _swapped(value: Any) -> Any:
    """Changes read backwards: each old/new pair swapped."""
    if isinstance(value, list):
        return [_swapped(v) for v in value]
    if isinstance(value, Mapping):
        out = {k: _swapped(v) if k == "changes" or isinstance(v, Mapping) else v for k, v in value.items()}
        if "old" in value and "new" in value:
            out["old"], out["new"] = value["new"], value["old"]
        return out
    return value


def _reversed_words(e: AuditEntry) -> str:
    """What undoing one entry restored, in the entry's own words read backwards (new → old). The entry's
    reason belongs to the change, not to its undoing, and is left out."""
    try:
        return _reversed(e)
    except (AttributeError, IndexError, KeyError, TypeError, ValueError):
        return f"took back: {entry_words(e)}"


def _reversed(e: AuditEntry) -> str:
    d = {k: v for k, v in e.details.items() if k not in ("reason", "recommended", "note")}
    a = e.action
    analyte = d.get("analyte", "")
    if a == "standard_excluded":
        return (f"put standard {d.get('standard', '')} of {analyte} back in the fit (its exclusion undone: "
                f"{e.details.get('reason', '')}).")
    if a == "standard_included":
        return (f"excluded standard {d.get('standard', '')} of {analyte} from the fit again "
                f"({d.get('previous_reason', '')}).")
    if a in ("anchor_points_marked", "anchor_points_cleared"):
        other = "anchor_points_cleared" if a == "anchor_points_marked" else "anchor_points_marked"
        return _entry_words(replace(e, action=other, details=d))
    if a == "standard_added":
        ids = ", ".join(str(s.get("id", "")) for s in d.get("added") or [])
        return f"took standard(s) {ids} out of {analyte} again (their addition undone)."
    if a == "standard_removed_before_review":
        standard = d.get("standard") or {}
        return f"put standard {standard.get('id', '')} of {analyte} back ({_value(standard)})."
    if a == "model_chosen":
        old, new = d.get("old") or ["", ""], d.get("new") or ["", ""]
        return f"set {analyte} back to {old[0]}, {old[1]} (from {new[0]}, {new[1]})."
    if a == "profile_changed" and "changes" not in d:
        return f"set the acceptance profile back to {d.get('old', '')} (from {d.get('new', '')})."
    if a == "settings_changed" and isinstance(d.get("changes"), Mapping) and "analyte_added" in d["changes"]:
        return f"took analyte {d['changes']['analyte_added']} out of the run again (its addition undone)."
    if a == "value_edited" and "changes" in d:
        added = ", ".join(str(s.get("id", "")) for s in d.get("added") or [])
        return (f"changed, for {analyte}: {_changes(_swapped(d.get('changes')), 'standard')}"
                + (f"; took out standard(s) {added} again" if added else "") + ".")
    if a == "analyte_edited":
        changes = _swapped(d.get("changes"))
        name = changes.get("name") if isinstance(changes, Mapping) else None
        current = name.get("old") if isinstance(name, Mapping) else analyte
        return f"changed analyte {current}: {_changes(changes, '')}."
    if a == "samples_edited":
        parts = []
        if d.get("changes"):
            parts.append("changed " + _changes(_swapped(d.get("changes")), "sample"))
        for verb, key in (("put back", "removed"), ("took out", "added")):
            for sample in d.get(key) or []:
                values = {k.replace("_", " "): v for k, v in sample.items() if k != "id"}
                parts.append(f"{verb} sample {sample.get('id', '')} ({_value(values)})")
        return ("; ".join(parts) or "restored the samples") + "."
    if a in ("value_edited", "settings_changed", "profile_changed"):
        return _entry_words(replace(e, details=_swapped(d)))
    if a == "method_applied":
        return (f"took back the validated method {d.get('method', '')} version {d.get('version', '')} "
                "(the settings and calibration functions before it restored).")
    return f"took back: {entry_words(e)}"


AUDIT_COLUMNS = ("Entry", "Time", "Who", "What was done", "Entry hash")
"""The columns of the audit trail in words, as the record prints it and the app shows it."""


def audit_rows(run: Run) -> tuple[tuple[str, ...], ...]:
    """The audit trail in words, one row per entry in order (:data:`AUDIT_COLUMNS`): number, time,
    who, what changed from what to what and why, and the first 12 hex digits of the entry's hash."""
    return tuple((str(i), when(e), who(e), entry_words(e), e.hash[:12]) for i, e in enumerate(run.audit, start=1))
