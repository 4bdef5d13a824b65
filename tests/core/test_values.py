"""``frozen_value`` against ``dataclass(frozen=True)``: the same class body declared both ways must
show, compare and hash alike (the reference is the standard library's own generated methods)."""

from __future__ import annotations

import copy
import dataclasses
import math
from dataclasses import dataclass, field

import pytest

from curvewright.core.values import frozen_value


def _bodies():
    """Invented class bodies covering what a declaration may hold: defaults and factories, fields
    left out of the repr, the comparison or the hash, a method of its own, slots, a base class."""

    class Plain:
        name: str
        amount: float
        unit: str = "ng/mL"

    class Options:
        level: float = 0.95
        tags: tuple[str, ...] = ()
        notes: str = field(default="", repr=False)
        kept: object = field(default=None, compare=False)
        weight: float = field(default=1.0, hash=False)
        extra: int = field(default=0, hash=True, compare=False)

    class Single:
        value: float

    class Nothing:
        pass

    class OwnEq:
        key: str
        other: float = 0.0

        def __eq__(self, o: object) -> bool:
            return isinstance(o, OwnEq) and o.key.lower() == self.key.lower()

    class OwnHash:
        key: str

        def __hash__(self) -> int:
            return 7

    class OwnRepr:
        key: str

        def __repr__(self) -> str:
            return f"<{self.key}>"

    class Listed:
        items: list = field(default_factory=list)

    class Base:
        __slots__ = ()

        def describe(self) -> str:
            return type(self).__name__

    class Derived(Base):
        code: int = 3

    return [Plain, Options, Single, Nothing, OwnEq, OwnHash, OwnRepr, Listed, Derived]


def _twins(body, **options):
    """The body declared by the standard library and by ``frozen_value`` (two fresh classes of the
    same name, so that their reprs can be compared)."""
    namespace = {k: v for k, v in body.__dict__.items() if k not in ("__dict__", "__weakref__")}
    ours = frozen_value(type(body.__name__, body.__bases__, dict(namespace)), **options)
    theirs = dataclass(frozen=True, **options)(type(body.__name__, body.__bases__, dict(namespace)))
    return ours, theirs


def _arguments(cls):
    samples = {"name": "Zinc", "amount": 2.5, "unit": "µg/L", "level": 0.99, "tags": ("a", "b"), "notes": "n",
               "kept": [1], "weight": 0.5, "extra": 4, "value": float("nan"), "key": "Ab", "other": -0.0,
               "items": [1, (2, 3)], "code": 9}
    return {f.name: samples[f.name] for f in dataclasses.fields(cls) if f.init}


def _outcome(fn, *args):
    """What a call gives: ("ok", its value) or ("raised", the exception's type)."""
    try:
        return "ok", fn(*args)
    except Exception as exc:  # noqa: BLE001 - compared between the two declarations
        return "raised", type(exc)


@pytest.mark.parametrize("slots", [False, True])
@pytest.mark.parametrize("body", _bodies(), ids=lambda b: b.__name__)
def test_the_same_repr_equality_and_hash_as_the_generated_methods(body, slots) -> None:
    ours, theirs = _twins(body, slots=slots)
    kwargs = _arguments(theirs)
    a, b = ours(**kwargs), theirs(**kwargs)
    assert repr(a) == repr(b)
    assert [f.name for f in dataclasses.fields(a)] == [f.name for f in dataclasses.fields(b)]
    same_a, same_b = ours(**kwargs), theirs(**kwargs)
    assert (a == same_a) == (b == same_b)
    assert (a != same_a) == (b != same_b)
    assert (a == a) == (b == b)  # a NaN field compares by identity inside the tuple
    assert (ours.__hash__ is None) == (theirs.__hash__ is None)
    assert _outcome(hash, a) == _outcome(hash, b)  # the same number, or the same error (a list inside)
    for name in kwargs:  # a value changed in one field at a time
        changed = {**kwargs, name: "changed"}
        assert (ours(**changed) == a) == (theirs(**changed) == b), name
    assert a.__eq__(b) is NotImplemented or body.__name__ == "OwnEq"
    assert (a == 3) is False and (b == 3) is False
    name = next(iter(kwargs), "anything")
    assert _outcome(setattr, a, name, 1) == _outcome(setattr, b, name, 1) != ("ok", None)
    if kwargs:
        first = next(iter(kwargs))
        assert repr(dataclasses.replace(a, **{first: kwargs[first]})) == repr(a)
    assert repr(copy.deepcopy(a)) == repr(a)


def test_a_value_inside_itself_is_shown_as_dots() -> None:
    ours, theirs = _twins(_bodies()[7])  # Listed
    a, b = ours(), theirs()
    a.items.append(a)
    b.items.append(b)
    assert repr(a) == repr(b) == "Listed(items=[...])"


def test_values_of_different_classes_are_never_equal() -> None:
    plain_ours, plain_theirs = _twins(_bodies()[0])
    other_ours, _ = _twins(_bodies()[0])
    kwargs = _arguments(plain_theirs)
    assert plain_ours(**kwargs) != other_ours(**kwargs)
    assert plain_ours(**kwargs) != plain_theirs(**kwargs)


def test_without_eq_values_compare_by_identity() -> None:
    ours, theirs = _twins(_bodies()[0], eq=False)
    kwargs = _arguments(theirs)
    a = ours(**kwargs)
    assert a != ours(**kwargs) and a == a
    assert hash(a) == object.__hash__(a)
    assert repr(a) == repr(theirs(**kwargs))


def test_the_run_values_compare_and_show_as_before() -> None:
    """A demo run and its copy: equal, the same hash, and the repr written field by field."""
    from curvewright.core.run import Reading, Run
    from curvewright.io.run_document import open_run
    from tests.io.helpers import DEMO_RUNS

    run = open_run(DEMO_RUNS[0]).run
    again = open_run(DEMO_RUNS[0]).run
    assert run == again and hash(run.analytes[0].standards[0]) == hash(again.analytes[0].standards[0])
    assert run != dataclasses.replace(run, name=run.name + " (copy)")
    reading = Reading(1.5, "1.5")
    names = [f.name for f in dataclasses.fields(Reading) if f.repr]
    assert repr(reading) == "Reading(" + ", ".join(f"{n}={getattr(reading, n)!r}" for n in names) + ")"
    assert math.isnan(Reading(float("nan"), "x").value)
    assert isinstance(run, Run)
