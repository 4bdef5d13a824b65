"""A check shared by the core tests of acceptance: verdicts judged together are the verdicts judged alone."""

from __future__ import annotations


def judged_alike(profile, calibrations) -> list:  # type: ignore[no-untyped-def]
    """``profile.evaluate_all(calibrations)``, after checking that each verdict is the one
    ``profile.evaluate`` gives that calibration alone, word for word and bit for bit (read-only arrays
    of the same type)."""
    together = profile.evaluate_all(calibrations)
    assert len(together) == len(calibrations)
    for cal, verdict in zip(calibrations, together, strict=True):
        alone = profile.evaluate(cal)
        assert (verdict.profile, verdict.passed, verdict.reasons) == (alone.profile, alone.passed, alone.reasons)
        for field in ("passing", "judged", "tolerance_percent", "relative_error"):
            a, b = getattr(verdict, field), getattr(alone, field)
            assert a.dtype == b.dtype and a.tobytes() == b.tobytes() and not a.flags.writeable, field
    return together
