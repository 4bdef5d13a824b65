"""The calibration functions Curvewright fits, and their centred, scaled basis.

Each model is a polynomial in the concentration x with ascending-power coefficients b:

* ``linear``        y = b0 + b1·x
* ``quadratic``     y = b0 + b1·x + b2·x²
* ``proportional``  y = b1·x           (through the origin; coefficients are reported as (0, b1))
* ``average-rf``    y = RF̄·x           (RF̄ the mean response factor yᵢ/xᵢ of the standards, which is
  the line through the origin fitted with 1/x² weights; see :mod:`.response_factor`)

and the curves that are not polynomials, fitted by weighted nonlinear least squares
(:mod:`.curve_families`, :mod:`.nonlinear_calibration`):

* ``4pl``           y = d + (a − d)/(1 + (x/c)^b)
* ``5pl``           y = d + (a − d)/(1 + (x/c)^b)^g
* ``power``         y = a·x^b

Fitting is done in the variable z = (x − c)/s, with c the weighted mean of the standards'
concentrations and s the largest |x − c| (c = 0 for the proportional model, so the line stays
through the origin).
Working in z keeps the least-squares problem well conditioned (NIST StRD Pontius needs it to reach
twelve correct digits); :func:`to_power_basis` turns z-coefficients into ascending powers of x.
"""

from __future__ import annotations

from math import comb

import numpy as np

from .values import frozen_value
from ._arrays import FloatArray
from .errors import CalibrationInputError
from .model_kinds import Model


@frozen_value
class Basis:
    """The change of variable z = (x − centre)/scale used for fitting."""

    centre: float
    scale: float
    powers: tuple[int, ...]

    def z(self, x: FloatArray) -> FloatArray:
        return (np.asarray(x, dtype=np.float64) - self.centre) / self.scale

    def design(self, x: FloatArray) -> FloatArray:
        """Design matrix of shape (len(x), n_parameters) in powers of z."""
        z = self.z(x)
        design = np.empty(z.shape + (len(self.powers),))
        for i, p in enumerate(self.powers):
            # z⁰ is 1 and z¹ is z exactly, as numpy's power gives them
            design[..., i] = 1.0 if p == 0 else z if p == 1 else z**p
        return design

    def power_transform(self) -> FloatArray:
        """Matrix T with b = T·a, from z-coefficients a to ascending powers of x (b0, b1, b2…).

        The result always has rows for powers 0 … max power, so a proportional model yields
        (b0 = 0, b1).
        """
        degree = max(self.powers)
        transform = np.zeros((degree + 1, len(self.powers)))
        ratio, s = -self.centre / self.scale, float(self.scale)
        try:
            # Python floats: the same IEEE operations as numpy's scalars, without their overhead;
            # a power that overflows raises here, and the entries are made below instead
            entries = [(k, column, comb(p, k) * ratio ** (p - k) / s**k)
                       for column, p in enumerate(self.powers) for k in range(p + 1)]
        except (OverflowError, ZeroDivisionError):
            entries = None
        if entries is not None:
            for k, column, value in entries:
                transform[k, column] = value
            return transform
        np_ratio, np_s = np.float64(ratio), np.float64(s)
        # Far beyond the range of double precision (x near 1e200 for a quadratic) an entry overflows
        # to inf or underflows to 0; the caller checks the coefficients it gives and refuses them.
        with np.errstate(over="ignore", under="ignore", divide="ignore"):
            for column, p in enumerate(self.powers):
                # ((x − c)/s)^p = Σ_k C(p, k) x^k (−c/s)^(p−k) / s^k
                for k in range(p + 1):
                    transform[k, column] = comb(p, k) * np_ratio ** (p - k) / np_s**k
        return transform


def make_basis(model: Model, concentration: FloatArray, weights: FloatArray | None = None) -> Basis:
    """Choose the centring and scaling for ``model`` fitted to ``concentration`` with ``weights``.

    The centre is the weighted mean Σwᵢxᵢ/Σwᵢ (the plain mean when unweighted): there the constant
    and linear columns of the whitened design are orthogonal, so the intercept's standard error
    does not come from the difference of two large, nearly equal numbers when the weights crowd
    toward one end of a range of many decades (1/x² over 10⁻³ to 10⁴, for instance). The scale is
    the largest distance of a standard from the centre, so that every standard has |z| ≤ 1.
    """
    w = np.ones_like(concentration) if weights is None else weights
    if model.has_intercept:
        centre = float(np.add.reduce(w * concentration) / np.add.reduce(w))
        scale = float(np.maximum.reduce(np.abs(concentration - centre)))
    else:
        centre = 0.0
        scale = float(np.maximum.reduce(np.abs(concentration)))
    if not scale > 0:
        scale = 1.0
    return Basis(centre=centre, scale=scale, powers=model.powers)

