"""Validated methods: what validation fixed for a calibration, applied to every run of the method.

A method file (JSON, format ``curvewright-method/1``; schema in ``resources/method.schema.json``)
fixes, per analyte, the calibration function (model and weighting), the units and the concentration
levels of the standards, and for the run the acceptance profile (by id or in full, with its check
windows), the rounding rule, the confidence level, the interval and the limits method. A run that
follows a method stores a copy of it and its SHA-256, so that it is judged as validated even when it
is reopened by a later version. With a method, the model comparison is shown for information only;
departing from the method's model needs a reason, which the audit trail records.
"""

from __future__ import annotations

import hashlib
import json
import math
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Mapping

from .acceptance import AcceptanceProfile, load_profile
from .errors import CurvewrightError
from .limits import LIMIT_METHODS, limit_methods_words
from .models import Model
from .rounding import RoundingRule
from .weighting import Weighting

METHOD_FORMAT = "curvewright-method/1"


class MethodError(CurvewrightError, ValueError):
    """A method file that cannot be used, naming the field and the reason."""


@dataclass(frozen=True)
class MethodAnalyte:
    name: str
    concentration_unit: str
    response_unit: str
    model: str
    weighting: str
    levels: tuple[float, ...] = ()
    uses_internal_standard: bool = False


@dataclass(frozen=True)
class Method:
    """A validated method as read from its file (``mapping`` keeps the file's content, for the copy a
    run stores)."""

    id: str
    name: str
    version: str
    source: str
    analytes: tuple[MethodAnalyte, ...]
    profile: AcceptanceProfile
    rounding: RoundingRule | None
    confidence_level: float | None
    interval: str | None
    limits_method: str | None
    mapping: Mapping[str, Any]

    @property
    def sha256(self) -> str:
        """SHA-256 of the method's content in canonical JSON (keys sorted, no spaces, UTF-8)."""
        return canonical_sha256(self.mapping)

    @property
    def label(self) -> str:
        return f"{self.id} version {self.version}" if self.version else self.id

    def analyte(self, name: str) -> MethodAnalyte | None:
        return next((a for a in self.analytes if a.name == name), None)

    def missing_levels(self, name: str, concentrations: object, tolerance: float = 1e-9) -> tuple[float, ...]:
        """The method's levels of analyte ``name`` that no standard in the fit stands at."""
        fixed = self.analyte(name)
        if fixed is None:
            return ()
        present = [float(c) for c in concentrations]  # type: ignore[attr-defined]
        return tuple(level for level in fixed.levels
                     if not any(math.isclose(c, level, rel_tol=tolerance, abs_tol=tolerance) for c in present))


def canonical_sha256(mapping: Mapping[str, Any]) -> str:
    text = json.dumps(mapping, sort_keys=True, ensure_ascii=False, separators=(",", ":"), allow_nan=False)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def load_method(path: str | Path) -> Method:
    """Read a method file."""
    path = Path(path)
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise MethodError(f"{path}: cannot read the method file ({exc}).") from None
    return method_from_mapping(data, str(path))


def method_from_mapping(data: Any, origin: str = "method") -> Method:
    """A method from parsed JSON; every problem is named by its field."""
    problems: list[str] = []

    def fail(where: str, why: str) -> None:
        problems.append(f"{where}: {why}")

    if not isinstance(data, Mapping):
        raise MethodError(f"{origin}: a method file is a JSON object.")
    if data.get("format") != METHOD_FORMAT:
        raise MethodError(f"{origin}: 'format' must be {METHOD_FORMAT!r}, found {data.get('format')!r}.")
    text = {}
    for key, required in (("id", True), ("name", True), ("version", False), ("source", False)):
        value = data.get(key, "")
        if not isinstance(value, str) or (required and not value.strip()):
            fail(key, "must be text" + (" (not empty)" if required else ""))
            value = ""
        text[key] = value.strip()
    analytes = []
    raw = data.get("analytes")
    if not isinstance(raw, list) or not raw:
        fail("analytes", "must be a list of at least one analyte")
        raw = []
    for i, a in enumerate(raw):
        where = f"analytes[{i}]"
        if not isinstance(a, Mapping):
            fail(where, "must be an object")
            continue
        name = a.get("name")
        if not isinstance(name, str) or not name.strip():
            fail(f"{where}.name", "must be non-empty text")
            continue
        try:
            model = Model.parse(a.get("model", "linear")).value
        except CurvewrightError as exc:
            fail(f"{where}.model", str(exc))
            model = "linear"
        try:
            weighting = Weighting.parse(a.get("weighting", "none")).value
        except CurvewrightError as exc:
            fail(f"{where}.weighting", str(exc))
            weighting = "none"
        levels = a.get("levels", [])
        if not isinstance(levels, list) or not all(isinstance(v, (int, float)) and not isinstance(v, bool)
                                                   and math.isfinite(v) and v >= 0 for v in levels):
            fail(f"{where}.levels", "must be a list of concentrations of zero or more")
            levels = []
        units = [a.get(k, "") for k in ("concentration_unit", "response_unit")]
        if not all(isinstance(u, str) for u in units):
            fail(where, "units must be text")
            units = ["", ""]
        analytes.append(MethodAnalyte(name.strip(), units[0].strip(), units[1].strip(), model, weighting,
                                      tuple(float(v) for v in levels), bool(a.get("uses_internal_standard", False))))
    profile: AcceptanceProfile | None = None
    given = data.get("profile", "general")
    try:
        profile = (AcceptanceProfile.from_mapping(given, f"{origin} profile") if isinstance(given, Mapping)
                   else load_profile(str(given)))
    except CurvewrightError as exc:
        fail("profile", str(exc))
    rounding = None
    if data.get("rounding") is not None:
        r = data["rounding"]
        try:
            rounding = RoundingRule(r.get("kind", "significant"), r.get("digits", 3), r.get("tie", "half_up"))
        except (AttributeError, TypeError, CurvewrightError) as exc:
            fail("rounding", str(exc))
    level = data.get("confidence_level")
    if level is not None and (isinstance(level, bool) or not isinstance(level, (int, float)) or not 0 < level < 1):
        fail("confidence_level", f"{level!r} must lie between 0 and 1 (e.g. 0.95)")
        level = None
    interval = data.get("interval")
    if interval is not None and interval not in ("band", "symmetric"):
        fail("interval", f"{interval!r} is not 'band' or 'symmetric'")
        interval = None
    limits = data.get("limits_method")
    if limits is not None and limits not in LIMIT_METHODS:
        fail("limits_method", f"{limits!r} is not {limit_methods_words()}")
        limits = None
    if problems or profile is None:
        raise MethodError(f"{origin}: the method file cannot be used: " + "; ".join(problems))
    return Method(text["id"], text["name"], text["version"], text["source"], tuple(analytes), profile, rounding,
                  None if level is None else float(level), interval, limits, dict(data))
