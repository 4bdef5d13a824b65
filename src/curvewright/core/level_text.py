"""A confidence level written as the percentage a label shows."""

from __future__ import annotations


def percent_label(level: float) -> str:
    """``level`` (a fraction, 0 < level < 1) as a percentage for labels and headings: 0.95 → "95%",
    0.995 → "99.5%", 0.9 → "90%". The percentage keeps up to four decimals and drops trailing zeros,
    so a level such as 0.995 or 0.975 is never shown rounded to a whole percent (which would print
    99.5 % as "100%")."""
    return f"{round(level * 100.0, 4):g}%"
