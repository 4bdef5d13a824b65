"""The results of a run reported over all samples at once equal the per-sample definitions.

The reference side of each check is written from the definitions, one sample at a time: the mean
of a sample's usable replicates is ``np.mean`` of them, the engine's ``Calibration.quantify`` reads
the means through the curve, and ``report_value`` reports each result; rounded texts come from
``RoundingRule.text``. The data are invented.
"""

from __future__ import annotations

import json
import math
from dataclasses import replace
from importlib import resources

import numpy as np
import pytest

from curvewright.core.inverse import QuantFlag
from curvewright.core.reporting import ReportingRange, censored_word_reason, report_value, report_values
from curvewright.core.rounding import RoundingRule
from curvewright.core.run import Analyte, Measurement, Reading, Run, RunSettings, Sample, SampleKind, Standard
from curvewright.core.run_analysis import analyse_run, response_value

RULES = (RoundingRule(), RoundingRule("significant", 2, "half_even"), RoundingRule("decimals", 2),
         RoundingRule("decimals", 0, "half_even"))


def _profile(below_limit: str) -> dict:
    data = json.loads(resources.files("curvewright.core").joinpath("profiles", "general.json").read_text("utf-8"))
    data["reporting"]["between_lod_and_reporting_limit"] = below_limit
    return data


def varied_run(below_limit: str, rule: RoundingRule, ratio: bool = False) -> Run:
    """An invented cobalt calibration (response about 40 counts per µg/L plus 3 counts of blank) and
    samples of every kind of result: replicates from one to eleven, dilutions, censored and missing
    and unreadable readings, QC samples with nominal values, results below the LOD, between the LOD and
    the reporting limit, inside the range and above it."""
    rng = np.random.default_rng(20)
    levels = (0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 50.0)

    def reading(value: float) -> Reading:
        return Reading.of(round(float(value), 4))

    standards = tuple(Standard(f"Co-{i}-{r}", c, reading(3 + 40 * c * (1 + 0.02 * rng.standard_normal())), r,
                               internal_standard_response=reading(1000 + 20 * rng.standard_normal()) if ratio else None)
                      for i, c in enumerate(levels) for r in (1, 2))
    samples = []
    for j in range(240):
        kind = SampleKind.QC if j % 17 == 0 else SampleKind.UNKNOWN
        replicates = 1 + j % 11
        dilution = (1.0, 2.0, 10.0, 2.5, 1.0, 100.0)[j % 6]
        level = float(np.exp(rng.uniform(np.log(0.01), np.log(120.0))))
        readings = []
        for r in range(1, replicates + 1):
            value = 3 + 40 * level * (1 + 0.03 * rng.standard_normal())
            if j % 23 == 5 and r == 1:
                readings.append(Reading(None, "ND", "ND"))
            elif j % 19 == 7 and r == replicates:
                readings.append(Reading(None, ""))
            elif j % 29 == 3 and r == 1:
                readings.append(Reading(None, "n/a?"))
            else:
                readings.append(reading(value))
        measurements = tuple(Measurement("cobalt", r, x, reading(1000 + 20 * rng.standard_normal()) if ratio else None)
                             for r, x in enumerate(readings, start=1))
        nominal = (("cobalt", round(level * dilution, 3)),) if kind is SampleKind.QC else ()
        samples.append(Sample(f"X{j:03d}", kind, j + 1, dilution, measurements, nominal))
    samples.append(Sample("other-analyte-only", SampleKind.UNKNOWN, 999, 1.0,
                          (Measurement("nickel", 1, reading(50.0)),)))
    analyte = Analyte("cobalt", "µg/L", "counts", standards, "linear", "1/x", "invented", uses_internal_standard=ratio)
    nickel = Analyte("nickel", "µg/L", "counts", tuple(replace(s, id=f"Ni{s.id}") for s in standards))
    settings = RunSettings(custom_profile=_profile(below_limit), rounding=rule)
    return Run("varied (invented)", (analyte, nickel), tuple(samples), settings)


def per_sample_definitions(run: Run, name: str) -> list[tuple]:
    """Each sample's reported values, one sample at a time, from the definitions."""
    whole = analyse_run(run)
    result, analyte = whole.analyte(name), run.analyte(name)
    cal, rng, settings = result.calibration, result.reporting, run.settings
    below_limit = whole.profile.reporting.between_lod_and_reporting_limit
    rows, means, counts = [], [], []
    for sample in run.samples:
        measurements = sample.measurements_of(name)
        if not measurements:
            continue
        values, notes, censored, read = [], [], None, []
        for m in measurements:
            value, reason = response_value(m.response, m.internal_standard_response, analyte.uses_internal_standard)
            if value is None:
                censored = m.response.text if m.response.is_censored else censored
                notes.append(f"replicate {m.replicate}: {reason}")
            else:
                values.append(value)
                read.append(f"replicate {m.replicate} {m.response.text}")
        if censored is not None and values:  # censored and measured replicates: no mean, every reading named
            censored = ("not quantified: the replicates mix censored and measured readings (censored: "
                        + "; ".join(f"replicate {m.replicate} {m.response.text}" for m in measurements
                                    if m.response.is_censored)
                        + f"; measured: {'; '.join(read)}); no mean is formed from part of them: review the readings")
        elif censored is not None:
            censored = censored_word_reason(censored)
        rows.append((sample, values, "; ".join(notes), censored))
        if values and censored is None:
            means.append(float(np.mean(values)))
            counts.append(len(values))
    quant = cal.quantify(means, counts, settings.confidence_level, settings.interval, result.limits)
    out, i = [], 0
    for sample, values, note, censored in rows:
        df = sample.dilution_factor
        if values and censored is None:
            estimate = None if math.isnan(quant.estimate[i]) else float(quant.estimate[i])
            engine = quant.flags[i]
            if engine is not None and engine & (QuantFlag.NO_SOLUTION | QuantFlag.BEYOND_TURNING_POINT):
                # a response the curve never gives: the side of the range it lies on, from the fitted
                # responses at the range's ends (beyond the lowest standard's side: below the reporting limit)
                at_low, at_high = (float(v) for v in cal.predict(np.array([rng.lloq, rng.uloq])))
                y, rising = float(quant.mean_response[i]), at_high > at_low
                if (y < at_low) if rising else (y > at_low):
                    engine |= QuantFlag.BELOW_RANGE | QuantFlag.BELOW_LOQ
                elif (y > at_high) if rising else (y < at_high):
                    engine |= QuantFlag.ABOVE_RANGE
            interval = tuple(None if math.isnan(v) else float(v) for v in (quant.lower[i], quant.upper[i]))
            value = report_value(estimate, df, engine, rng, settings.rounding, unit=analyte.concentration_unit,
                                 below_limit=below_limit, not_quantified=note if estimate is None else "",
                                 interval=interval)
            out.append((sample.id, float(quant.mean_response[i]), estimate,
                        None if estimate is None else estimate * df,
                        None if math.isnan(quant.lower[i]) else float(quant.lower[i]) * df,
                        None if math.isnan(quant.upper[i]) else float(quant.upper[i]) * df, value.status, value.text, value.words, value.short,
                        value.flags if estimate is not None else engine, value.suggested_dilution, note))
            i += 1
        else:
            reason = censored or note or "no numeric response"
            note = reason if not note or reason == note else f"{reason}; {note}"
            value = report_value(None, df, None, rng, settings.rounding, unit=analyte.concentration_unit,
                                 below_limit=below_limit, not_quantified=note)
            out.append((sample.id, None, None, None, None, None, value.status, value.text, value.words, value.short,
                        None, value.suggested_dilution, note))
    return out


@pytest.mark.parametrize("below_limit", ["censor", "estimate"])
@pytest.mark.parametrize("rule", RULES, ids=lambda r: r.description)
def test_run_results_equal_the_per_sample_definitions(below_limit: str, rule: RoundingRule) -> None:
    run = varied_run(below_limit, rule, ratio=rule is RULES[1])
    result = analyse_run(run).analyte("cobalt")
    got = [(s.sample_id, s.mean_response, s.estimate, s.reported, s.reported_lower, s.reported_upper, s.status,
            s.reported_text, s.words, s.short, s.flags, s.suggested_dilution, s.note) for s in result.samples]
    expected = per_sample_definitions(run, "cobalt")
    assert got == expected  # exactly: the same floats, texts and flags
    statuses = {s.status.value for s in result.samples}
    # the run holds every kind of result it is meant to
    assert {"in_range", "above_range", "below_lod", "not_quantified"} <= statuses, statuses
    assert "below_reporting_limit" in statuses or rule is RULES[1], statuses
    assert any(s.reported_text.startswith("> ") and s.suggested_dilution for s in result.samples)
    assert {len(s.replicate_responses) for s in result.samples} >= set(range(1, 12))
    assert any(s.kind is SampleKind.QC and s.recovery_percent is not None for s in result.samples)
    assert len(result.samples) == 240


def test_a_curve_that_never_reaches_a_response_is_reported_as_one_at_a_time() -> None:
    """A concave quadratic (invented: y = 10 + 50x − x², highest at x = 25) and responses beyond its
    highest value, some with a replicate missing: no solution, said with the replicates' notes."""
    xs = [1.0, 2.0, 4.0, 8.0, 12.0, 16.0, 20.0]
    standards = tuple(Standard(f"Q{i}-{r}", x, Reading.of(10 + 50 * x - x * x + (0.2 if r == 1 else -0.2)), r)
                      for i, x in enumerate(xs) for r in (1, 2))
    responses = [(700.0,), (700.0, None), (120.0, None), (650.0, 660.0), (300.0,), (5.0,), (900.0, 910.0, None)]
    samples = tuple(Sample(f"Q-U{j}", SampleKind.UNKNOWN, j, 2.0 if j % 2 else 1.0,
                           tuple(Measurement("tin", r, Reading(None, "") if v is None else Reading.of(v))
                                 for r, v in enumerate(values, start=1)))
                    for j, values in enumerate(responses))
    analyte = Analyte("tin", "mg/L", "counts", standards, "quadratic", "none", "invented")
    run = Run("concave (invented)", (analyte,), samples, RunSettings())
    result = analyse_run(run).analyte("tin")
    got = [(s.sample_id, s.mean_response, s.estimate, s.reported, s.reported_lower, s.reported_upper, s.status,
            s.reported_text, s.words, s.short, s.flags, s.suggested_dilution, s.note) for s in result.samples]
    assert got == per_sample_definitions(run, "tin")
    unreached = [s for s in result.samples if s.flags is not None and QuantFlag.NO_SOLUTION in s.flags]
    assert any("replicate 2: no response recorded" in s.words for s in unreached), [s.words for s in unreached]


def test_many_values_are_reported_as_one_at_a_time() -> None:
    """``report_values`` against ``report_value`` on results at and around every limit, with the
    engine's qualifiers, no solution, no estimate and several dilutions."""
    rng = ReportingRange(lloq=0.5, uloq=50.0, lod=0.2, loq=0.8, reporting_limit=0.8, basis="LOQ", note="")
    no_lod = replace(rng, lod=None, loq=None, reporting_limit=0.5, basis="LLOQ")
    edges = [0.0, 0.1, 0.2, 0.2 - 1e-12, 0.3, 0.5, 0.8, 0.8 + 1e-12, 1.0, 25.25, 49.999, 50.0, 50.0 + 1e-9, 51.0,
             123.456, 2.5e7, -0.3, math.nan, 0.745, 1.005, 0.0125]
    flags = [QuantFlag(0), QuantFlag.AMBIGUOUS_ROOT, QuantFlag.UNBOUNDED_INTERVAL,
             QuantFlag.AMBIGUOUS_ROOT | QuantFlag.UNBOUNDED_INTERVAL | QuantFlag.IN_RANGE,
             QuantFlag.NO_SOLUTION | QuantFlag.BEYOND_ASYMPTOTE, None]
    estimates, dilutions, engine, reasons = [], [], [], []
    for e in edges:
        for d in (1.0, 2.0, 0.5, 1000.0):
            for f in flags:
                estimates.append(e), dilutions.append(d), engine.append(f)
                reasons.append("" if f is not None else ("reported as censored: <0.2" if e != e else ""))
    for r in (rng, no_lod):
        for rule in RULES:
            for below_limit in ("censor", "estimate"):
                got = report_values(estimates, dilutions, engine, r, rule, unit="ng/mL", below_limit=below_limit,
                                    not_quantified=reasons)
                expected = [report_value(None if e != e else e, d, f, r, rule, unit="ng/mL", below_limit=below_limit,
                                         not_quantified=q) for e, d, f, q in zip(estimates, dilutions, engine, reasons)]
                assert got == expected
    with pytest.raises(ValueError, match="differ in length"):
        report_values([1.0, 2.0], [1.0], [None, None], rng, RULES[0])


def test_rounded_texts_in_one_pass_equal_each_text() -> None:
    # ties under half up and half to even (USP General Notices 7.20; Ph. Eur. 0.145 → 0.15, from memory),
    # carries, zero of either sign, the largest double, infinities and NaN
    values = [0.145, 0.135, 2.5, 3.5, -2.5, 9.995, 99.95, 0.0, -0.0, -0.004, 1e-300, 1.7976931348623157e308,
              math.inf, -math.inf, math.nan, 12.0, 12.0, 0.145, 123456.789, 5e-324]
    values += np.random.default_rng(3).lognormal(0, 6, 500).tolist()
    for rule in RULES + (RoundingRule("significant", 15), RoundingRule("decimals", 15, "half_even")):
        assert rule.texts(values) == [rule.text(v) for v in values]
    assert RoundingRule().texts([]) == []


def test_reported_columns_of_many_random_results_equal_each_report() -> None:
    """Columns made group by group (status, qualifiers, dilution) against ``report_value`` one result
    at a time, on invented results spread over every status, with mixed dilutions and qualifiers."""
    from curvewright.core.reporting import report_columns

    rng = ReportingRange(lloq=0.5, uloq=50.0, lod=0.2, loq=0.8, reporting_limit=0.8, basis="LOQ", note="")
    draw = np.random.default_rng(11)
    n = 3000
    estimates = np.exp(draw.uniform(np.log(0.01), np.log(500.0), n))
    estimates[draw.random(n) < 0.05] = np.nan
    dilutions = draw.choice([1.0, 2.0, 10.0, 0.5, 25.0], n)
    choices = [None, QuantFlag(0), QuantFlag.AMBIGUOUS_ROOT, QuantFlag.UNBOUNDED_INTERVAL,
               QuantFlag.NO_SOLUTION | QuantFlag.BEYOND_ASYMPTOTE]
    engine = [choices[k] for k in draw.integers(0, len(choices), n)]
    reasons = ["reported as censored: <0.2" if e != e and k % 2 else "" for k, e in enumerate(estimates)]
    for rule in RULES:
        for below_limit in ("censor", "estimate"):
            got = report_columns(estimates, dilutions, engine, rng, rule, unit="µg/L", below_limit=below_limit,
                                 not_quantified=reasons)
            expected = [report_value(None if e != e else float(e), float(d), f, rng, rule, unit="µg/L",
                                     below_limit=below_limit, not_quantified=q)
                        for e, d, f, q in zip(estimates, dilutions, engine, reasons)]
            assert got.values() == expected
            assert got.statuses == [v.status for v in expected] and got.texts == [v.text for v in expected]
            assert len({v.status for v in expected}) == 5  # every status but not reportable is present


@pytest.mark.parametrize("critical", [0.35, 0.9])
def test_columns_under_iso11843_limits_equal_each_report(critical: float) -> None:
    """ISO 11843-2 limits (x_c the detection limit, x_d kept as the LOD, no LOQ), x_c below and above
    the LLOQ, and results beyond a quadratic's turning point: the columns equal ``report_value``."""
    from curvewright.core.reporting import report_columns, reporting_range

    rng = reporting_range([0.5, 1.0, 50.0], 1.6, None, "µg/L", critical_value=critical)
    draw = np.random.default_rng(12)
    n = 2000
    estimates = np.exp(draw.uniform(np.log(0.05), np.log(80.0), n))
    estimates[draw.random(n) < 0.03] = np.nan
    dilutions = draw.choice([1.0, 2.0, 10.0], n)
    choices = [None, QuantFlag(0), QuantFlag.TURNING_POINT, QuantFlag.TURNING_POINT | QuantFlag.BEYOND_TURNING_POINT]
    engine = [choices[k] for k in draw.integers(0, len(choices), n)]
    for below_limit in ("censor", "estimate"):
        got = report_columns(estimates, dilutions, engine, rng, RULES[2], unit="µg/L", below_limit=below_limit)
        expected = [report_value(None if e != e else float(e), float(d), f, rng, RULES[2], unit="µg/L",
                                 below_limit=below_limit) for e, d, f in zip(estimates, dilutions, engine)]
        assert got.values() == expected
        flags = [v.flags for v in expected if v.flags is not None]
        assert any(QuantFlag.BELOW_MIN_DETECTABLE in f for f in flags)


@pytest.mark.parametrize("size", [1, 7, 40, 256, 257, 3000])
def test_few_results_grouped_in_a_dictionary_equal_those_grouped_over_arrays(monkeypatch, size) -> None:
    """A run of a few samples groups its results in a dictionary, a long one over arrays: both ways
    give the same columns, entry for entry, and each equals ``report_value`` of its result."""
    from curvewright.core import reporting

    rng = ReportingRange(lloq=0.5, uloq=50.0, lod=0.2, loq=0.8, reporting_limit=0.8, basis="LOQ", note="")
    draw = np.random.default_rng(size)
    estimates = np.exp(draw.uniform(np.log(0.01), np.log(500.0), size))
    dilutions = draw.choice([1.0, 2.0, 10.0, 0.5, 25.0], size)
    choices = [None, QuantFlag(0), QuantFlag.AMBIGUOUS_ROOT, QuantFlag.UNBOUNDED_INTERVAL]
    engine = [choices[k] for k in draw.integers(0, len(choices), size)]
    made = {}
    for few in (0, 10**9):  # every time over arrays; every time in a dictionary
        monkeypatch.setattr(reporting, "_FEW", few)
        for below_limit in ("censor", "estimate"):
            got = reporting.report_columns(estimates, dilutions, engine, rng, RULES[1], unit="µg/L",
                                           below_limit=below_limit)
            made[few, below_limit] = (got.statuses, got.texts, got.words, got.shorts, got.bits.tolist(),
                                      got.suggested_dilution.tolist())
    for below_limit in ("censor", "estimate"):
        assert made[0, below_limit][:5] == made[10**9, below_limit][:5]
        np.testing.assert_array_equal(made[0, below_limit][5], made[10**9, below_limit][5])
        expected = [report_value(float(e), float(d), f, rng, RULES[1], unit="µg/L", below_limit=below_limit)
                    for e, d, f in zip(estimates, dilutions, engine)]
        assert made[0, below_limit][1] == [v.text for v in expected]
