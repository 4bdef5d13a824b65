"""Rules on the calibration as a whole, beside the per-standard limits: response-factor spread and correlation.

Environmental methods judge an initial calibration first by the spread of its response factors: the
average response factor may be used when the %RSD of the standards' RFs is at most a limit (20 % in
the shipped environmental profile); otherwise a fitted curve is used, and it must correlate well:
a straight line r ≥ 0.995, any other curve a coefficient of determination r² ≥ 0.99. Both limits
are from memory of US EPA SW-846 Method 8000 practice, not re-read; a profile names them so that the
laboratory replaces them with those of its own method.

Here r = √R² and R² is the fit's coefficient of determination (:class:`~.fitted_curve.FittedCurve`:
weighted when the fit is weighted, about the weighted mean response). For an unweighted straight
line with a positive slope r is Pearson's correlation coefficient.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Mapping

import numpy as np

from .errors import ProfileError
from .models import Model
from .notation import entered, figures, fixed

if TYPE_CHECKING:  # pragma: no cover
    from .fitted_curve import FittedCurve


@dataclass(frozen=True)
class CurveRules:
    """Limits on the whole calibration: RF %RSD for the average response factor, r or r² for a fitted curve."""

    max_rf_rsd_percent: float
    min_r: float
    min_r_squared: float
    source: str

    @classmethod
    def from_mapping(cls, data: Mapping[str, Any], where: str) -> "CurveRules":
        if not isinstance(data, Mapping):
            raise ProfileError(f"{where}: 'curve' must be an object of rules.")
        rsd = data.get("max_rf_rsd_percent")
        if isinstance(rsd, bool) or not isinstance(rsd, (int, float)) or not (0 < rsd < 1000):
            raise ProfileError(f"{where}: 'max_rf_rsd_percent' must be a percentage above 0, found {rsd!r}.")
        values = {}
        for key in ("min_r", "min_r_squared"):
            value = data.get(key)
            if isinstance(value, bool) or not isinstance(value, (int, float)) or not (0 < value <= 1):
                raise ProfileError(f"{where}: '{key}' must be a number above 0 and at most 1, found {value!r}.")
            values[key] = float(value)
        source = data.get("source")
        if not isinstance(source, str) or not source.strip():
            raise ProfileError(f"{where}: 'source' must be non-empty text.")
        return cls(max_rf_rsd_percent=float(rsd), source=source, **values)

    def judge(self, cal: "FittedCurve") -> tuple[bool, tuple[str, ...]]:
        """Whether ``cal`` meets the rule for its kind of curve, and the reason in words."""
        if cal.model is Model.AVERAGE_RF:
            rsd = cal.rf_rsd_percent
            assert rsd is not None
            ok = rsd <= self.max_rf_rsd_percent
            return ok, (
                f"{'pass' if ok else 'FAIL'}: response factor %RSD = {figures(rsd, 3)} %; at most "
                f"{entered(self.max_rf_rsd_percent)} % for an average response factor calibration"
                + ("" if ok else "; use a fitted curve instead"),
            )
        r_squared = cal.r_squared
        r = float(np.sqrt(max(r_squared, 0.0)))
        if cal.model is Model.LINEAR or cal.model is Model.PROPORTIONAL:
            ok = r >= self.min_r
            words = f"r = {fixed(r, 5)}; at least {entered(self.min_r)} for a straight line"
        else:
            ok = r_squared >= self.min_r_squared
            words = f"r² = {fixed(r_squared, 5)}; at least {entered(self.min_r_squared)} for a {cal.model.value} curve"
        return ok, (f"{'pass' if ok else 'FAIL'}: {words}",)

    def to_mapping(self) -> dict[str, Any]:
        return {
            "max_rf_rsd_percent": self.max_rf_rsd_percent,
            "min_r": self.min_r,
            "min_r_squared": self.min_r_squared,
            "source": self.source,
        }


__all__ = ["CurveRules"]
