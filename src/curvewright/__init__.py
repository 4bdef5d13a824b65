"""Curvewright: calibration curves for testing laboratories.

>>> import curvewright as cw
>>> cal = cw.fit([1, 2, 4, 8, 16], [0.11, 0.20, 0.41, 0.79, 1.62])
>>> q = cal.quantify([0.5])

Results need review by qualified laboratory personnel and must follow the laboratory's validated
procedures and local regulations.
"""

from ._version import __version__
from .core.acceptance import AcceptanceProfile, AcceptanceVerdict, available_profiles, load_profile
from .core.calibration import Calibration, fit
from .core.comparison import Candidate, ModelComparison, compare, mandel_test
from .core.errors import (
    CalibrationInputError,
    ConvergenceError,
    CurvewrightError,
    LimitsError,
    ProfileError,
    QuantitationInputError,
    WeightingError,
)
from .core.influence import InfluenceFlag
from .core.inverse import QuantFlag, Quantitation
from .core.lack_of_fit import LackOfFit
from .core.limits import DetectionLimits
from .core.models import Model
from .core.weighting import Weighting

CAUTION = (
    "Results need review by qualified laboratory personnel and must follow the laboratory's "
    "validated procedures and local regulations."
)

__all__ = [
    "CAUTION",
    "AcceptanceProfile",
    "AcceptanceVerdict",
    "Candidate",
    "ModelComparison",
    "available_profiles",
    "compare",
    "load_profile",
    "mandel_test",
    "Calibration",
    "CalibrationInputError",
    "ConvergenceError",
    "CurvewrightError",
    "DetectionLimits",
    "InfluenceFlag",
    "LackOfFit",
    "LimitsError",
    "Model",
    "ProfileError",
    "QuantFlag",
    "Quantitation",
    "QuantitationInputError",
    "Weighting",
    "WeightingError",
    "__version__",
    "fit",
]
