"""Fit a straight line to invented nitrate standards, compare models, and quantify two samples.

The data are invented for demonstration (a fictional water laboratory, absorbance at 220 nm).
Run with: python examples/quick_calibration.py
"""

import curvewright as cw

concentration = [0.0, 0.0, 0.5, 0.5, 1.0, 1.0, 2.0, 2.0, 4.0, 4.0, 6.0, 6.0]  # mg/L nitrate-N
absorbance = [0.004, 0.006, 0.101, 0.098, 0.197, 0.202, 0.396, 0.401, 0.795, 0.790, 1.183, 1.191]

comparison = cw.compare(concentration, absorbance)
print("Recommended:", comparison.recommended.label)
for reason in comparison.reasons:
    print("  -", reason)

cal = cw.fit(concentration, absorbance, model="linear", weighting="none")
print(cal.equation(), f"  residual SD {cal.residual_sd:.4g} AU, adjusted R² {cal.adjusted_r_squared:.6f}")
limits = cal.limits()
print(f"LOD {limits.lod:.3g} mg/L, LOQ {limits.loq:.3g} mg/L ({limits.description})")

results = cal.quantify([0.512, 1.402], replicates=[2, 2])
for response, x, low, high, words in zip(
    results.mean_response, results.estimate, results.lower, results.upper, results.flag_words()
):
    print(f"response {response:.3f} AU -> {x:.3f} mg/L (95 % interval {low:.3f} to {high:.3f}; {words})")
print(cw.CAUTION)
