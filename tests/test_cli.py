"""The command line: every demo run, JSON equal to the engine, each exit code, the printed record."""

from __future__ import annotations

import json
import subprocess
import unicodedata
import sys

import numpy as np
import pytest
from pypdf import PdfReader

import curvewright as cw
from curvewright import cli
from curvewright.core.run_analysis import analyse_run
from curvewright.io.run_document import open_run, save_run
from tests.io.helpers import DEMO_RUNS, ROOT
from tests.cli_runs import run_cli


@pytest.mark.parametrize("path", DEMO_RUNS, ids=[p.stem for p in DEMO_RUNS])
def test_quantify_every_demo_run(path, capsys) -> None:
    code = cli.main(["quantify", str(path)])
    out = capsys.readouterr().out
    assert code == 0
    assert "verdict: ACCEPTED" in out and cw.CAUTION in out
    assert "y = " in out


def test_json_output_equals_the_engine(capsys) -> None:
    path = ROOT / "sample_runs" / "veltaprine_plasma_weighted.json"
    assert cli.main(["quantify", str(path), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    engine = analyse_run(open_run(path).run).analytes[0]
    entry = data["analytes"][0]
    assert entry["coefficients"] == engine.calibration.coefficients.tolist()
    assert entry["residual_sd"] == engine.calibration.residual_sd
    for exported, sample in zip(entry["samples"], engine.samples, strict=True):
        assert exported["reported"] == sample.reported
        assert exported["lower"] == sample.lower and exported["upper"] == sample.upper
    above = [s for s in entry["samples"] if "above_range" in s["flags"]]
    assert above and data["caution"] == cw.CAUTION and data["audit_chain_verified"] is True


def test_model_override_is_recorded_as_given(capsys) -> None:
    path = ROOT / "sample_runs" / "nitrate_water_linear.json"
    cli.main(["quantify", str(path), "--model", "quadratic", "--json"])
    entry = json.loads(capsys.readouterr().out)["analytes"][0]
    assert entry["model"] == "quadratic" and entry["model_overridden"] is True
    # the run's own reason belonged to its own choice, not to this one
    assert entry["model_chosen_by"] == "command line" and entry["choice_reason"] == "given on the command line"
    cli.main(["quantify", str(path), "--json"])
    entry = json.loads(capsys.readouterr().out)["analytes"][0]
    run_analyte = open_run(path).run.analytes[0]
    assert entry["model_chosen_by"] == "run document"
    assert entry["choice_reason"] == run_analyte.choice_reason and entry["choice_reasons"] == [run_analyte.choice_reason]


def test_failed_acceptance_exits_1(tmp_path, capsys) -> None:
    # the invented nitrate run judged against a strict laboratory profile of ±0.1 %
    strict = cw.load_profile("general").with_limits(0.1, 0.1, 0.1)
    profile = tmp_path / "strict.json"
    profile.write_text(json.dumps(strict.to_mapping()), encoding="utf-8")
    code = cli.main(["quantify", str(ROOT / "sample_runs" / "nitrate_water_linear.json"), "--profile", str(profile)])
    assert code == 1
    assert "NOT ACCEPTED" in capsys.readouterr().out


def test_malformed_input_exits_2_naming_row_and_field(tmp_path) -> None:
    standards = tmp_path / "standards.csv"
    standards.write_text("Concentration;Response\n1;10,5\n2;abc\n4;41,0\n", encoding="utf-8")
    samples = tmp_path / "samples.csv"
    samples.write_text("Sample;Response\nU1;20,1\n", encoding="utf-8")
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples))
    assert result.returncode == 2
    assert "row 3, column 2 (Response): 'abc'" in result.stderr


def test_broken_document_exits_2(tmp_path) -> None:
    path = tmp_path / "broken.json"
    path.write_text('{"format": "curvewright-run", "schema_version": 1, "name": "x"', encoding="utf-8")
    result = run_cli("quantify", str(path))
    assert result.returncode == 2 and "not valid JSON at line 1" in result.stderr


def test_internal_error_exits_3(monkeypatch, capsys) -> None:
    import curvewright.core.run_analysis as analysis

    def fail(*args, **kwargs):
        raise ZeroDivisionError("simulated fault")

    monkeypatch.setattr(analysis, "analyse_run", fail)
    assert cli.main(["quantify", str(DEMO_RUNS[0])]) == 3
    assert "internal error" in capsys.readouterr().err


def test_tables_without_a_run_document(tmp_path, capsys) -> None:
    standards = tmp_path / "standards.csv"
    standards.write_text("Concentration (µg/L),Area\n1,101\n2,199\n5,502\n10,1003\n20,1996\n", encoding="utf-8")
    samples = tmp_path / "samples.csv"
    samples.write_text("Sample,Dilution,Area\nWell 3,2,640\nWell 3,2,652\nTap,1,55\n", encoding="utf-8")
    out = tmp_path / "results.csv"
    code = cli.main(["quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "lead",
                     "--export", str(out), "--json"])
    data = json.loads(capsys.readouterr().out)
    assert code == 0
    well = data["analytes"][0]["samples"][0]
    cal = cw.fit([1, 2, 5, 10, 20], [101, 199, 502, 1003, 1996])
    expected = cal.quantify([646.0], replicates=2)
    assert well["replicates"] == 2
    assert well["reported"] == pytest.approx(2 * expected.estimate[0], rel=1e-14)
    assert data["analytes"][0]["concentration_unit"] == "µg/L"
    assert out.read_text(encoding="utf-8").startswith("# " + cw.CAUTION)


def test_report_pdf_has_the_record(tmp_path) -> None:
    path = ROOT / "sample_runs" / "zinc_emission_quadratic.json"
    report = tmp_path / "record.pdf"
    workbook = tmp_path / "results.xlsx"
    assert cli.main(["quantify", str(path), "--report", str(report), "--export", str(workbook)]) == 0
    reader = PdfReader(report)
    assert len(reader.pages) >= 4
    text = " ".join(page.extract_text() for page in reader.pages)
    flat = " ".join(unicodedata.normalize("NFKC", text).split())  # NFKC undoes typographic ligatures (ﬁ)
    cal = analyse_run(open_run(path).run).analytes[0].calibration
    assert "Equation: y =" in flat and f"{cal.coefficients[1]:.12g}"[:8] in flat
    assert "Verdict for zinc: ACCEPTED" in flat
    assert "qualified laboratory personnel" in flat
    assert "preparation error" in flat  # the exclusion and its reason
    assert "Reviewer" in flat and "Analyst" in flat
    assert "Model evidence" in flat and "Audit trail" in flat


def test_record_appends_exports_to_the_audit_trail(tmp_path) -> None:
    source = tmp_path / "run.json"
    save_run(open_run(DEMO_RUNS[0]).run, source)
    before = len(open_run(source).run.audit)
    assert cli.main(["quantify", str(source), "--export", str(tmp_path / "r.xlsx"), "--record"]) == 0
    opened = open_run(source)
    assert opened.chain_verified and len(opened.run.audit) == before + 1
    assert opened.run.audit[-1].action == "export_written"


def test_many_runs_with_progress_and_processes(tmp_path) -> None:
    folder = tmp_path / "incoming"
    folder.mkdir()
    for path in DEMO_RUNS:
        save_run(open_run(path).run, folder / path.name)
    result = run_cli("quantify", str(folder), "--export", str(tmp_path / "out") + "/", "--jobs", "2")
    assert result.returncode == 0, result.stderr
    assert f"{len(DEMO_RUNS)}/{len(DEMO_RUNS)}" in result.stderr
    assert sorted(p.name for p in (tmp_path / "out").iterdir()) == sorted(p.stem + ".xlsx" for p in DEMO_RUNS)


def test_many_runs_where_processes_are_started_afresh_give_the_same_json(tmp_path) -> None:
    """Outside Linux the pool's processes are started afresh rather than forked (on macOS a forked
    process may crash in the system's libraries): the same text as one process. The command runs as
    it would on such a system, its platform name set before it starts."""
    folder = tmp_path / "incoming"
    folder.mkdir()
    for path in DEMO_RUNS[:3]:
        save_run(open_run(path).run, folder / path.name)
    code = ("import sys; sys.platform = 'darwin'; from curvewright.cli import main; "
            f"sys.exit(main(['quantify', {str(folder)!r}, '--json', '--jobs', '2']))")
    fresh = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=300)
    serial = run_cli("quantify", str(folder), "--json")
    assert fresh.returncode == serial.returncode == 0, fresh.stderr + serial.stderr
    assert fresh.stdout == serial.stdout and len(json.loads(fresh.stdout)) == 3


def test_json_of_many_runs_in_two_processes_equals_the_json_of_one_process(tmp_path) -> None:
    """The results of each run reach the JSON alike whether a worker process made them or this one."""
    folder = tmp_path / "incoming"
    folder.mkdir()
    for path in DEMO_RUNS[:3]:
        save_run(open_run(path).run, folder / path.name)
    parallel = run_cli("quantify", str(folder), "--json", "--jobs", "2")
    serial = run_cli("quantify", str(folder), "--json")
    assert parallel.returncode == serial.returncode == 0, parallel.stderr + serial.stderr
    assert parallel.stdout == serial.stdout  # the workers send their runs' text: the same text, byte for byte
    runs = json.loads(serial.stdout)
    assert len(runs) == 3 and all(run["analytes"][0]["samples"] for run in runs)
    # a document that cannot be read is one flat row of the list, the same from both
    (folder / "zz_damaged.json").write_text('{"format": "curvewright-run", "schema_version": 1', encoding="utf-8")
    parallel = run_cli("quantify", str(folder), "--json", "--jobs", "2")
    serial = run_cli("quantify", str(folder), "--json")
    assert parallel.returncode == serial.returncode != 0
    assert parallel.stdout == serial.stdout and json.loads(serial.stdout)[3]["error"]
    # the first document, analysed by the first process before the pool starts, cannot be read: the same
    (folder / "aa_damaged.json").write_text('{"format": "curvewright-run", "schema_version": 1', encoding="utf-8")
    parallel = run_cli("quantify", str(folder), "--json", "--jobs", "2")
    serial = run_cli("quantify", str(folder), "--json")
    assert parallel.returncode == serial.returncode != 0
    assert parallel.stdout == serial.stdout and json.loads(serial.stdout)[0]["error"]
    # each sample's result is one line of the text, so a long run can be read line by line
    first = runs[0]["analytes"][0]["samples"][0]
    assert any(line.strip().rstrip(",") == json.dumps(first, ensure_ascii=False, separators=(", ", ": "))
               for line in serial.stdout.splitlines())


def test_check_and_compare(tmp_path, capsys) -> None:
    assert cli.main(["check", *map(str, DEMO_RUNS)]) == 0
    assert "audit trail verified" in capsys.readouterr().out
    broken = tmp_path / "tampered.json"
    data = json.loads(DEMO_RUNS[0].read_text(encoding="utf-8"))
    data["audit"][0]["user"] = "someone else"
    broken.write_text(json.dumps(data), encoding="utf-8")
    assert cli.main(["check", str(broken)]) == 1
    assert "does NOT verify" in capsys.readouterr().out
    assert cli.main(["compare", str(DEMO_RUNS[0])]) == 0
    out = capsys.readouterr().out
    assert "recommended" in out and "chosen" in out and "Mandel" in out


def test_version_and_help() -> None:
    result = run_cli("--version")
    assert result.stdout.strip() == f"curvewright {cw.__version__}"
    helped = run_cli("quantify", "--help")
    assert "exit codes" in helped.stdout and "examples" in helped.stdout


def test_options_are_checked(capsys) -> None:
    assert cli.main(["quantify", str(DEMO_RUNS[0]), "--level", "95"]) == 2
    assert "--level: 95.0 must lie between 0 and 1" in capsys.readouterr().err
    assert cli.main(["quantify", "no-such-run.json"]) == 2
    assert cli.main(["quantify", *map(str, DEMO_RUNS), "--export", "single.xlsx"]) == 2


def test_a_failed_calibration_check_shows_its_recovery_and_fails_the_run(tmp_path) -> None:
    from curvewright.core.rounding import RoundingRule
    from curvewright.core.run import Analyte, Measurement, Reading, Run, RunSettings, Sample, SampleKind, Standard

    # invented: copper on an exact line y = 2 + 3x; the CCV reads back at 7.2 mg/L against a nominal 5
    standards = tuple(Standard(f"Cu-{i}{r}", x, Reading.of(2 + 3 * x + (0.003 if r == 1 else -0.003)), r)
                      for i, x in enumerate((0.5, 1.0, 2.0, 4.0, 6.0, 8.0)) for r in (1, 2))
    samples = (Sample("ICV", SampleKind.ICV, 1, 1.0, (Measurement("copper", 1, Reading.of(17.0)),), (("copper", 5.0),)),
               Sample("Tap 1", SampleKind.UNKNOWN, 2, 1.0, (Measurement("copper", 1, Reading.of(11.0)),)),
               Sample("CCV-1", SampleKind.CCV, 3, 1.0, (Measurement("copper", 1, Reading.of(23.6)),), (("copper", 5.0),)))
    run = Run("invented copper batch", (Analyte("copper", "mg/L", "counts", standards),), samples,
              RunSettings(rounding=RoundingRule("significant", 3)))
    path = tmp_path / "copper.json"
    save_run(run, path)
    result = run_cli("quantify", str(path))
    assert result.returncode == 1
    assert "verdict: NOT ACCEPTED" in result.stdout
    assert "FAIL: CCV-1 (run order 3): recovery 144.0 % of 5 mg/L, outside 90–110 %" in result.stdout
    assert "pass: ICV (run order 1): recovery 100.0 %" in result.stdout
    tap = next(line for line in result.stdout.splitlines() if line.strip().startswith("Tap 1"))
    assert "not reportable" in tap and "CCV-1" in tap
    data = json.loads(run_cli("quantify", str(path), "--json").stdout)
    checks = data["analytes"][0]["calibration_checks"]
    assert checks["passed"] is False and checks["checks"][1]["recovery_percent"] == pytest.approx(144.0)
    assert any("CCV-1" in r for r in data["reasons"])


def test_check_names_data_edited_by_hand_and_exits_non_zero(tmp_path) -> None:
    path = tmp_path / "edited.json"
    data = json.loads(DEMO_RUNS[0].read_text(encoding="utf-8"))
    standard = data["analytes"][0]["standards"][4]
    standard["response"]["value"] = 0.1531
    standard["response"]["text"] = "0.1531"
    sample = data["samples"][2]
    sample["dilution_factor"] = 10
    path.write_text(json.dumps(data, indent=1, ensure_ascii=False), encoding="utf-8")
    result = run_cli("check", str(path))
    assert result.returncode == 1, result.stdout
    assert "data changed outside Curvewright after entry" in result.stdout
    assert f"the response of standard {standard['id']} of {data['analytes'][0]['name']}" in result.stdout
    assert f"the dilution factor of sample {sample['id']}" in result.stdout
    # the unedited document verifies, and says what the chain shows
    clean = run_cli("check", str(DEMO_RUNS[0]))
    assert clean.returncode == 0 and "the data match the content hash of its last entry" in clean.stdout


def test_the_person_given_on_the_command_line_is_recorded_beside_the_login(tmp_path) -> None:
    source = tmp_path / "run.json"
    save_run(open_run(DEMO_RUNS[0]).run, source)
    done = run_cli("quantify", str(source), "--export", str(tmp_path / "r.xlsx"), "--record",
                   "--analyst", "Robin Example", "--analyst-id", "QA-0042")
    assert done.returncode == 0, done.stderr
    entry = open_run(source).run.audit[-1]
    assert (entry.action, entry.analyst, entry.analyst_id) == ("export_written", "Robin Example", "QA-0042")
    assert entry.user  # the operating-system login stays beside the name
    data = json.loads(run_cli("quantify", str(source), "--json").stdout)
    assert data["audit_chain_verified"] and data["data_match_audit_trail"]
    assert data["chain_check"].startswith("verified") and "does not detect someone who edits" in data["chain_check"]


def test_an_analyte_measured_by_standard_additions_only_is_reported_and_does_not_fail_the_run(tmp_path) -> None:
    from tests.core.test_addition_series import _additions_only_run

    path = tmp_path / "river.json"
    save_run(_additions_only_run(with_flat=False), path)
    result = run_cli("quantify", str(path))
    assert result.returncode == 0, result.stdout + result.stderr
    assert "verdict: ACCEPTED" in result.stdout
    assert ("cadmium (µg/L)\n  no calibration standards: measured by standard additions only, so the standards' "
            "acceptance does not apply; 1 of 1 series extrapolated") in result.stdout
    assert "not fitted" not in result.stdout.split("cadmium (µg/L)")[1]


def test_an_altered_audit_entry_is_named_in_the_json_verdict_and_its_words(tmp_path, capsys) -> None:
    """The chain is checked once for both: the verdict is false and the words say which entry."""
    data = json.loads(DEMO_RUNS[0].read_text(encoding="utf-8"))
    data["audit"][0]["details"] = {**data["audit"][0]["details"], "note": "added by hand"}
    altered = tmp_path / "altered.json"
    altered.write_text(json.dumps(data, indent=1), encoding="utf-8")
    cli.main(["quantify", str(altered), "--json"])
    out = json.loads(capsys.readouterr().out)
    assert out["audit_chain_verified"] is False
    assert out["chain_check"].startswith("NOT verified: audit entry 1 (") and "was altered after it was written" in out["chain_check"]


def test_output_closed_by_its_reader_ends_quietly(tmp_path) -> None:
    # as `curvewright quantify RUN | head -1` in a shell, the reader gone before the output comes
    book = tmp_path / "nitrate.xlsx"
    process = subprocess.Popen([sys.executable, "-m", "curvewright", "quantify", str(DEMO_RUNS[0]), "--export", str(book)],
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE, cwd=ROOT)
    process.stdout.close()  # closed before the command writes its first line (it is still starting)
    with process.stderr:
        err = process.stderr.read().decode("utf-8")
    assert process.wait(timeout=300) == cli.EXIT_OUTPUT_CLOSED == 141
    assert "Broken pipe" not in err and "Errno" not in err, err
    assert book.stat().st_size > 0  # the files are written before the text
