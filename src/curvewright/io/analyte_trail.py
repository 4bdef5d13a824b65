"""The audit entries of one analyte, whatever names it had when they were written.

An entry names the analyte by the name it had at the time (``details["analyte"]``). A rename
(``analyte_edited`` with a ``name`` change, or the undo or redo of one) links the names: going back
through the trail from the analyte's current name, each rename to the name followed takes it back to
the name before. A rename *from* the name followed, or the analyte's addition, ends the search: before
it, that name belonged to another analyte (or to none), whose entries are not this analyte's.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any, Sequence

from ..core.run import AuditEntry


def _added_name(e: AuditEntry) -> str | None:
    """The analyte an entry added to the run (Analysis → Add analyte), if any."""
    changes = e.details.get("changes") if isinstance(e.details, Mapping) else None
    if e.action == "settings_changed" and isinstance(changes, Mapping) and isinstance(changes.get("analyte_added"), str):
        return changes["analyte_added"]
    return None


def rename_of(action: str, details: Any) -> tuple[str, str] | None:
    """(old, new) of the rename an ``analyte_edited`` entry's details record, if it renamed."""
    if action != "analyte_edited" or not isinstance(details, Mapping):
        return None
    changes = details.get("changes")
    name = changes.get("name") if isinstance(changes, Mapping) else None
    if isinstance(name, Mapping) and isinstance(name.get("old"), str) and isinstance(name.get("new"), str):
        return name["old"], name["new"]
    return None


def renames(e: AuditEntry) -> tuple[tuple[str, str], ...]:
    """The renames (old name, new name) an entry made, in the order made: a rename; the undo of a
    rename (new back to old) or its redo, where the undo or redo entry names the entries it acted on."""
    own = rename_of(e.action, e.details)
    if own is not None:
        return (own,)
    if e.action not in ("change_undone", "change_redone") or not isinstance(e.details, Mapping):
        return ()
    acted = e.details.get("entries")
    if not isinstance(acted, (list, tuple)):
        return ()
    found = [r for r in (rename_of(x.get("action"), x.get("details")) for x in acted if isinstance(x, Mapping))
             if r is not None]
    if e.action == "change_undone":  # the names go back, the last rename first
        return tuple((new, old) for old, new in reversed(found))
    return tuple(found)


def analyte_entries(trail: Sequence[AuditEntry], name: str) -> tuple[int, ...]:
    """The positions (0-based, in trail order) of the entries that name the analyte now called ``name``
    by the name it had when each was written (see the module's words on renames)."""
    held: str | None = name
    found: list[int] = []
    for i in range(len(trail) - 1, -1, -1):
        e = trail[i]
        made = renames(e)
        if made:
            ours = False
            for old, new in reversed(made):
                if held is None:
                    break
                if new == held:
                    held, ours = old, True
                elif old == held:
                    held = None  # the name was another analyte's before this rename
            if ours:
                found.append(i)
        elif isinstance(e.details, Mapping) and e.details.get("analyte") == held:
            found.append(i)
        elif held is not None and _added_name(e) == held:
            found.append(i)
            held = None  # added here: before this, no analyte of this run had the name
        if held is None:
            break
    return tuple(reversed(found))


def last_entry(trail: Sequence[AuditEntry], name: str, action: str, **details: Any) -> tuple[int, AuditEntry] | None:
    """The position and entry of the latest ``action`` entry of the analyte now called ``name`` whose
    details hold each of ``details`` (a value that is a list is matched when it contains the one given),
    or None. An entry whose change was undone, and not redone since, is passed over: what it did is no
    longer in the run."""
    undone = undone_hashes(trail)
    for i in reversed(analyte_entries(trail, name)):
        e = trail[i]
        if e.action != action or e.hash in undone:
            continue
        if all(_holds(e.details.get(k), v) for k, v in details.items()):
            return i, e
    return None


def undone_hashes(trail: Sequence[AuditEntry]) -> frozenset[str]:
    """The hashes of the entries whose change is undone now: the latest undo or redo entry naming each
    (the entries it acted on) is an undo. Undo entries of earlier versions name no entries."""
    latest: dict[str, str] = {}
    for e in reversed(trail):
        if e.action in ("change_undone", "change_redone") and isinstance(e.details, Mapping):
            acted = e.details.get("entries")
            for x in acted if isinstance(acted, (list, tuple)) else ():
                if isinstance(x, Mapping) and isinstance(x.get("hash"), str):
                    latest.setdefault(x["hash"], e.action)
    return frozenset(h for h, action in latest.items() if action == "change_undone")


def _holds(recorded: Any, wanted: Any) -> bool:
    if isinstance(recorded, (list, tuple)):
        return wanted in recorded
    return recorded == wanted
