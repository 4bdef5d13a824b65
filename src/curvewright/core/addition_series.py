"""A run's standard-addition series: each sample's spiked portions read as one extrapolated concentration.

For every sample with additions of an analyte, the replicate responses of each addition are averaged
(the ratio to the internal standard when the analyte uses one), and
:func:`~curvewright.core.standard_additions.standard_additions` is applied to the means, weighted by
their replicate counts, at the run's confidence level. The dilution factor multiplies the
concentration, its standard error and both interval ends. A reading that is not a number is named and
left out; a series that cannot be extrapolated says why.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from .errors import CurvewrightError
from .run import Analyte, Reading, Run
from .standard_additions import StandardAdditions, standard_additions
from .notation import entered


@dataclass(frozen=True, eq=False)
class AdditionSeriesResult:
    """One sample × analyte measured by standard additions. Concentrations in the analyte's unit;
    ``reported_*`` after the dilution factor. ``result`` is None when the series cannot be extrapolated
    (``note`` says why)."""

    sample_id: str
    analyte: str
    dilution_factor: float
    added: tuple[float, ...]
    mean_response: tuple[float, ...]
    replicates: tuple[int, ...]
    result: StandardAdditions | None
    note: str

    @property
    def reported(self) -> float | None:
        return None if self.result is None else self.result.concentration * self.dilution_factor

    @property
    def reported_standard_error(self) -> float | None:
        return None if self.result is None else self.result.standard_error * self.dilution_factor

    @property
    def reported_lower(self) -> float | None:
        return None if self.result is None else self.result.lower * self.dilution_factor

    @property
    def reported_upper(self) -> float | None:
        return None if self.result is None else self.result.upper * self.dilution_factor


ResponseRule = Callable[[Reading, "Reading | None", bool], "tuple[float | None, str]"]
"""The run's one rule for the response used (the reading, or its ratio to the internal standard), with
the reason when there is none: :func:`~curvewright.core.run_analysis.response_value`."""


def analyse_additions(run: Run, analyte: Analyte, response_value: ResponseRule) -> tuple[AdditionSeriesResult, ...]:
    """Every standard-addition series of ``analyte`` in ``run``, in the order of the samples."""
    out = []
    for sample in run.samples:
        additions = sample.additions_of(analyte.name)
        if not additions:
            continue
        by_added: dict[float, list[float]] = {}
        notes = []
        for a in additions:
            value, reason = response_value(a.response, a.internal_standard_response, analyte.uses_internal_standard)
            if value is None:
                notes.append(f"addition {entered(a.added)}, replicate {a.replicate}: {reason}")
                continue
            by_added.setdefault(a.added, []).append(value)
        added = tuple(sorted(by_added))
        means = tuple(float(np.mean(by_added[x])) for x in added)
        counts = tuple(len(by_added[x]) for x in added)
        result = None
        try:
            result = standard_additions(added, means, level=run.settings.confidence_level, replicates=counts)
        except CurvewrightError as exc:
            notes.append(f"not extrapolated: {exc}")
        out.append(AdditionSeriesResult(
            sample_id=sample.id, analyte=analyte.name, dilution_factor=sample.dilution_factor, added=added,
            mean_response=means, replicates=counts, result=result, note="; ".join(notes),
        ))
    return tuple(out)


__all__ = ["AdditionSeriesResult", "analyse_additions"]
