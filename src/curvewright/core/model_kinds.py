"""The calibration functions by name.

Kept apart from :mod:`curvewright.core.models` (the design matrices and bases) and free of numpy, so
that the command line can list the choices in ``--help`` without loading the numerical libraries.
"""

from __future__ import annotations

from enum import Enum

from .errors import CalibrationInputError


class Model(str, Enum):
    """A calibration function, named as the analyst chooses it."""

    LINEAR = "linear"
    QUADRATIC = "quadratic"
    PROPORTIONAL = "proportional"
    AVERAGE_RF = "average-rf"
    FOUR_PL = "4pl"
    FIVE_PL = "5pl"
    POWER = "power"

    @property
    def n_parameters(self) -> int:
        return _N_PARAMETERS[self]

    @property
    def is_polynomial(self) -> bool:
        """Fitted by linear least squares in a polynomial basis (else by nonlinear least squares)."""
        return self in (Model.LINEAR, Model.QUADRATIC, Model.PROPORTIONAL, Model.AVERAGE_RF)

    @property
    def has_intercept(self) -> bool:
        """A polynomial with a free constant term b0 (the straight line, the quadratic). False for the lines
        through the origin and for the curves that are not polynomials, whose parameters include no
        intercept: to ask whether a curve is forced through the origin, use :attr:`through_origin`."""
        return self in (Model.LINEAR, Model.QUADRATIC)

    @property
    def through_origin(self) -> bool:
        """The curve is y = b1·x, forced through the origin (the proportional line, the average response
        factor): b0 is fixed at 0 and not estimated. False for the 4PL, 5PL and power curves, which have
        no intercept term but are not lines through the origin."""
        return self in (Model.PROPORTIONAL, Model.AVERAGE_RF)

    @property
    def powers(self) -> tuple[int, ...]:
        """Powers of z in the design matrix (none for a curve that is not a polynomial)."""
        return _POWERS.get(self, ())

    @property
    def description(self) -> str:
        return {
            Model.LINEAR: "straight line y = b0 + b1·x",
            Model.QUADRATIC: "quadratic y = b0 + b1·x + b2·x²",
            Model.PROPORTIONAL: "straight line through the origin y = b1·x",
            Model.AVERAGE_RF: "average response factor y = RF·x (RF the mean of the standards' yᵢ/xᵢ)",
            Model.FOUR_PL: "four-parameter logistic y = d + (a − d)/(1 + (x/c)^b)",
            Model.FIVE_PL: "five-parameter logistic y = d + (a − d)/(1 + (x/c)^b)^g",
            Model.POWER: "power curve y = a·x^b",
        }[self]

    @classmethod
    def parse(cls, value: "Model | str") -> "Model":
        try:
            return cls(value)
        except ValueError:
            names = ", ".join(repr(m.value) for m in cls)
            raise CalibrationInputError(f"model: {value!r} is not one of {names}.") from None


# the tables the properties read, made once (a model is asked for them on every fit)
_N_PARAMETERS = {
    Model.LINEAR: 2, Model.QUADRATIC: 3, Model.PROPORTIONAL: 1, Model.AVERAGE_RF: 1, Model.FOUR_PL: 4,
    Model.FIVE_PL: 5, Model.POWER: 2,
}
_POWERS = {Model.LINEAR: (0, 1), Model.QUADRATIC: (0, 1, 2), Model.PROPORTIONAL: (1,), Model.AVERAGE_RF: (1,)}
