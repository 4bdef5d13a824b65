"""The engine against NIST certified values (StRD) and the NIST/SEMATECH e-Handbook case study."""

from __future__ import annotations

from collections import defaultdict
from fractions import Fraction

import numpy as np
import pytest

import curvewright as cw
from tests.conftest import REFERENCE_DATA, load_strd, lre

# NIST StRD Norris (Norris.dat), certified values to 15 digits.
NORRIS = {
    "coefficients": (-0.262323073774029, 1.00211681802045),
    "standard_errors": (0.232818234301152, 0.429796848199937e-03),
    "residual_sd": 0.884796396144373,
    "r_squared": 0.999993745883712,
}
# NIST StRD Pontius (Pontius.dat), certified values. Residual SD and R² as remembered from the
# StRD page; an exact rational recomputation below confirms them.
PONTIUS = {
    "coefficients": (0.673565789473684e-03, 0.732059160401003e-06, -0.316081871345029e-14),
    "standard_errors": (0.107938612033077e-03, 0.157817399981659e-09, 0.486652849992036e-16),
    "residual_sd": 0.205177424076185e-03,
    "r_squared": 0.999999900178537,
}
REQUIRED_LRE = 10.0


@pytest.mark.parametrize(
    "filename, model, certified",
    [("nist_strd_norris.csv", "linear", NORRIS), ("nist_strd_pontius.csv", "quadratic", PONTIUS)],
)
def test_strd_certified_values(filename: str, model: str, certified: dict) -> None:
    x, y = load_strd(filename)
    cal = cw.fit(x, y, model)
    for estimate, value in zip(cal.coefficients, certified["coefficients"], strict=True):
        assert lre(estimate, value) >= REQUIRED_LRE
    for estimate, value in zip(cal.standard_errors, certified["standard_errors"], strict=True):
        assert lre(estimate, value) >= REQUIRED_LRE
    assert lre(cal.residual_sd, certified["residual_sd"]) >= REQUIRED_LRE
    assert lre(cal.r_squared, certified["r_squared"]) >= REQUIRED_LRE


def test_reference_files_carry_their_source() -> None:
    for name in ("nist_strd_norris.csv", "nist_strd_pontius.csv"):
        assert "NIST" in (REFERENCE_DATA / name).read_text().splitlines()[0]


def test_pontius_load_from_deflection() -> None:
    # NIST/SEMATECH e-Handbook §4.6.1.10: deflection 1.239722 gives a load of 1705106 (printed to
    # the unit); the other root of the quadratic (≈ 2.299e8) lies past the vertex.
    x, y = load_strd("nist_strd_pontius.csv")
    q = cw.fit(x, y, "quadratic").quantify([1.239722])
    assert round(float(q.estimate[0])) == 1705106
    assert q.flags[0] == cw.QuantFlag.IN_RANGE
    # Inverting the 95 % prediction band (m = 1); end points recomputed independently with
    # numpy/scipy as recorded with the reference data: [1704513.37, 1705697.76].
    assert q.lower[0] == pytest.approx(1704513.37, abs=0.01)
    assert q.upper[0] == pytest.approx(1705697.76, abs=0.01)


def test_pontius_straight_line_lack_of_fit() -> None:
    # NIST/SEMATECH e-Handbook §4.6.1.5: straight line residual SD 0.0021712694 on 38 df and
    # lack-of-fit F = 214.7464 on (18, 20) df. The handbook's printout carries about six digits;
    # the exact rational computation below is the sharper reference.
    x, y = load_strd("nist_strd_pontius.csv")
    cal = cw.fit(x, y, "linear")
    lof = cal.lack_of_fit
    assert (lof.df_lack_of_fit, lof.df_pure_error) == (18, 20)
    assert cal.df_residual == 38
    assert lof.f_statistic == pytest.approx(214.7464, rel=5e-6)
    assert cal.residual_sd == pytest.approx(0.0021712694, rel=5e-6)
    exact_f, exact_sd = _exact_straight_line_lack_of_fit(x, y)
    assert lre(lof.f_statistic, exact_f) >= REQUIRED_LRE
    assert lre(cal.residual_sd, exact_sd) >= REQUIRED_LRE


def test_pontius_quadratic_lack_of_fit() -> None:
    # Recomputed with numpy/scipy alongside the reference data: F = 0.81072 on (17, 20), p = 0.666.
    x, y = load_strd("nist_strd_pontius.csv")
    lof = cw.fit(x, y, "quadratic").lack_of_fit
    assert (lof.df_lack_of_fit, lof.df_pure_error) == (17, 20)
    assert lof.f_statistic == pytest.approx(0.81072, abs=5e-6)
    assert lof.p_value == pytest.approx(0.666, abs=5e-4)


def _exact_straight_line_lack_of_fit(x: np.ndarray, y: np.ndarray) -> tuple[float, float]:
    """Straight-line SSE and pure error in exact rational arithmetic from the decimal data."""
    rows = [line.split(",") for line in (REFERENCE_DATA / "nist_strd_pontius.csv").read_text().splitlines()
            if line and not line.startswith("#")][1:]
    xy = [(Fraction(a), Fraction(b)) for a, b in rows]
    n = len(xy)
    x_bar = sum(a for a, _ in xy) / n
    y_bar = sum(b for _, b in xy) / n
    sxx = sum((a - x_bar) ** 2 for a, _ in xy)
    sxy = sum((a - x_bar) * (b - y_bar) for a, b in xy)
    syy = sum((b - y_bar) ** 2 for _, b in xy)
    sse = syy - sxy**2 / sxx
    groups: dict[Fraction, list[Fraction]] = defaultdict(list)
    for a, b in xy:
        groups[a].append(b)
    sspe = sum(sum((b - sum(v) / len(v)) ** 2 for b in v) for v in groups.values())
    c = len(groups)
    f = ((sse - sspe) / (c - 2)) / (sspe / (n - c))
    return float(f), float(sse / (n - 2)) ** 0.5


def test_the_least_squares_qr_is_numpys_to_the_last_bit() -> None:
    # numpy.linalg.qr(mode="reduced") is the reference: the fit calls the same LAPACK routines
    # through numpy's binding, so Q and R must be the same numbers, for well and badly scaled
    # columns alike; a matrix with values that are not finite gets numpy's own answer.
    from curvewright.core.least_squares import _thin_qr

    rng = np.random.default_rng(12)
    for n, p in ((3, 2), (24, 2), (24, 3), (60, 3)):
        a = rng.standard_normal((n, p)) * 10.0 ** rng.uniform(-6, 6, p)
        q, r = _thin_qr(a)
        ref_q, ref_r = np.linalg.qr(a, mode="reduced")
        np.testing.assert_array_equal(q, ref_q)
        np.testing.assert_array_equal(r, ref_r)
    bad = np.ones((5, 2))
    bad[2, 1] = np.nan
    q, r = _thin_qr(bad)
    ref_q, ref_r = np.linalg.qr(bad, mode="reduced")
    np.testing.assert_array_equal(q, ref_q)
    np.testing.assert_array_equal(r, ref_r)
