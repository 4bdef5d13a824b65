"""Exceptions raised by the calibration engine.

Every message names what is wrong (the field, the standard or level, the value found) in words a
laboratory analyst understands. The hierarchy::

    CurvewrightError                      base of every error the project raises on purpose
    ├── CalibrationInputError (ValueError)   the standards or options given to a fit are unusable
    │   ├── WeightingError                   the chosen weighting cannot be applied to these data
    │   └── ConvergenceError                 a nonlinear curve could not be fitted (the reason in words)
    ├── QuantitationInputError (ValueError)  the unknowns' responses or options are unusable
    ├── LimitsError (ValueError)             detection/quantitation limits cannot be computed
    └── ProfileError (ValueError)            an acceptance profile is malformed
"""

from __future__ import annotations


class CurvewrightError(Exception):
    """Base class of every error Curvewright raises on purpose."""


class CalibrationInputError(CurvewrightError, ValueError):
    """The standards, or the options given for fitting them, cannot make a calibration."""


class WeightingError(CalibrationInputError):
    """The chosen weighting cannot be applied to these standards."""


class ConvergenceError(CalibrationInputError):
    """A curve fitted by nonlinear least squares did not converge; the message says why."""


class QuantitationInputError(CurvewrightError, ValueError):
    """The responses of the unknowns, or the quantitation options, are unusable."""


class LimitsError(CurvewrightError, ValueError):
    """Detection or quantitation limits cannot be computed for this calibration."""


class ProfileError(CurvewrightError, ValueError):
    """An acceptance profile is malformed or names something unknown."""
