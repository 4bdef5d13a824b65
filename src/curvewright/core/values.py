"""Immutable value classes declared with less work when their module is loaded.

``@frozen_value`` makes the same class as ``@dataclass(frozen=True)`` (fields, ``__init__``,
``dataclasses.replace``, ``fields``, pickling and the frozen ``__setattr__``/``__delattr__`` all
come from :mod:`dataclasses`), but its ``__repr__``, ``__eq__`` and ``__hash__`` are shared
functions reading the class's field names, instead of three functions whose source is written and
compiled for every class at every start of the program. They give what the generated ones give:

- ``repr``: ``Name(field=repr(value), ...)`` over the fields shown in the repr, ``...`` for a value
  met again inside itself;
- ``==``: the tuples of the compared fields, for two values of exactly the same class
  (``NotImplemented`` otherwise);
- ``hash``: the hash of the tuple of the fields that take part in it.

A method the class defines itself is kept, and ``__hash__`` follows the same rules as
:mod:`dataclasses` for a frozen class. ``tests/core/test_values.py`` holds each to the generated one.
"""

from __future__ import annotations

import dataclasses
from _thread import get_ident
from operator import attrgetter
from typing import Any, Callable, TypeVar

T = TypeVar("T")


def frozen_value(cls: type[T] | None = None, /, *, eq: bool = True, slots: bool = False) -> Any:
    """``@dataclass(frozen=True, eq=eq, slots=slots)`` with shared ``__repr__``, ``__eq__`` and
    ``__hash__`` (see the module)."""

    def wrap(cls: type[T]) -> type[T]:
        own = dict(cls.__dict__)
        made = dataclasses.dataclass(cls, frozen=True, repr=False, eq=False, slots=slots)
        fields = dataclasses.fields(made)
        if "__repr__" not in own:
            made.__repr__ = _repr_of(tuple(f.name for f in fields if f.repr))  # type: ignore[assignment]
        if eq:
            if "__eq__" not in own:
                made.__eq__ = _eq_of(_key([f.name for f in fields if f.compare]))  # type: ignore[assignment]
            explicit = own.get("__hash__", dataclasses.MISSING)
            if explicit is dataclasses.MISSING or (explicit is None and "__eq__" in own):
                hashed = [f.name for f in fields if (f.compare if f.hash is None else f.hash)]
                made.__hash__ = _hash_of(_key(hashed))  # type: ignore[assignment]
        return made

    return wrap if cls is None else wrap(cls)


def _key(names: list[str]) -> Callable[[Any], tuple[Any, ...]]:
    """The tuple of the named attributes of a value (a tuple even for none or one name)."""
    if len(names) > 1:
        return attrgetter(*names)
    if names:
        one = attrgetter(names[0])
        return lambda value: (one(value),)
    return lambda value: ()


def _eq_of(key: Callable[[Any], tuple[Any, ...]]) -> Callable[[Any, Any], Any]:
    def __eq__(self: Any, other: Any) -> Any:
        if other.__class__ is self.__class__:
            return key(self) == key(other)
        return NotImplemented

    return __eq__


def _hash_of(key: Callable[[Any], tuple[Any, ...]]) -> Callable[[Any], int]:
    def __hash__(self: Any) -> int:
        return hash(key(self))

    return __hash__


_SHOWING: set[tuple[int, int]] = set()
"""The values whose repr is being made, by thread: a value met again inside itself is shown as ``...``."""


def _repr_of(names: tuple[str, ...]) -> Callable[[Any], str]:
    def __repr__(self: Any) -> str:
        key = (id(self), get_ident())
        if key in _SHOWING:
            return "..."
        _SHOWING.add(key)
        try:
            return self.__class__.__qualname__ + "(" + ", ".join(
                f"{name}={getattr(self, name)!r}" for name in names) + ")"
        finally:
            _SHOWING.discard(key)

    return __repr__
