"""Fast CSV text for large float tables: fixed decimals per column, formatted by a numba kernel.

Used by ``headingref field --input`` to stream a million rows to ``--output``/``--csv`` in chunks.
pandas' ``to_csv`` formats each float with numpy's shortest round-trip repr (1-2 microseconds a
value, 17 significant digits); here each column has a fixed number of decimals (degrees to 1e-6,
nT to 1e-3: far below the models' own uncertainty of tenths of a degree and ~100 nT, WMM2025
technical report) and the kernel writes about 20-50 ns a value.

Format of a value: rounded half away from zero at ``decimals`` places (from ``|x| * 10**d``, so a
value exactly half-way may round either way: at most one unit in the last place), trailing zeros
and a bare decimal point dropped (``12.5``, ``0``, ``-3.25``), never ``-0``; NaN is an empty cell
(as pandas writes it), infinities ``inf``/``-inf``.
"""

from __future__ import annotations

import numba as nb
import numpy as np

_POW10 = 10.0 ** np.arange(19)
_COMMA, _NEWLINE, _MINUS, _DOT, _ZERO = 44, 10, 45, 46, 48


@nb.njit(cache=True)
def _put_float(x, decimals, pow10, out, pos):  # noqa: C901 - a numba byte-writing kernel: flat digit loops kept inline for speed
    if x != x:  # NaN: empty cell
        return pos
    if x == np.inf or x == -np.inf:
        if x < 0:
            out[pos] = _MINUS
            pos += 1
        out[pos], out[pos + 1], out[pos + 2] = 105, 110, 102  # "inf"
        return pos + 3
    d = decimals
    v = abs(x) * pow10[d]
    while v >= 9.0e18 and d > 0:  # keep the scaled value inside int64
        d -= 1
        v = abs(x) * pow10[d]
    if v >= 9.0e18:  # |x| >= 9e18: no such value in a field table; written as the largest integer
        v = 9.0e18
    r = np.int64(v + 0.5)
    if r == 0:
        out[pos] = _ZERO
        return pos + 1
    if x < 0:
        out[pos] = _MINUS
        pos += 1
    scale = np.int64(pow10[d])
    whole = r // scale
    frac = r - whole * scale
    # whole part, digits written backwards then reversed in place
    start = pos
    if whole == 0:
        out[pos] = _ZERO
        pos += 1
    while whole > 0:
        out[pos] = _ZERO + whole % 10
        whole //= 10
        pos += 1
    i, j = start, pos - 1
    while i < j:
        out[i], out[j] = out[j], out[i]
        i += 1
        j -= 1
    if frac > 0:
        while frac % 10 == 0:  # drop trailing zeros
            frac //= 10
            d -= 1
        out[pos] = _DOT
        pos += 1
        for k in range(d - 1, -1, -1):
            out[pos + k] = _ZERO + frac % 10
            frac //= 10
        pos += d
    return pos


@nb.njit(cache=True)
def _format_rows(table, decimals, pow10, codes, texts, text_len, out):
    """Rows ``v0,v1,...,t0,t1\\n``: ``table`` (k, m) floats, then one text per code column
    (``codes`` (c, m) int indices into ``texts[c]``, bytes padded, lengths ``text_len[c]``)."""
    k, m = table.shape
    c = codes.shape[0]
    pos = 0
    for i in range(m):
        for j in range(k):
            if j > 0:
                out[pos] = _COMMA
                pos += 1
            pos = _put_float(table[j, i], decimals[j], pow10, out, pos)
        for j in range(c):
            out[pos] = _COMMA
            pos += 1
            code = codes[j, i]
            for q in range(text_len[j, code]):
                out[pos] = texts[j, code, q]
                pos += 1
        out[pos] = _NEWLINE
        pos += 1
    return pos


def format_rows(table: np.ndarray, decimals, code_columns=()) -> bytes:
    """CSV lines (ASCII bytes, ``\\n`` ends each) for the columns of ``table`` (shape (k, m): k
    columns of m rows), each to its number of ``decimals`` (0-18), followed by text columns given
    as ``(codes, categories)`` pairs (integer codes, ASCII category texts that need no CSV quoting).
    """
    table = np.ascontiguousarray(table, dtype=np.float64)
    if table.ndim != 2:
        raise ValueError("table must be 2-D (columns, rows)")
    k, m = table.shape
    dec = np.asarray(decimals, dtype=np.int64)
    if dec.shape != (k,) or (dec < 0).any() or (dec > 18).any():
        raise ValueError("one number of decimals (0-18) per column")
    c = len(code_columns)
    encoded = [[t.encode("ascii") for t in cats] for _, cats in code_columns]
    width = max([len(t) for cats in encoded for t in cats] + [1])
    ncat = max([len(cats) for cats in encoded] + [1])
    texts = np.zeros((c, ncat, width), dtype=np.uint8)
    text_len = np.zeros((c, ncat), dtype=np.int64)
    for j, cats in enumerate(encoded):
        for q, t in enumerate(cats):
            texts[j, q, : len(t)] = np.frombuffer(t, dtype=np.uint8)
            text_len[j, q] = len(t)
    codes = np.zeros((c, m), dtype=np.int64)
    for j, (values, cats) in enumerate(code_columns):
        values = np.asarray(values)
        if values.shape != (m,) or m and (values.min() < 0 or values.max() >= len(cats)):
            raise ValueError("text codes must be one per row and index their categories")
        codes[j] = values
    # a value takes at most 1 sign + 19 digits + 1 point + 18 decimals (or 'inf'), plus its comma
    out = np.empty(m * (k * 40 + c * (width + 1) + 1) + 1, dtype=np.uint8)
    end = _format_rows(table, dec, _POW10, codes, texts, text_len, out)
    return out[:end].tobytes()
