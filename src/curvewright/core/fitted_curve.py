"""The fitted calibration curve as plain, immutable numbers, and what follows from them directly.

:class:`FittedCurve` holds everything one weighted fit produced (coefficients, covariance, residual
SD, influence, lack of fit, back-calculated standards) and the views drawn straight from them: the
curve, its standard error, the confidence and prediction bands, the equation. It needs none of the
modules that answer questions about a calibration (inverse prediction, limits, acceptance); those
take a ``FittedCurve``, and :class:`~curvewright.core.calibration.Calibration` adds them as methods.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import field
from functools import cached_property

import numpy as np

from .values import frozen_value
from ._arrays import FloatArray, as_confidence_level, as_whole_count
from .distributions import t_quantile
from .errors import CalibrationInputError
from .influence import Influence, InfluenceFlag
from .lack_of_fit import LackOfFit
from .levels import Levels
from .models import Basis, Model
from .regression_test import RegressionTest
from .response_factor import ResponseFactors, response_factors
from .weighting import WeightModel, Weighting
from .notation import figures


class Deferred:
    """A diagnostic of a fit worked out the first time it is read (see :class:`FittedCurve`):
    ``make`` computes it from numbers the fit keeps, so the value is the one computed at once."""

    __slots__ = ("make",)

    def __init__(self, make: Callable[[], object]) -> None:
        self.make = make


@frozen_value(eq=False)
class FittedCurve:
    """A fitted calibration curve. Immutable: every array is read-only.

    Units: concentrations in the standards' concentration unit, responses in the instrument's
    response unit; ``relative_error`` in percent. Arrays named per standard have shape (n,), in
    the order the standards were given.

    Attributes
    ----------
    coefficients : array of shape (degree + 1,)
        b0, b1[, b2] in ascending powers of x. The proportional model reports b0 = 0 (fixed).
    covariance, standard_errors
        Covariance matrix and standard errors of ``coefficients`` (zero for a fixed b0).
    residual_sd : float
        s = √(Σwᵢ(yᵢ − ŷᵢ)²/(n − p)), in response units because the weights sum to n.
    df_residual : int
        n − p.
    r_squared, adjusted_r_squared : float
        1 − SSE/SST with SST = Σwᵢ(yᵢ − ȳ_w)² about the weighted mean response, adjusted by
        (n − 1)/(n − p), for every model. The line through the origin is measured the same way (not
        against Σwᵢyᵢ², the uncentred total customary for it, which makes it look better than a line
        whose intercept is plainly needed), so that models fitted with one weighting compare; it can
        then fall below zero. Different weightings measure the scatter differently, so R² does not
        compare across weightings. When the responses do not vary at all (SST is round-off) there is
        nothing to explain and R² is 0.
    regression : RegressionTest
        The F-test of whether the response changes with concentration (see :mod:`.regression_test`).
    leverage, studentized_residuals, cooks_distance
        Influence of each standard (see :mod:`.influence`); ``influence_flags`` names what stands out.
    back_calculated, relative_error
        Each standard read back through the curve, and 100·(found − nominal)/nominal. A
        zero-concentration standard has no relative error (NaN; see ``relative_error_note``).
    lack_of_fit : LackOfFit
        The pure-error F-test, or the reason it could not be made.
    """

    model: Model
    weighting: Weighting
    concentration: FloatArray
    response: FloatArray
    levels: Levels
    weight_model: WeightModel
    basis: Basis
    z_coefficients: FloatArray
    z_covariance: FloatArray
    coefficients: FloatArray
    covariance: FloatArray
    standard_errors: FloatArray
    residual_sd: float
    df_residual: int
    r_squared: float
    adjusted_r_squared: float
    fitted: FloatArray
    residuals: FloatArray
    influence: Influence
    lack_of_fit: LackOfFit
    regression: RegressionTest
    back_calculated: FloatArray
    relative_error: FloatArray
    quadratic_branch: int = 0
    vertex_z: float | None = None
    notes: tuple[str, ...] = field(default=())

    @classmethod
    def _assembled(cls, fields: dict) -> "FittedCurve":
        """The result holding ``fields``: every field in the constructor's order, keyed as the
        constructor stores them (the diagnostics that may be deferred, ``influence``,
        ``lack_of_fit``, ``back_calculated``, ``relative_error``, ``r_squared`` and
        ``adjusted_r_squared``, under their names with a leading
        underscore; see the end of this module). Made
        without the frozen constructor's one guarded assignment per field: the same object, as
        immutable (``tests/core/test_fit_paths.py`` holds the two ways to the same state)."""
        made = object.__new__(cls)
        made.__dict__.update(fields)
        return made

    # --- plain views of the result --------------------------------------------------------------
    @property
    def n_standards(self) -> int:
        return int(self.concentration.size)

    @property
    def n_parameters(self) -> int:
        return self.model.n_parameters

    @property
    def through_origin(self) -> bool:
        """Forced through the origin (y = b1·x, b0 fixed at 0): the proportional line and the average
        response factor; never a 4PL, 5PL or power curve (see :attr:`Model.through_origin`)."""
        return self.model.through_origin

    @property
    def coefficient_names(self) -> tuple[str, ...]:
        """Names of ``coefficients`` for tables: b0, b1[, b2]."""
        return tuple(f"b{p}" for p in range(self.coefficients.size))

    @property
    def coefficient_descriptions(self) -> tuple[str, ...]:
        """What each coefficient is, in words."""
        return tuple(f"coefficient of x^{p}" for p in range(self.coefficients.size))

    @property
    def weights(self) -> FloatArray:
        """Weights of the standards, scaled so that they sum to n."""
        return self.weight_model.weights

    @property
    def leverage(self) -> FloatArray:
        return self.influence.leverage

    @property
    def studentized_residuals(self) -> FloatArray:
        """Externally studentized (deleted) residuals; NaN only where leverage is 1 (flagged)."""
        return self.influence.studentized_residuals

    @property
    def cooks_distance(self) -> FloatArray:
        """Cook's distance; NaN only where leverage is 1 (flagged ``DETERMINES_FIT``)."""
        return self.influence.cooks_distance

    @property
    def influence_flags(self) -> tuple[tuple[InfluenceFlag, ...], ...]:
        return self.influence.flags

    @cached_property
    def z_polynomials(self) -> tuple[FloatArray, FloatArray]:
        """Ascending coefficients, in z, of the fitted curve f̂(z) and of its variance φ(z)ᵀ·C·φ(z)
        (a polynomial curve; read-only, worked out once)."""
        powers = self.basis.powers
        fitted = np.zeros(max(powers) + 1)
        variance = np.zeros(2 * max(powers) + 1)
        for i, p in enumerate(powers):
            fitted[p] = self.z_coefficients[i]
            for j, q in enumerate(powers):
                variance[p + q] += self.z_covariance[i, j]
        fitted.setflags(write=False)
        variance.setflags(write=False)
        return fitted, variance

    @property
    def calibrated_range(self) -> tuple[float, float]:
        """Lowest and highest standard concentration."""
        return float(self.concentration.min()), float(self.concentration.max())

    @property
    def response_factors(self) -> ResponseFactors | None:
        """For the average response factor: each standard's yᵢ/xᵢ, their mean, SD and %RSD (else None)."""
        if self.model is not Model.AVERAGE_RF:
            return None
        return response_factors(self.concentration, self.response)

    @property
    def rf_rsd_percent(self) -> float | None:
        """%RSD of the standards' response factors, 100·s_RF/RF̄, for the average response factor (else None)."""
        factors = self.response_factors
        return None if factors is None else factors.rsd_percent

    @property
    def vertex(self) -> float | None:
        """Concentration at which a quadratic turns over (None for a straight line)."""
        if self.vertex_z is None:
            return None
        return self.basis.centre + self.basis.scale * self.vertex_z

    @property
    def turns_over_in_range(self) -> bool:
        """A quadratic whose vertex lies inside the calibrated range (responses there are reached twice)."""
        vertex = self.vertex
        low, high = self.calibrated_range
        return vertex is not None and low < vertex < high

    @property
    def sum_abs_relative_error(self) -> float:
        """Σ|%RE| over the standards with non-zero nominal concentration (and a solution)."""
        values = self.relative_error[np.isfinite(self.relative_error)]
        return float(np.sum(np.abs(values)))

    @property
    def relative_error_note(self) -> str | None:
        zero = int(np.count_nonzero(self.concentration == 0))
        if zero:
            return f"{zero} standard(s) of zero nominal concentration have no relative error"
        return None

    @property
    def sse(self) -> float:
        """Weighted residual sum of squares Σwᵢ(yᵢ − ŷᵢ)²."""
        return float(self.residual_sd**2 * self.df_residual)

    def equation(self, digits: int = 10) -> str:
        """The curve as text, coefficients to ``digits`` significant figures."""
        names = ("", "·x", "·x²")
        terms = []
        for power, b in enumerate(self.coefficients):
            if self.model.through_origin and power == 0:
                continue
            text = f"{figures(abs(b), digits)}{names[power]}"
            terms.append((b < 0, text))
        out = ("−" if terms[0][0] else "") + terms[0][1]
        for negative, text in terms[1:]:
            out += (" − " if negative else " + ") + text
        return "y = " + out

    def predict(self, concentration: object) -> FloatArray:
        """Response the curve gives at ``concentration`` (array-like, any shape)."""
        x = np.asarray(concentration, dtype=np.float64)
        return self.basis.design(x) @ self.z_coefficients

    def curve_sd(self, concentration: object) -> FloatArray:
        """Standard error of the fitted curve (the mean response) at ``concentration``."""
        phi = self.basis.design(np.asarray(concentration, dtype=np.float64))
        return np.sqrt(np.einsum("...i,ij,...j->...", phi, self.z_covariance, phi))

    def confidence_band(self, concentration: object, level: float = 0.95) -> tuple[FloatArray, FloatArray]:
        """Lower and upper confidence band of the curve: ŷ ± t·SE(ŷ)."""
        y = self.predict(concentration)
        half = self._t(level) * self.curve_sd(concentration)
        return y - half, y + half

    def prediction_band(
        self, concentration: object, level: float = 0.95, replicates: int = 1
    ) -> tuple[FloatArray, FloatArray]:
        """Band expected to hold the mean of ``replicates`` new responses: ŷ ± t·√(σ²/(m·w) + SE(ŷ)²).

        The weight w of a new response follows the weighting (for 1/y-type weights, evaluated at
        the predicted response); t is :meth:`band_t`. Inverting this band gives the calibration
        interval of an unknown.
        """
        m = as_whole_count(replicates, "replicates", CalibrationInputError, "the number of new responses averaged")
        self._t(level)
        x = np.asarray(concentration, dtype=np.float64)
        y = self.predict(x)
        new = self.residual_sd**2 / (m * self.weight_model.weight_at(x, y))
        curve = self.curve_sd(x) ** 2
        half = self.band_t(0.5 + float(level) / 2.0, x, new, curve) * np.sqrt(new + curve)
        return y - half, y + half

    def band_t(
        self, probability: float, concentration: FloatArray, new_variance: FloatArray, curve_variance: FloatArray
    ) -> FloatArray:
        """Student's t quantile for the prediction band at ``concentration``.

        With weights known in form (none, 1/x, 1/y, known SDs…) it is t(probability; n − p). With a
        variance function estimated from the standards the degrees of freedom are Satterthwaite's,
        2/(2/(n − p) + (V_new/V)²·var_shape(x)), smaller where the estimated shape is less certain
        (see :mod:`.variance_function`).
        """
        fit = self.weight_model.variance_fit
        if fit is None:
            shape = np.broadcast_shapes(np.shape(concentration), np.shape(new_variance), np.shape(curve_variance))
            return np.full(shape, t_quantile(probability, self.df_residual))
        total = new_variance + curve_variance
        with np.errstate(invalid="ignore", divide="ignore"):
            share = np.where(total > 0, new_variance / total, 0.0)
        relative = 2.0 / self.df_residual + share**2 * fit.shape_variance(concentration)
        from scipy import special  # loaded on first use: importing the engine stays light

        return special.stdtrit(2.0 / relative, probability)

    def _t(self, level: float) -> float:
        value = as_confidence_level(level, CalibrationInputError)
        return t_quantile(0.5 + value / 2.0, self.df_residual)


def _worked_out_on_first_use(name: str) -> property:
    """The field ``name`` of :class:`FittedCurve` as a property: the dataclass's ``__init__`` stores
    the value given (a :class:`Deferred` or the value itself) and the first read of a deferred one
    works it out and keeps it. The curve never changes, so neither does the value."""
    slot = "_" + name

    def read(self: FittedCurve) -> object:
        value = self.__dict__[slot]
        if type(value) is Deferred:
            value = value.make()
            self.__dict__[slot] = value
        return value

    def store(self: FittedCurve, value: object) -> None:
        self.__dict__[slot] = value

    return property(read, store, doc=f"``{name}``, worked out on first use where the fit deferred it.")


def _state(self: FittedCurve) -> dict:  # type: ignore[type-arg]
    """A pickled curve carries its diagnostics worked out, never the code that would make them."""
    for name in _DEFERRABLE:
        getattr(self, name)
    return dict(self.__dict__)


_DEFERRABLE = ("influence", "lack_of_fit", "back_calculated", "relative_error", "r_squared",
               "adjusted_r_squared")
for _name in _DEFERRABLE:
    setattr(FittedCurve, _name, _worked_out_on_first_use(_name))
FittedCurve.__getstate__ = _state  # type: ignore[method-assign]
