"""Which thousands separator a pasted block shows, read as the paste preview reads it."""

from __future__ import annotations

from curvewright.io.number_text import parse_reading
from curvewright.io.paste import read_block


def test_a_separator_shown_one_way_only_is_taken() -> None:
    block = read_block("Conc\tResponse\n1\t1 234,5\n2\t2 480,0\n4\t4 960,25\n", "standards")
    assert block.thousands == " "
    assert [parse_reading(r[1], block.decimal_mark, block.thousands).reading.value for r in block.rows] == [
        1234.5, 2480.0, 4960.25]
    assert "thousands separator a space (shown by 3 value(s) such as '1 234,5')" in block.thousands_note
    point = read_block("1\t1,234.5\n2\t2,480.0\n4\t4960.25\n", "standards")
    assert point.thousands == "," and point.decimal_mark == "."


def test_plain_values_show_no_separator() -> None:
    # "1,250" reads as 1.25 or 1250: it shows nothing, and the block asks
    block = read_block("1\t1,250\n2\t2,500\n", "standards")
    assert block.thousands is None and block.thousands_note == ""


def test_two_separators_or_one_that_is_the_decimal_mark_are_not_taken() -> None:
    mixed = read_block("1\t1 234,5\n2\t2.480,0\n", "standards")
    assert mixed.thousands is None and "choose the separator" in mixed.thousands_note
    # the block's values show a decimal point ("0.5"), and also group thousands with one
    clash = read_block("0.5\t0.101\n1\t1.234.567\n", "standards", decimal_mark=".")
    assert clash.thousands is None and "group thousands with the decimal mark '.'" in clash.thousands_note


def test_a_separator_chosen_in_the_preview_overrides_what_the_block_shows() -> None:
    block = read_block("Conc\tResponse\n1\t1.234,5\n2\t2.480,0\n", "standards")
    refused = block.with_fields({}, thousands="")
    assert refused.thousands is None and "refused" in refused.thousands_note
    chosen = read_block("1\t1,250\n2\t2,500\n", "standards").with_fields({}, thousands=",")
    assert chosen.thousands == "," and chosen.decimal_mark == "."
