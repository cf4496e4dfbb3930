"""Compare field models at places and on grids: where does the choice of model matter?

Public API
----------
- :func:`compare_models` -> pandas.DataFrame, a long table: one row per place and model.
- :func:`difference_grid` -> xarray.Dataset, the declination and H of two models on one grid and
  their difference (``field_grid`` of each, subtracted).

Differences are "this model minus the first (reference) model": declination east positive,
wrapped to (-180, 180] degrees; H in nT. A difference is called ``significant`` when it exceeds
the root-sum-square of the two models' declination uncertainties (1 sigma each, the models' own
error models, see :func:`headingref.model.error_spans_for`): the two answers then disagree by more
than either model claims to be wrong by. The WMM and WMMHR error models include the crustal
field the main-field models omit, so a WMM/WMMHR difference below that bound is expected.

>>> from headingref.compare import compare_models
>>> t = compare_models(64.5, -20.0, "2026-06-01", ["WMM2025", "WMMHR2025"])
>>> list(t.model), bool(t.declination_diff_deg.iloc[0] == 0.0)
(['WMM2025', 'WMMHR2025'], True)
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np
import pandas as pd

from .errors import InputError
from .field import field, field_grid
from .model import Model, load_model

DEFAULT_MODELS = ("IGRF-14", "WMM2025", "WMMHR2025")

COLUMNS = (
    "place", "name", "lat_deg", "lon_deg", "alt_km", "decimal_year", "model",
    "declination_deg", "inclination_deg", "horizontal_nT", "total_nT", "declination_uncertainty_deg",
    "declination_diff_deg", "horizontal_diff_nT", "combined_uncertainty_deg", "significant", "zone",
    "declination_flag",
)
"""Columns of :func:`compare_models`, in order."""


def parse_models(models: str | Sequence[Any] | None) -> list:
    """A list of models from a comma-separated text (``"IGRF-14,WMM2025"``) or a sequence.

    At least two, no repeats; each a name, a path or a Model (resolved by :func:`load_model`).
    """
    if models is None:
        items: list = list(DEFAULT_MODELS)
    elif isinstance(models, str):
        items = [m.strip() for m in models.split(",")]
        if any(not m for m in items):
            raise InputError(f"models {models!r}: an empty name between commas; give names or files such as IGRF-14,WMM2025")
    else:
        items = list(models)
    if len(items) < 2:
        raise InputError(f"models {models!r}: give at least two models to compare (e.g. IGRF-14,WMM2025,WMMHR2025)")
    loaded = [load_model(m) for m in items]
    names = [m.name for m in loaded]
    repeated = sorted({n for n in names if names.count(n) > 1})
    if repeated:
        raise InputError(f"models {models!r}: {', '.join(repeated)} given more than once")
    return loaded


def wrap_deg(angle_deg: Any) -> np.ndarray:
    """Angles wrapped to (-180, 180] degrees."""
    a = np.asarray(angle_deg, dtype=np.float64)
    wrapped = np.mod(a + 180.0, 360.0) - 180.0
    return np.where(wrapped == -180.0, 180.0, wrapped)


def compare_models(
    lat: Any,
    lon: Any,
    date: Any,
    models: str | Sequence[Any] | None = None,
    alt_km: Any = 0.0,
    names: Sequence[str] | None = None,
    allow_extrapolation: bool = False,
) -> pd.DataFrame:
    """The field of several models at the same places, as one long table.

    Parameters
    ----------
    lat, lon, date, alt_km : as :func:`headingref.field.field` (degrees, WGS84; dates; km).
    models : comma-separated text or a sequence of names, paths or Models; the first is the
        reference the differences are taken against. Default ``IGRF-14, WMM2025, WMMHR2025``.
    names : optional label per place (default ``place N``).

    Returns
    -------
    pandas.DataFrame
        :data:`COLUMNS`, one row per place and model (places in input order, models in the given
        order within each place). ``declination_diff_deg`` is this model's declination minus the
        first model's (east positive, wrapped to (-180, 180]), ``horizontal_diff_nT`` likewise;
        ``combined_uncertainty_deg`` is ``sqrt(sigma_this^2 + sigma_first^2)`` and ``significant``
        is ``|declination_diff_deg| > combined_uncertainty_deg`` (False where either is undefined).
        ``attrs['error_models']`` names each model's error model.
    """
    loaded = parse_models(models)
    tables = []
    for model in loaded:
        t = field(lat, lon, date, alt_km=alt_km, model=model, allow_extrapolation=allow_extrapolation)
        t.insert(0, "model", model.name)
        t.insert(0, "place", np.arange(len(t)))
        tables.append(t)
    n = len(tables[0])
    if names is None:
        labels = [f"place {i + 1}" for i in range(n)]
    else:
        labels = [str(v) for v in names]
        if len(labels) != n:
            raise InputError(f"names: {len(labels)} labels for {n} places; give one per place")
    ref = tables[0]
    for t in tables:
        t.insert(1, "name", labels)
        t["declination_diff_deg"] = wrap_deg(t.declination_deg.to_numpy() - ref.declination_deg.to_numpy())
        t["horizontal_diff_nT"] = t.horizontal_nT.to_numpy() - ref.horizontal_nT.to_numpy()
        combined = np.hypot(t.declination_uncertainty_deg.to_numpy(), ref.declination_uncertainty_deg.to_numpy())
        t["combined_uncertainty_deg"] = combined
        with np.errstate(invalid="ignore"):
            t["significant"] = np.abs(t.declination_diff_deg.to_numpy()) > combined
    out = pd.concat(tables, ignore_index=True)
    out = out.sort_values(["place"], kind="stable").reset_index(drop=True)
    out["model"] = pd.Categorical(out["model"], categories=[m.name for m in loaded])
    result = out[list(COLUMNS)].copy()
    result.attrs["reference_model"] = loaded[0].name
    result.attrs["error_models"] = {m.name: m.error_label() for m in loaded}
    return result


def difference_grid(
    lats: Any,
    lons: Any,
    date: Any,
    model_a: Model | str | None = "WMM2025",
    model_b: Model | str | None = "WMMHR2025",
    alt_km: float = 0.0,
    allow_extrapolation: bool = False,
):
    """Declination and H of two models on one grid, and ``b - a`` (xarray.Dataset on lat, lon).

    Variables: ``declination_a_deg``, ``declination_b_deg``, ``declination_diff_deg`` (b - a, east
    positive, wrapped to (-180, 180]), ``horizontal_a_nT``, ``horizontal_diff_nT`` (b - a),
    ``combined_uncertainty_deg`` (root-sum-square of the two error models) and ``significant``
    (|difference| above it). Each model's field is :func:`headingref.field.field_grid`.
    """
    import xarray as xr

    a_model, b_model = load_model(model_a), load_model(model_b)
    if np.ndim(date) > 0 and not isinstance(date, str):
        raise InputError("difference_grid takes one date; call it once per date")
    a = field_grid(lats, lons, date, alt_km=alt_km, model=a_model, allow_extrapolation=allow_extrapolation)
    b = field_grid(lats, lons, date, alt_km=alt_km, model=b_model, allow_extrapolation=allow_extrapolation)
    diff = wrap_deg(b.declination_deg.values - a.declination_deg.values)
    combined = np.hypot(a.declination_uncertainty_deg.values, b.declination_uncertainty_deg.values)
    with np.errstate(invalid="ignore"):
        significant = np.abs(diff) > combined
    dims = ("lat", "lon")
    return xr.Dataset(
        {
            "declination_a_deg": (dims, a.declination_deg.values, {"units": "degree (east positive)", "model": a_model.name}),
            "declination_b_deg": (dims, b.declination_deg.values, {"units": "degree (east positive)", "model": b_model.name}),
            "declination_diff_deg": (dims, diff, {"units": "degree", "long_name": f"{b_model.name} minus {a_model.name}"}),
            "horizontal_a_nT": (dims, a.horizontal_nT.values, {"units": "nT", "model": a_model.name}),
            "horizontal_diff_nT": (dims, b.horizontal_nT.values - a.horizontal_nT.values,
                                   {"units": "nT", "long_name": f"{b_model.name} minus {a_model.name}"}),
            "combined_uncertainty_deg": (dims, combined, {"units": "degree (1 sigma, root-sum-square of both error models)"}),
            "significant": (dims, significant, {"long_name": "|declination difference| above the combined uncertainty"}),
        },
        coords={"lat": a.lat, "lon": a.lon},
        attrs={"model_a": a_model.name, "model_b": b_model.name, "decimal_year": float(np.atleast_1d(a.time.values)[0]),
               "alt_km": float(alt_km), "error_model_a": a_model.error_label(), "error_model_b": b_model.error_label()},
    )
