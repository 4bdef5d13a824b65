"""The run: one batch of standards and samples, as plain immutable values.

A run holds one or more analytes, each with its units, its standards and the calibration choices
made for it, the samples measured in the batch, the settings used to judge them, and the audit
trail of everything done to it. Every value keeps the text it was entered as, so nothing typed is
lost; excluding a standard sets a flag with a reason and never removes it.
"""

from __future__ import annotations

import math
from dataclasses import field, replace
from enum import Enum
from typing import Any, Mapping

from .values import frozen_value
from .errors import CurvewrightError
from .rounding import RoundingRule


class RunError(CurvewrightError, ValueError):
    """A run is inconsistent (an unknown analyte, a duplicate id…)."""


CENSORED_WORDS = ("ND", "BLQ", "BQL", "NQ", "<LOD", "<LOQ", "<LLOQ", ">ULOQ", "NR")
"""Tokens kept as censored readings rather than numbers (non-detect, below/above limits)."""


@frozen_value(slots=True)
class Reading:
    """One measured value as entered.

    ``value`` is the number (None when the reading is censored, absent or not a number), ``text``
    the characters the analyst entered or pasted, ``qualifier`` the censoring sign or word ("<", ">",
    "ND", "BLQ"…) and, for "<0.5"-style readings, ``limit`` the number after the sign. Text that is
    not a number is kept as typed (value None, no qualifier): it is never silently dropped, and the
    analysis reports the standard or sample as not usable with the reason.
    """

    value: float | None
    text: str = ""
    qualifier: str | None = None
    limit: float | None = None

    @classmethod
    def of(cls, value: float) -> "Reading":
        """A plain numeric reading, its text the shortest repr of the number."""
        return cls(float(value), repr(float(value)))

    @property
    def is_number(self) -> bool:
        return self.value is not None and math.isfinite(self.value)

    @property
    def is_censored(self) -> bool:
        return self.qualifier is not None

    @property
    def is_missing(self) -> bool:
        return self.value is None and self.qualifier is None and not self.text.strip()

    @property
    def is_unreadable(self) -> bool:
        """Text that is neither a number nor a censored value (kept as typed)."""
        return self.value is None and self.qualifier is None and bool(self.text.strip())


@frozen_value(slots=True)
class Standard:
    """One calibration standard injection of one analyte.

    ``concentration`` is the nominal concentration; when what was typed is not a number it is NaN
    and ``concentration_text`` keeps the text, so that nothing typed is lost (the analysis then
    reports the standard as not usable, with the reason).
    """

    id: str
    concentration: float
    response: Reading
    replicate: int = 1
    level: str = ""
    included: bool = True
    exclusion_reason: str = ""
    internal_standard_response: Reading | None = None
    concentration_text: str = ""
    anchor: bool = False
    """An anchor point of a logistic curve: fitted, never judged for acceptance, outside the range."""

    @property
    def has_concentration(self) -> bool:
        return math.isfinite(self.concentration)


class SampleKind(str, Enum):
    """What a sample is in the run. The calibration checks (ICV, CCV, a check standard, the calibration
    blank and the low-level check at the reporting limit) are judged against windows of their own in
    the acceptance profile, and bracket the samples measured between them."""

    UNKNOWN = "unknown"
    QC = "qc"
    BLANK = "blank"
    CHECK_STANDARD = "check_standard"
    ICV = "icv"
    CCV = "ccv"
    CALIBRATION_BLANK = "calibration_blank"
    LOW_LEVEL_CHECK = "low_level_check"

    @property
    def words(self) -> str:
        return _KIND_WORDS[self.value]

    def named(self, sample_id: str) -> str:
        """The kind and a sample's id in words, the kind said once: "ICV ICV-2" would repeat it, so an id
        that begins with the kind's words (in any case, followed by no letter or digit) stands alone
        ("ICV 10 (second source)", "CCV-1"); any other id follows the kind ("check standard Check 5 mg/L",
        "QC sample QC low")."""
        words = self.words
        head, rest = sample_id[:len(words)], sample_id[len(words):]
        if head.casefold() == words.casefold() and not rest[:1].isalnum():
            return sample_id
        return f"{words} {sample_id}"

    @property
    def is_check(self) -> bool:
        """A calibration check: judged against its own window, and bracketing the samples around it."""
        return self in (SampleKind.CHECK_STANDARD, SampleKind.ICV, SampleKind.CCV, SampleKind.CALIBRATION_BLANK,
                        SampleKind.LOW_LEVEL_CHECK)


_KIND_WORDS = {
    "unknown": "unknown", "qc": "QC sample", "blank": "blank", "check_standard": "check standard",
    "icv": "ICV", "ccv": "CCV", "calibration_blank": "calibration blank", "low_level_check": "reporting-limit check",
}


@frozen_value(slots=True)
class Measurement:
    """One replicate response of one analyte in a sample."""

    analyte: str
    replicate: int
    response: Reading
    internal_standard_response: Reading | None = None


@frozen_value(slots=True)
class Addition:
    """One replicate response of a portion of a sample spiked for standard additions.

    ``added`` is the concentration of the analyte added to the portion (0 for the unspiked portion), in
    the analyte's concentration unit as measured (before the sample's dilution factor is applied).
    """

    analyte: str
    added: float
    replicate: int
    response: Reading
    internal_standard_response: Reading | None = None


class KeepsText:
    """Room for one text an outer layer works out from an immutable value and keeps with it, as a
    cached property keeps what it works out (the sample's canonical JSON in the run's content hash,
    :mod:`curvewright.io.integrity`). It is not a field: equality, copies made by
    :func:`dataclasses.replace` and pickles leave it out, so a changed value never carries it over."""

    __slots__ = ("_kept_text",)


@frozen_value(slots=True)
class Sample(KeepsText):
    """A sample measured in the run: an unknown, a QC sample, a blank or a check standard.

    ``nominal`` holds the known concentration of QC samples and check standards per analyte, as
    (analyte, concentration) pairs, in the concentration unit of that analyte. ``additions`` holds the
    sample's standard-addition series, if it was measured so (:mod:`.addition_series`).
    """

    id: str
    kind: SampleKind = SampleKind.UNKNOWN
    run_order: int | None = None
    dilution_factor: float = 1.0
    measurements: tuple[Measurement, ...] = ()
    nominal: tuple[tuple[str, float], ...] = ()
    additions: tuple[Addition, ...] = ()

    def measurements_of(self, analyte: str) -> tuple[Measurement, ...]:
        return tuple(m for m in self.measurements if m.analyte == analyte)

    def additions_of(self, analyte: str) -> tuple[Addition, ...]:
        return tuple(a for a in self.additions if a.analyte == analyte)

    def nominal_of(self, analyte: str) -> float | None:
        for name, value in self.nominal:
            if name == analyte:
                return value
        return None


@frozen_value
class Analyte:
    """One analyte: units, standards, and the calibration choice with its reason."""

    name: str
    concentration_unit: str
    response_unit: str
    standards: tuple[Standard, ...] = ()
    model: str = "linear"
    weighting: str = "none"
    choice_reason: str = ""
    uses_internal_standard: bool = False

    def standard(self, standard_id: str) -> Standard:
        for s in self.standards:
            if s.id == standard_id:
                return s
        raise RunError(f"analyte {self.name!r}: there is no standard with id {standard_id!r}.")


@frozen_value
class RunSettings:
    """How the run is judged and reported."""

    confidence_level: float = 0.95
    interval: str = "band"
    limits_method: str = "residual_sd"
    acceptance_profile: str = "general"
    custom_profile: Mapping[str, Any] | None = None
    rounding: RoundingRule = field(default_factory=RoundingRule)
    level_tolerance: float | None = None
    """Relative tolerance within which standards of different nominal concentration count as one level
    (standards made up by mass); None: a level is the same label or the same nominal concentration."""
    method: Mapping[str, Any] | None = None
    """The validated method the run follows: a copy of the method file's content (see
    :mod:`curvewright.core.method`), so that the run is judged as validated whatever version reopens it."""

    def kept_profile(self) -> Any:
        """The acceptance profile read from ``custom_profile`` when these settings were read, or None
        (:meth:`keep_profile`)."""
        return self.__dict__.get("_kept_profile")

    def keep_profile(self, profile: Any) -> None:
        """Keep the profile read from ``custom_profile`` with these settings, as a cached property keeps
        what it works out, so that it is read once. It is not a field: equality and copies made by
        :func:`dataclasses.replace` leave it out, so changed settings never carry it over."""
        object.__setattr__(self, "_kept_profile", profile)


@frozen_value
class AuditEntry:
    """One entry of the append-only audit trail; ``hash`` chains it to the entry before.

    ``user`` is the operating-system login; ``analyst`` and ``analyst_id`` the person's full name and
    laboratory ID as set in the settings or given on the command line (empty when not set);
    ``content_sha256`` the SHA-256 of the run's content after the change (empty in entries written
    before it was recorded).
    """

    time_utc: str
    user: str
    action: str
    details: Mapping[str, Any]
    previous_hash: str
    hash: str
    analyst: str = ""
    analyst_id: str = ""
    content_sha256: str = ""


SIGNATURE_ROLES = ("analyst", "reviewer", "approver")


@frozen_value
class Signature:
    """A person's signature on the run's content, or (``role`` "approval withdrawn") the withdrawal of
    an approval with its reason in ``meaning``.

    ``content_sha256`` is the content signed and ``trail_sha256`` the hash of the last audit entry
    when signing; with a laboratory key, ``signature`` is the Ed25519 signature (hex) of both and of
    the person, role, meaning and time, made with the key whose public half is ``public_key`` (hex).
    """

    role: str
    name: str
    person_id: str
    login: str
    meaning: str
    time_utc: str
    content_sha256: str
    trail_sha256: str
    public_key: str = ""
    signature: str = ""


@frozen_value
class Run:
    """One analytical batch."""

    name: str
    analytes: tuple[Analyte, ...]
    samples: tuple[Sample, ...] = ()
    settings: RunSettings = field(default_factory=RunSettings)
    description: str = ""
    audit: tuple[AuditEntry, ...] = ()
    signatures: tuple[Signature, ...] = ()
    instrument: str = ""
    """The instrument the batch was measured on, as the laboratory names it (with its ID)."""

    @property
    def approval(self) -> Signature | None:
        """The approval in force (the last approver's signature not withdrawn since), if any: the run is
        then locked against edits."""
        for s in reversed(self.signatures):
            if s.role == "approval withdrawn":
                return None
            if s.role == "approver":
                return s
        return None

    def analyte(self, name: str) -> Analyte:
        for a in self.analytes:
            if a.name == name:
                return a
        known = ", ".join(repr(a.name) for a in self.analytes) or "none"
        raise RunError(f"there is no analyte {name!r} in run {self.name!r} (analytes: {known}).")

    def with_analyte(self, analyte: Analyte) -> "Run":
        """A copy with the analyte of the same name replaced."""
        self.analyte(analyte.name)
        return replace(self, analytes=tuple(analyte if a.name == analyte.name else a for a in self.analytes))
