"""Standard additions: the concentration of a sample from a straight line through its spiked portions.

Known amounts x (concentration added, in the sample's concentration unit after any dilution) of the
analyte are added to portions of the sample and each portion's response y measured. The straight
line y = a + b·x fitted by least squares meets zero response at x = −a/b; the magnitude

    x_E = a/b

is the concentration of the analyte in the measured sample solution. Its standard error, for the
usual extrapolation of the line to zero response, is

    s_xE = (s_y/x / b)·√(1/n + ȳ²/(b²·Σ(xᵢ − x̄)²))

(Miller & Miller, *Statistics and Chemometrics for Analytical Chemistry*, 6th ed., §5.11; the same
formula in D. Harvey, *Analytical Chemistry 2.1*, ch. 5 — section numbers from memory), with n the
number of points, ȳ and x̄ their means and s_y/x the residual SD; the interval is x_E ± t·s_xE with
t = t(1 − α/2; n − 2). It equals the delta-method standard error of a/b from the coefficients'
covariance.

Replicates: each response may be the mean of mᵢ replicate readings. The means are then weighted by
mᵢ (the variance of a mean is σ²/mᵢ; weights scaled to sum to n) and the formula above holds with
weighted means and sums. The same count at every addition leaves every number unchanged: the scatter
of the means about the line already holds the averaging.

What the method assumes cannot be checked from the additions alone: the response is linear in the
sample's own matrix from zero up to the largest addition (matrix-matched linearity), and a blank
gives zero response. Every result carries that warning.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ._arrays import FloatArray, as_confidence_level, as_finite_vector, as_whole_count, frozen
from .distributions import t_quantile
from .errors import CalibrationInputError
from .notation import entered, figures

MATRIX_WARNING = (
    "standard additions assume matrix-matched linearity: the response stays a straight line in the "
    "sample's own matrix from zero concentration up to the largest addition, and a blank gives zero "
    "response; neither can be checked from the additions, and a curved or offset response biases the "
    "extrapolated concentration"
)


@dataclass(frozen=True, eq=False)
class StandardAdditions:
    """The extrapolated concentration of one sample, its standard error and interval, and the line.

    ``concentration``, ``standard_error``, ``lower``, ``upper`` are in the unit of ``added``;
    ``intercept`` (a) and ``slope`` (b) describe the line y = a + b·x through the spiked portions.
    """

    added: FloatArray
    response: FloatArray
    replicates: np.ndarray
    level: float
    intercept: float
    slope: float
    residual_sd: float
    df: int
    t: float
    r_squared: float
    concentration: float
    standard_error: float
    lower: float
    upper: float
    warnings: tuple[str, ...] = field(default=(MATRIX_WARNING,))

    @property
    def n(self) -> int:
        return int(self.added.size)

    def line(self, added: object) -> FloatArray:
        """Response of the fitted line at ``added`` (array-like); at −concentration it is zero."""
        return self.intercept + self.slope * np.asarray(added, dtype=np.float64)

    def equation(self, digits: int = 10) -> str:
        sign = "−" if self.slope < 0 else "+"
        return f"y = {figures(self.intercept, digits)} {sign} {figures(abs(self.slope), digits)}·x_added"


def standard_additions(
    added: object, response: object, level: float = 0.95, replicates: object = 1
) -> StandardAdditions:
    """Concentration of a sample by standard additions: the magnitude of the line's x-intercept.

    Parameters
    ----------
    added : array-like of shape (n,)
        Concentration added to each portion (0 for the unspiked sample), in the reporting unit.
    response : array-like of shape (n,)
        Response of each portion (the mean of its replicate readings).
    level : float
        Confidence level of the interval (0.95 = 95 %).
    replicates : int or array-like of shape (n,)
        Replicate readings averaged into each response; the means are weighted by these counts.

    Raises
    ------
    CalibrationInputError
        Naming the point and the reason: non-finite or mismatched values, a negative addition,
        fewer than three points or two distinct additions, a slope that is not above zero, or a
        line that does not meet zero response below zero addition.
    """
    x = as_finite_vector(added, "added concentration", CalibrationInputError, item="addition")
    y = as_finite_vector(response, "response", CalibrationInputError, item="addition")
    if x.size != y.size:
        raise CalibrationInputError(f"standard additions: {x.size} additions but {y.size} responses; each needs both.")
    negative = np.flatnonzero(x < 0)
    if negative.size:
        i = int(negative[0])
        raise CalibrationInputError(f"added concentration: addition {i + 1} is {entered(x[i])}; an addition cannot be below zero.")
    if x.size < 3:
        raise CalibrationInputError(
            f"standard additions: {x.size} points leave no degree of freedom for the scatter about the line; "
            "at least 3 are needed."
        )
    if np.unique(x).size < 2:
        raise CalibrationInputError("added concentration: every portion has the same addition; a line needs different additions.")
    confidence = as_confidence_level(level, CalibrationInputError)
    counts = _counts(replicates, x.size)
    w = counts * (x.size / counts.sum())
    x_bar = float(np.sum(w * x) / np.sum(w))
    y_bar = float(np.sum(w * y) / np.sum(w))
    dx = x - x_bar
    sxx = float(np.sum(w * dx * dx))
    slope = float(np.sum(w * dx * (y - y_bar)) / sxx)
    intercept = y_bar - slope * x_bar
    residuals = y - (intercept + slope * x)
    df = x.size - 2
    residual_sd = float(np.sqrt(np.sum(w * residuals**2) / df))
    if not slope > 0:
        raise CalibrationInputError(
            f"response: the line through the additions has slope {figures(slope, 6)}; the response must rise with the "
            "added concentration for standard additions."
        )
    if not intercept > 0:
        raise CalibrationInputError(
            f"response: the line meets zero response at added concentration {figures(-intercept / slope, 6)}, not below "
            "zero; the unspiked sample gives no response of its own above the line's origin."
        )
    concentration = intercept / slope
    standard_error = residual_sd / slope * float(np.sqrt(1.0 / np.sum(w) + y_bar**2 / (slope**2 * sxx)))
    t = t_quantile(0.5 + confidence / 2.0, df)
    sst = float(np.sum(w * (y - y_bar) ** 2))
    warnings = [MATRIX_WARNING]
    span = float(x.max() - x.min())
    if concentration > span:
        warnings.append(
            f"the extrapolation ({figures(concentration, 4)}) reaches further below the first addition than the additions "
            f"span ({figures(span, 4)}); larger additions would shorten it"
        )
    return StandardAdditions(
        added=frozen(x), response=frozen(y), replicates=frozen(counts), level=confidence,
        intercept=float(intercept), slope=slope, residual_sd=residual_sd, df=df, t=float(t),
        r_squared=1.0 - float(np.sum(w * residuals**2)) / sst if sst > 0 else 0.0,
        concentration=float(concentration), standard_error=float(standard_error),
        lower=float(concentration - t * standard_error), upper=float(concentration + t * standard_error),
        warnings=tuple(warnings),
    )


def _counts(replicates: object, n: int) -> np.ndarray:
    if np.ndim(replicates) == 0:
        m = as_whole_count(replicates, "replicates", CalibrationInputError, "the number of readings averaged into each response")
        return np.full(n, float(m))
    values = list(np.asarray(replicates, dtype=object).ravel())
    if len(values) != n:
        raise CalibrationInputError(f"replicates: {len(values)} counts for {n} additions; give one count or one per addition.")
    return np.array([
        float(as_whole_count(v, f"replicates of addition {i + 1}", CalibrationInputError,
                             "the number of readings averaged into each response"))
        for i, v in enumerate(values)
    ])


__all__ = ["MATRIX_WARNING", "StandardAdditions", "standard_additions"]
