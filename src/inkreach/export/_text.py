"""Vectorised number formatting: many rows of text built as one byte matrix.

Each row of the output is laid out in a fixed-width character matrix (one
``uint8`` column per character slot); unused slots hold NUL and are dropped
at the end with a single boolean index, so whole tables are formatted with
a handful of numpy operations instead of a Python call per value.
"""

import numpy as np

__all__ = []

# Beyond this magnitude the scaled integers lose exactness (2**53); callers
# fall back to Python's formatting.
_LIMIT = 2.0 ** 52


def scaled(values, decimals):
    """``values`` times ``10**decimals``, rounded half to even, as int64; None if not exact.

    ``numpy.round(v, d)`` multiplies by ``10**d``, rounds half to even and
    divides back, so ``"%.{d}f" % numpy.round(v, d)`` prints exactly the
    digits of this integer.
    """
    v = np.asarray(values)
    if np.issubdtype(v.dtype, np.integer) and decimals == 0:
        return v.astype(np.int64)
    k = np.rint(v.astype(float) * 10.0 ** decimals)
    if k.size and not (np.all(np.isfinite(k)) and np.abs(k).max() < _LIMIT):
        return None
    return k.astype(np.int64)


def _count_digits(a):
    """Decimal digits of non-negative int64 values (at least 1)."""
    n = np.ones(a.shape, np.int64)
    p = 10
    top = int(a.max()) if a.size else 0
    while p <= top:
        n += a >= p
        p *= 10
    return n


def number_matrix(k, decimals, strip=False):
    """Characters of ``k / 10**decimals`` right-aligned in a NUL-padded matrix.

    Parameters
    ----------
    k : ndarray of int64, shape (N,)
        Scaled integers (see :func:`scaled`).
    decimals : int
        Digits after the point (0: no point).
    strip : bool
        Drop trailing zeros of the fraction, keeping at least one digit (the
        shortest text of a number rounded to ``decimals`` places, as
        ``repr`` prints it).

    Returns
    -------
    ndarray of uint8, shape (N, width)
    """
    k = np.asarray(k, np.int64)
    n = len(k)
    a = np.abs(k)
    top = int(a.max()) if n else 0
    a = a.astype(np.uint32 if top < 2 ** 32 else np.uint64)
    nd = _count_digits(a) - decimals  # digits before the point ...
    np.maximum(nd, 1, out=nd)  # ... at least one ("0.25")
    D = int(nd.max()) if n else 1
    point = 1 if decimals else 0
    width = 1 + D + point + decimals
    out = np.zeros((n, width), np.uint8)
    ten = a.dtype.type(10)
    for t in range(decimals + D):  # digits from the right, one division each
        q = a // ten
        col = width - 1 - t - (point if t >= decimals else 0)
        out[:, col] = (a - q * ten).astype(np.uint8) + 48
        a = q
    if point:
        out[:, width - 1 - decimals] = ord(".")
    first = 1 + D - nd  # column of each row's first digit
    lead = np.arange(width)[None, :] < first[:, None]
    out[lead] = 0
    rows = np.flatnonzero(k < 0)
    out[rows, first[rows] - 1] = ord("-")
    if strip and decimals > 1:
        frac = out[:, width - decimals + 1:]
        zeros = np.logical_and.accumulate(frac[:, ::-1] == 48, axis=1)[:, ::-1]
        frac[zeros] = 0
    return out


def literal_matrix(texts, n):
    """A (n, w) character matrix from one byte string or ``n`` of them (NUL-padded)."""
    if isinstance(texts, (bytes, str)):
        b = texts.encode("ascii") if isinstance(texts, str) else texts
        return np.broadcast_to(np.frombuffer(b, np.uint8), (n, len(b)))
    a = np.asarray(texts, dtype="S")
    return a.view(np.uint8).reshape(n, a.dtype.itemsize)


def join_rows(parts, n):
    """ASCII text of ``n`` rows laid out from character matrices side by side.

    Parameters
    ----------
    parts : list
        Each an (n, w) uint8 matrix, one byte string for every row, or an
        array of ``n`` byte strings.
    n : int

    Returns
    -------
    str
    """
    if n == 0:
        return ""
    mats = [p if isinstance(p, np.ndarray) and p.dtype == np.uint8 else literal_matrix(p, n)
            for p in parts]
    m = np.concatenate(mats, axis=1)
    return m[m != 0].tobytes().decode("ascii")


def line_breaks(n, per_line, within, between, last=b""):
    """Per-item separators: ``within`` inside a line, ``between`` after every ``per_line``-th."""
    sep = np.full(n, within, dtype=f"S{max(len(within), len(between), len(last), 1)}")
    sep[per_line - 1::per_line] = between
    if n:
        sep[-1] = last
    return sep
