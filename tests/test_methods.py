"""Validated methods: a method file fixes what validation chose; runs store it by content; departing
from it needs a reason. Used from the command line on tables and documents, and in the API."""

from __future__ import annotations

import json
import subprocess
from pathlib import Path

import jsonschema
import pytest

from curvewright.core.method import MethodError, load_method, method_from_mapping
from curvewright.core.run import RunError
from curvewright.core.run_analysis import analyse_run
from curvewright.io import run_edits
from curvewright.io.run_document import loads_run, dumps_run, open_run, save_run
from tests.cli_runs import run_cli

ROOT = Path(__file__).resolve().parents[1]
DEMO_METHOD = ROOT / "sample_runs" / "methods" / "demo_nitrate_uv_method.json"
NITRATE = ROOT / "sample_runs" / "nitrate_water_linear.json"


def cli(*args: str) -> subprocess.CompletedProcess:
    return run_cli(*args)


def curved_tables(tmp_path: Path) -> tuple[Path, Path]:
    """Invented standards that bend (the comparison recommends a quadratic) and two samples."""
    levels = (0.5, 1, 2, 4, 6, 8)
    rows = [f"N-{i}{r},{c},{0.003 + 0.2 * c - 0.004 * c * c + (0.0004 if r == 'a' else -0.0004):.5f}"
            for i, c in enumerate(levels) for r in "ab"]
    standards = tmp_path / "std.csv"
    standards.write_text("Standard,Concentration (mg/L),Absorbance\n" + "\n".join(rows) + "\n", encoding="utf-8")
    samples = tmp_path / "smp.csv"
    samples.write_text("Sample,Absorbance\nWell 7,0.412\nWell 8,0.950\n", encoding="utf-8")
    return standards, samples


def test_the_method_file_follows_its_schema_and_reads() -> None:
    schema = json.loads((ROOT / "resources" / "method.schema.json").read_text(encoding="utf-8"))
    data = json.loads(DEMO_METHOD.read_text(encoding="utf-8"))
    jsonschema.validate(data, schema)
    method = load_method(DEMO_METHOD)
    assert (method.id, method.version, method.profile.id) == ("DEMO-NO3-UV", "2", "general")
    assert method.analyte("nitrate-N").levels == (0, 0.5, 1, 2, 4, 6, 8)
    with pytest.raises(MethodError, match=r"analytes\[0\].weighting: .*'1/z'"):
        method_from_mapping({**data, "analytes": [{"name": "x", "weighting": "1/z"}]})


def test_a_method_fixes_the_model_even_where_the_comparison_recommends_another(tmp_path) -> None:
    standards, samples = curved_tables(tmp_path)
    free = json.loads(cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte",
                          "nitrate-N", "--json").stdout)
    assert free["analytes"][0]["model"] == "quadratic"  # what the comparison recommends for these standards
    fixed = cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "nitrate-N",
                "--method", str(DEMO_METHOD))
    assert "fixed by the validated method DEMO-NO3-UV version 2 (the recommendation is for information only)" in fixed.stdout
    assert "model: straight line" in fixed.stdout
    assert "Method: DEMO-NO3-UV version 2" in fixed.stdout
    # the standards lack the method's zero level: the method's requirement is named, and fails the run
    assert "method FAIL: the method's level(s) 0 have no standard in the fit" in fixed.stdout
    assert fixed.returncode == 1
    data = json.loads(cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte",
                          "nitrate-N", "--method", str(DEMO_METHOD), "--json").stdout)
    assert data["method"]["sha256"] == load_method(DEMO_METHOD).sha256
    assert data["analytes"][0]["model"] == "linear"


def test_departing_from_the_method_needs_a_reason(tmp_path) -> None:
    standards, samples = curved_tables(tmp_path)
    base = ["quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "nitrate-N",
            "--method", str(DEMO_METHOD), "--model", "quadratic", "--weighting", "none"]
    refused = cli(*base)
    assert refused.returncode == 2 and "give --reason to depart from it" in refused.stderr
    departed = cli(*base, "--reason", "range extended above 8 mg/L under change control CC-12 (invented)")
    assert "departs from method DEMO-NO3-UV version 2" in departed.stdout
    assert "note: quadratic, none departs from the method's linear, none (reason recorded" in departed.stdout


def test_a_run_keeps_its_method_and_profile_by_content() -> None:
    method = load_method(DEMO_METHOD)
    run = run_edits.apply_method(open_run(NITRATE).run, method)
    reopened = loads_run(dumps_run(run)).run
    assert reopened.settings.method == method.mapping
    assert reopened.settings.custom_profile == method.profile.to_mapping()
    assert run.audit[-1].action == "method_applied" and run.audit[-1].details["sha256"] == method.sha256
    result = analyse_run(reopened)
    assert result.method.sha256 == method.sha256 and result.accepted
    assert any("every level of method DEMO-NO3-UV" in r for r in result.reasons)
    # in the API too, a choice against the method needs a reason
    with pytest.raises(RunError, match="departs from the linear, none that method DEMO-NO3-UV"):
        run_edits.choose_model(run, "nitrate-N", "quadratic", "none", "")
    # every new run holds its profile by content, not by id only
    assert run_edits.new_run("x", ()).settings.custom_profile is not None


def test_quantify_a_document_under_a_method(tmp_path) -> None:
    path = tmp_path / "run.json"
    save_run(open_run(NITRATE).run, path)
    done = cli("quantify", str(path), "--method", str(DEMO_METHOD), "--json")
    data = json.loads(done.stdout)
    assert done.returncode == 0, done.stderr
    assert data["method"]["id"] == "DEMO-NO3-UV" and data["accepted"]
