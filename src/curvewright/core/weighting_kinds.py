"""The weightings a calibration can use, by name.

Kept apart from :mod:`curvewright.core.weighting` (which computes the weights) and free of numpy, so
that the command line can list the choices in ``--help`` without loading the numerical libraries.
"""

from __future__ import annotations

from enum import Enum

from .errors import WeightingError


class Weighting(str, Enum):
    """How the variance of the response is taken to change with concentration."""

    NONE = "none"
    INVERSE_X = "1/x"
    INVERSE_X2 = "1/x^2"
    INVERSE_Y = "1/y"
    INVERSE_Y2 = "1/y^2"
    INVERSE_S2 = "1/s^2"
    POWER = "power"
    TWO_COMPONENT = "two-component"

    @classmethod
    def parse(cls, value: "Weighting | str") -> "Weighting":
        if isinstance(value, str):
            exact = _BY_VALUE.get(value)
            if exact is not None:
                return exact  # a weighting's own name, which the spellings below leave as it is
            value = value.strip().replace("²", "^2").replace(" ", "").lower()
            value = {
                "": "none", "1": "none", "1/x2": "1/x^2", "1/y2": "1/y^2", "1/s2": "1/s^2",
                "powerofthemean": "power", "twocomponent": "two-component",
            }.get(value, value)
        try:
            return cls(value)
        except ValueError:
            names = ", ".join(repr(w.value) for w in cls)
            raise WeightingError(f"weighting: {value!r} is not one of {names}.") from None

    @property
    def description(self) -> str:
        return {
            Weighting.NONE: "unweighted (ordinary least squares)",
            Weighting.INVERSE_X: "weighted 1/x",
            Weighting.INVERSE_X2: "weighted 1/x²",
            Weighting.INVERSE_Y: "weighted 1/y",
            Weighting.INVERSE_Y2: "weighted 1/y²",
            Weighting.INVERSE_S2: "weighted 1/s² (replicate standard deviations)",
            Weighting.POWER: "weighted by a power of the mean response (variance function of all standards)",
            Weighting.TWO_COMPONENT: "weighted by a two-component variance (variance function of all standards)",
        }[self]

    @property
    def uses_concentration(self) -> bool:
        """The weight of a new response depends on its concentration (so Fieller's closed form does not apply)."""
        return self in (
            Weighting.INVERSE_X, Weighting.INVERSE_X2, Weighting.INVERSE_S2, Weighting.POWER, Weighting.TWO_COMPONENT
        )

    @property
    def variance_function(self) -> str | None:
        """"power" or "two-component" for the weightings that fit a variance function, else None."""
        return {Weighting.POWER: "power", Weighting.TWO_COMPONENT: "two-component"}.get(self)


_BY_VALUE = {weighting.value: weighting for weighting in Weighting}
