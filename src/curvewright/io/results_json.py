"""The results for scripts as JSON text, written piece by piece.

A run of a million unknowns must not become one string of a gigabyte, nor a million dictionaries
held at once. :func:`write_json` writes a value to a text stream as it goes: objects and lists are
indented one space per level, as ``json.dumps(value, indent=1)`` writes them, except that a row of
a table (an object whose values are numbers, words, null, or flat lists and objects of them) is
written on one line. A long list of rows can be given as :class:`Rows`, which makes each row only
when it is written.

Numbers that are not finite (NaN, ±inf) are written as ``null``: JSON has no such numbers, and the
flags of the row say why a value is missing.
"""

from __future__ import annotations

import json
import math
from typing import Any, Callable, Iterable, Iterator, Sequence, TextIO

_SCALARS = (str, int, float, bool, type(None))
_FLUSH_EVERY = 512
"""Rows gathered before they are handed to the stream in one write."""


class Rows:
    """A long list of JSON rows, each made from one item only when it is written.

    Each row is an object of numbers, words, null, and flat lists or objects of them.

    ``len()`` is the number of items. Pickled (to pass a result between processes) it becomes the
    plain list of its rows.
    """

    __slots__ = ("_items", "_make")

    def __init__(self, items: Sequence[Any], make: Callable[[Any], dict[str, Any]]) -> None:
        self._items = items
        self._make = make

    def __iter__(self) -> Iterator[dict[str, Any]]:
        return (self._make(item) for item in self._items)

    def __len__(self) -> int:
        return len(self._items)

    def __reduce__(self) -> tuple[type, tuple[list[dict[str, Any]]]]:
        return (list, (list(self),))


def finite(value: Any) -> Any:
    """``value`` with every non-finite float, at any depth, replaced by None; numpy arrays and
    numbers become lists and Python numbers."""
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, _SCALARS):
        return value
    if isinstance(value, (list, tuple)):
        return [finite(v) for v in value]
    if isinstance(value, dict):
        return {k: finite(v) for k, v in value.items()}
    if isinstance(value, Rows):
        return value
    if hasattr(value, "tolist"):
        return finite(value.tolist())
    return value


def _flat(value: Any) -> bool:
    """A scalar, or a list/object of scalars."""
    if isinstance(value, _SCALARS):
        return True
    if isinstance(value, (list, tuple)):
        return all(isinstance(v, _SCALARS) for v in value)
    if isinstance(value, dict):
        return all(isinstance(v, _SCALARS) for v in value.values())
    return False


def _is_row(value: Any) -> bool:
    return isinstance(value, dict) and all(_flat(v) for v in value.values())


def _one_line(value: Any) -> str:
    return json.dumps(finite(value), ensure_ascii=False, allow_nan=False, separators=(", ", ": "))


def _refuse(value: Any) -> Any:
    raise TypeError(f"{type(value).__name__} is not a JSON value")


_C_ENCODER = json.encoder.c_make_encoder  # type: ignore[attr-defined]
_ROW_ENCODER = None if _C_ENCODER is None else _C_ENCODER(
    None, _refuse, json.encoder.encode_basestring, None, ": ", ", ", False, False, False)
"""The JSON encoder's own C encoder, made once, with the settings of ``json.dumps(row,
ensure_ascii=False, allow_nan=False, separators=(", ", ": "))`` (a flat row cannot hold itself,
so circular references are not looked for)."""


def _row_line(row: dict[str, Any]) -> str:
    """A row of :class:`Rows` on one line: its maker gives numbers, words and flat lists, so the JSON
    encoder takes it as it is unless a number is not finite or is a numpy scalar."""
    try:
        if _ROW_ENCODER is None:
            return json.dumps(row, ensure_ascii=False, allow_nan=False, separators=(", ", ": "))
        return "".join(_ROW_ENCODER(row, 0))
    except (ValueError, TypeError):
        return _one_line(row)


_encode_text = json.encoder.encode_basestring  # type: ignore[attr-defined]
"""The JSON encoder's own quoting of text (``ensure_ascii=False``)."""


def _scalar(value: Any) -> str:
    """A scalar's JSON text, as ``json.dumps`` writes it (plain words, numbers, true/false and null
    are written here directly, the same way the encoder writes them)."""
    kind = type(value)
    if kind is str:
        return _encode_text(value)
    if kind is float:
        return float.__repr__(value) if math.isfinite(value) else "null"
    if kind is int:
        return int.__repr__(value)
    if value is None:
        return "null"
    if kind is bool:
        return "true" if value else "false"
    return json.dumps(finite(value), ensure_ascii=False, allow_nan=False)


class Written:
    """A value's JSON text made beforehand (by the process that analysed a run), for its place in
    the output: at the top (``level`` 0) or as an item of the top-level list (``level`` 1, a row
    then on one line). :func:`write_json` writes the text as it stands."""

    __slots__ = ("level", "text")

    def __init__(self, value: Any, level: int) -> None:
        self.level = level
        self.text = _one_line(value) if level and _is_row(value) else "".join(_pieces(value, level))


def _pieces(value: Any, level: int) -> Iterable[str]:
    """The JSON text of ``value`` at indentation ``level``, in pieces."""
    if isinstance(value, Written):
        if value.level != level:
            raise ValueError(f"JSON text made for level {value.level} placed at level {level}")
        yield value.text
    elif isinstance(value, dict):
        if not value:
            yield "{}"
            return
        inner = "\n" + " " * (level + 1)
        yield "{"
        for i, (key, item) in enumerate(value.items()):
            yield ("," if i else "") + inner + _encode_text(str(key)) + ": "
            yield from _pieces(item, level + 1)
        yield "\n" + " " * level + "}"
    elif isinstance(value, (list, tuple, Rows)):
        if len(value) == 0:
            yield "[]"
            return
        inner = "\n" + " " * (level + 1)
        made_as_rows = isinstance(value, Rows)  # its maker gives rows: no need to look inside each
        yield "["
        for i, item in enumerate(value):
            yield "," if i else ""
            if made_as_rows:
                yield inner + _row_line(item)
            elif isinstance(item, Written):
                yield inner
                yield from _pieces(item, level + 1)
            elif _is_row(item):
                yield inner + _one_line(item)
            else:
                yield inner
                yield from _pieces(item, level + 1)
        yield "\n" + " " * level + "]"
    elif hasattr(value, "tolist") and not isinstance(value, _SCALARS):
        yield from _pieces(value.tolist(), level)
    else:
        yield _scalar(value)


def write_json(value: Any, stream: TextIO) -> None:
    """Write ``value`` to ``stream`` as JSON text followed by a newline, in pieces (see the module)."""
    batch: list[str] = []
    for piece in _pieces(value, 0):
        batch.append(piece)
        if len(batch) >= _FLUSH_EVERY:
            stream.write("".join(batch))
            batch.clear()
    batch.append("\n")
    stream.write("".join(batch))
