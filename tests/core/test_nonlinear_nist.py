"""The weighted nonlinear least-squares fitter against NIST certified values (StRD, nonlinear regression).

Each data file under tests/reference_data holds a NIST StRD nonlinear dataset with NIST's two start
points and certified values (source in its header). From both start points every parameter and its
standard deviation must agree with the certified value to a log relative error (LRE) of at least 6,
the usual bar for nonlinear solvers (McCullough, "Assessing the reliability of statistical software:
Part II", Am. Stat. 53 (1999) 149, from memory, which uses NIST's certified values the same way; the bar of 6 is
common practice for these datasets).
"""

from __future__ import annotations

import numpy as np
import pytest

import curvewright as cw
from curvewright.core.nonlinear import fit_nonlinear
from tests.conftest import REFERENCE_DATA, lre

REQUIRED_LRE = 6.0


def load_nonlinear_strd(name: str) -> dict[str, np.ndarray]:
    """Data, start points and certified values of a NIST StRD nonlinear file in tests/reference_data."""
    lines = (REFERENCE_DATA / f"nist_strd_{name.lower()}.csv").read_text().splitlines()
    values: dict[str, np.ndarray] = {}
    for line in lines:
        if line.startswith("# ") and ":" in line:
            key, _, rest = line[2:].partition(":")
            if key in ("start1", "start2", "certified", "certified_sd", "residual_sum_of_squares", "residual_sd"):
                values[key] = np.array([float(v) for v in rest.split()])
    rows = [line for line in lines if line and not line.startswith("#")]
    data = np.array([[float(v) for v in row.split(",")] for row in rows[1:]])
    values["x"], values["y"] = data[:, 0], data[:, 1]
    return values


# The NIST models and their analytic derivatives ∂f/∂b.
def misra1a(x, b):
    return b[0] * -np.expm1(-b[1] * x)


def misra1a_jac(x, b):
    e = np.exp(-b[1] * x)
    return np.stack([-np.expm1(-b[1] * x), b[0] * x * e], axis=1)


def thurber(x, b):
    return (b[0] + b[1] * x + b[2] * x**2 + b[3] * x**3) / (1 + b[4] * x + b[5] * x**2 + b[6] * x**3)


def thurber_jac(x, b):
    num = b[0] + b[1] * x + b[2] * x**2 + b[3] * x**3
    den = 1 + b[4] * x + b[5] * x**2 + b[6] * x**3
    powers = [np.ones_like(x), x, x**2, x**3]
    return np.stack(powers + [-num * p / den**2 for p in powers[1:]], axis=1) / np.stack(
        [den] * 4 + [np.ones_like(x)] * 3, axis=1
    )


def rat42(x, b):
    return b[0] / (1 + np.exp(b[1] - b[2] * x))


def rat42_jac(x, b):
    e = np.exp(b[1] - b[2] * x)
    d = 1 + e
    return np.stack([1 / d, -b[0] * e / d**2, b[0] * x * e / d**2], axis=1)


def rat43(x, b):
    return b[0] / (1 + np.exp(b[1] - b[2] * x)) ** (1 / b[3])


def rat43_jac(x, b):
    e = np.exp(b[1] - b[2] * x)
    d = 1 + e
    f = d ** (-1 / b[3])
    g = b[0] * f  # the curve
    return np.stack(
        [f, -g * e / (b[3] * d), g * x * e / (b[3] * d), g * np.log(d) / b[3] ** 2], axis=1
    )


def mgh09(x, b):
    return b[0] * (x**2 + x * b[1]) / (x**2 + x * b[2] + b[3])


def mgh09_jac(x, b):
    num = x**2 + x * b[1]
    den = x**2 + x * b[2] + b[3]
    return np.stack([num / den, b[0] * x / den, -b[0] * num * x / den**2, -b[0] * num / den**2], axis=1)


def eckerle4(x, b):
    return (b[0] / b[1]) * np.exp(-0.5 * ((x - b[2]) / b[1]) ** 2)


def eckerle4_jac(x, b):
    u = (x - b[2]) / b[1]
    e = np.exp(-0.5 * u**2)
    f = (b[0] / b[1]) * e
    return np.stack([e / b[1], -f / b[1] + f * u**2 / b[1], f * u / b[1]], axis=1)


MODELS = {
    "Misra1a": (misra1a, misra1a_jac),
    "Thurber": (thurber, thurber_jac),
    "Rat42": (rat42, rat42_jac),
    "Rat43": (rat43, rat43_jac),
    "MGH09": (mgh09, mgh09_jac),
    "Eckerle4": (eckerle4, eckerle4_jac),
}
CASES = [(name, start) for name in MODELS for start in ("start1", "start2")]


@pytest.mark.parametrize("name, start", CASES, ids=[f"{n}-{s}" for n, s in CASES])
def test_certified_parameters_and_standard_deviations(name: str, start: str) -> None:
    data = load_nonlinear_strd(name)
    function, jacobian = MODELS[name]
    result = fit_nonlinear(function, jacobian, data["x"], data["y"], data[start])
    assert result.converged, result.reason
    for i, (estimate, certified) in enumerate(zip(result.parameters, data["certified"], strict=True)):
        assert lre(estimate, certified) >= REQUIRED_LRE, (f"b{i + 1}", estimate, certified)
    for i, (estimate, certified) in enumerate(zip(result.standard_errors, data["certified_sd"], strict=True)):
        assert lre(estimate, certified) >= REQUIRED_LRE, (f"sd(b{i + 1})", estimate, certified)
    assert lre(result.sse, float(data["residual_sum_of_squares"][0])) >= REQUIRED_LRE
    assert lre(result.residual_sd, float(data["residual_sd"][0])) >= REQUIRED_LRE


@pytest.mark.parametrize("name", MODELS)
def test_reference_files_carry_their_source_and_certified_values(name: str) -> None:
    path = REFERENCE_DATA / f"nist_strd_{name.lower()}.csv"
    assert "NIST" in path.read_text().splitlines()[0]
    data = load_nonlinear_strd(name)
    assert data["start1"].size == data["start2"].size == data["certified"].size == data["certified_sd"].size


def test_a_fit_that_runs_out_of_evaluations_says_so() -> None:
    data = load_nonlinear_strd("MGH09")
    result = fit_nonlinear(mgh09, mgh09_jac, data["x"], data["y"], data["start1"], max_evaluations=3)
    assert not result.converged
    assert "within 3 evaluations" in result.reason
    assert np.all(np.isnan(result.standard_errors))


def test_parameters_the_data_cannot_separate_are_reported() -> None:
    # y = b1·b2·x: only the product is determined, so the Jacobian's columns are proportional.
    x = np.array([1.0, 2.0, 3.0, 4.0, 5.0])
    y = 2.0 * x + np.array([0.01, -0.02, 0.015, 0.0, -0.01])
    result = fit_nonlinear(
        lambda x, b: b[0] * b[1] * x, lambda x, b: np.stack([b[1] * x, b[0] * x], axis=1), x, y, np.array([1.0, 1.5])
    )
    assert not result.converged
    assert "cannot separate the parameters" in result.reason


def test_a_start_that_is_not_a_number_is_reported() -> None:
    data = load_nonlinear_strd("Misra1a")
    result = fit_nonlinear(misra1a, misra1a_jac, data["x"], data["y"], np.array([np.nan, 1e-4]))
    assert not result.converged
    assert "start values" in result.reason


def test_weights_enter_as_in_the_weighted_sum_of_squares() -> None:
    # Weights w make the fit equal to an unweighted fit of √w·y against √w·f (checked with the same
    # fitter on the rewritten problem) and equal to repeating a standard w times when w is whole.
    data = load_nonlinear_strd("Rat42")
    x, y = data["x"], data["y"]
    w = np.array([1, 2, 1, 3, 1, 1, 2, 1, 1], dtype=float)
    weighted = fit_nonlinear(rat42, rat42_jac, x, y, data["start2"], w)
    repeated = fit_nonlinear(rat42, rat42_jac, np.repeat(x, w.astype(int)), np.repeat(y, w.astype(int)), data["start2"])
    np.testing.assert_allclose(weighted.parameters, repeated.parameters, rtol=1e-9)
    assert weighted.sse == pytest.approx(repeated.sse, rel=1e-9)


def test_the_fitters_svd_is_numpys_to_the_last_bit_and_refuses_as_numpy_does() -> None:
    # numpy.linalg.svd is the reference: the fitter calls the same LAPACK routine through numpy's
    # binding, so U, s and Vᵀ must be the same numbers; a matrix it cannot decompose raises as numpy does.
    from curvewright.core.nonlinear import _thin_svd

    rng = np.random.default_rng(11)
    for n, p in ((6, 2), (24, 2), (24, 4), (40, 5)):
        a = rng.standard_normal((n, p)) * 10.0 ** rng.uniform(-3, 3, p)
        for quiet in (False, True):
            with np.errstate(invalid="ignore"):
                got = _thin_svd(a, quiet)
            for mine, numpys in zip(got, np.linalg.svd(a, full_matrices=False), strict=True):
                np.testing.assert_array_equal(mine, numpys)
    bad = np.full((5, 2), np.nan)
    with pytest.raises(np.linalg.LinAlgError):
        _thin_svd(bad)


def test_the_fits_are_the_same_through_the_public_routines(monkeypatch: pytest.MonkeyPatch) -> None:
    # Where a numpy or scipy release names or calls its compiled routines otherwise, the fits fall
    # back to numpy.linalg.svd, numpy.linalg.qr and scipy.optimize.leastsq: the same numbers.
    from curvewright.core import least_squares, nonlinear

    x = np.repeat([0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0], 3)
    y = (0.05 + 0.8 * x) * (1 + 0.03 * np.cos(7.0 * x))
    before = cw.compare(x, y, models=("linear", "quadratic", "power"), weightings=("none", "1/x", "1/y^2"))

    def refuse(*args: object, **kwargs: object) -> None:
        raise TypeError("called otherwise")

    for binding in (refuse, None):  # called otherwise, or not there at all
        monkeypatch.setattr(nonlinear, "_LMDER", binding)
        monkeypatch.setattr(nonlinear, "_SVD", binding)
        monkeypatch.setattr(least_squares, "_QR", (binding, binding))
        after = cw.compare(x, y, models=("linear", "quadratic", "power"), weightings=("none", "1/x", "1/y^2"))
        for a, b in zip(before.candidates, after.candidates, strict=True):
            for name in ("coefficients", "covariance", "leverage", "studentized_residuals", "cooks_distance"):
                np.testing.assert_array_equal(getattr(a.calibration, name), getattr(b.calibration, name))
            assert a.calibration.notes == b.calibration.notes
