"""A run's stored acceptance profile is read once, by the document's reader, and the analysis uses
that reading; settings changed afterwards are read afresh."""

from __future__ import annotations

import copy
import pickle
from dataclasses import replace
from pathlib import Path

import pytest

from curvewright.core.acceptance import AcceptanceProfile
from curvewright.core.run_analysis import analyse_run, run_profile
from curvewright.io.run_document import open_run

DEMOS = sorted((Path(__file__).resolve().parents[2] / "sample_runs").glob("*.json"))


@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.stem)
def test_the_profile_read_with_the_document_is_the_one_the_analysis_uses(path: Path, monkeypatch) -> None:
    run = open_run(path).run
    assert run.settings.custom_profile is not None
    kept = run.settings.kept_profile()
    assert kept == AcceptanceProfile.from_mapping(run.settings.custom_profile, "again")

    calls = []
    real = AcceptanceProfile.from_mapping.__func__

    def counted(cls, data, origin="profile"):  # type: ignore[no-untyped-def]
        calls.append(origin)
        return real(cls, data, origin)

    monkeypatch.setattr(AcceptanceProfile, "from_mapping", classmethod(counted))
    assert run_profile(run) is kept
    assert analyse_run(run).profile is kept
    assert calls == []


def test_changed_settings_do_not_carry_the_kept_profile() -> None:
    run = open_run(DEMOS[0]).run
    kept = run.settings.kept_profile()
    changed = dict(run.settings.custom_profile)
    changed["name"] = "A laboratory's own copy"
    settings = replace(run.settings, custom_profile=changed)
    assert settings.kept_profile() is None
    assert run_profile(replace(run, settings=settings)).name == "A laboratory's own copy"
    # equal settings, one with the kept reading and one without: still equal, and the same profile
    bare = replace(run.settings)
    assert bare.kept_profile() is None and bare == run.settings
    assert run_profile(replace(run, settings=bare)) == kept
    # copies and pickles of the same settings hold the same mapping, so the reading stays right
    for other in (copy.copy(run.settings), pickle.loads(pickle.dumps(run.settings))):
        assert other == run.settings
        assert other.kept_profile() in (None, kept)
