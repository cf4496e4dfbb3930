"""Main-field models: coefficient files and their time dependence.

Two public-domain coefficient formats are read:

- **SHC** (spherical-harmonic coefficients, the format IGRF is distributed in and ``ppigrf``
  ships): ``#`` comment lines, a parameter line ``N_MIN N_MAX N_TIMES SPLINE_ORDER N_STEPS
  [VALID_FROM VALID_TO]``, a line of epochs (decimal years), then one line per coefficient
  ``n m value value ...`` with ``m < 0`` for the ``h`` (sine) terms. Between epochs the
  coefficients are linear in time (IGRF's definition, spline order 2); IGRF's last epoch holds
  the prediction from its secular variation, so the last interval *is* the predictive SV.
- **WMM .COF** (World Magnetic Model, NOAA NCEI / BGS): a header ``EPOCH NAME DATE``, lines
  ``n m g h gdot hdot`` (nT, nT/yr) and a closing line of 9s. ``g(t) = g(t0) + (t - t0) gdot``,
  valid from ``t0`` to ``t0 + 5``.

Both become a :class:`Model`: a piecewise-linear set of Schmidt semi-normalised Gauss
coefficients on intervals ``[start_k, start_{k+1})``. The annual rate used for the ``*_per_year``
outputs is the exact derivative of that piecewise-linear law (the interval's slope); at an
interior epoch the later interval's slope is used.

Dates are decimal years (see :mod:`headingref.units`). A date outside ``[valid_from,
valid_to]`` raises :class:`~headingref.errors.DateRangeError` unless the caller opts in to
extrapolation, which then warns with :class:`~headingref.errors.ExtrapolationWarning` and
extends the first/last interval linearly.

>>> from headingref.model import load_model
>>> igrf = load_model()
>>> igrf.name, igrf.nmax, igrf.valid_from, igrf.valid_to
('IGRF-14', 13, 1900.0, 2030.0)
"""

from __future__ import annotations

import functools
import os
import warnings
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .errors import DateRangeError, ExtrapolationWarning, ModelFileError

REFERENCE_RADIUS_KM = 6371.2  # magnetic reference spherical radius of IGRF and WMM
MAX_COEFFICIENT_NT = 1e7
"""Largest accepted |coefficient| (nT) or |rate| (nT/yr). The largest main-field coefficient, the dipole
g10, is about -31,500 nT (IGRF, 1900); a value a few hundred times larger is a typo or a corrupt file,
and values near 1e308 would overflow the synthesis into infinite fields."""
EPOCH_RANGE = (1000.0, 3000.0)  # the decimal years headingref.units.decimal_year accepts


@dataclass(frozen=True, eq=False)
class Model:
    """A main-field model as piecewise-linear Gauss coefficients.

    Attributes
    ----------
    name : str
    nmax : int
        Maximum spherical-harmonic degree.
    starts : ndarray (K,)
        Start of each linear interval, decimal years.
    g, h : ndarray (K, nmax+1, nmax+1)
        Coefficients (nT) at each interval start, indexed ``[k, n, m]``.
    g_rate, h_rate : ndarray (K, nmax+1, nmax+1)
        Slopes (nT/yr) within each interval.
    valid_from, valid_to : float
        Validity, decimal years.
    source : str
        The file the model was read from.
    """

    name: str
    nmax: int
    starts: np.ndarray
    g: np.ndarray
    h: np.ndarray
    g_rate: np.ndarray
    h_rate: np.ndarray
    valid_from: float
    valid_to: float
    source: str = ""
    reference_radius_km: float = REFERENCE_RADIUS_KM
    meta: dict = field(default_factory=dict)

    def check_dates(self, years: np.ndarray, allow_extrapolation: bool = False) -> None:
        """Raise :class:`DateRangeError` (or warn, if allowed) for dates outside validity."""
        years = np.asarray(years, dtype=np.float64)
        if years.size == 0:
            return
        lo, hi = float(np.min(years)), float(np.max(years))
        if not (np.isfinite(lo) and np.isfinite(hi)):
            raise DateRangeError("a date is not finite")
        if lo >= self.valid_from and hi <= self.valid_to:
            return
        bad = lo if lo < self.valid_from else hi
        message = (
            f"date {bad:.4f} is outside {self.name}'s validity {self.valid_from:g} to {self.valid_to:g}"
        )
        if not allow_extrapolation:
            raise DateRangeError(message + "; choose a date inside it, or opt in to extrapolation (allow_extrapolation=True, CLI --extrapolate)")
        warnings.warn(message + "; extrapolating the nearest interval linearly", ExtrapolationWarning, stacklevel=3)

    def locate(self, years: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Interval index and time since its start (years) for each date."""
        years = np.asarray(years, dtype=np.float64)
        k = np.searchsorted(self.starts, years, side="right") - 1
        k = np.clip(k, 0, len(self.starts) - 1)
        return k.astype(np.int64), years - self.starts[k]

    def coefficients(self, year: float) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """``(g, h, g_rate, h_rate)`` at one decimal year, each (nmax+1, nmax+1), nT and nT/yr."""
        k, dt = self.locate(np.array([year]))
        k, dt = int(k[0]), float(dt[0])
        return (
            self.g[k] + dt * self.g_rate[k],
            self.h[k] + dt * self.h_rate[k],
            self.g_rate[k].copy(),
            self.h_rate[k].copy(),
        )


def _fail(path: Path, message: str) -> ModelFileError:
    return ModelFileError(f"coefficient file {path.name}: {message}")


def _check_values(path: Path, values: np.ndarray, what: str) -> None:
    """Coefficients and rates must be finite and below :data:`MAX_COEFFICIENT_NT` in size."""
    too_big = ~(np.abs(values) <= MAX_COEFFICIENT_NT)
    if too_big.any():
        raise _fail(path, f"{what} {values[too_big].flat[0]!r} is not a plausible main-field value "
                          f"(accepted: finite, at most {MAX_COEFFICIENT_NT:g} nT or nT/yr in size)")


def _check_validity(path: Path, valid_from: float, valid_to: float) -> None:
    lo, hi = EPOCH_RANGE
    if not (lo <= valid_from <= valid_to <= hi):
        raise _fail(path, f"validity {valid_from!r} to {valid_to!r} is not an ordered pair of decimal years "
                          f"from {lo:g} to {hi:g}")


def _read_shc(path: Path, text: str) -> Model:
    lines = [line for line in text.splitlines() if line.strip() and not line.lstrip().startswith("#")]
    if len(lines) < 3:
        raise _fail(path, "too short for the SHC format (parameter line, epoch line, coefficient lines)")
    try:
        params = lines[0].split()
        nmin, nmax, ntimes = int(params[0]), int(params[1]), int(params[2])
        epochs = np.array([float(v) for v in lines[1].split()])
    except (ValueError, IndexError):
        raise _fail(path, "the parameter line or the epoch line is malformed") from None
    if nmin != 1 or not 1 <= nmax <= 60:
        raise _fail(path, f"degrees {nmin} to {nmax} are not supported (need N_MIN 1, N_MAX up to 60)")
    if ntimes != len(epochs) or ntimes < 1 or np.any(np.diff(epochs) <= 0) or not np.all(np.isfinite(epochs)):
        raise _fail(path, f"expected {ntimes} increasing epochs, found {len(epochs)}")
    values = np.zeros((2, ntimes, nmax + 1, nmax + 1))
    seen = set()
    for number, line in enumerate(lines[2:], start=3):
        parts = line.split()
        try:
            n, m = int(parts[0]), int(parts[1])
            row = np.array([float(v) for v in parts[2:]])
        except (ValueError, IndexError):
            raise _fail(path, f"coefficient line {number} is malformed: {line.strip()[:60]!r}") from None
        if len(row) != ntimes or not np.all(np.isfinite(row)):
            raise _fail(path, f"coefficient line {number} has {len(row)} finite values, expected {ntimes}")
        if not (nmin <= n <= nmax and abs(m) <= n) or (n, m) in seen:
            raise _fail(path, f"coefficient line {number} has degree/order ({n}, {m}) out of range or repeated")
        seen.add((n, m))
        values[1 if m < 0 else 0, :, n, abs(m)] = row
    expected = nmax * (nmax + 2)
    if len(seen) != expected:
        raise _fail(path, f"found {len(seen)} coefficients, expected {expected} for degree {nmax}")
    _check_values(path, values, "coefficient")
    valid_from, valid_to = float(epochs[0]), float(epochs[-1])
    if len(params) >= 7:
        try:
            valid_from, valid_to = float(params[5]), float(params[6])
        except ValueError:
            pass
    _check_validity(path, valid_from, valid_to)
    g, h = values[0], values[1]
    if ntimes == 1:
        rate_g = np.zeros_like(g)
        rate_h = np.zeros_like(h)
        starts = epochs
    else:
        span = np.diff(epochs)[:, None, None]
        rate_g = np.diff(g, axis=0) / span
        rate_h = np.diff(h, axis=0) / span
        starts, g, h = epochs[:-1], g[:-1], h[:-1]
    name = path.stem
    header = next((line for line in text.splitlines() if line.startswith("#")), "")
    if header.lstrip("# ").upper().startswith("IGRF"):
        name = "IGRF-" + header.lstrip("# ").split()[1] if len(header.split()) > 2 else name
    return Model(name, nmax, starts, g, h, rate_g, rate_h, valid_from, valid_to, str(path))


def _read_cof(path: Path, text: str) -> Model:
    lines = [line for line in text.splitlines() if line.strip()]
    try:
        header = lines[0].split()
        epoch = float(header[0])
        name = header[1] if len(header) > 1 else path.stem
    except (ValueError, IndexError):
        raise _fail(path, "the header line 'EPOCH NAME DATE' is malformed") from None
    rows = []
    seen: dict[tuple[int, int], int] = {}
    for number, line in enumerate(lines[1:], start=2):
        if line.strip().startswith("9999"):
            break
        parts = line.split()
        try:
            n, m = int(parts[0]), int(parts[1])
            vals = [float(v) for v in parts[2:]]
        except (ValueError, IndexError):
            raise _fail(path, f"line {number} is not 'n m g h gdot hdot': {line.strip()[:60]!r}") from None
        if len(vals) != 4 or not np.all(np.isfinite(vals)) or not (1 <= n <= 60 and 0 <= m <= n):
            raise _fail(path, f"line {number} is not 'n m g h gdot hdot' with 0 <= m <= n: {line.strip()[:60]!r}")
        if (n, m) in seen:
            raise _fail(path, f"line {number} repeats degree/order ({n}, {m}) of line {seen[n, m]}")
        seen[n, m] = number
        rows.append((n, m, *vals))
    if not rows:
        raise _fail(path, "no coefficient lines")
    nmax = max(r[0] for r in rows)
    if len(rows) != (nmax + 1) * (nmax + 2) // 2 - 1:
        raise _fail(path, f"found {len(rows)} coefficient lines, expected {(nmax + 1) * (nmax + 2) // 2 - 1} for degree {nmax}")
    arr = np.zeros((4, 1, nmax + 1, nmax + 1))
    for n, m, g, h, gd, hd in rows:
        arr[:, 0, n, m] = (g, h, gd, hd)
    _check_values(path, arr, "coefficient or rate")
    _check_validity(path, epoch, epoch + 5.0)
    display = name.replace("WMM-", "WMM") if name.upper().startswith("WMM") else name
    return Model(display, nmax, np.array([epoch]), arr[0], arr[1], arr[2], arr[3], epoch, epoch + 5.0, str(path))


def default_coefficient_file() -> Path:
    """The IGRF-14 SHC file shipped inside the ``ppigrf`` package."""
    import ppigrf

    return Path(ppigrf.__file__).with_name("IGRF14.shc")


@functools.lru_cache(maxsize=16)
def _load_cached(path: str, mtime: float) -> Model:
    p = Path(path)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise ModelFileError(f"coefficient file {path!r} cannot be read: {exc.strerror}") from None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise _fail(p, "is not a text file") from None
    first = next((line for line in text.splitlines() if line.strip() and not line.startswith("#")), "")
    parts = first.split()
    # A COF header starts with a decimal epoch ('2025.0'); an SHC parameter line with integers.
    if parts and "." in parts[0]:
        return _read_cof(p, text)
    return _read_shc(p, text)


_DEFAULT: Model | None = None


def load_model(path: str | os.PathLike | None = None) -> Model:
    """Load a coefficient file (SHC or WMM .COF); ``None`` gives IGRF-14 from ``ppigrf``.

    Raises :class:`~headingref.errors.ModelFileError` naming the file and the fault.
    Models are cached by path and modification time.
    """
    global _DEFAULT
    if isinstance(path, Model):
        return path
    if path is None:
        if _DEFAULT is None:
            _DEFAULT = load_model(default_coefficient_file())
        return _DEFAULT
    if not isinstance(path, (str, os.PathLike)):
        raise ModelFileError(f"model {path!r} is not understood; give None (IGRF-14), a Model or the path of a .shc or .COF file")
    p = Path(path)
    try:
        if not p.is_file():
            raise ModelFileError(f"coefficient file {str(p)!r} does not exist; give an IGRF-format .shc or a WMM .COF file")
        key = (str(p.resolve()), p.stat().st_mtime)
    except OSError as exc:  # name too long, no permission
        raise ModelFileError(f"coefficient file {str(p)!r} cannot be read: {exc.strerror or exc}") from None
    return _load_cached(*key)
