"""The numbers: fitting, diagnostics, comparison, inverse prediction, limits, acceptance.

numpy and scipy only; this package never imports Qt.
"""

from . import nonlinear_calibration  # noqa: E402,F401  (registers the fitter of the curves that are not polynomials)
