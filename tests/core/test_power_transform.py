"""The matrix that turns coefficients in powers of z = (x − c)/s into coefficients in powers of x.

By the binomial theorem ((x − c)/s)^p = Σₖ C(p, k)·xᵏ·(−c/s)^(p−k)/sᵏ, so the polynomial Σₚ aₚ·zᵖ
and Σₖ bₖ·xᵏ with b = T·a take the same value at every x."""

from __future__ import annotations

from math import comb

import numpy as np
import pytest

from curvewright.core.models import Basis


@pytest.mark.parametrize("powers", [(0, 1), (0, 1, 2), (1,)])
def test_both_polynomials_take_the_same_values(powers: tuple[int, ...]) -> None:
    rng = np.random.default_rng(len(powers))
    for _ in range(200):
        centre, scale = float(rng.uniform(-50, 50)), float(10.0 ** rng.uniform(-3, 3))
        basis = Basis(centre, scale, powers)
        a = rng.standard_normal(len(powers))
        b = basis.power_transform() @ a
        x = centre + scale * rng.uniform(-1, 1, 7)
        in_z = sum(ai * ((x - centre) / scale) ** p for ai, p in zip(a, powers))
        in_x = sum(bk * x**k for k, bk in enumerate(b))
        assert np.allclose(in_x, in_z, rtol=1e-9, atol=1e-9 * np.max(np.abs(a)) * max(1.0, abs(centre) / scale) ** 2)


def test_the_entries_are_those_of_the_formula_to_the_bit_even_beyond_double_precision() -> None:
    """Each entry is C(p, k)·(−c/s)^(p−k)/sᵏ as double precision works it out, down to the entries
    that overflow to infinity or underflow to zero far beyond the range of double precision (which
    the fit then refuses by name)."""
    rng = np.random.default_rng(7)
    for _ in range(3000):
        centre = float(rng.standard_normal() * 10.0 ** rng.uniform(-300, 300))
        scale = float(10.0 ** rng.uniform(-300, 300))
        basis = Basis(centre, scale, (0, 1, 2))
        ratio, s = np.float64(-centre / scale), np.float64(scale)
        with np.errstate(all="ignore"):
            expected = np.zeros((3, 3))
            for column, p in enumerate(basis.powers):
                for k in range(p + 1):
                    expected[k, column] = comb(p, k) * ratio ** (p - k) / s**k
        got = basis.power_transform()
        assert np.array_equal(got, expected, equal_nan=True)
        assert np.array_equal(np.signbit(got), np.signbit(expected))
