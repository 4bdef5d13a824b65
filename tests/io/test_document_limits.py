"""Run documents at and past the limits: every one is either refused by ``check`` with the path of
the field, or quantified; none ends in an internal error."""

from __future__ import annotations

import json
import math
import re
from pathlib import Path

import pytest

from curvewright import cli
from curvewright.core.rounding import RoundingError, RoundingRule
from curvewright.io import run_document as doc
from tests.io.helpers import small_run


def good() -> dict:
    return json.loads(doc.dumps_run(small_run()))


def write(tmp_path: Path, data: dict | str, name: str = "run.json") -> Path:
    path = tmp_path / name
    path.write_text(data if isinstance(data, str) else json.dumps(data, ensure_ascii=False), encoding="utf-8")
    return path


def splice(data: dict, marker: str, raw: str) -> str:
    """The document as JSON text with the string ``marker`` replaced by ``raw`` JSON text."""
    return json.dumps(data, ensure_ascii=False).replace(json.dumps(marker), raw, 1)


def check_and_quantify(path: Path, capsys) -> tuple[int, str, int, str]:  # type: ignore[no-untyped-def]
    checked = cli.main(["check", str(path)])
    check_out = capsys.readouterr().out
    quantified = cli.main(["quantify", str(path)])
    captured = capsys.readouterr()
    return checked, check_out, quantified, captured.err


def deep(levels: int) -> str:
    return "[" * levels + "]" * levels


def with_value(path_in_document: str, marker: str = "@@") -> dict:
    data = good()
    target = data
    keys = path_in_document.split(".")
    for key in keys[:-1]:
        target = target[int(key)] if isinstance(target, list) else target[key]
    last = keys[-1]
    if isinstance(target, list):
        target[int(last)] = marker
    else:
        target[last] = marker
    return data


# (document text, the path and words `check` must name)
REFUSED = [
    (splice(with_value("description"), "@@", deep(65)), "description[0][0][0]"),
    (splice(with_value("description"), "@@", deep(65)), "[0]: nested more than 64 levels deep"),
    (splice(with_value("description"), "@@", deep(1000)), "nested more than 64 levels deep at line 1, column"),
    (splice(with_value("description"), "@@", deep(100_000)), "nested more than 64 levels deep at line 1, column"),
    (splice(with_value("audit.0.details.what"), "@@", deep(70)), "audit[0].details.what"),
    (splice(with_value("analytes.0.standards.0.replicate"), "@@", "1" + "0" * 400), "analytes[0].standards[0].replicate: a whole number of 401 digits"),
    (splice(with_value("analytes.0.standards.0.concentration"), "@@", "1" + "0" * 400), "analytes[0].standards[0].concentration: a whole number of 401 digits"),
    (splice(with_value("samples.0.dilution_factor"), "@@", "9" * 5000), "samples[0].dilution_factor: a whole number of 5000 digits"),
    (splice(with_value("samples.0.nominal"), "@@", '{"cobalt": -1e400}'), "samples[0].nominal.cobalt: expected a finite number, zero or from 1e-30 to 1e30"),
    (splice(with_value("analytes.0.standards.0.replicate"), "@@", str(2**64)), "analytes[0].standards[0].replicate: expected a whole number within"),
    (splice(with_value("samples.0.run_order"), "@@", str(-(2**63))), "samples[0].run_order: expected a whole number within"),
    (json.dumps(with_value("settings.rounding.tie", {})), "settings.rounding.tie: expected text, found {}"),  # type: ignore[arg-type]
    (json.dumps(with_value("settings.rounding.digits", "3")), 'settings.rounding.digits: expected a whole number'),  # type: ignore[arg-type]
    (json.dumps(with_value("settings.rounding.kind", [1])), "settings.rounding.kind: expected text"),  # type: ignore[arg-type]
    (splice(with_value("name"), "@@", '"batch \\ud800"'), "name: the text holds U+D800, an unpaired surrogate"),
    (splice(with_value("samples.0.id"), "@@", '"U\\udfff1"'), "samples[0].id: the text holds U+DFFF"),
    (splice(with_value("audit.0.details"), "@@", '{"\\ud800": 1}'), "audit[0].details.\\ud800: the name holds U+D800"),
    (splice(with_value("analytes.0.standards.0.concentration"), "@@", "1e999"), "analytes[0].standards[0].concentration: expected a finite number"),
    # a QC sample's recovery is found/nominal: a nominal of zero cannot be judged, so check refuses it as quantify would
    (splice(with_value("samples.1.nominal.cobalt"), "@@", "0"), "samples[1].nominal.cobalt: a QC sample's nominal concentration must be above zero"),
]


@pytest.mark.parametrize("text, where", REFUSED, ids=[f"refused-{i}" for i in range(len(REFUSED))])
def test_refused_by_check_with_the_path_and_by_quantify_as_input_error(tmp_path, capsys, text, where) -> None:
    path = write(tmp_path, text)
    checked, out, quantified, err = check_and_quantify(path, capsys)
    assert checked == 2 and f"{path}: INVALID" in out and where in out, out
    assert quantified == 2 and where in err and "internal error" not in err, err


def test_a_value_above_1e26_rounds_to_its_decimals(tmp_path, capsys) -> None:
    data = good()
    data["settings"]["rounding"] = {"kind": "decimals", "digits": 2, "tie": "half_up"}
    data["samples"][2]["dilution_factor"] = 1e30  # the diluted sample, reported as estimate × 1e30
    path = write(tmp_path, data)
    checked, out, quantified, err = check_and_quantify(path, capsys)
    # a dilution factor typed into the file by hand is valid, and named as changed outside Curvewright
    assert checked == 1 and "the dilution factor of sample" in out and quantified in (0, 1), err
    cli.main(["quantify", str(path), "--json"])
    samples = json.loads(capsys.readouterr().out)["analytes"][0]["samples"]
    diluted = next(s for s in samples if s["dilution_factor"] == 1e30)
    # two decimals of a 31-digit number: all 33 figures, in the JSON's machine-readable exponent form
    assert diluted["reported"] > 1e26 and re.fullmatch(r"9\.\d{30}00e30", diluted["reported_rounded"])
    # rounded from the value cleaned of round-off to 12 significant figures (core.rounding.CLEAN_SIGNIFICANT)
    assert float(diluted["reported_rounded"]) == pytest.approx(diluted["reported"], rel=5e-12)


def test_rounding_a_double_at_either_end_of_its_range() -> None:
    # the largest double, 1.7976931348623157e308 (IEEE 754 binary64), kept to 15 decimals once cleaned of
    # round-off to 12 significant figures (core.rounding.CLEAN_SIGNIFICANT)
    text = RoundingRule("decimals", 15).text(1.7976931348623157e308)
    assert text == "179769313486" + "0" * 297 + "." + "0" * 15
    # the smallest subnormal double prints as 5e-324 (its shortest round-trip repr), which is what is rounded
    assert RoundingRule("significant", 3).text(5e-324) == "0." + "0" * 323 + "500"
    assert math.isinf(RoundingRule("decimals", 2).value(math.inf))


@pytest.mark.parametrize("kind, digits, tie", [({}, 3, "half_up"), ("decimals", 3, {}), ("decimals", 3, ["half_up"])])
def test_a_rounding_rule_of_the_wrong_type_is_a_rounding_error(kind, digits, tie) -> None:
    with pytest.raises(RoundingError):
        RoundingRule(kind, digits, tie)


def test_the_document_stays_valid_where_the_limits_are_not_reached(tmp_path, capsys) -> None:
    data = good()
    data["audit"][0]["details"]["note"] = json.loads(deep(30))  # nested, but far from the limit
    data["samples"][0]["run_order"] = 2**53 - 1
    path = write(tmp_path, data)
    checked, out, _, _ = check_and_quantify(path, capsys)
    assert checked == 1 and "does NOT verify" in out  # the edited entry no longer matches its hash


@pytest.mark.parametrize("field, value, where", [
    ("analytes.0.standards.0.concentration", 1e308, "analytes[0].standards[0].concentration"),
    ("analytes.0.standards.1.response.value", 5e-324, "analytes[0].standards[1].response.value"),
    ("samples.2.dilution_factor", 1e31, "samples[2].dilution_factor"),
])
def test_measured_values_beyond_any_measurement_are_refused(tmp_path, capsys, field, value, where) -> None:
    path = write(tmp_path, splice(with_value(field), "@@", repr(value)))
    checked, out, quantified, err = check_and_quantify(path, capsys)
    assert checked == 2 and quantified == 2
    assert f"{where}: expected a finite number, zero or from 1e-30 to 1e30 in size" in out, out
    assert where in err


def test_a_run_that_could_not_be_opened_again_is_not_saved(tmp_path) -> None:
    from dataclasses import replace

    from curvewright.io.errors import DocumentError

    run = small_run()
    path = tmp_path / "run.json"
    doc.save_run(run, path)
    before = path.read_bytes()
    huge = replace(run, samples=(replace(run.samples[0], dilution_factor=1e40), *run.samples[1:]))
    with pytest.raises(DocumentError) as info:
        doc.save_run(huge, path)
    assert "not saved, because the run holds values a run document cannot hold" in str(info.value)
    assert "samples[0].dilution_factor: expected a finite number, zero or from 1e-30 to 1e30" in str(info.value)
    assert path.read_bytes() == before


def parsed_counting_oversized(text: str) -> tuple[object, bool]:
    """The document parsed as the reader parses it, and whether a whole number was too long to keep."""
    from curvewright.io import run_document

    oversized: list[object] = []

    def whole(digits: str) -> object:
        value = run_document._whole_number(digits)
        if isinstance(value, run_document._Oversized):
            oversized.append(value)
        return value

    return json.loads(text, parse_int=whole), bool(oversized)


@pytest.mark.parametrize("text", [
    "[]", "{}", '"plain"', "12", "[" * 64 + "]" * 64, "[" * 65 + "]" * 65, '{"a":' * 64 + "1" + "}" * 64,
    '{"a":' * 65 + "1" + "}" * 65, '["' + "[" * 200 + '"]', '{"k": "\\ud800"}', '{"\\udfff": 1}',
    '{"k": "\\ud83d\\ude00"}', '["\\\\ud800"]', "[" + "9" * 301 + "]", '{"a": [[' + "1" * 400 + "]]}",
    "[" + "9" * 300 + "]", '[1.' + "5" * 400 + "]",
])
def test_the_quick_structure_check_never_passes_what_the_full_walk_refuses(text: str) -> None:
    """The walk that names each problem's path runs only when the quick check finds a reason: the
    quick check must find one whenever the walk would report something."""
    from curvewright.io import run_document

    document, oversized = parsed_counting_oversized(text)
    found = run_document._structure_problems(document)
    quick = run_document._may_have_structure_problems(text, document, oversized)
    assert quick or not found, found
    # it finds a reason where there is none only for a surrogate-like escape (a pair, or a backslash written out)
    assert not quick or found or text in ('{"k": "\\ud83d\\ude00"}', '["\\\\ud800"]')
    # a text given as a string may hold a lone surrogate itself (not escaped)
    lone = json.dumps(["\ud800"], ensure_ascii=False)
    assert run_document._may_have_structure_problems(lone, json.loads(lone), False)
    assert run_document._structure_problems(json.loads(lone))


# one document having each kind of structure problem, the sign's own test of it, and a word of its message
_ONE_OF_EACH_KIND = {
    "oversized": ("[" + "9" * 301 + "]", "a whole number of 301 digits"),
    "surrogate": ('{"k": "\\ud800"}', "an unpaired surrogate"),
    "nesting": ("[" * 65 + "]" * 65, "nested more than 64 levels deep"),
}


def test_every_kind_of_structure_problem_has_a_sign_the_quick_check_asks() -> None:
    """Every kind the full walk notes (read from its source) is a kind of the table the quick check
    asks; for a document having it, the kind's own sign and the quick check both say "maybe", and the
    walk reports it with its message."""
    import inspect
    import re

    from curvewright.io import run_document

    noted = set(re.findall(r'\bnote\("(\w+)"', inspect.getsource(run_document._structure_problems)))
    assert noted == set(run_document._STRUCTURE_KINDS) == set(_ONE_OF_EACH_KIND)
    for kind, (text, words) in _ONE_OF_EACH_KIND.items():
        document, oversized = parsed_counting_oversized(text)
        assert run_document._STRUCTURE_KINDS[kind](text, document, oversized), kind
        assert run_document._may_have_structure_problems(text, document, oversized), kind
        found = run_document._structure_problems(document)
        assert len(found) == 1 and words in found[0], (kind, found)
        # the other signs stay quiet, so each kind is seen by its own sign
        others = [k for k, sign in run_document._STRUCTURE_KINDS.items()
                  if k != kind and sign(text, document, oversized)]
        assert others == [], (kind, others)


def test_a_problem_of_a_kind_without_a_sign_is_an_error(monkeypatch) -> None:
    from curvewright.io import run_document

    kinds = dict(run_document._STRUCTURE_KINDS)
    del kinds["nesting"]
    monkeypatch.setattr(run_document, "_STRUCTURE_KINDS", kinds)
    with pytest.raises(KeyError, match="'nesting' has no sign"):
        run_document._structure_problems(json.loads("[" * 65 + "]" * 65))
