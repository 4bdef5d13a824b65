"""A quantity's history as text, as JSON and as a workbook: one set of tables for all three.

Values are kept at full precision in the JSON and the workbook; the text shows six significant
digits of each value and limit and z to two decimals.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from ... import CAUTION
from ...core.trends import RULE_SOURCES, RULE_WORDS, RULES
from ..result_tables import Column, Table
from ..xlsx_export import write_tables
from .history import History
from ...core.notation import figures, fixed


def _point_rows(h: History) -> list[dict[str, Any]]:
    baseline = set(h.trend.baseline_indices) if h.trend is not None else set()
    out = []
    for i, p in enumerate(h.points):
        out.append({
            "number": i + 1, "entry": p.entry, "source": p.source, "date": p.day[:10], "run": p.label, "key": p.key,
            "value": p.value, "record_intact": not p.record_problems, "record_problems": p.record_problems or None,
            "z": float(h.trend.z[i]) if h.trend is not None else None, "accepted": p.accepted,
            "in_baseline": i in baseline, "today": i == h.today,
            "rules_broken": [b.rule for b in h.breaks_at(i)],
        })
    return out


def limits_of(h: History) -> dict[str, Any] | None:
    if h.trend is None:
        return None
    lim = h.trend.limits
    (l2, u2), (l3, u3) = lim.limit(2), lim.limit(3)
    return {"mean": lim.mean, "sd": lim.sd, "n": lim.n, "lower_2s": l2, "upper_2s": u2, "lower_3s": l3,
            "upper_3s": u3, "provisional": lim.provisional}


def history_json(h: History, archive_shown: str) -> dict[str, Any]:
    """The history for scripts."""
    return {
        "archive": archive_shown, "analyte": h.analyte, "method": h.method_key, "methods": list(h.methods),
        "quantity": h.quantity, "quantity_words": h.words, "quantities": list(h.quantities),
        "concentration_unit": h.concentration_unit, "response_unit": h.response_unit,
        "baseline": h.trend.baseline_words if h.trend is not None else h.baseline.words(),
        "limits": limits_of(h), "problem": h.problem, "today_note": h.today_note or None,
        "rules": [{"rule": r, "words": RULE_WORDS[r], "source": RULE_SOURCES[r]} for r in RULES],
        "points": _point_rows(h), "caution": CAUTION,
    }


def history_text(h: History, archive_shown: str) -> str:
    """The history as aligned text: the limits, one line per run, and the rules broken."""
    lines = [f"Archive: {archive_shown}",
             f"Analyte: {h.analyte}; method: {h.method_key}"
             + (f" (other methods filed: {'; '.join(m for m in h.methods if m != h.method_key)})" if len(h.methods) > 1 else ""),
             f"Quantity: {h.words}"]
    limits = limits_of(h)
    if limits is None:
        lines.append(f"No control limits: {h.problem}")
    else:
        assert h.trend is not None
        lines.append(f"Control limits from {h.trend.baseline_words}:")
        lines.append(f"  mean {figures(limits['mean'], 6)}, s {figures(limits['sd'], 4)} (n = {limits['n']}); "
                     f"±2 s {figures(limits['lower_2s'], 6)} to {figures(limits['upper_2s'], 6)}; "
                     f"±3 s {figures(limits['lower_3s'], 6)} to {figures(limits['upper_3s'], 6)}")
    if h.today_note:
        lines.append(f"Today's run is not shown: {h.today_note}")
    rows = _point_rows(h)
    heading = ("#", "entry", "run date", "run", "value", "z", "verdict", "baseline", "rules broken")
    table = [heading] + [(str(r["number"]), "—" if r["entry"] is None else str(r["entry"]), r["date"],
                          r["run"] + ("  ◀ today" if r["today"] else ""),
                          f"{figures(r['value'], 6)}", "" if r["z"] is None else fixed(r['z'], 2, plus=True),
                          ("accepted" if r["accepted"] else "NOT accepted")
                          + ("" if r["record_intact"] else "; record NOT intact"),
                          "B" if r["in_baseline"] else "", ", ".join(r["rules_broken"])) for r in rows]
    widths = [max(len(t[i]) for t in table) for i in range(len(heading))]
    right = {0, 1, 4, 5}
    for t in table:
        lines.append("  " + "  ".join(c.rjust(w) if i in right else c.ljust(w)
                                      for i, (c, w) in enumerate(zip(t, widths))).rstrip())
    for r in rows:
        if not r["record_intact"]:
            lines.append(f"Entry {r['entry']} was filed although its record is not intact ({r['record_problems']}); "
                         "it never sets control limits.")
    flagged = [r for r in rows if r["rules_broken"]]
    if h.trend is not None:
        if flagged:
            counts = {rule: sum(rule in r["rules_broken"] for r in rows) for rule in RULES}
            lines.append(f"Rules broken in {len(flagged)} of {len(rows)} runs: "
                         + ", ".join(f"{rule} {n}" for rule, n in counts.items() if n) + ".")
        else:
            lines.append(f"No rule broken in {len(rows)} runs.")
        lines.append("Rules: " + "; ".join(f"{r} {RULE_WORDS[r]}" for r in RULES) + ".")
        lines.append(f"Source: {RULE_SOURCES['1-3s'].split(': the ')[0]}; R-4s is applied to consecutive runs.")
    return "\n".join(lines)


def history_tables(h: History, archive_shown: str) -> list[Table]:
    """The workbook's sheets: the runs with their values, the limits, and the rules with their sources."""
    rows = _point_rows(h)
    points = Table(
        f"{h.analyte} {h.quantity}"[:31],
        (Column("Run number", kind="int"), Column("Archive entry", kind="int"), Column("Filed from"),
         Column("Run date"), Column("Run"), Column("Content SHA-256"),
         Column(h.words, kind="number"), Column("z", kind="number"), Column("Verdict"), Column("In baseline"),
         Column("Today's run"), Column("Rules broken"), Column("Record problems")),
        tuple((r["number"], r["entry"], r["source"] or "", r["date"], r["run"], r["key"], r["value"], r["z"],
               "accepted" if r["accepted"] else "not accepted", "yes" if r["in_baseline"] else "",
               "yes" if r["today"] else "", ", ".join(r["rules_broken"]), r["record_problems"] or "")
              for r in rows),
    )
    limits = limits_of(h)
    about = [("Archive", archive_shown), ("Analyte", h.analyte), ("Method", h.method_key), ("Quantity", h.words),
             ("Baseline", h.trend.baseline_words if h.trend is not None else h.baseline.words())]
    if limits is None:
        about.append(("No control limits", h.problem or ""))
    else:
        about += [("Mean", limits["mean"]), ("Standard deviation s", limits["sd"]), ("Baseline values n", limits["n"]),
                  ("Mean − 2 s", limits["lower_2s"]), ("Mean + 2 s", limits["upper_2s"]),
                  ("Mean − 3 s", limits["lower_3s"]), ("Mean + 3 s", limits["upper_3s"]),
                  ("Provisional (fewer than 20 values)", "yes" if limits["provisional"] else "no")]
    limits_table = Table("Control limits", (Column("Item"), Column("Value", kind="number")), tuple(about))
    rules = Table("Rules", (Column("Rule"), Column("What it looks for"), Column("Source")),
                  tuple((r, RULE_WORDS[r], RULE_SOURCES[r]) for r in RULES))
    return [points, limits_table, rules]


def write_history_workbook(h: History, archive_shown: str, path: str | Path) -> str:
    """Write the history workbook atomically; returns its SHA-256."""
    return write_tables(history_tables(h, archive_shown), Path(path))
