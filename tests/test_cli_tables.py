"""The command line on tables written the way instruments and spreadsheets write them.

Every scenario is invented: the Larkmoor water laboratory's manganese line (µg/L) and the
Brackenfield metals laboratory's curved zinc emission line (mg/L); sample ids are fictional.
Each number the command prints is checked against ``cw.fit(...).quantify(...)`` computed here.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

import curvewright as cw
from curvewright.core.notation import machine
from tests.io.helpers import ROOT
from tests.cli_runs import run_cli

# Larkmoor manganese standards, duplicates at six levels, responses with three decimals (invented)
MN_X = [0.5, 0.5, 1, 1, 2, 2, 5, 5, 10, 10, 20, 20]
MN_Y = [52.251, 52.429, 102.236, 101.866, 202.427, 202.105, 503.636, 504.404, 1004.805, 1004.728, 2008.394, 2008.314]
# the samples: (id, dilution, response) — one id holds the delimiter, one a tab
MN_SAMPLES = [("LWL-0412", 1, 640.225), ("LWL-0412", 1, 652.118), ("Well 3, rinse", 2, 1503.871),
              ("Vial\t7", 1, 87.402), ("Tap 2", 5, 1204.560)]
# Brackenfield zinc emission standards: a curved response (invented)
ZN_X = [1, 1, 2, 2, 5, 5, 10, 10, 20, 20, 40, 40]
ZN_Y = [998.581, 983.043, 1972.561, 1983.43, 4784.837, 4798.136, 9176.482, 9185.657, 16777.374, 16801.474,
        27185.988, 27209.069]


def write(path: Path, lines: list[str], *, bom: bool = False, newline: str = "\n") -> Path:
    data = newline.join(lines) + newline
    path.write_bytes(("\ufeff" if bom else "").encode("utf-8") + data.encode("utf-8"))
    return path


def quote(text: str) -> str:
    return '"' + text.replace('"', '""') + '"'


def comma_decimal(value: float) -> str:
    return f"{value:.3f}".replace(".", ",")


def expected_reports(x, y, samples, model="linear", weighting="none") -> dict[str, float]:
    """Reported concentration of each sample: the mean of its replicates read through cw.fit, times its dilution."""
    cal = cw.fit(x, y, model, weighting)
    by_id: dict[str, list] = {}
    for sid, dilution, response in samples:
        by_id.setdefault(sid, [dilution, []])[1].append(response)
    out = {}
    for sid, (dilution, responses) in by_id.items():
        result = cal.quantify([float(np.mean(responses))], replicates=len(responses))
        out[sid] = dilution * float(result.estimate[0])
    return out


def manganese_files(folder: Path) -> tuple[Path, Path]:
    """Comma-separated, three decimals, quoted ids, a UTF-8 BOM, CRLF line ends, units in the header."""
    standards = write(folder / "mn_standards.csv", ['"Standard id","Concentration (µg/L)","Response (counts)"'] + [
        f'"Mn-{i + 1:02d}",{x:g},{y:.3f}' for i, (x, y) in enumerate(zip(MN_X, MN_Y))], bom=True, newline="\r\n")
    samples = write(folder / "mn_samples.csv", ['"Sample","Dilution","Response (counts)"'] + [
        f"{quote(sid)},{d},{r:.3f}" for sid, d, r in MN_SAMPLES], bom=True, newline="\r\n")
    return standards, samples


def test_comma_file_with_three_decimals_quoted_ids_bom_and_crlf(tmp_path) -> None:
    standards, samples = manganese_files(tmp_path)
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "manganese",
                     "--json")
    assert result.returncode == 0, result.stderr
    data = json.loads(result.stdout)
    entry = data["analytes"][0]
    assert entry["name"] == "manganese" and entry["concentration_unit"] == "µg/L"
    assert entry["response_unit"] == "counts"
    # the straight line is recommended for these standards (statsmodels-free check: cw.compare here)
    recommended = cw.compare(MN_X, MN_Y).recommended
    assert (recommended.model.value, recommended.weighting.value) == ("linear", "none")
    assert (entry["model"], entry["weighting"]) == ("linear", "none")
    expected = expected_reports(MN_X, MN_Y, MN_SAMPLES)
    reported = {s["id"]: s["reported"] for s in entry["samples"]}
    assert list(reported) == ["LWL-0412", "Well 3, rinse", "Vial\t7", "Tap 2"]
    for sid, value in expected.items():
        assert reported[sid] == pytest.approx(value, rel=1e-12), sid  # cw.fit(...).quantify(...) above
    assert entry["samples"][0]["replicates"] == 2


def test_semicolon_file_with_decimal_commas(tmp_path) -> None:
    standards = write(tmp_path / "std.csv", ["Konz. ID;Concentration (µg/L);Response"] + [
        f"Mn-{i + 1};{comma_decimal(x).rstrip('0').rstrip(',')};{comma_decimal(y)}"
        for i, (x, y) in enumerate(zip(MN_X, MN_Y))])
    samples = write(tmp_path / "smp.csv", ["Sample;Dilution;Response"] + [
        f"{quote(sid)};{d};{comma_decimal(r)}" for sid, d, r in MN_SAMPLES], newline="\r\n")
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "manganese",
                     "--json")
    assert result.returncode == 0, result.stderr
    entry = json.loads(result.stdout)["analytes"][0]
    expected = expected_reports(MN_X, MN_Y, MN_SAMPLES)
    for sample in entry["samples"]:
        assert sample["reported"] == pytest.approx(expected[sample["id"]], rel=1e-12)  # cw.fit(...).quantify(...)


def test_columns_mapped_on_the_command_line(tmp_path) -> None:
    standards = write(tmp_path / "std.csv", ["Vial,Amount added (µg/L),Peak height,Peak area"] + [
        f"V{i},{x:g},{y:.3f},{10 * y:.1f}" for i, (x, y) in enumerate(zip(MN_X, MN_Y))])
    samples = write(tmp_path / "smp.csv", ["Vial,Dilution,Peak height"] + [
        f"{quote(sid)},{d},{r:.3f}" for sid, d, r in MN_SAMPLES])
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "manganese",
                     "--map", "response=Peak height", "--map", "standards.concentration=2", "--map", "id=Vial",
                     "--json")
    assert result.returncode == 0, result.stderr
    entry = json.loads(result.stdout)["analytes"][0]
    assert entry["concentration_unit"] == "µg/L"
    expected = expected_reports(MN_X, MN_Y, MN_SAMPLES)
    for sample in entry["samples"]:
        assert sample["reported"] == pytest.approx(expected[sample["id"]], rel=1e-12)  # cw.fit(...).quantify(...)


def test_a_curved_table_uses_the_recommended_quadratic_and_says_why(tmp_path) -> None:
    standards = write(tmp_path / "zn_std.csv", ["Standard,Concentration (mg/L),Emission"] + [
        f"Zn{i + 1},{x:g},{y:.3f}" for i, (x, y) in enumerate(zip(ZN_X, ZN_Y))])
    zn_samples = [("BML-77", 1, 12040.5), ("BML-78", 10, 21562.25)]
    samples = write(tmp_path / "zn_smp.csv", ["Sample,Dilution,Emission"] + [f"{s},{d},{r}" for s, d, r in zn_samples])
    comparison = cw.compare(ZN_X, ZN_Y)
    rec = comparison.recommended
    assert rec.model.value == "quadratic"
    assert cw.fit(ZN_X, ZN_Y).lack_of_fit.p_value < 1e-5  # the straight line lacks fit
    args = ("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "zinc")
    data = json.loads(run_cli(*args, "--json", "--export", str(tmp_path / "zn.xlsx")).stdout)
    entry = data["analytes"][0]
    assert (entry["model"], entry["weighting"]) == ("quadratic", rec.weighting.value)
    assert entry["model_chosen_by"] == "recommended"
    assert entry["choice_reasons"] == [machine(r) for r in comparison.reasons]  # JSON text: machine-readable exponents
    assert entry["choice_reason"].startswith("recommended by the model comparison")
    assert "given on the command line" not in json.dumps(data, ensure_ascii=False)
    expected = expected_reports(ZN_X, ZN_Y, zn_samples, "quadratic", rec.weighting.value)
    for sample in entry["samples"]:
        assert sample["reported"] == pytest.approx(expected[sample["id"]], rel=1e-12)  # cw.fit(...).quantify(...)
    text = run_cli(*args)
    assert text.returncode == 0, text.stderr
    assert "recommended by the model comparison" in text.stdout
    assert "the straight line is rejected, so the quadratic is recommended" in text.stdout
    assert "given on the command line" not in text.stdout
    # the workbook records the same choice and reason
    import openpyxl

    book = openpyxl.load_workbook(tmp_path / "zn.xlsx", read_only=True)
    cells = [str(c) for ws in book.worksheets for row in ws.iter_rows(values_only=True) for c in row if c]
    book.close()
    assert any(c.startswith("recommended by the model comparison") for c in cells)
    assert not any("given on the command line" in c for c in cells)


def test_a_choice_given_on_the_command_line_is_recorded_as_given(tmp_path) -> None:
    standards, samples = manganese_files(tmp_path)
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "manganese",
                     "--model", "quadratic", "--weighting", "1/x^2", "--json")
    assert result.returncode in (0, 1), result.stderr
    entry = json.loads(result.stdout)["analytes"][0]
    assert (entry["model"], entry["weighting"]) == ("quadratic", "1/x^2")
    assert entry["model_chosen_by"] == "command line" and entry["choice_reason"] == "given on the command line"
    expected = expected_reports(MN_X, MN_Y, MN_SAMPLES, "quadratic", "1/x^2")
    for sample in entry["samples"]:
        assert sample["reported"] == pytest.approx(expected[sample["id"]], rel=1e-12)  # cw.fit(...).quantify(...)


def test_half_a_choice_is_refused_for_tables(tmp_path) -> None:
    standards, samples = manganese_files(tmp_path)
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--model", "quadratic")
    assert result.returncode == 2
    assert "give --model and --weighting together" in result.stderr


def test_missing_name_and_unit_are_said_once_and_never_printed_empty(tmp_path) -> None:
    standards = write(tmp_path / "std.csv", ["Concentration,Response"] + [f"{x:g},{y:.3f}" for x, y in zip(MN_X, MN_Y)])
    samples = write(tmp_path / "smp.csv", ["Sample,Response", "S1,640.225"])
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples))
    assert result.returncode == 0, result.stderr
    out = result.stdout
    assert "()" not in out
    assert out.count("concentration unit not given") == 1
    assert "--concentration-unit" in out
    assert "analyte name not given" in out and "--analyte NAME" in out
    limits = next(line for line in out.splitlines() if line.strip().startswith("LOD "))
    assert " ," not in limits and not limits.rstrip().endswith(",")
    assert "  " not in limits.strip().split(" (")[0]
    data = json.loads(run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--json").stdout)
    warnings = data["analytes"][0]["warnings"]
    assert any("concentration unit not given" in w for w in warnings)
    assert any("analyte name not given" in w for w in warnings)
    # a unit given on the command line is printed with the numbers
    given = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "manganese",
                    "--concentration-unit", "µg/L")
    assert "manganese (µg/L)" in given.stdout and "unit not given" not in given.stdout
    assert "name not given" not in given.stdout


def test_a_decimal_comma_file_read_with_the_wrong_mark_says_which_option_answers(tmp_path) -> None:
    standards = write(tmp_path / "std.csv", ["Concentration;Response"] + [
        f"{comma_decimal(x)};{comma_decimal(y)}" for x, y in zip(MN_X, MN_Y)])
    samples = write(tmp_path / "smp.csv", ["Sample;Response", "S1;640,2"])
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--decimal-mark", ".")
    assert result.returncode == 2
    err = result.stderr
    # said once for each table, then its cells
    assert err.count("give --decimal-mark ,") == 2, err
    assert "the table's values show decimal comma" in err
    assert "row 2, column 1 (Concentration): '0,500'" in err
    assert "row 2, column 2 (Response): '640,2'" in err
    assert "… and 14 more" in err  # 24 cells in the standards table, listed up to the cap of 10
    assert len(err.splitlines()) < 20


def test_a_table_without_any_evidence_asks_for_the_mark(tmp_path) -> None:
    standards = write(tmp_path / "std.csv", ["Concentration;Response", "1;1,250", "2;2,500", "4;5,125", "5;6,250",
                                             "8;10,125", "10;12,500"])
    samples = write(tmp_path / "smp.csv", ["Sample;Response", "S1;3,125"])
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples))
    assert result.returncode == 2
    assert "--decimal-mark . or --decimal-mark ," in result.stderr
    answered = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--decimal-mark", ",",
                       "--json")
    assert answered.returncode == 0, answered.stderr
    cal = cw.fit([1, 2, 4, 5, 8, 10], [1.25, 2.5, 5.125, 6.25, 10.125, 12.5])
    reported = json.loads(answered.stdout)["analytes"][0]["samples"][0]["reported"]
    assert reported == pytest.approx(float(cal.quantify([3.125]).estimate[0]), rel=1e-12)  # cw.fit(...).quantify(...)


def test_thousands_separators_name_the_option_that_reads_them(tmp_path) -> None:
    standards = write(tmp_path / "std.csv", ["Concentration\tResponse", "0.5\t1,210.5", "1\t2,405.25", "2\t4,811",
                                             "5\t12,020.75", "8\t19,250.125", "10\t24,030.5"])
    samples = write(tmp_path / "smp.csv", ["Sample\tResponse", "S1\t6,000.5"])
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples))
    assert result.returncode == 2
    assert "or give --thousands ," in result.stderr
    answered = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--thousands", ",",
                       "--json")
    assert answered.returncode == 0, answered.stderr
    cal = cw.fit([0.5, 1, 2, 5, 8, 10], [1210.5, 2405.25, 4811, 12020.75, 19250.125, 24030.5])
    reported = json.loads(answered.stdout)["analytes"][0]["samples"][0]["reported"]
    assert reported == pytest.approx(float(cal.quantify([6000.5]).estimate[0]), rel=1e-12)  # cw.fit(...).quantify(...)


@pytest.mark.parametrize("thousand", ["１,０００", "١,٠٠٠"], ids=["full-width", "arabic-indic"])
def test_digits_of_any_script_meet_the_same_ambiguity_guard(tmp_path, thousand: str) -> None:
    # "1,000" written with full-width or Arabic-Indic digits meets the rules "1,000" meets: in a table whose
    # decimal mark is the point, it is refused until a thousands separator is named, never read silently as 1.0
    standards = write(tmp_path / "std.csv", ["Concentration\tResponse", "0.5\t510.5", "1\t1012.25", "2\t2030.5",
                                             "5\t5044.75", "8\t8101.5", "10\t10090.25"])
    samples = write(tmp_path / "smp.csv", ["Sample\tResponse", f"S1\t{thousand}", "S2\t３０１２.５"])
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples))
    assert result.returncode == 2
    assert f"{samples}" in result.stderr and f"row 2, column 2 (Response): {thousand!r}" in result.stderr
    assert "--thousands ," in result.stderr
    answered = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--thousands", ",",
                       "--json")
    assert answered.returncode == 0, answered.stderr
    cal = cw.fit([0.5, 1, 2, 5, 8, 10], [510.5, 1012.25, 2030.5, 5044.75, 8101.5, 10090.25])
    reported = {s["id"]: s["reported"] for s in json.loads(answered.stdout)["analytes"][0]["samples"]}
    expected = cal.quantify([1000.0, 3012.5]).estimate  # cw.fit(...).quantify(...)
    assert reported["S1"] == pytest.approx(float(expected[0]), rel=1e-12)
    assert reported["S2"] == pytest.approx(float(expected[1]), rel=1e-12)


@pytest.mark.parametrize("lines", [[], ["", "   "], ["Sample id Response", "S1 3,1 4", "S2 Q 8 9 1"]],
                         ids=["empty", "blank lines", "no separator"])
def test_a_table_that_cannot_be_read_is_named(tmp_path, lines: list[str]) -> None:
    standards = write(tmp_path / "std.csv", ["Concentration,Response"] + [f"{x:g},{y:.3f}" for x, y in zip(MN_X, MN_Y)])
    samples = write(tmp_path / "smp.csv", lines) if lines else tmp_path / "smp.csv"
    if not lines:
        samples.write_bytes(b"")
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples))
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert f"{samples}:" in result.stderr


def test_a_missing_column_lists_accepted_headers_and_the_map_option(tmp_path) -> None:
    standards = write(tmp_path / "std.csv", ["Concentration,Peak height"] + [f"{x:g},{y:.3f}" for x, y in zip(MN_X, MN_Y)])
    samples = write(tmp_path / "smp.csv", ["Sample,Peak height", "S1,640.225"])
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples))
    assert result.returncode == 2
    err = result.stderr
    assert "no column for response" in err and "'Peak height'" in err
    assert "'area'" in err and "'signal'" in err  # accepted names for the response
    assert "--map response=HEADER" in err


def test_a_negative_standard_concentration_is_refused(tmp_path) -> None:
    standards = write(tmp_path / "std.csv", ["Concentration,Response", "-1,52.251"] + [
        f"{x:g},{y:.3f}" for x, y in zip(MN_X[2:], MN_Y[2:])])
    samples = write(tmp_path / "smp.csv", ["Sample,Response", "S1,640.225"])
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples))
    assert result.returncode == 2
    assert ("row 2, column 1 (Concentration): '-1' — a nominal concentration cannot be below zero"
            in result.stderr)


def test_one_empty_sample_cell_does_not_stop_the_batch(tmp_path) -> None:
    standards, _ = manganese_files(tmp_path)
    samples = write(tmp_path / "smp.csv", ["Sample,Response", "LWL-0501,640.225", "LWL-0502,", "LWL-0503,n.d.",
                                           "LWL-0504,1204.560"], newline="\r\n")
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "manganese",
                     "--json")
    assert result.returncode == 0, result.stderr
    assert "warning" in result.stderr and "row 3, column 2 (Response)" in result.stderr
    samples_out = {s["id"]: s for s in json.loads(result.stdout)["analytes"][0]["samples"]}
    assert samples_out["LWL-0502"]["reported"] is None
    assert "no response recorded" in samples_out["LWL-0502"]["flag_words"]
    assert "censored" in samples_out["LWL-0503"]["flag_words"]
    cal = cw.fit(MN_X, MN_Y)
    for sid, response in (("LWL-0501", 640.225), ("LWL-0504", 1204.560)):
        expected = float(cal.quantify([response]).estimate[0])  # cw.fit(...).quantify(...)
        assert samples_out[sid]["reported"] == pytest.approx(expected, rel=1e-12)


def test_unreadable_sample_cells_are_reported_and_not_hidden_by_the_exit_code(tmp_path) -> None:
    standards, _ = manganese_files(tmp_path)
    samples = write(tmp_path / "smp.csv", ["Sample,Response", "LWL-0601,640.225", "LWL-0602,64O.2", "LWL-0603,87.402"])
    args = ("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "manganese")
    result = run_cli(*args)
    assert result.returncode == 2
    assert f"{samples}: row 3, column 2 (Response): '64O.2' — is not a number" in result.stderr
    assert "--allow-unreadable" in result.stderr
    # the batch is still quantified: every sample is reported, the unreadable one without a result
    assert "LWL-0601" in result.stdout and "LWL-0603" in result.stdout
    assert "response '64O.2' is not a number" in result.stdout
    allowed = run_cli(*args, "--allow-unreadable", "--json")
    assert allowed.returncode == 0, allowed.stderr
    assert "'64O.2'" in allowed.stderr  # still listed
    data = json.loads(allowed.stdout)
    assert [(u["row"], u["text"]) for u in data["unusable_readings"]] == [(3, "64O.2")]


def test_compare_and_check_given_a_table_say_what_they_take(tmp_path) -> None:
    standards, _ = manganese_files(tmp_path)
    for command in ("compare", "check"):
        result = run_cli(command, str(standards))
        assert result.returncode == 2
        assert "not valid JSON" not in result.stderr
        assert "run document" in result.stderr
        assert f"curvewright quantify --standards {standards} --samples SAMPLES.csv" in result.stderr
    quantify = run_cli("quantify", str(standards))
    assert quantify.returncode == 2 and "quantify --standards" in quantify.stderr


def test_compare_reads_a_standards_table(tmp_path) -> None:
    standards = write(tmp_path / "zn_std.csv", ["Standard,Concentration (mg/L),Emission"] + [
        f"Zn{i + 1},{x:g},{y:.3f}" for i, (x, y) in enumerate(zip(ZN_X, ZN_Y))])
    result = run_cli("compare", "--standards", str(standards), "--analyte", "zinc")
    assert result.returncode == 0, result.stderr
    out = result.stdout
    assert "Mandel" in out and "recommended: quadratic" in out
    assert "the straight line is rejected, so the quadratic is recommended" in out
    data = json.loads(run_cli("compare", "--standards", str(standards), "--json").stdout)
    rows = {(r[0], r[1]): r for r in data[0]["rows"]}
    linear = cw.fit(ZN_X, ZN_Y)
    assert rows[("linear", "none")][2] == pytest.approx(linear.residual_sd, rel=1e-12)  # cw.fit residual SD


def test_the_readme_example_tables_quantify_as_documented(tmp_path) -> None:
    import re

    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    blocks = re.findall(r"```\n(.*?)```", readme, flags=re.S)
    (tmp_path / "mn_standards.csv").write_text(next(b for b in blocks if b.startswith("Standard id,")), encoding="utf-8")
    (tmp_path / "mn_samples.csv").write_text(next(b for b in blocks if b.startswith("Sample,Type")), encoding="utf-8")
    command = next(b for b in blocks if b.startswith("curvewright quantify --standards mn_standards.csv")).split()
    args = [str(tmp_path / a) if a.endswith(".csv") else a for a in command[1:]]
    result = run_cli(*args, "--json")
    assert result.returncode == 0, result.stderr
    entry = json.loads(result.stdout)["analytes"][0]
    assert entry["name"] == "manganese" and entry["concentration_unit"] == "µg/L"
    reported = {s["id"]: s for s in entry["samples"]}
    cal = cw.fit(MN_X, MN_Y)  # the README's standards are the Larkmoor standards above
    expected = float(cal.quantify([(640.225 + 652.118) / 2], replicates=2).estimate[0])  # cw.fit(...).quantify(...)
    assert reported["LWL-0412"]["reported"] == pytest.approx(expected, rel=1e-12)
    assert reported["Well 3, rinse"]["reported"] == pytest.approx(2 * float(cal.quantify([1503.871]).estimate[0]),
                                                                  rel=1e-12)
    assert reported["QC mid"]["recovery_percent"] is not None
    assert reported["Field blank"]["reported"] is None
