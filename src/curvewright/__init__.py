"""Curvewright: calibration curves for testing laboratories.

>>> import curvewright as cw
>>> cal = cw.fit([1, 2, 4, 8, 16], [0.11, 0.20, 0.41, 0.79, 1.62])
>>> q = cal.quantify([0.5])

Results need review by qualified laboratory personnel and must follow the laboratory's validated
procedures and local regulations.
"""

from __future__ import annotations

from ._version import __version__

TYPE_CHECKING = False
if TYPE_CHECKING:  # the names below are loaded on first use (see __getattr__)
    from typing import Any

    from .core.acceptance import AcceptanceProfile, AcceptanceVerdict, available_profiles, load_profile
    from .core.calibration import Calibration
    from .core.fitting import fit
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
    from .core.standard_additions import StandardAdditions, standard_additions
    from .core.weighting import Weighting

_PUBLIC = {
    "AcceptanceProfile": "acceptance", "AcceptanceVerdict": "acceptance",
    "available_profiles": "acceptance", "load_profile": "acceptance",
    "Calibration": "calibration", "fit": "fitting",
    "Candidate": "comparison", "ModelComparison": "comparison", "compare": "comparison",
    "mandel_test": "comparison",
    "CalibrationInputError": "errors", "ConvergenceError": "errors", "CurvewrightError": "errors", "LimitsError": "errors",
    "ProfileError": "errors", "QuantitationInputError": "errors", "WeightingError": "errors",
    "InfluenceFlag": "influence",
    "QuantFlag": "inverse", "Quantitation": "inverse",
    "LackOfFit": "lack_of_fit",
    "DetectionLimits": "limits",
    "Model": "models",
    "StandardAdditions": "standard_additions", "standard_additions": "standard_additions",
    "Weighting": "weighting",
}
"""Where each public name lives in :mod:`curvewright.core`. The package loads a name's module on
first use, so that ``import curvewright`` (and ``curvewright --version``) does not load numpy."""


def __getattr__(name: str) -> Any:
    module = _PUBLIC.get(name)
    if module is None:
        raise AttributeError(f"module 'curvewright' has no attribute {name!r}")
    from importlib import import_module

    value = getattr(import_module(f".core.{module}", __name__), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted({*globals(), *_PUBLIC})


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
    "StandardAdditions",
    "Weighting",
    "WeightingError",
    "__version__",
    "fit",
    "standard_additions",
]
