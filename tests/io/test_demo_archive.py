"""The demo archive: invented and said to be, reproducible, a year of one analyte, and a drift the rules catch."""

from __future__ import annotations

import importlib.util
import subprocess
import sys
from datetime import date

from curvewright.io.archive import content_hash, history, open_archive
from tests.io.helpers import ROOT


def builder():  # type: ignore[no-untyped-def]
    spec = importlib.util.spec_from_file_location("build_demo_archive", ROOT / "sample_runs" / "build_demo_archive.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)  # type: ignore[union-attr]
    return module


def test_the_demo_runs_are_the_same_on_every_build() -> None:
    module = builder()
    first, second = module.demo_runs(), module.demo_runs()
    assert [content_hash(r) for r in first] == [content_hash(r) for r in second]
    assert len(first) == 60 and all("invented for demonstration" in r.description for r in first)
    assert {a.name for r in first for a in r.analytes} == {"copper"}


def test_the_builder_files_sixty_runs_over_a_year_and_building_again_adds_nothing(tmp_path) -> None:
    out = subprocess.run([sys.executable, str(ROOT / "sample_runs" / "build_demo_archive.py"), "--to",
                          str(tmp_path / "demo")], capture_output=True, text=True, timeout=600, cwd=ROOT)
    assert out.returncode == 0, out.stderr
    assert "(60 runs of copper)" in out.stdout
    module = builder()
    module.build(tmp_path / "demo")
    with open_archive(str(tmp_path / "demo")) as archive:
        entries = archive.entries()
        assert len(entries) == 60 and archive.analytes() == ("copper",)
        first, last = date.fromisoformat(entries[0].run_date[:10]), date.fromisoformat(entries[-1].run_date[:10])
        assert 330 <= (last - first).days <= 366
        assert [e.entry for e in entries if not e.accepted] == [module.NOT_ACCEPTED]


def test_the_drift_is_caught_by_the_rules_and_nothing_is_flagged_before_it(tmp_path) -> None:
    module = builder()
    module.build(tmp_path / "demo")
    with open_archive(str(tmp_path / "demo")) as archive:
        for quantity in ("slope", "is_response"):
            h = history(archive, "copper", quantity)
            flagged = sorted({b.index + 1 for b in h.trend.breaks})  # run numbers
            assert flagged and min(flagged) >= module.DRIFT_FROM, (quantity, flagged)
            caught = {b.rule for b in h.trend.breaks}
            assert {"2-2s", "4-1s", "10-x"} <= caught, (quantity, caught)  # the rules for systematic error
            assert module.NOT_ACCEPTED - 1 not in h.trend.baseline_indices
            assert h.breaks_at(len(h.points) - 1)  # the latest run is out of control
        qc = history(archive, "copper", "qc_recovery@10")
        assert not any(b.index + 1 < module.DRIFT_FROM for b in qc.trend.breaks)
