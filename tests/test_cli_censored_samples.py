"""A sample response entered as a limit ("<20", ">2500") is reported as a concentration statement.

The limit is a RESPONSE: it is read through the curve and multiplied by the dilution factor, never
printed where a concentration is read; a sample whose replicates mix censored and measured readings
keeps both and is not quantified. The scenario is invented: the Larkmoor water laboratory's
zirconium line (µg/L, counts), exported with semicolons and decimal commas; sample ids are fictional.
Each bound is checked against ``cw.fit(...).quantify(...)`` computed here.
"""

from __future__ import annotations

import re
from decimal import Decimal

import json
from pathlib import Path

import openpyxl

import curvewright as cw
from tests.test_cli_tables import run_cli, write

ZR_X = [0.5, 0.5, 1, 1, 2, 2, 5, 5, 10, 10, 20, 20]
ZR_Y = [51.20, 50.80, 101.9, 99.7, 203.1, 198.4, 506.2, 497.0, 1003.5, 995.1, 2011.8, 1992.2]


def _files(tmp_path: Path, samples: list[str]) -> tuple[Path, Path]:
    std = write(tmp_path / "std.csv", ["Standard id;Concentration (µg/L);Response (counts)"]
                + [f"Zr-{i + 1:02d};{x:g};{y:.2f}".replace(".", ",") for i, (x, y) in enumerate(zip(ZR_X, ZR_Y))],
                bom=True, newline="\r\n")
    smp = write(tmp_path / "smp.csv", ["Sample,Dilution,Response"] + samples)
    return std, smp


def _quantify(tmp_path: Path, samples: list[str], *extra: str) -> tuple[dict, str]:
    std, smp = _files(tmp_path, samples)
    args = ["quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "zirconium",
            "--model", "linear", "--weighting", "1/x^2"]
    text = run_cli(*args)
    assert text.returncode == 0, text.stderr
    js = run_cli(*args, "--json", *extra)
    assert js.returncode == 0, js.stderr
    rows = {s["id"]: s for s in json.loads(js.stdout)["analytes"][0]["samples"]}
    return rows, text.stdout


def test_response_limit_is_read_through_the_curve_and_diluted(tmp_path: Path) -> None:
    cal = cw.fit(ZR_X, ZR_Y, "linear", "1/x^2")
    bound = float(cal.quantify([300.0]).estimate[0])  # the response limit read back (computed here)
    rows, text = _quantify(tmp_path, ["Fluss-G,1,<20", "Fluss-G2,10,<20", "Fluss-A,1,<300", "Fluss-B,10,<300",
                                      "Fluss-C,1,>2500"])
    # <20 counts lies below the lowest standard's response: below the LLOQ (0.5 µg/L), times the dilution
    assert rows["Fluss-G"]["reported_text"] == "< 0.500 µg/L (LLOQ)"
    assert rows["Fluss-G2"]["reported_text"] == "< 5.00 µg/L (LLOQ × dilution 10)"
    # inside the range: the bound itself, rounded outward so the statement is never stricter than worked out
    assert 2.9 < bound < 3.0
    assert rows["Fluss-A"]["reported_text"] == "< 3.00 µg/L"
    assert rows["Fluss-B"]["reported_text"] == "< 30.0 µg/L"
    assert rows["Fluss-C"]["reported_text"] == "> 20.0 µg/L (ULOQ)"
    for sid, row in rows.items():
        assert "a limit of the response, not a concentration" in row["flag_words"], sid
        assert "<20" not in row["reported_text"] and "<300" not in row["reported_text"]
    line = next(ln for ln in text.splitlines() if ln.strip().startswith("Fluss-G2"))
    assert "< 5.00 µg/L (LLOQ × dilution 10)" in line


def test_mixed_censored_and_measured_replicates_keep_both(tmp_path: Path) -> None:
    workbook = tmp_path / "out.xlsx"
    rows, text = _quantify(tmp_path, ["Fluss-M,1,<20", "Fluss-M,1,300.2"], "--export", str(workbook))
    m = rows["Fluss-M"]
    assert m["status"] == "not_quantified" and m["reported"] is None and m["reported_text"] == "not quantified"
    assert "mix censored and measured readings" in m["flag_words"]
    assert "replicate 1 <20" in m["flag_words"] and "replicate 2 300.2" in m["flag_words"]
    assert "replicate 2 300.2" in text
    cells = [str(c) for ws in openpyxl.load_workbook(workbook).worksheets for row in ws.iter_rows(values_only=True)
             for c in row if c is not None]
    assert any("replicate 2 300.2" in c for c in cells)
    assert not any(c.strip().startswith("<20") for c in cells)


def test_the_record_names_every_reading_of_a_mixed_sample(tmp_path: Path) -> None:
    import pypdfium2

    record = tmp_path / "record.pdf"
    _quantify(tmp_path, ["Fluss-M,1,<20", "Fluss-M,1,300.2", "Fluss-G,1,<20"], "--report", str(record))
    document = pypdfium2.PdfDocument(str(record))
    try:
        text = " ".join(page.get_textpage().get_text_range() for page in document).replace("\r\n", " ")
    finally:
        document.close()
    assert "Fluss-M (censored: replicate 1 <20; measured: replicate 2 300.2)" in " ".join(text.split())
    assert "censored — reported as entered (e.g. ND, < 0.5)" not in text  # a limit is not reported as entered


def test_a_bound_is_never_shown_stricter_than_worked_out() -> None:
    """Rounded outward under every rule: an upper bound never shown below its value, a lower one never
    above (3,000 values over twelve decades, each rule of the settings)."""
    import numpy as np

    from curvewright.core.reporting import censored_bound_reason, reporting_range, censored_text
    from curvewright.core.rounding import RoundingRule

    rng = reporting_range([1e-9, 1e12], None, None, "µg/L")
    values = 10.0 ** np.random.default_rng(7).uniform(-6, 6, 3_000)
    for rule in (RoundingRule(), RoundingRule(kind="significant", digits=2), RoundingRule(kind="decimals", digits=2)):
        for value in values.tolist():
            for sign in "<>":
                text = censored_text(censored_bound_reason(sign, f"{sign}5", value, True, 1.0, rng, rule, "µg/L"))
                number = re.split(r" +", text)[1].replace("\u00a0", " ")  # "1.15 × 10⁻⁶" is held by no-break spaces
                mantissa, _, power = number.partition(" × 10")
                shown = Decimal(mantissa).scaleb(int(power.translate(str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻", "0123456789-")) or 0))
                exact = Decimal(value)
                assert (shown >= exact) if sign == "<" else (shown <= exact), (rule, sign, value, text)
