"""The JSON results reuse the audit trail's check made when the run was read, for that very run only."""

from __future__ import annotations

import io
from dataclasses import replace

from curvewright import cli
from curvewright.core.run_analysis import analyse_run
from curvewright.io.audit import verify_chain
from curvewright.io.results_json import write_json
from curvewright.io.run_document import open_run
from tests.io.helpers import DEMO_RUNS


def test_the_check_made_on_reading_is_used_for_the_run_read_and_not_for_another() -> None:
    opened = open_run(DEMO_RUNS[0])
    assert opened.chain_problems == verify_chain(opened.run.audit) == ()
    result = analyse_run(opened.run)
    same = cli.result_json(result, None, [], chain=(opened.run, opened.chain_problems))
    assert _text(same) == _text(cli.result_json(result, None, []))
    assert same["audit_chain_verified"] is True
    # a run whose trail lost its first entry: the check given for another run is not used, its own is made
    cut = replace(opened.run, audit=opened.run.audit[1:])
    data = cli.result_json(analyse_run(cut), None, [], chain=(opened.run, opened.chain_problems))
    assert data["audit_chain_verified"] is False
    assert data["chain_check"].startswith("NOT verified: audit entry 1 (")


def _text(data) -> str:  # type: ignore[no-untyped-def]
    out = io.StringIO()
    write_json(data, out)
    return out.getvalue()
