"""Whether a run's record is intact: the problems ``curvewright check`` reports against it.

A run's record is intact when its audit trail verifies (every entry follows the one before and is
unaltered), its data match the content hash the trail recorded last, every signature the trail
records is still in the document, and every signature holds (:func:`.signatures.check_signatures`:
an approval, for instance, must cover the current data). ``check`` exits 1 on any of these; filing
into the archive (the command line and the app's History view) refuses such a run unless it is filed
marked, and ``quantify`` ends with exit code 1. They all ask :func:`record_problems`, so that they can
never disagree.
"""

from __future__ import annotations

from ..core.run import Run
from .audit import unheld_signatures, verify_chain
from .integrity import content_change


def record_problems(run: Run, chain_problems: tuple[str, ...] | None = None) -> tuple[str, ...]:
    """The problems with the record of ``run``, in words (empty when it is intact): the audit trail's,
    data changed outside Curvewright after the last entry, signatures the trail records but the
    document lost, and signatures that do not hold. ``chain_problems`` is what
    :func:`.audit.verify_chain` already found for this run's trail (as :class:`.run_document.OpenedRun`
    keeps it); otherwise the trail is checked here."""
    change = content_change(run)
    problems = (tuple(verify_chain(run.audit) if chain_problems is None else chain_problems)
                + ((str(change),) if change is not None else ()) + unheld_signatures(run))
    if not run.signatures:  # nothing to check (and the checker is not loaded)
        return problems
    from .signatures import check_signatures

    return problems + tuple(f"signature does NOT hold: {c.words}" for c in check_signatures(run) if not c.holds)


def record_not_intact_words(run: Run, chain_problems: tuple[str, ...] | None = None) -> str:
    """What is wrong, briefly, as the refusals say it: the audit trail does not verify, or the record is
    not as Curvewright left it (data, signatures)."""
    problems = verify_chain(run.audit) if chain_problems is None else chain_problems
    return "its audit trail does not verify" if problems else "its record is not as Curvewright left it"


def not_intact_notice(problems: tuple[str, ...]) -> str:
    """The notice a record or workbook carries beside its verdict when :func:`record_problems` found
    ``problems`` (empty when there are none): as plain, and as strong, as the verdict."""
    if not problems:
        return ""
    return ("Record NOT intact: its audit trail or signatures do not check, so what it shows cannot be taken as "
            "Curvewright left it — " + "; ".join(problems))

