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
from typing import Any, Callable, Iterator, Sequence, TextIO

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
    kind = type(value)
    if kind is str or kind is int or kind is bool or value is None:  # the most common, as they are
        return value
    if kind is dict:
        return {k: finite(v) for k, v in value.items()}
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
    return _ONE_LINE.encode(finite(value))


_ONE_LINE = json.JSONEncoder(ensure_ascii=False, allow_nan=False, separators=(", ", ": "))
"""The encoder ``json.dumps(value, ensure_ascii=False, allow_nan=False, separators=(", ", ": "))``
would make for each row, made once (it keeps no state between calls)."""


def _refuse(value: Any) -> Any:
    raise TypeError(f"{type(value).__name__} is not a JSON value")


_C_ENCODER = json.encoder.c_make_encoder  # type: ignore[attr-defined]
_ROW_ENCODER = None if _C_ENCODER is None else _C_ENCODER(
    None, _refuse, json.encoder.encode_basestring, None, ": ", ", ", False, False, False)
"""The JSON encoder's own C encoder, made once, with the settings of ``json.dumps(row,
ensure_ascii=False, allow_nan=False, separators=(", ", ": "))`` (a flat row cannot hold itself,
so circular references are not looked for)."""


def _row_line(row: dict[str, Any]) -> str:
    """A row on one line, as :func:`_one_line` writes it: a row of numbers, words and flat lists (as
    the maker of :class:`Rows` gives) the JSON encoder takes as it is; only a row with a number that is
    not finite or a numpy value goes through :func:`finite` first."""
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
        if level and _is_row(value):
            self.text = _row_line(value)
        else:
            out: list[str] = []
            _write(value, level, out, None)
            self.text = "".join(out)


_PLAIN = {str: _encode_text, int: int.__repr__, float: _scalar, bool: _scalar, type(None): _scalar}
"""The scalars of exactly these types and how each is written (a subclass, such as a numpy number or
an enumeration, goes the long way)."""


def _write(value: Any, level: int, out: list[str], flush: Callable[[], None] | None) -> None:
    """Append the JSON text of ``value`` at indentation ``level`` to ``out``, in pieces; ``flush``
    (when given) is called after each row of a long list, to hand the pieces gathered on."""
    plain = _PLAIN.get(type(value))
    if plain is not None:
        out.append(plain(value))
    elif isinstance(value, Written):
        if value.level != level:
            raise ValueError(f"JSON text made for level {value.level} placed at level {level}")
        out.append(value.text)
    elif isinstance(value, dict):
        if not value:
            out.append("{}")
            return
        inner = "\n" + " " * (level + 1)
        out.append("{")
        first = True
        for key, item in value.items():
            out.append(("" if first else ",") + inner + _encode_text(str(key)) + ": ")
            first = False
            plain = _PLAIN.get(type(item))
            if plain is not None:  # a plain value written here, as _write writes it
                out.append(plain(item))
            else:
                _write(item, level + 1, out, flush)
        out.append("\n" + " " * level + "}")
    elif isinstance(value, (list, tuple, Rows)):
        if len(value) == 0:
            out.append("[]")
            return
        inner = "\n" + " " * (level + 1)
        out.append("[")
        if isinstance(value, Rows):  # its maker gives rows: no need to look inside each
            comma = ""
            for item in value:
                out.append(comma + inner + _row_line(item))
                comma = ","
                if flush is not None:
                    flush()
        else:
            first = True
            for item in value:
                if not first:
                    out.append(",")
                first = False
                if isinstance(item, Written):
                    out.append(inner)
                    _write(item, level + 1, out, flush)
                elif _is_row(item):
                    out.append(inner + _row_line(item))
                else:
                    out.append(inner)
                    _write(item, level + 1, out, flush)
        out.append("\n" + " " * level + "]")
    elif hasattr(value, "tolist") and not isinstance(value, _SCALARS):
        _write(value.tolist(), level, out, flush)
    else:
        out.append(_scalar(value))


def write_json(value: Any, stream: TextIO) -> None:
    """Write ``value`` to ``stream`` as JSON text followed by a newline, in pieces (see the module)."""
    out: list[str] = []

    def flush() -> None:
        if len(out) >= _FLUSH_EVERY:
            stream.write("".join(out))
            out.clear()

    _write(value, 0, out, flush)
    out.append("\n")
    stream.write("".join(out))
