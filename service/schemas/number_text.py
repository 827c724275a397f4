"""Many floats written as ``format(x, ".4g")`` writes them, a column at a time.

The regime messages of a batch carry two numbers per row in this form. Python's
float formatting costs about half a microsecond a number, a fifth of the whole
writing of a row; here the four significant digits and the decimal exponent of a
whole column come from numpy, and the text of each (digits, exponent) pair from a
table filled once by ``format`` itself, so the text is ``format``'s by construction.

The digits are exact where used: for a decimal exponent e in [-4, 3] (the range
``.4g`` writes without an exponent) the scaled value x * 10**(3 - e) is one correctly
rounded multiplication by an exact power of ten, within 2e-12 of the true product,
so rounding it to an integer gives the correctly rounded digits unless the true
product lies within that distance of a half-integer. Values within 1e-6 of a
half-integer, every value outside that exponent range, and zero, negative or
non-finite values are written by ``format`` one by one.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

_POWERS = np.array([float(10**k) for k in range(8)])  # exact doubles


@lru_cache(maxsize=8)
def _texts(exponent: int) -> np.ndarray:
    """format(.4g) of every four-digit mantissa 1000..9999 at a decimal exponent."""
    scale = 10.0 ** (exponent - 3)
    return np.array([format(m * scale, ".4g") for m in range(1000, 10000)], dtype=object)


def format_4g(values: np.ndarray) -> list[str]:
    """``[format(x, ".4g") for x in values]``, column-wise where that is exact."""
    x = np.asarray(values, dtype=np.float64)
    out = np.empty(len(x), dtype=object)
    with np.errstate(all="ignore"):
        exponent = np.floor(np.log10(x))
        inside = np.isfinite(x) & (x > 0) & (exponent >= -4) & (exponent <= 3)
        power = _POWERS[np.where(inside, 3 - exponent, 0).astype(np.int64)]
        scaled = x * power
        mantissa = np.rint(scaled)
        near_tie = np.abs(scaled - np.floor(scaled) - 0.5) <= 1e-6
    exact = inside & ~near_tie & (mantissa >= 1000) & (mantissa <= 9999)
    exponent_int = np.where(exact, exponent, 0).astype(np.int64)
    mantissa_int = np.where(exact, mantissa, 1000).astype(np.int64)
    for e in np.unique(exponent_int[exact]).tolist():
        rows = exact & (exponent_int == e)
        out[rows] = _texts(e)[mantissa_int[rows] - 1000]
    rest = np.flatnonzero(~exact)
    out[rest] = [format(v, ".4g") for v in x[rest].tolist()]
    return out.tolist()
