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

    @property
    def n_parameters(self) -> int:
        return {Model.LINEAR: 2, Model.QUADRATIC: 3, Model.PROPORTIONAL: 1, Model.AVERAGE_RF: 1}[self]

    @property
    def has_intercept(self) -> bool:
        return self not in (Model.PROPORTIONAL, Model.AVERAGE_RF)

    @property
    def powers(self) -> tuple[int, ...]:
        """Powers of z in the design matrix."""
        return {Model.LINEAR: (0, 1), Model.QUADRATIC: (0, 1, 2), Model.PROPORTIONAL: (1,), Model.AVERAGE_RF: (1,)}[self]

    @property
    def description(self) -> str:
        return {
            Model.LINEAR: "straight line y = b0 + b1·x",
            Model.QUADRATIC: "quadratic y = b0 + b1·x + b2·x²",
            Model.PROPORTIONAL: "straight line through the origin y = b1·x",
            Model.AVERAGE_RF: "average response factor y = RF·x (RF the mean of the standards' yᵢ/xᵢ)",
        }[self]

    @classmethod
    def parse(cls, value: "Model | str") -> "Model":
        try:
            return cls(value)
        except ValueError:
            names = ", ".join(repr(m.value) for m in cls)
            raise CalibrationInputError(f"model: {value!r} is not one of {names}.") from None
