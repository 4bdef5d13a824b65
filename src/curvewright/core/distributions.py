"""Quantiles and tail probabilities of the t and F distributions, straight from scipy.special.

The same functions scipy.stats uses underneath, without its per-call argument machinery, which
costs more than the fit itself when every candidate of a model screen needs a few of them.
Student's t quantile: ``stdtrit``; F upper tail and quantile: ``fdtrc`` and ``fdtri`` (Cephes).
"""

from __future__ import annotations


def t_quantile(probability: float, df: float) -> float:
    """q such that P(T ≤ q) = probability for Student's t with ``df`` degrees of freedom."""
    from scipy import special  # loaded on first use: importing the engine stays light

    return float(special.stdtrit(df, probability))


def f_upper_tail(value: float, df1: float, df2: float) -> float:
    """P(F > value) for the F distribution with (df1, df2) degrees of freedom."""
    from scipy import special  # loaded on first use: importing the engine stays light

    return float(special.fdtrc(df1, df2, value))


def f_quantile(probability: float, df1: float, df2: float) -> float:
    """q such that P(F ≤ q) = probability."""
    from scipy import special  # loaded on first use: importing the engine stays light

    return float(special.fdtri(df1, df2, probability))
