"""Every candidate calibration side by side, and a recommendation the analyst may overrule.

Statistics per candidate: residual SD, adjusted R², lack-of-fit p (when replicates allow), Mandel's
test for the pair linear/quadratic under the same weighting, Σ|%RE| of the standards, the number
of standards failing the acceptance profile, and AICc.

Mandel's fitting test (ISO 8466-1; DIN 38402-51): with s₁, s₂ the residual SDs of the straight line
and of the quadratic on N standards, DS² = (N − 2)·s₁² − (N − 3)·s₂², PG = DS²/s₂², compared with
F(1, N − 3) at 99 %. It equals the partial F of the x² term. Under weights estimated from the data
(a variance function, 1/s² from replicates) each fit has its own weights, and sums of squares under
different weights do not compare (the test rejected a true line in 5.5 % of simulated runs at a
nominal 1 %); the quadratic is then refitted with the line's weights for the test.

AICc (Hurvich & Tsai 1989, Biometrika 76:297) from the Gaussian log-likelihood of the weighted fit,
ln L = −n/2·ln(2π·SSE/n) − n/2 + ½·Σ ln wᵢ (weights summing to n), with k = p + 1 parameters (one
more for a fitted variance function): AICc = −2 ln L + 2k + 2k(k + 1)/(n − k − 1). Weights taken from
the data (1/y, 1/s², a variance function) make it a guide rather than a strict likelihood comparison.

How the recommendation is reached (the simplest adequate model):
1. Weighting: unweighted unless the variance evidence shows the scatter growing with the response
   (:mod:`.variance`: a variance function fitted to the replicates of all levels pooled, with the
   ISO 8466-1 end-level F-test deciding only where fewer than three levels are replicated). Without
   replicates the evidence is missing and the fit stays unweighted: the Σ|%RE| comparison alone
   favours 1/x² even for constant variance (Tellinghuisen 2007, Analyst 132:536).
2. Model, under each weighting: the straight line unless its lack-of-fit test (p < 0.05) or
   Mandel's test (p < 0.01) rejects it, and then the quadratic only if it does not turn over
   inside the calibrated range and its own lack-of-fit test (p < 0.05) does not reject it. When
   neither may be used and no curve of steps 4 and 5 replaces them, nothing is recommended
   (``ModelComparison.no_recommendation`` says why).
3. Among weightings, when weighting is needed: the fixed weighting in concentration whose assumed
   power of the mean (1/x²: SD ∝ mean, 1/x: SD ∝ √mean) lies in the 95 % interval of the fitted
   power; else the fitted variance function itself; else a 1/y-type weighting that matches; and
   without a fitted power the smallest Σ|%RE| (Almeida, Castel-Branco & Falcão 2002, J. Chromatogr.
   B 774:215), the simpler weighting winning ties within 1 %. 1/s² from replicates is refused by the
   fit below 10 replicates per level (see :mod:`.weighting`). In simulation (6 levels from 2 to 100,
   duplicates) this recommends a weighting for a true 5 % CV and none for a constant SD in at least
   90 % of calibrations each (``tests/core/test_comparison.py``).
The proportional model is listed on request and never recommended: forcing through the origin is a
decision for the laboratory's procedure; the reasons say when the intercept is indistinguishable
from zero.

The average response factor is listed when asked for (``models``) and whenever the profile has rules
on the whole curve (the environmental profile; :mod:`.curve_rules`). Under such a profile it is
recommended when its RF %RSD is within the profile's limit and its standards pass the profile: the
simplest calibration the method allows. Otherwise the fitted curve chosen as above is recommended,
and the reasons give the RF %RSD and whether that curve meets the profile's r or r² rule.
Anchor points (standards a ligand-binding assay places beyond the range of quantitation to fix a
logistic curve's asymptotes; ``anchor_points``) are handled as :func:`~.run_analysis.analyse_run`
fits them: the logistic candidates fit them as anchor points, and every other candidate is fitted
without them, since beyond the calibrated range a polynomial, a power curve or a response factor has no
asymptote for them to fix (its notes say so). No candidate judges them for acceptance, counts them
among the standards failing or adds their relative errors to Σ|%RE|; the span of the power curve is
that of the other standards. AICc then compares only candidates fitted to the same standards.
The curves that are not polynomials (see :mod:`.nonlinear_calibration`) are considered where they apply,
under the fixed weightings (a variance function may be chosen for them, but the comparison does not try
every one: each takes several nonlinear fits and a jackknife of them). The power curve the span brings in is
fitted under a variance function too when steps 1 to 3 weight the polynomials by one, so that step 5 compares
it under the weighting the data led to (the candidate is listed after that weighting's other rows):
4. Logistic curves (4PL, 5PL): on a ligand-binding profile, when anchor points are marked, and
   whenever asked for. On a ligand-binding profile, and with anchor points (which no other curve
   takes), the recommendation is a logistic curve: weighted 1/y² when the variance
   evidence shows the scatter growing with the response (a constant CV, common practice for
   immunoassay responses), else unweighted; the 4PL unless the 5PL's asymmetry lowers the weighted
   sum of squares significantly (extra-sum-of-squares F-test on (1, n − 5) df at 5 %; same weights
   for both). Elsewhere they are listed, and recommended only when the polynomial chosen lacks fit
   (p < 0.05) and the 4PL does not.
5. The power curve: whenever the positive standards span at least two decades (and whenever asked).
   It is recommended only over at least two decades, when under the chosen weighting (a variance function
   included, see above) its AICc is
   more than 2 below the chosen polynomial's (a difference of 2 as "substantial" is common practice;
   Burnham & Anderson, *Model Selection and Multimodel Inference*, 2nd ed., 2002, §2.6, from
   memory) and its lack-of-fit test, where there is one, does not reject it.
Whatever the steps choose, a candidate its own lack-of-fit test rejects (p < 0.05; a straight line also
Mandel's test) is not recommended: ``ModelComparison.no_recommendation`` names the test and its p value.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from .acceptance import AcceptanceProfile, AcceptanceVerdict, load_profile
from ._arrays import FloatArray, as_finite_vector
from .calibration import Calibration, SharedWeights, fit_weightings
from .fitting import fit
from .distributions import f_quantile, f_upper_tail
from .errors import CalibrationInputError
from .levels import group_levels
from .least_squares import solve_weighted
from .models import Model, make_basis
from .variance import VarianceEvidence, variance_evidence
from .weighting import Weighting
from .notation import entered, figures, fixed, p_equals

POWER_MIN_DECADES = 2.0
"""The power curve is considered, and may be recommended, when the positive standards span at least this many decades."""
FIVE_PL_ALPHA = 0.05
"""Significance level of the 5PL's extra parameter against the 4PL (common practice)."""
AICC_MARGIN = 2.0
"""AICc difference taken as substantial support for the power curve over a polynomial (common practice)."""
NONLINEAR_WEIGHTINGS = (
    Weighting.NONE, Weighting.INVERSE_X, Weighting.INVERSE_X2, Weighting.INVERSE_Y, Weighting.INVERSE_Y2,
    Weighting.INVERSE_S2,
)
"""The weightings under which the comparison tries the nonlinear curves it brings in (not the variance functions,
which they accept but which cost several nonlinear fits each)."""
LACK_OF_FIT_ALPHA = 0.05
"""Lack-of-fit significance level (common practice)."""
MANDEL_ALPHA = 0.01
"""Mandel's test at 99 % (ISO 8466-1)."""
R_SQUARED_NOTE = (
    "note: R² is taken about the mean response for every model, the line through the origin too, so it "
    "compares models under one weighting; each weighting measures the scatter differently, so R² does not "
    "compare weightings"
)
TIE_FRACTION = 0.01
"""Σ|%RE| values within 1 % of each other count as a tie; the simpler weighting wins."""


@dataclass(frozen=True)
class MandelTest:
    """Mandel's fitting test of the straight line against the quadratic, one weighting."""

    weighting: Weighting
    statistic: float
    df: tuple[int, int]
    p_value: float
    critical_value: float

    @property
    def significant(self) -> bool:
        return self.p_value < MANDEL_ALPHA


@dataclass(frozen=True, eq=False)
class Candidate:
    """One model × weighting in the comparison."""

    calibration: Calibration
    verdict: AcceptanceVerdict
    mandel: MandelTest | None
    aicc: float | None
    notes: tuple[str, ...] = ()
    """What the comparison did with this candidate beyond fitting it (anchor points left out of its fit)."""

    @property
    def model(self) -> Model:
        return self.calibration.model

    @property
    def weighting(self) -> Weighting:
        return self.calibration.weighting

    @property
    def label(self) -> str:
        if self.model is Model.AVERAGE_RF:
            return "average-rf, the mean of the standards' response factors"
        return f"{self.model.value}, {self.weighting.description}"

    @property
    def residual_sd(self) -> float:
        return self.calibration.residual_sd

    @property
    def adjusted_r_squared(self) -> float:
        return self.calibration.adjusted_r_squared

    @property
    def lack_of_fit_p(self) -> float | None:
        return self.calibration.lack_of_fit.p_value

    @property
    def sum_abs_relative_error(self) -> float:
        """Σ|%RE| over the standards judged for acceptance (anchor points of a logistic curve left out)."""
        cal = self.calibration
        anchors = getattr(cal, "anchors", None)
        if anchors is None or not np.any(anchors):
            return cal.sum_abs_relative_error
        values = cal.relative_error[~anchors]
        return float(np.sum(np.abs(values[np.isfinite(values)])))

    @property
    def standards_failing(self) -> int:
        return int(np.count_nonzero(self.verdict.judged & ~self.verdict.passing))


@dataclass(frozen=True)
class SkippedCandidate:
    model: Model
    weighting: Weighting
    reason: str


@dataclass(frozen=True, eq=False)
class ModelComparison:
    """Result of :func:`compare`. ``recommended`` is a suggestion; the choice stays the user's."""

    candidates: tuple[Candidate, ...]
    skipped: tuple[SkippedCandidate, ...]
    variance: VarianceEvidence
    mandel: tuple[MandelTest, ...]
    recommended: Candidate
    reasons: tuple[str, ...]
    profile: str
    notes: tuple[str, ...] = (R_SQUARED_NOTE,)
    no_recommendation: str = ""
    """Why no candidate is acceptable, when none is (empty otherwise): the straight line is rejected by
    its lack-of-fit or Mandel's test and no other candidate replaces it (the quadratic turns over
    inside the range, could not be fitted, or is rejected by its own lack-of-fit test), the candidate
    the steps chose (a logistic curve under a ligand-binding profile, say) is rejected by its own
    lack-of-fit test, or no candidate shows a significant regression.
    ``recommended`` then holds the candidate the evidence shows first, which is not a recommendation."""

    @property
    def recommendation(self) -> Candidate | None:
        """The recommended candidate, or None when no candidate is acceptable (``no_recommendation`` says why)."""
        return None if self.no_recommendation else self.recommended

    def candidate(self, model: Model | str, weighting: Weighting | str) -> Candidate:
        m, w = Model.parse(model), Weighting.parse(weighting)
        for c in self.candidates:
            if c.model is m and c.weighting is w:
                return c
        raise KeyError(f"no candidate {m.value}, {w.value} in this comparison")


def compare(
    concentration: object,
    response: object,
    *,
    models: tuple[Model | str, ...] = ("linear", "quadratic"),
    weightings: tuple[Weighting | str, ...] = tuple(w.value for w in Weighting),
    include_proportional: bool = False,
    response_sd: object | None = None,
    profile: AcceptanceProfile | str = "general",
    level_tolerance: float | None = None,
    level_labels: Sequence[str] | None = None,
    anchor_points: Sequence[bool] | None = None,
) -> ModelComparison:
    """Fit every candidate model × weighting and recommend the simplest adequate one.

    Candidates that cannot be fitted (1/x with a zero standard, 1/s² without replicates…) are listed
    in ``skipped`` with the reason, never silently left out. ``anchor_points`` (one True/False per
    standard) marks the anchor points of a logistic curve: fitted as such by the logistic candidates,
    left out of every other candidate's fit, judged by none (see the module docstring).
    """
    model_list = [Model.parse(m) for m in models]
    asked = set(model_list)
    if include_proportional and Model.PROPORTIONAL not in model_list:
        model_list.append(Model.PROPORTIONAL)
    weighting_list = [Weighting.parse(w) for w in weightings]
    rules = profile if isinstance(profile, AcceptanceProfile) else load_profile(profile)
    x = as_finite_vector(concentration, "concentration", CalibrationInputError)
    anchors = _anchor_mask(anchor_points, x.size)
    # anchor points are taken by a logistic curve alone: with them the run can be fitted by no other
    logistic_because = ("ligand-binding profile" if is_ligand_binding(rules) else
                        "anchor points are marked, and only a logistic curve takes them" if anchors.any() else None)
    decades = _decades(x[~anchors])
    added = set()
    logistic_wanted = logistic_because is not None
    for extra, wanted in ((Model.FOUR_PL, logistic_wanted), (Model.FIVE_PL, logistic_wanted),
                          (Model.POWER, decades is not None and decades >= POWER_MIN_DECADES)):
        if wanted and extra not in model_list:
            model_list.append(extra)
            added.add(extra)

    fits: dict[tuple[Model, Weighting], Calibration] = {}
    skipped: list[SkippedCandidate] = []
    first_error: CalibrationInputError | None = None
    shared_levels = group_levels(x, level_tolerance, level_labels) if x.size else None
    # every candidate but the logistic curves is fitted to the standards that are not anchor points
    y = as_finite_vector(response, "response", CalibrationInputError) if anchors.any() else response
    sd = response_sd
    inner_x, inner_y, inner_levels = x, y, shared_levels
    if anchors.any():
        if np.size(y) != x.size:
            raise CalibrationInputError(
                f"standards: {x.size} concentrations but {np.size(y)} responses; each standard needs both."
            )
        keep = ~anchors
        inner_x, inner_y = x[keep], np.asarray(y)[keep]
        labels = None if level_labels is None else [label for label, k in zip(level_labels, keep, strict=True) if k]
        inner_levels = group_levels(inner_x, level_tolerance, labels)
        if response_sd is not None:
            sd = np.asarray(as_finite_vector(response_sd, "response SD", CalibrationInputError))
            sd = sd[keep] if sd.size == x.size else sd
    left_out = _left_out_words(int(anchors.sum())) if anchors.any() else None
    wants_rf = Model.AVERAGE_RF in model_list or rules.curve is not None
    model_list = [m for m in model_list if m is not Model.AVERAGE_RF]
    if wants_rf:
        try:  # one fit: the mean of the response factors takes no other weighting
            fits[(Model.AVERAGE_RF, Weighting.INVERSE_X2)] = fit(
                inner_x, inner_y, Model.AVERAGE_RF, level_tolerance=level_tolerance, levels=inner_levels
            )
        except CalibrationInputError as exc:
            skipped.append(SkippedCandidate(Model.AVERAGE_RF, Weighting.INVERSE_X2, str(exc)))
            first_error = exc
    # the polynomials of one degree are fitted under every weighting together (the same numbers as one by one)
    # (the weights of each weighting made once for all these models)
    shared_weights: SharedWeights = {}
    together = {
        m: dict(zip(weighting_list, fit_weightings(
            inner_x, inner_y, m, weighting_list,
            response_sd=[sd if w is Weighting.INVERSE_S2 else None for w in weighting_list],
            level_tolerance=level_tolerance, levels=inner_levels, shared_weights=shared_weights,
        ), strict=True))
        for m in model_list if m.is_polynomial and m not in added
    }
    if Model.POWER in model_list:
        # the power curve under every weighting it takes, the standards checked and its starts found once
        from .nonlinear_calibration import fit_curve_weightings  # loaded only when a curve is fitted

        power_weightings = [w for w in weighting_list if Model.POWER not in added or w in NONLINEAR_WEIGHTINGS]
        together[Model.POWER] = dict(zip(power_weightings, fit_curve_weightings(
            inner_x, inner_y, Model.POWER, power_weightings,
            response_sd=[sd if w is Weighting.INVERSE_S2 else None for w in power_weightings],
            level_tolerance=level_tolerance, levels=inner_levels, shared_weights=shared_weights,
        ), strict=True))
    for w in weighting_list:
        for m in model_list:
            if m in added and w not in NONLINEAR_WEIGHTINGS:
                continue  # a curve brought in by the profile or the span, under the weightings it accepts
            logistic = m in (Model.FOUR_PL, Model.FIVE_PL)
            try:
                if m in together:
                    result = together[m][w]
                    if isinstance(result, CalibrationInputError):
                        raise result
                    fits[(m, w)] = result
                elif logistic:
                    fits[(m, w)] = fit(
                        x, y, m, w, response_sd=response_sd if w is Weighting.INVERSE_S2 else None,
                        level_tolerance=level_tolerance, levels=shared_levels,
                        anchor_points=anchors if anchors.any() else None,
                    )
                else:
                    fits[(m, w)] = fit(
                        inner_x, inner_y, m, w, response_sd=sd if w is Weighting.INVERSE_S2 else None,
                        level_tolerance=level_tolerance, levels=inner_levels,
                    )
            except CalibrationInputError as exc:
                skipped.append(SkippedCandidate(m, w, str(exc)))
                first_error = first_error or exc
    if not fits:
        raise CalibrationInputError(f"no candidate model could be fitted: {first_error}")

    plain = fits.get((Model.LINEAR, Weighting.NONE)) or next(iter(fits.values()))
    evidence = variance_evidence(plain.response, plain.levels, plain.residuals)
    mandel = tuple(
        _mandel(fits[(Model.LINEAR, w)], fits[(Model.QUADRATIC, w)])
        for w in weighting_list
        if (Model.LINEAR, w) in fits and (Model.QUADRATIC, w) in fits
    )
    mandel_by_weighting = {t.weighting: t for t in mandel}
    verdicts = rules.evaluate_all(list(fits.values()))
    log_weights: dict[int, tuple[FloatArray, float]] = {}  # Σ ln w of each weights array, the models sharing it
    candidates = tuple(
        Candidate(
            calibration=cal,
            verdict=verdict,
            mandel=mandel_by_weighting.get(w) if m.has_intercept else None,
            aicc=_aicc(cal, log_weights),
            notes=(left_out(m),) if left_out is not None else (),
        )
        for ((m, w), cal), verdict in zip(fits.items(), verdicts, strict=True)
    )
    if not any(c.calibration.regression.significant for c in candidates):
        recommended = next((c for c in candidates if c.model is Model.LINEAR and c.weighting is Weighting.NONE), candidates[0])
        reasons = [
            recommended.calibration.regression.words,
            "no candidate can be recommended: check the standards' concentrations and responses",
        ]
        refused = f"no candidate shows a significant regression ({recommended.calibration.regression.words})"
    else:
        recommended, reasons = _recommend(candidates, evidence, mandel_by_weighting)
        w = recommended.weighting
        if (Model.POWER in added and w.variance_function is not None and (Model.POWER, w) not in fits
                and decades is not None and decades >= POWER_MIN_DECADES):
            # the power curve brought in by the span is tried under the variance function the data led to
            # as well, so that it is compared under the weighting the polynomials were judged by (step 5)
            candidates = _with_power_under(candidates, w, inner_x, inner_y, level_tolerance, inner_levels, rules,
                                           left_out, skipped, log_weights)
            # the same polynomial and weighting again (a power curve takes no part in that step), its reasons
            # now naming the new row among the candidates that pass
            recommended, reasons = _recommend(candidates, evidence, mandel_by_weighting)
        polynomial = recommended
        recommended, reasons = _consider_curves(
            candidates, recommended, list(reasons), evidence, logistic_because, decades, asked | added
        )
        if recommended is not polynomial and recommended.weighting is polynomial.weighting and evidence.sd_power is not None:
            # the weighting reason quotes the weights of the model recommended, as its Σ|%RE| listing does
            before, after = (_weights_use(c, evidence.sd_power) for c in (polynomial, recommended))
            reasons = [r.replace(before, after) if r.startswith(WEIGHTING_NEEDED) else r for r in reasons]
        if rules.curve is not None:
            recommended, reasons = _under_curve_rules(candidates, skipped, recommended, reasons, rules)
        refused = _rejected(recommended, candidates)
        if refused:
            reasons = [f"no candidate is acceptable, so none is recommended: {refused}"] + list(reasons)
    reasons = [r + _weighted_listing(recommended, candidates) if r.startswith(WEIGHTING_NEEDED) else r for r in reasons]
    if anchors.any():
        reasons = list(reasons) + [_anchor_reason(x[anchors])]
    reasons = list(reasons) + [R_SQUARED_NOTE]
    return ModelComparison(
        candidates=candidates,
        skipped=tuple(skipped),
        variance=evidence,
        mandel=mandel,
        recommended=recommended,
        reasons=tuple(reasons),
        profile=rules.name,
        no_recommendation=refused,
    )


def _with_power_under(
    candidates: tuple[Candidate, ...], weighting: Weighting, x: FloatArray, y: object, level_tolerance: float | None,
    levels: object, rules: AcceptanceProfile, left_out: Callable[[Model], str] | None, skipped: list[SkippedCandidate],
    log_weights: dict[int, tuple[FloatArray, float]],
) -> tuple[Candidate, ...]:
    """``candidates`` with the power curve under ``weighting`` (a variance function) placed after that
    weighting's other rows, fitted as :func:`~.fitting.fit` fits it alone; when it cannot be fitted it is
    added to ``skipped`` with the reason instead."""
    try:
        cal = fit(x, y, Model.POWER, weighting, level_tolerance=level_tolerance, levels=levels)
    except CalibrationInputError as exc:
        skipped.append(SkippedCandidate(Model.POWER, weighting, str(exc)))
        return candidates
    power = Candidate(calibration=cal, verdict=rules.evaluate_all([cal])[0], mandel=None,
                      aicc=_aicc(cal, log_weights), notes=(left_out(Model.POWER),) if left_out is not None else ())
    at = max(i for i, c in enumerate(candidates) if c.weighting is weighting) + 1
    return candidates[:at] + (power,) + candidates[at:]


def _rejected(chosen: Candidate, candidates: tuple[Candidate, ...]) -> str:
    """Why ``chosen`` may not be recommended, empty when it may. Every candidate with a lack-of-fit
    test is rejected by it (p < 0.05), and a straight line also by Mandel's test (p < 0.01): such a
    candidate is left as the choice only because no other candidate replaces it (:func:`_model_for`,
    :func:`_consider_curves`; a logistic curve a ligand-binding profile or anchor points call for)."""
    if chosen.model is Model.LINEAR:
        tests = _line_rejected_by(chosen)
        if not tests:
            return ""
        return (f"the straight line ({chosen.weighting.description}) is rejected by {tests}, and no quadratic can "
                "replace it (it turns over inside the calibrated range, or could not be fitted); narrow the range "
                "or check the standards, or choose a model yourself with a recorded reason")
    lof = chosen.calibration.lack_of_fit
    if not (lof.available and lof.significant(LACK_OF_FIT_ALPHA)):
        return ""
    if chosen.model is not Model.QUADRATIC:
        return (f"the {_rejected_name(chosen)} ({chosen.weighting.description}) is rejected by its lack-of-fit test "
                f"(p = {figures(lof.p_value, 3)}): it does not follow the data, and no other candidate replaces it; "
                "narrow the range or check the standards, or choose a model yourself with a recorded reason")
    line = next((c for c in candidates if c.model is Model.LINEAR and c.weighting is chosen.weighting), None)
    line_tests = _line_rejected_by(line) if line is not None else ""
    line_words = (f"the straight line is rejected by {line_tests}" if line_tests
                  else "the straight line could not be fitted")
    return (f"the quadratic ({chosen.weighting.description}) is rejected by its lack-of-fit test ({p_equals(lof.p_value, 3)}) "
            f"and {line_words}: neither model follows the data; narrow the range or check the standards, or choose "
            "a model yourself with a recorded reason")


def _rejected_name(chosen: Candidate) -> str:
    """The candidate's model in the words of a reason ("4PL logistic curve", "power curve")."""
    if chosen.model in (Model.FOUR_PL, Model.FIVE_PL):
        return f"{chosen.model.value.upper()} logistic curve"
    return _SHORT_NAMES.get(chosen.model, f"a {chosen.model.value}").split(" ", 1)[1]


def _line_rejected_by(line: Candidate) -> str:
    """The tests that reject the straight line ``line``, in words ("" when none does)."""
    lof = line.calibration.lack_of_fit
    tests = []
    if lof.significant(LACK_OF_FIT_ALPHA):
        tests.append(f"its lack-of-fit test ({p_equals(lof.p_value, 3)})")
    if line.mandel is not None and line.mandel.significant:
        tests.append(f"Mandel's test ({p_equals(line.mandel.p_value, 3)})")
    return " and ".join(tests)


def mandel_test(linear: Calibration, quadratic: Calibration) -> MandelTest:
    """Mandel's fitting test of ``linear`` against ``quadratic`` (same standards and weighting)."""
    if linear.model is not Model.LINEAR or quadratic.model is not Model.QUADRATIC:
        raise CalibrationInputError("Mandel's test compares a straight line with a quadratic.")
    if linear.weighting is not quadratic.weighting or linear.n_standards != quadratic.n_standards:
        raise CalibrationInputError("Mandel's test needs both fits on the same standards with the same weighting.")
    return _mandel(linear, quadratic)


def _mandel(linear: Calibration, quadratic: Calibration) -> MandelTest:
    n = linear.n_standards
    s1, s2 = linear.residual_sd**2, quadratic.residual_sd**2
    if linear.weight_model.estimated:
        # Weights estimated from the data differ between the two fits; the statistic compares sums
        # of squares, which only means something under one set of weights: the line's.
        w = linear.weights
        basis = make_basis(Model.QUADRATIC, linear.concentration, w)
        same_weights = solve_weighted(basis.design(linear.concentration), linear.response, w)
        s2 = same_weights.sse / (n - 3)
    # The line is the quadratic without its x² term, so under one set of weights its sum of squares is
    # never the smaller: DS² ≥ 0, and a negative difference is round-off of two equal sums (a line
    # with no curvature). It is zero then, and so is PG (ISO 8466-1: the test value is DS²/s₂² ≥ 0).
    ds2 = max((n - 2) * s1 - (n - 3) * s2, 0.0)
    pg = ds2 / s2 if s2 > 0 else (np.inf if ds2 > 0 else 0.0)
    df = (1, n - 3)
    return MandelTest(
        weighting=linear.weighting,
        statistic=float(pg),
        df=df,
        p_value=f_upper_tail(pg, *df),
        critical_value=f_quantile(1 - MANDEL_ALPHA, *df),
    )


def _aicc(cal: Calibration, log_weights: dict[int, tuple[FloatArray, float]] | None = None) -> float | None:
    """AICc of ``cal`` (module docstring). ``log_weights``: Σ ln w kept by weights array, for a caller
    whose candidates share their weights (the models of a screen under one fixed weighting)."""
    n = cal.n_standards
    k = cal.n_parameters + 1 + (1 if cal.weight_model.variance_fit is not None else 0)
    if n - k - 1 <= 0 or cal.sse <= 0:
        return None
    w = cal.weights
    kept = None if log_weights is None else log_weights.get(id(w))
    if kept is None or kept[0] is not w:
        kept = (w, float(np.sum(np.log(w))))  # the array kept beside its sum, so that its id stays its own
        if log_weights is not None:
            log_weights[id(w)] = kept
    log_l = -0.5 * n * np.log(2 * np.pi * cal.sse / n) - 0.5 * n + 0.5 * kept[1]
    return float(-2 * log_l + 2 * k + 2 * k * (k + 1) / (n - k - 1))


def _model_for(
    candidates: dict[Model, Candidate], mandel: MandelTest | None, weighting: Weighting
) -> tuple[Candidate, list[str]]:
    """Straight line or quadratic under one weighting, with the reasons."""
    linear = candidates.get(Model.LINEAR)
    quadratic = candidates.get(Model.QUADRATIC)
    reasons: list[str] = []
    if linear is None:
        assert quadratic is not None
        return quadratic, ["the straight line could not be fitted"]
    lof = linear.calibration.lack_of_fit
    lof_rejects = lof.significant(LACK_OF_FIT_ALPHA)
    mandel_rejects = mandel.significant if mandel is not None else False
    if lof.available:
        reasons.append(
            f"straight line lack-of-fit: F = {figures(lof.f_statistic, 4)} on ({lof.df_lack_of_fit}, {lof.df_pure_error}) df, "
            f"{p_equals(lof.p_value, 3)} ({'significant' if lof_rejects else 'not significant'} at {entered(LACK_OF_FIT_ALPHA)})"
        )
    else:
        reasons.append(f"no lack-of-fit test for the straight line: {lof.reason}")
    if mandel is not None:
        reasons.append(
            f"Mandel's test: PG = {figures(mandel.statistic, 4)}, {p_equals(mandel.p_value, 3)} "
            f"({'the quadratic fits significantly better' if mandel_rejects else 'the quadratic is no significant improvement'} at 99 %)"
        )
    if not (lof_rejects or mandel_rejects):
        reasons.append("the straight line is adequate, so the simpler model is kept")
        return linear, reasons
    if quadratic is None:
        reasons.append("the straight line is rejected but no quadratic could be fitted; the straight line is shown")
        return linear, reasons
    if quadratic.calibration.turns_over_in_range:
        reasons.append(
            "the straight line is rejected, but the quadratic turns over inside the calibrated range; "
            "narrow the range rather than use either"
        )
        return linear, reasons
    q_lof = quadratic.calibration.lack_of_fit
    if q_lof.available and q_lof.significant(LACK_OF_FIT_ALPHA):
        reasons.append(
            f"the straight line is rejected, and the quadratic also lacks fit ({p_equals(q_lof.p_value, 3)}), so it "
            "cannot replace it"
        )
        return quadratic, reasons
    reasons.append("the straight line is rejected, so the quadratic is recommended")
    return quadratic, reasons


def _recommend(
    candidates: tuple[Candidate, ...], evidence: VarianceEvidence, mandel: dict[Weighting, MandelTest]
) -> tuple[Candidate, list[str]]:
    by_weighting: dict[Weighting, dict[Model, Candidate]] = {}
    for c in candidates:
        if c.model.has_intercept:
            by_weighting.setdefault(c.weighting, {})[c.model] = c
    reasons = [evidence.summary]
    if not by_weighting:
        only = candidates[0]
        return only, reasons + [f"neither the straight line nor the quadratic could be fitted; {only.label} is shown"]
    if evidence.heteroscedastic and any(w is not Weighting.NONE for w in by_weighting):
        choices = {
            w: _model_for(models, mandel.get(w), w)[0] for w, models in by_weighting.items() if w is not Weighting.NONE
        }
        chosen, why = _weighting_for(evidence, choices)
        reasons.append(f"{WEIGHTING_NEEDED}{why}")  # the Σ|%RE| listing follows in compare, of the model recommended
        _, model_reasons = _model_for(by_weighting[chosen.weighting], mandel.get(chosen.weighting), chosen.weighting)
        reasons.extend(model_reasons)
    else:
        weighting = Weighting.NONE if Weighting.NONE in by_weighting else next(iter(by_weighting))
        if evidence.heteroscedastic is None:
            reasons.append(
                "without replicates at the ends of the range weighting cannot be justified from the "
                "data; the unweighted fit is kept (replicate the lowest and highest standards to test)"
            )
        elif evidence.heteroscedastic is False:
            reasons.append(
                "the tests find no significant change of the scatter, so the unweighted fit is kept; "
                "that is not proof of a constant scatter (see the variance evidence)"
            )
        chosen, model_reasons = _model_for(by_weighting[weighting], mandel.get(weighting), weighting)
        reasons.extend(model_reasons)
    failing = chosen.standards_failing
    if failing:
        reasons.append(f"{failing} standard(s) fall outside the acceptance limits with this choice")
    if not chosen.verdict.passed:
        others = [c.label for c in candidates if c.verdict.passed]
        reasons.append(
            "this choice fails the acceptance profile"
            + (f"; candidates that pass: {', '.join(others)}" if others else "; no candidate passes it")
        )
    reasons.extend(_intercept_note(chosen))
    return chosen, reasons


def _under_curve_rules(
    candidates: tuple[Candidate, ...], skipped: list[SkippedCandidate], curve: Candidate, reasons: list[str],
    rules: AcceptanceProfile,
) -> tuple[Candidate, list[str]]:
    """The average response factor when the profile's RF %RSD rule and its standards allow it, else ``curve``."""
    assert rules.curve is not None
    limit = rules.curve.max_rf_rsd_percent
    rf = next((c for c in candidates if c.model is Model.AVERAGE_RF), None)
    if rf is None:
        why = next((s.reason for s in skipped if s.model is Model.AVERAGE_RF), "it was not fitted")
        return curve, [f"the average response factor could not be used: {why}"] + reasons
    rsd = rf.calibration.rf_rsd_percent
    assert rsd is not None
    if rsd <= limit and rf.verdict.passed:
        return rf, [
            f"the response factors' %RSD is {figures(rsd, 3)} %, within the profile's {entered(limit)} %, and every rule of "
            f"the profile passes, so the average response factor (RF = {figures(rf.calibration.coefficients[1], 6)}) is "
            "the simplest adequate calibration",
            f"had a fitted curve been needed it would have been the {curve.label}",
        ]
    # a fitted curve its own lack-of-fit test rejects is not recommended (the first reason says why): say so here too
    refused = bool(_rejected(curve, candidates))
    outcome = ("a fitted curve is needed, but none is recommended (see the first reason)" if refused
               else "a fitted curve is recommended")
    if rsd <= limit:
        failing = "; ".join(r for r in rf.verdict.reasons if r.startswith("FAIL"))
        head = (f"the response factors' %RSD is {figures(rsd, 3)} %, within the profile's {entered(limit)} %, but the average "
                f"response factor fails the profile ({failing}), so {outcome}")
    else:
        head = (f"the response factors' %RSD is {figures(rsd, 3)} %, above the profile's {entered(limit)} %, so the average "
                f"response factor may not be used and {outcome}")
    curve_words = [r for r in curve.verdict.reasons if "r = " in r or "r² = " in r]
    name = f"the {curve.label}, shown but not recommended" if refused else "the recommended curve"
    return curve, [head] + reasons + [f"{name}: {w}" for w in curve_words]


IMPLIED_POWER = {
    Weighting.INVERSE_X2: 1.0, Weighting.INVERSE_X: 0.5, Weighting.INVERSE_Y2: 1.0, Weighting.INVERSE_Y: 0.5,
}
"""θ of SD ∝ mean^θ that each fixed weighting assumes (1/x² and 1/y²: a constant relative SD)."""


def _weighting_for(evidence: VarianceEvidence, choices: dict[Weighting, Candidate]) -> tuple[Candidate, str]:
    """The weighting the variance evidence points to, and why.

    In order: the fixed weighting in concentration (1/x², 1/x) whose θ lies in the 95 % interval of
    the fitted θ, the nearer if both do; otherwise the fitted variance function itself (power, then
    two-component); otherwise the 1/y-type weighting whose θ lies in the interval; and only without a
    fitted θ (too few replicated levels) the smallest Σ|%RE| (Almeida, Castel-Branco & Falcão 2002),
    the simpler weighting winning ties within 1 %.
    """
    theta, interval = evidence.sd_power, evidence.power_interval
    if theta is not None and interval is not None:
        low, high = interval
        shape = f"the replicate SD grows as (mean response)^{fixed(theta, 2)} (95 % interval {fixed(low, 2)} to {fixed(high, 2)})"
        for group in ((Weighting.INVERSE_X2, Weighting.INVERSE_X), (Weighting.POWER, Weighting.TWO_COMPONENT),
                      (Weighting.INVERSE_Y2, Weighting.INVERSE_Y)):
            fitting = [w for w in group if w in choices and (w not in IMPLIED_POWER or low <= IMPLIED_POWER[w] <= high)]
            if fitting:
                w = min(fitting, key=lambda v: abs(IMPLIED_POWER.get(v, theta) - theta))
                if w in IMPLIED_POWER:
                    return choices[w], f"{shape}, which {w.value} weights (θ = {entered(IMPLIED_POWER[w])}) match"
                return choices[w], (f"{shape}; {_in_concentration_words(choices, low, high)}, so the weights follow a variance "
                                    f"function fitted to all standards ({w.value}): {_weights_use(choices[w], theta)}"
                                    + _in_response_words(choices, low, high))
    weighted = list(choices.values())
    best = min(c.sum_abs_relative_error for c in weighted)
    tied = [c for c in weighted if c.sum_abs_relative_error <= best * (1 + TIE_FRACTION) + 1e-12]
    order = list(Weighting)
    chosen = min(tied, key=lambda c: order.index(c.weighting))
    return chosen, (
        f"{chosen.weighting.value} gives the smallest sum of absolute relative errors"
        if len(tied) == 1
        else f"{chosen.weighting.value} is the simplest within {TIE_FRACTION:.0%} of the smallest sum of absolute relative errors"
    )


def _in_concentration_words(choices: dict[Weighting, Candidate], low: float, high: float) -> str:
    """Why no weighting in concentration was taken, once neither one's θ lies in the interval: each
    either does not match or could not be fitted (a blank rules out 1/x-type weights). When every fixed
    weighting was fitted and none matches, it says so in one phrase."""
    if all(w in choices and not low <= theta <= high for w, theta in IMPLIED_POWER.items()):
        return "no fixed weighting matches"
    fitted = [w for w in (Weighting.INVERSE_X2, Weighting.INVERSE_X) if w in choices]
    missing = [w for w in (Weighting.INVERSE_X2, Weighting.INVERSE_X) if w not in choices]
    words = [f"{w.value} weights (θ = {entered(IMPLIED_POWER[w])})" for w in fitted]
    parts = []
    if len(words) == 2:
        parts.append(f"neither {words[0]} nor {words[1]} match")
    elif words:
        parts.append(f"{words[0]} do not match")
    if missing:
        names = " and ".join(w.value for w in missing)
        parts.append(f"{names} weights could not be fitted (see the candidates not fitted)")
    return "; ".join(parts)


def _in_response_words(choices: dict[Weighting, Candidate], low: float, high: float) -> str:
    """What the reason says of the 1/y-type weightings whose θ lies in the interval too (empty when
    none does): by design they are ranked after the fitted variance function (:func:`_weighting_for`)."""
    inside = [w for w in (Weighting.INVERSE_Y, Weighting.INVERSE_Y2)
              if w in choices and low <= IMPLIED_POWER[w] <= high]
    if not inside:
        return ""
    words = " and ".join(f"{w.value} (θ = {entered(IMPLIED_POWER[w])})" for w in inside)
    verb = "lies" if len(inside) == 1 else "lie"
    return (f"; {words} {verb} in the interval too, but weights taken from each standard's own response are "
            "ranked after a variance function fitted to all standards")


WEIGHTING_NEEDED = "weighting is needed; "
"""How the reason for weighting begins (the Σ|%RE| of the recommended model's weightings is added to it)."""


def _weighted_listing(recommended: Candidate, candidates: tuple[Candidate, ...]) -> str:
    """Σ|%RE| of the recommended model under each weighting it was fitted with, the model named: the
    figures quoted in the weighting reason are those of the table's rows of that model."""
    rows = [c for c in candidates if c.model is recommended.model and c.weighting is not Weighting.NONE]
    if not rows:
        return ""
    listing = ", ".join(f"{c.weighting.value} (Σ|%RE| = {figures(c.sum_abs_relative_error, 3)})" for c in rows)
    return f"; Σ|%RE| of the {_model_name(recommended.model)} under each weighting: {listing}"


def _model_name(model: Model) -> str:
    """The model in running text, without its article ("straight line", "power curve", "4PL")."""
    short = _SHORT_NAMES.get(model)
    return short.split(" ", 1)[1] if short else model.value


def _weights_use(chosen: Candidate, evidence_theta: float) -> str:
    """The variance function ``chosen``'s weights use, told apart from the replicate evidence's θ
    (``evidence_theta``): the evidence fits SD ∝ mean^θ to the replicates' scatter about their level
    means (:mod:`.variance`), the weights fit it to the residuals of all standards about the curve
    (:mod:`.variance_function`), so the two estimates differ a little."""
    fitted = chosen.calibration.weight_model.variance_fit
    name = _model_name(chosen.model)
    if fitted is None:
        return f"the {name}'s weights hold no fitted variance function"
    function = fitted.function
    if function.kind == "power":
        return (f"the {name}'s weights use θ = {figures(function.parameter, 3)}, fitted to the residuals of all standards "
                f"about the curve; θ = {fixed(evidence_theta, 2)} is the replicate evidence's estimate, fitted to the "
                "replicates' scatter about their level means")
    return (f"the {name}'s weights use SD² = a² + b²·(mean response)² with a/b = {figures(function.parameter, 4)}, fitted "
            "to the residuals of all standards about the curve")


def _anchor_mask(anchor_points: Sequence[bool] | None, n: int) -> np.ndarray:
    """The anchor points as a boolean mask of the ``n`` standards (all False when none are given)."""
    if anchor_points is None:
        return np.zeros(n, dtype=bool)
    mask = np.asarray(anchor_points)
    if mask.ndim != 1 or mask.size != n or (mask.size and mask.dtype != bool):
        raise CalibrationInputError(
            f"anchor points: give one True/False per standard ({n} standards); found {mask.size} value(s)."
        )
    return mask.astype(bool)


_SHORT_NAMES = {
    Model.LINEAR: "a straight line", Model.QUADRATIC: "a quadratic", Model.PROPORTIONAL: "a line through the origin",
    Model.AVERAGE_RF: "an average response factor", Model.POWER: "a power curve",
}


def _left_out_words(count: int) -> Callable[[Model], str]:
    """The note each candidate carries about the ``count`` anchor points, by model."""

    def words(model: Model) -> str:
        if model in (Model.FOUR_PL, Model.FIVE_PL):
            return f"{count} anchor point(s) fitted as anchor points (they fix the asymptotes) and not judged for acceptance"
        return (f"{count} anchor point(s) left out of this fit: they lie beyond the calibrated range, where "
                f"{_SHORT_NAMES[model]} has no asymptote for them to fix")

    return words


def _anchor_reason(at: np.ndarray) -> str:
    levels = ", ".join(f"{entered(v)}" for v in np.unique(at))
    return (
        f"{at.size} anchor point(s) (concentration {levels}) fix the logistic curves' asymptotes and are fitted "
        "only by them; every other candidate is fitted without them, no candidate judges them for acceptance, "
        "and AICc compares only candidates fitted to the same standards"
    )


def is_ligand_binding(profile: AcceptanceProfile) -> bool:
    """Whether ``profile`` is for ligand-binding assays (its id or name says so)."""
    return "ligand" in f"{profile.id} {profile.name}".lower()


def _decades(concentration: object) -> float | None:
    """log10 of the highest over the lowest positive concentration (None with fewer than two)."""
    x = np.asarray(concentration, dtype=np.float64)
    positive = x[np.isfinite(x) & (x > 0)]
    if positive.size < 2:
        return None
    return float(np.log10(positive.max() / positive.min()))


def _consider_curves(
    candidates: tuple[Candidate, ...], chosen: Candidate, reasons: list[str], evidence: VarianceEvidence,
    logistic_because: str | None, decades: float | None, considered: set[Model],
) -> tuple[Candidate, list[str]]:
    """Steps 4 and 5 of the module docstring: the logistic and power curves, with the reasons.
    ``logistic_because`` says why a logistic curve must be recommended (a ligand-binding profile,
    or anchor points), None when a polynomial that fits may be kept."""
    table = {(c.model, c.weighting): c for c in candidates}
    logistic = [c for c in candidates if c.model in (Model.FOUR_PL, Model.FIVE_PL)]
    if logistic_because is not None:
        if not logistic:
            return chosen, reasons + [
                f"{logistic_because}: a logistic curve is expected, but neither the 4PL nor the 5PL "
                "could be fitted (see the skipped candidates); the polynomial choice is shown"
            ]
        weighting = Weighting.INVERSE_Y2 if evidence.heteroscedastic else Weighting.NONE
        why = (
            "the scatter grows with the response, so 1/y² weighting (a constant CV, common practice for "
            "immunoassay responses)" if evidence.heteroscedastic else "no growth of the scatter is shown, so no weighting"
        )
        four, five = table.get((Model.FOUR_PL, weighting)), table.get((Model.FIVE_PL, weighting))
        if four is None and five is None:
            pick = min(logistic, key=lambda c: c.sum_abs_relative_error)
            return pick, reasons[:1] + [
                f"{_logistic_head(logistic_because, pick, candidates)}; under {weighting.value} none could be "
                f"fitted, so {pick.label} (the smallest Σ|%RE| among the logistic candidates)"
            ]
        words: list[str] = []
        if four is not None and five is not None:
            test = _extra_parameter_test(four.calibration, five.calibration)
            if test is not None and test[1] < FIVE_PL_ALPHA:
                words.append(
                    f"the 5PL's asymmetry improves the fit significantly (F = {figures(test[0], 4)} on (1, "
                    f"{five.calibration.df_residual}) df, {p_equals(test[1], 3)}), so the 5PL"
                )
                pick = five
            else:
                if test is not None:
                    words.append(
                        f"the 5PL's asymmetry is no significant improvement (F = {figures(test[0], 4)}, {p_equals(test[1], 3)}), "
                        "so the simpler 4PL"
                    )
                pick = four
        else:
            pick = four or five
            assert pick is not None
            words.append(f"only the {pick.model.value} could be fitted under {weighting.value}")
        head = f"{_logistic_head(logistic_because, pick, candidates)}; {why}"
        return pick, reasons[:1] + [head] + words + _failing_words(pick, candidates)
    if logistic:
        four = table.get((Model.FOUR_PL, chosen.weighting))
        lof = chosen.calibration.lack_of_fit
        if four is not None and lof.available and lof.significant(LACK_OF_FIT_ALPHA):
            four_lof = four.calibration.lack_of_fit
            if four_lof.available and not four_lof.significant(LACK_OF_FIT_ALPHA):
                return four, reasons + [
                    f"the {chosen.model.value} lacks fit but the 4PL does not ({p_equals(four_lof.p_value, 3)}), so the 4PL"
                ] + _failing_words(four, candidates)
        reasons.append("the logistic curves are listed for comparison; a polynomial that fits is kept (not a ligand-binding profile)")
    power = table.get((Model.POWER, chosen.weighting))
    if Model.POWER in considered:
        if decades is None or decades < POWER_MIN_DECADES:
            span = "fewer than two positive concentrations" if decades is None else f"{figures(decades, 2)} decades"
            reasons.append(
                f"the power curve is recommended only when the standards span at least {entered(POWER_MIN_DECADES)} "
                f"decades; these span {span}"
            )
        elif power is None:
            reasons.append(f"the power curve could not be fitted under {chosen.weighting.value}, so it is not compared")
        elif power.aicc is not None and chosen.aicc is not None:
            lof = power.calibration.lack_of_fit
            rejected = lof.available and lof.significant(LACK_OF_FIT_ALPHA)
            better = chosen.aicc - power.aicc > AICC_MARGIN
            if better and not rejected:
                fails = _polynomials_fail(chosen, candidates)
                if fails:  # the power curve replaces polynomials that may not be used: say so, and why it is taken
                    return power, reasons + [
                        f"{fails}; over {figures(decades, 2)} decades the power curve y = a·x^b "
                        + (f"is not rejected by its lack-of-fit test ({p_equals(lof.p_value, 3)}) and " if lof.available else "")
                        + f"fits better than the {chosen.model.value} (AICc {figures(power.aicc, 4)} against "
                        f"{figures(chosen.aicc, 4)}, more than {entered(AICC_MARGIN)} lower), so the power curve is recommended"
                    ] + _failing_words(power, candidates)
                return power, reasons + [
                    f"over {figures(decades, 2)} decades the power curve y = a·x^b fits better than the {chosen.model.value} "
                    f"(AICc {figures(power.aicc, 4)} against {figures(chosen.aicc, 4)}, more than {entered(AICC_MARGIN)} lower"
                    + (f"; its lack-of-fit {p_equals(lof.p_value, 3)}" if lof.available else "") + "), so the power curve"
                ] + _failing_words(power, candidates)
            reasons.append(
                f"the power curve (AICc {figures(power.aicc, 4)}) is no substantial improvement on the {chosen.model.value} "
                f"(AICc {figures(chosen.aicc, 4)})" + ("; its lack-of-fit test rejects it" if rejected else "")
            )
    return chosen, reasons


def _logistic_head(because: str, pick: Candidate, candidates: tuple[Candidate, ...]) -> str:
    """How the reason for a logistic curve begins: it is recommended, or, when its own lack-of-fit test
    rejects the one the steps pick (:func:`_rejected`), only called for, since nothing is recommended then."""
    if _rejected(pick, candidates):
        return (f"{because}: a logistic curve is called for, but the {_rejected_name(pick)} chosen below lacks fit "
                "(see the first reason), so none is recommended")
    return f"{because}: a logistic curve is recommended"


def _polynomials_fail(chosen: Candidate, candidates: tuple[Candidate, ...]) -> str:
    """Which of the straight line and the quadratic may not be used, when ``chosen`` (the polynomial
    step 2 left) is one of them that :func:`_rejected` refuses; empty otherwise."""
    if not _rejected(chosen, candidates):
        return ""
    if chosen.model is Model.QUADRATIC:
        line = next((c for c in candidates if c.model is Model.LINEAR and c.weighting is chosen.weighting), None)
        line_tests = _line_rejected_by(line) if line is not None else ""
        line_words = f"the straight line rejected by {line_tests}" if line_tests else "the straight line not fitted"
        return (f"under {chosen.weighting.value} neither the straight line nor the quadratic follows the data ({line_words}, "
                f"the quadratic by its lack-of-fit test ({p_equals(chosen.calibration.lack_of_fit.p_value, 3)}))")
    return (f"under {chosen.weighting.value} the straight line is rejected by {_line_rejected_by(chosen)} and no quadratic "
            "can replace it")


def _extra_parameter_test(four: Calibration, five: Calibration) -> tuple[float, float] | None:
    """Extra-sum-of-squares F-test of the 5PL against the 4PL (same standards and weights)."""
    if five.df_residual <= 0 or five.sse <= 0 or not np.allclose(four.weights, five.weights, rtol=1e-12):
        return None
    f = max(four.sse - five.sse, 0.0) / (five.sse / five.df_residual)
    return float(f), f_upper_tail(f, 1, five.df_residual)


def _failing_words(chosen: Candidate, candidates: tuple[Candidate, ...]) -> list[str]:
    words = []
    if chosen.standards_failing:
        words.append(f"{chosen.standards_failing} standard(s) fall outside the acceptance limits with this choice")
    if not chosen.verdict.passed:
        others = [c.label for c in candidates if c.verdict.passed]
        words.append(
            "this choice fails the acceptance profile"
            + (f"; candidates that pass: {', '.join(others)}" if others else "; no candidate passes it")
        )
    return words


def _intercept_note(chosen: Candidate) -> list[str]:
    cal = chosen.calibration
    if cal.model is not Model.LINEAR:
        return []
    t_value = cal.coefficients[0] / cal.standard_errors[0] if cal.standard_errors[0] > 0 else np.inf
    from scipy import special  # loaded on first use: importing the engine stays light

    p = float(2 * special.stdtr(cal.df_residual, -abs(t_value)))
    if p >= 0.05:
        return [
            f"the intercept is not significantly different from zero ({p_equals(p, 3)}); a line through the "
            "origin is possible only where the laboratory's procedure permits it"
        ]
    return []


__all__ = ["Candidate", "ModelComparison", "MandelTest", "SkippedCandidate", "compare", "mandel_test"]
