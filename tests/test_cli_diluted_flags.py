"""The flags of a diluted result say each number once: the calibration's ULOQ times the dilution
equals the sample's ULOQ. The command as a subprocess on tables written as an instrument writes them."""

from __future__ import annotations

import json
from pathlib import Path

from tests.test_cli_qc_not_judged import QUANTIFY, run_cli, standards, write_csv


def test_the_uloq_of_a_diluted_sample_says_each_number_once(tmp_path: Path) -> None:
    """ULOQ 50 µg/L for the solution measured, a sample diluted 10-fold: the flag gives 50 × 10 = 500,
    never "500 × dilution 10"; the reported cell and the below texts keep the limit in the sample's terms."""
    smp = write_csv(tmp_path / "zn_smp.csv", [("Sample", "Type", "Dilution", "Response (counts)"),
                                              ("Well 9", "unknown", 10, 2951.0), ("Well 10", "unknown", 10, 30.5),
                                              ("Well 11", "unknown", 1, 3112.4)])
    done = run_cli("quantify", "--standards", str(standards(tmp_path)), "--samples", str(smp), *QUANTIFY, "--json")
    rows = {s["id"]: s for s in json.loads(done.stdout)["analytes"][0]["samples"]}
    above = rows["Well 9"]
    assert "above the calibrated range (ULOQ 50.0 µg/L × dilution 10 = 500 µg/L)" in above["flag_words"], above
    assert above["reported_text"] == "> 500 µg/L (ULOQ × dilution 10)"
    assert "(ULOQ 50.0 µg/L):" in rows["Well 11"]["flag_words"]  # undiluted: the ULOQ alone
    below = rows["Well 10"]
    assert below["reported_text"] == "< 10.0 µg/L (LLOQ × dilution 10)"
    assert below["flag_words"].startswith("below the reporting limit of 10.0 µg/L (LLOQ × dilution 10)")
    text = run_cli("quantify", "--standards", str(standards(tmp_path)), "--samples", str(smp), *QUANTIFY).stdout
    assert "ULOQ 50.0 µg/L × dilution 10 = 500 µg/L" in text and "ULOQ 500 µg/L × dilution" not in text
