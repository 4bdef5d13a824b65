"""Quantiles and tail probabilities of the t and F distributions, straight from scipy.special.

The same functions scipy.stats uses underneath, without its per-call argument machinery, which
costs more than the fit itself when every candidate of a model screen needs a few of them.
Student's t quantile: ``stdtrit``; F upper tail and quantile: ``fdtrc`` and ``fdtri`` (Cephes).
"""

from __future__ import annotations

from functools import lru_cache


@lru_cache(maxsize=1024)
def t_quantile(probability: float, df: float) -> float:
    """q such that P(T ≤ q) = probability for Student's t with ``df`` degrees of freedom (worked
    out once for each pair: a batch of calibrations asks for the same few)."""
    from scipy import special  # loaded on first use: importing the engine stays light

    return float(special.stdtrit(df, probability))


def f_upper_tail(value: float, df1: float, df2: float) -> float:
    """P(F > value) for the F distribution with (df1, df2) degrees of freedom."""
    from scipy import special  # loaded on first use: importing the engine stays light

    return float(special.fdtrc(df1, df2, value))


def f_upper_tails(values: object, df1: object, df2: object) -> object:
    """P(F > value) elementwise over arrays of values and degrees of freedom, in one call (the
    same function as :func:`f_upper_tail`, so each element is the number it gives alone)."""
    from scipy import special  # loaded on first use: importing the engine stays light

    return special.fdtrc(df1, df2, values)


def f_quantile(probability: float, df1: float, df2: float) -> float:
    """q such that P(F ≤ q) = probability."""
    from scipy import special  # loaded on first use: importing the engine stays light

    return float(special.fdtri(df1, df2, probability))
