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

Files of any degree up to :data:`MAX_DEGREE` are read (WMMHR2025 is degree 133); see
:data:`MAX_DEGREE` for why the limit is where it is.

Models by name (:data:`MODEL_NAMES`, :func:`list_models`): ``IGRF-14`` (the SHC file shipped with
``ppigrf``), ``WMM2015``, ``WMM2015v2``, ``WMM2020``, ``WMM2025`` and ``WMMHR2025`` (the
public-domain .COF files of NOAA NCEI / BGS shipped with ``pygeomag``, a runtime dependency). A
name is resolved inside :func:`load_model`, so every ``model=`` argument, CLI ``--model`` and
scenario ``model`` key accepts a name or a path.

Each model carries its declination error model (:class:`ErrorModel`, ``Model.error_spans``):
``sqrt(a^2 + (b/H)^2)`` degrees (1 sigma) with the edition's own ``a``, ``b``; see
:data:`WMM_ERROR_MODELS` and :func:`error_spans_for`.

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
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from .errors import DateRangeError, ExtrapolationWarning, ModelFileError

REFERENCE_RADIUS_KM = 6371.2  # magnetic reference spherical radius of IGRF and WMM
MAX_COEFFICIENT_NT = 1e7
"""Largest accepted |coefficient| (nT) or |rate| (nT/yr). The largest main-field coefficient, the dipole
g10, is about -31,500 nT (IGRF, 1900); a value a few hundred times larger is a typo or a corrupt file,
and values near 1e308 would overflow the synthesis into infinite fields."""
EPOCH_RANGE = (1000.0, 3000.0)  # the decimal years headingref.units.decimal_year accepts
MAX_DEGREE = 1000
"""Highest spherical-harmonic degree a coefficient file may have.

Why 1,000: the synthesis uses the standard Schmidt semi-normalised recursion (see
:mod:`headingref.synthesis`), whose sectoral seed ``P_m^m ~ sin^m(theta)`` underflows double
precision (1e-308) once ``m log10(1/sin theta) > 308``. A term of degree n and order m matters
only where ``sin theta > m/n`` (outside that band P_n^m is exponentially small), so the seed that
matters underflows only when ``n s log10(1/s) > 308`` for some s, i.e. (the maximum of
``s log10(1/s)`` is 0.16 at s = 1/e) from about degree 1,900. Beyond that a scaled recursion
(Holmes and Featherstone 2002, J. Geodesy 76:279-299, doi:10.1007/s00190-002-0216-2) is needed;
1,000 keeps a factor of two of margin. It also bounds memory: four coefficient arrays of
(n+1)^2 doubles per interval, 32 MB at degree 1,000. Degree 133 (WMMHR2025) is checked against
pygeomag's high-resolution synthesis in tests/test_highres.py."""


@dataclass(frozen=True)
class ErrorModel:
    """A declination error model ``sqrt(const_deg^2 + (scale_nT / H)^2)`` degrees (1 sigma), H in nT.

    ``label`` names the edition whose constants these are (and says "proxy" when they are applied
    to another model); ``source`` cites the publication and where the constants were checked.
    """

    const_deg: float
    scale_nT: float
    label: str
    source: str

    def declination_deg(self, horizontal_nT) -> np.ndarray:
        """The error model at horizontal intensities in nT (infinite where H = 0)."""
        h = np.asarray(horizontal_nT, dtype=np.float64)
        with np.errstate(divide="ignore"):
            return np.sqrt(self.const_deg**2 + (self.scale_nT / h) ** 2)


_PYGEOMAG_NOTE = "same constants in pygeomag 1.1.0, geomag.py, GeoMagUncertaintyResult"
WMM_ERROR_MODELS = {
    # Chulliat et al. (2015), The US/UK World Magnetic Model for 2015-2020, NOAA NCEI, uncertainty section
    "WMM2015": ErrorModel(0.23, 5430.0, "WMM2015", "WMM2015 technical report (Chulliat et al. 2015), "
                          "declination uncertainty; " + _PYGEOMAG_NOTE + "._error_model_wmm_2015"),
    # Chulliat et al. (2020), The US/UK World Magnetic Model for 2020-2025, NOAA NCEI, uncertainty section
    "WMM2020": ErrorModel(0.26, 5625.0, "WMM2020", "WMM2020 technical report (Chulliat et al. 2020), "
                          "declination uncertainty; " + _PYGEOMAG_NOTE + "._error_model_wmm_2020"),
    # The US/UK World Magnetic Model for 2025-2030, NOAA NCEI / BGS, uncertainty section
    "WMM2025": ErrorModel(0.26, 5417.0, "WMM2025", "WMM2025 technical report (NOAA NCEI / BGS 2024), "
                          "declination uncertainty; " + _PYGEOMAG_NOTE + "._error_model_wmm_2025"),
    # The World Magnetic Model High Resolution 2025 technical report, NOAA NCEI / CIRES
    "WMMHR2025": ErrorModel(0.25, 5205.0, "WMMHR2025", "WMMHR2025 technical report (NOAA NCEI / CIRES 2024), "
                            "declination uncertainty; " + _PYGEOMAG_NOTE + "._error_model_wmmhr_2025"),
}
"""The published declination error models, ``a`` (deg) and ``b`` (nT) per edition."""
WMM_ERROR_MODELS["WMM2015v2"] = ErrorModel(
    0.23, 5430.0, "WMM2015 (applied to WMM2015v2)",
    "WMM2015 technical report constants, which pygeomag 1.1.0 also applies to WMM2015v2 (2015.0-2020.0)")

_PROXY_EDITIONS = ((2015.0, 2020.0, "WMM2015"), (2020.0, 2025.0, "WMM2020"), (2025.0, 2030.0, "WMM2025"))
FIRST_ERROR_MODEL_YEAR = _PROXY_EDITIONS[0][0]


def error_spans_for(name: str) -> tuple[tuple[float, float, ErrorModel], ...]:
    """The declination error model(s) of the model called ``name``, as ``(from, to, ErrorModel)`` spans.

    A WMM edition (name in :data:`WMM_ERROR_MODELS`) has its own published error model for every
    date it is evaluated at. Any other model (IGRF, or a file of unknown edition) has no published
    declination error model; headingref applies, as a **proxy**, the WMM edition whose five-year
    span contains the date (WMM2015 for 2015.0-2020.0, WMM2020 for 2020.0-2025.0, WMM2025 for
    2025.0-2030.0, the later edition at a boundary; labelled "proxy"). Both models are fitted to
    the same kind of data for the same epoch and neither models the crustal field, which dominates
    the WMM error budget, so the WMM error is a fair measure of how far a main-field-only model can be
    from the real declination. Before 2015.0 no error model is given (NaN): the WMM constants describe
    a field measured by satellites, not a historical field such as IGRF's 1900.
    """
    key = name.replace("-", "").upper().replace("V2", "v2")
    if key in WMM_ERROR_MODELS:
        return ((-np.inf, np.inf, WMM_ERROR_MODELS[key]),)
    spans = []
    for i, (lo, hi, edition) in enumerate(_PROXY_EDITIONS):
        base = WMM_ERROR_MODELS[edition]
        proxy = ErrorModel(base.const_deg, base.scale_nT, f"{edition} (proxy for {name})", base.source)
        spans.append((lo, np.inf if i == len(_PROXY_EDITIONS) - 1 else hi, proxy))
    return tuple(spans)


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
    error_spans : tuple of (from, to, ErrorModel)
        Declination error model(s) by date (see :func:`error_spans_for`); no span, no error model.
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
    error_spans: tuple = ()

    def __repr__(self) -> str:  # the coefficient arrays are too long to print
        return (f"Model(name={self.name!r}, nmax={self.nmax}, valid {self.valid_from:g}-{self.valid_to:g}, "
                f"{len(self.starts)} interval(s), source={self.source!r})")

    def __post_init__(self):
        if not self.error_spans:
            object.__setattr__(self, "error_spans", error_spans_for(self.name))

    def error_model(self, year: float) -> ErrorModel | None:
        """The declination error model applied at one decimal year (None before the first)."""
        for lo, hi, em in self.error_spans:
            if lo <= year < hi:
                return em
        return None

    def error_constants(self, years) -> tuple[np.ndarray, np.ndarray]:
        """``(a_deg, b_nT)`` of the error model at each date; NaN where there is none."""
        years = np.asarray(years, dtype=np.float64)
        a = np.full(years.shape, np.nan)
        b = np.full(years.shape, np.nan)
        for lo, hi, em in self.error_spans:
            inside = (years >= lo) & (years < hi)
            a[inside] = em.const_deg
            b[inside] = em.scale_nT
        return a, b

    def error_label(self, years=None) -> str:
        """Which error model(s) the declination uncertainty uses, in words (for table/column attrs)."""
        first = min(lo for lo, _, _ in self.error_spans)
        if years is None:
            labels = [f"{em.label}" + (f" from {lo:g}" if np.isfinite(lo) else "") for lo, _, em in self.error_spans]
            early = np.isfinite(first)
        else:
            years = np.atleast_1d(np.asarray(years, dtype=np.float64))
            labels = list(dict.fromkeys(em.label for lo, hi, em in self.error_spans
                                        if np.any((years >= lo) & (years < hi))))
            early = bool(np.any(years < first))
        if early:
            labels.append(f"none before {first:g} (NaN)")
        return "sqrt(a^2 + (b/H)^2) deg, 1 sigma, constants of " + "; ".join(labels)

    @property
    def sv_nmax(self) -> int:
        """Highest degree with a non-zero rate (secular variation) in any interval."""
        nonzero = np.any((self.g_rate != 0) | (self.h_rate != 0), axis=(0, 2))
        return int(np.nonzero(nonzero)[0].max()) if nonzero.any() else 0

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


def _read_shc(path: Path, text: str) -> Model:  # noqa: C901 - owned by the model work in progress (issue 13 item 7 left it alone)
    lines = [line for line in text.splitlines() if line.strip() and not line.lstrip().startswith("#")]
    if len(lines) < 3:
        raise _fail(path, "too short for the SHC format (parameter line, epoch line, coefficient lines)")
    try:
        params = lines[0].split()
        nmin, nmax, ntimes = int(params[0]), int(params[1]), int(params[2])
        epochs = np.array([float(v) for v in lines[1].split()])
    except (ValueError, IndexError):
        raise _fail(path, "the parameter line or the epoch line is malformed") from None
    if nmin != 1 or not 1 <= nmax <= MAX_DEGREE:
        raise _fail(path, f"degrees {nmin} to {nmax} are not supported (need N_MIN 1 and N_MAX 1 to {MAX_DEGREE}; "
                          "see headingref.model.MAX_DEGREE for why)")
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
        if n > MAX_DEGREE:
            raise _fail(path, f"line {number} has degree {n}, above the highest supported degree {MAX_DEGREE} "
                              "(see headingref.model.MAX_DEGREE for why)")
        if len(vals) != 4 or not np.all(np.isfinite(vals)) or not (1 <= n and 0 <= m <= n):
            raise _fail(path, f"line {number} is not 'n m g h gdot hdot' with 1 <= n and 0 <= m <= n: {line.strip()[:60]!r}")
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
    display = name.replace("-", "") if name.upper().startswith("WMM") else name  # WMMHR-2025 -> WMMHR2025
    return Model(display, nmax, np.array([epoch]), arr[0], arr[1], arr[2], arr[3], epoch, epoch + 5.0, str(path))


def default_coefficient_file() -> Path:
    """The IGRF-14 SHC file shipped inside the ``ppigrf`` package."""
    import ppigrf

    return Path(ppigrf.__file__).with_name("IGRF14.shc")


def _pygeomag_file(filename: str) -> Path:
    try:
        import pygeomag
    except ImportError:
        raise ModelFileError(f"the WMM files are read from the pygeomag package, which is not installed "
                             f"(pip install pygeomag), so {filename} is unavailable; give the path of a .COF file") from None
    return Path(pygeomag.__file__).with_name("wmm") / filename


MODEL_NAMES = {
    # name: (file finder, where the public-domain file comes from)
    "IGRF-14": (default_coefficient_file, "IAGA V-MOD IGRF-14 (2024), file IGRF14.shc shipped with ppigrf"),
    "WMM2015": (lambda: _pygeomag_file("WMM_2015.COF"), "NOAA NCEI / BGS WMM2015 (Dec 2014), file WMM_2015.COF shipped with pygeomag"),
    "WMM2015v2": (lambda: _pygeomag_file("WMM_2015v2.COF"), "NOAA NCEI / BGS WMM2015v2 (Sep 2018 out-of-cycle release), file WMM_2015v2.COF shipped with pygeomag"),
    "WMM2020": (lambda: _pygeomag_file("WMM_2020.COF"), "NOAA NCEI / BGS WMM2020 (Dec 2019), file WMM_2020.COF shipped with pygeomag"),
    "WMM2025": (lambda: _pygeomag_file("WMM_2025.COF"), "NOAA NCEI / BGS WMM2025 (Nov 2024), file WMM_2025.COF shipped with pygeomag"),
    "WMMHR2025": (lambda: _pygeomag_file("WMMHR_2025.COF"), "NOAA NCEI / CIRES WMMHR2025 (Nov 2024, degree 133), file WMMHR_2025.COF shipped with pygeomag"),
}
"""Models known by name; names are matched ignoring case and hyphens (``wmm-2025``, ``igrf14``)."""


def _name_key(text: str) -> str:
    return text.replace("-", "").replace("_", "").replace(" ", "").upper()


_NAME_KEYS = {_name_key(name): name for name in MODEL_NAMES}


def model_name(text: str) -> str | None:
    """The canonical name (a key of :data:`MODEL_NAMES`) that ``text`` spells, or None."""
    return _NAME_KEYS.get(_name_key(text))


def model_file(name: str) -> Path:
    """The coefficient file of a named model (see :data:`MODEL_NAMES`)."""
    canonical = model_name(name)
    if canonical is None:
        raise ModelFileError(f"model {name!r} is not a known name; give one of {', '.join(MODEL_NAMES)} or a file path")
    return MODEL_NAMES[canonical][0]()


def list_models():
    """The named models as a DataFrame: name, validity, degree, secular-variation degree, error model, source.

    Columns: ``name``, ``valid_from``, ``valid_to`` (decimal years), ``nmax`` (degree),
    ``sv_nmax`` (highest degree with secular variation), ``error_model`` (which declination error
    model headingref applies), ``source`` (the file and its publisher).
    """
    import pandas as pd

    rows = []
    for name, (_, origin) in MODEL_NAMES.items():
        model = load_model(name)
        rows.append({"name": name, "valid_from": model.valid_from, "valid_to": model.valid_to, "nmax": model.nmax,
                     "sv_nmax": model.sv_nmax, "error_model": model.error_label(), "source": origin})
    return pd.DataFrame(rows)


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
    """Load a model by name (:data:`MODEL_NAMES`) or a coefficient file (SHC or WMM .COF).

    ``None`` gives IGRF-14 from ``ppigrf``; a name such as ``"WMMHR2025"`` (case and hyphens
    ignored) gives the named model, its name taking precedence over a file of the same name in the
    working folder; anything else is a path. Raises :class:`~headingref.errors.ModelFileError`
    naming the file and the fault. Models are cached by path and modification time.
    """
    global _DEFAULT
    if isinstance(path, Model):
        return path
    if path is None:
        if _DEFAULT is None:
            _DEFAULT = _load_file(default_coefficient_file())
        return _DEFAULT
    if not isinstance(path, (str, os.PathLike)):
        raise ModelFileError(f"model {path!r} is not understood; give None (IGRF-14), a Model, a model name "
                             f"({', '.join(MODEL_NAMES)}) or the path of a .shc or .COF file")
    canonical = model_name(path) if isinstance(path, str) else None
    if canonical == "IGRF-14":
        return load_model(None)
    if canonical is not None:
        named = _load_file(model_file(canonical))
        return named if named.name == canonical else replace(named, name=canonical, error_spans=error_spans_for(canonical))
    return _load_file(path)


def _load_file(path: str | os.PathLike) -> Model:
    p = Path(path)
    try:
        if not p.is_file():
            raise ModelFileError(f"coefficient file {str(p)!r} does not exist; give a model name ({', '.join(MODEL_NAMES)}), "
                                 "an IGRF-format .shc or a WMM .COF file")
        key = (str(p.resolve()), p.stat().st_mtime)
    except OSError as exc:  # name too long, no permission
        raise ModelFileError(f"coefficient file {str(p)!r} cannot be read: {exc.strerror or exc}") from None
    return _load_cached(*key)
