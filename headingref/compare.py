"""Compare field models at places and on grids: where does the choice of model matter?

Public API
----------
- :func:`compare_models` -> pandas.DataFrame, a long table: one row per place and model.
- :func:`difference_grid` -> xarray.Dataset, the declination and H of two models on one grid and
  their difference (``field_grid`` of each, subtracted).
- :func:`compare_route` -> :class:`RouteComparison` ``(samples, stretches, legs)``: the models
  along a route and the stretches where they disagree beyond the combined uncertainty.
- :func:`compare_runways` -> pandas.DataFrame, one row per runway end: each model's magnetic
  azimuth, implied designator and verdict, and ``model_dependent``.
- :func:`compare_bases` -> pandas.DataFrame, one row per compass base: each model's variation to
  mark, the differences and ``mark_differs``.

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

import os
import warnings
from collections.abc import Sequence
from typing import Any, NamedTuple

import numpy as np
import pandas as pd

from .elements import field, field_grid
from .errors import InputError
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
    lat, lon, date, alt_km : as :func:`headingref.elements.field` (degrees, WGS84; dates; km).
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
    (|difference| above it). Each model's field is :func:`headingref.elements.field_grid`.
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


# --------------------------------------------------------------------------- along a route

ROUTE_SAMPLE_COLUMNS = (
    "sample", "leg", "from", "to", "distance_along_leg_nm", "distance_along_route_nm", "lat_deg", "lon_deg", "alt_km",
    "decimal_year", "model", "declination_deg", "horizontal_nT", "declination_uncertainty_deg", "declination_diff_deg",
    "horizontal_diff_nT", "combined_uncertainty_deg", "significant", "zone", "declination_flag",
)
"""Columns of :attr:`RouteComparison.samples`, in order (one row per route sample and model)."""

ROUTE_STRETCH_COLUMNS = (
    "leg", "from", "to", "model", "reference_model", "from_nm", "to_nm", "from_route_nm", "to_route_nm", "length_nm",
    "max_abs_declination_diff_deg", "max_diff_over_uncertainty",
)
"""Columns of :attr:`RouteComparison.stretches`, in order (one row per stretch, leg and model)."""


class RouteComparison(NamedTuple):
    """Result of :func:`compare_route`.

    ``samples`` (:data:`ROUTE_SAMPLE_COLUMNS`): one row per route sample and model; ``stretches``
    (:data:`ROUTE_STRETCH_COLUMNS`): where a model disagrees with the first beyond the combined
    uncertainty; ``legs``: the route's legs table (:data:`headingref.routes.LEG_COLUMNS`) with the
    first model.
    """

    samples: pd.DataFrame
    stretches: pd.DataFrame
    legs: pd.DataFrame


def _disagreement_stretches(samples: pd.DataFrame, reference: str) -> pd.DataFrame:
    """Per leg and model, the stretches where |declination difference| exceeds the combined uncertainty.

    The ends are found by linear interpolation of the margin ``combined - |difference|`` between
    samples, with the routes module's weak-field stretch helper (a stretch is where the margin is
    below zero). A sample whose declination is undefined (H = 0) counts as not disagreeing: the
    route's blackout stretches cover it.
    """
    from .routes import _stretch_intervals

    rows = []
    for (model, leg), part in samples[samples.model.astype(str) != reference].groupby(
            [samples.model.astype(str), "leg"], sort=False):
        dist = part.distance_along_leg_nm.to_numpy()
        diff = np.abs(part.declination_diff_deg.to_numpy())
        combined = part.combined_uncertainty_deg.to_numpy()
        with np.errstate(invalid="ignore"):
            margin = combined - diff
        margin = np.where(np.isfinite(margin), margin, 1e9)  # undefined: no disagreement; finite, so interpolation holds
        start_nm = float(part.distance_along_route_nm.iloc[0] - dist[0])
        for a, b in _stretch_intervals(dist, margin, 0.0):
            inside = (dist >= a) & (dist <= b) & (margin < 0.0)
            with np.errstate(invalid="ignore", divide="ignore"):
                ratio = diff[inside] / combined[inside]
            rows.append({
                "leg": int(leg), "from": part["from"].iloc[0], "to": part["to"].iloc[0], "model": model,
                "reference_model": reference, "from_nm": a, "to_nm": b, "from_route_nm": start_nm + a,
                "to_route_nm": start_nm + b, "length_nm": b - a,
                "max_abs_declination_diff_deg": float(np.max(diff[inside])) if inside.any() else float(np.max(diff)),
                "max_diff_over_uncertainty": float(np.max(ratio)) if inside.any() else np.nan,
            })
    return pd.DataFrame(rows, columns=list(ROUTE_STRETCH_COLUMNS))


def compare_route(
    route_or_file: Any,
    date: Any,
    models: str | Sequence[Any] | None = None,
    alt_km: Any = 0.0,
    spacing_nm: float = 10.0,
    path: str = "geodesic",
    allow_extrapolation: bool = False,
    route_name: str | None = None,
) -> RouteComparison:
    """Several field models along a route: the declination difference sample by sample, and where it matters.

    Parameters
    ----------
    route_or_file : waypoints as :func:`headingref.routes.route` takes them (CSV, GPX, KML or
        GeoJSON path, DataFrame, list of dicts), or a :class:`headingref.routes.RouteResult`
        (its samples are used as they are).
    date : date-like or decimal year, one for the whole route.
    models : as :func:`compare_models`; the first is the reference.
    alt_km, spacing_nm, path, route_name : as :func:`headingref.routes.route` (km or text with a
        unit; NM between samples; ``geodesic`` or ``rhumb``).

    Returns
    -------
    RouteComparison
        ``samples``: :data:`ROUTE_SAMPLE_COLUMNS`, one row per sample and model (samples in route
        order, models in the given order within each): the sample's place on the route
        (``leg``, ``distance_along_leg_nm``, ``distance_along_route_nm``, NM) and the
        :func:`compare_models` columns there (``declination_diff_deg``: this model minus the first,
        degrees east positive; ``significant``: ``|difference| > combined_uncertainty_deg``).
        ``stretches``: :data:`ROUTE_STRETCH_COLUMNS`, one row per leg, model and stretch where
        the model disagrees with the first by more than the combined 1 sigma (``from_nm, to_nm``
        along the leg, ``from_route_nm, to_route_nm`` along the route, NM; ends by linear
        interpolation between samples). ``legs``: the route's legs with the first model.

    References
    ----------
    .. [1] C. F. F. Karney, "Algorithms for geodesics", *Journal of Geodesy* 87(1), 43-55 (2013),
       doi:10.1007/s00190-012-0578-z (the route's geodesic samples, ``pyproj.Geod``).
    """
    from .routes import RouteResult, route
    from .units import decimal_year

    loaded = parse_models(models)
    year = float(decimal_year(date))
    if isinstance(route_or_file, RouteResult):
        result = route_or_file
    else:
        result = route(route_or_file, year, alt_km=alt_km, spacing_nm=spacing_nm, path=path, model=loaded[0],
                       allow_extrapolation=allow_extrapolation, route_name=route_name)
    s = result.samples
    table = compare_models(s.lat_deg.to_numpy(), s.lon_deg.to_numpy(), year, loaded, alt_km=s.alt_km.to_numpy(),
                           allow_extrapolation=allow_extrapolation)
    at = table.place.to_numpy()
    table = table.rename(columns={"place": "sample"})
    table["sample"] = at + 1
    for column in ("leg", "from", "to", "distance_along_leg_nm", "distance_along_route_nm"):
        table[column] = s[column].to_numpy()[at]
    samples = table[list(ROUTE_SAMPLE_COLUMNS)].copy()
    samples.attrs.update(table.attrs)
    samples.attrs.update(result.legs.attrs)
    stretches = _disagreement_stretches(samples, loaded[0].name)
    stretches.attrs["reference_model"] = loaded[0].name
    return RouteComparison(samples, stretches, result.legs)


# --------------------------------------------------------------------------- runways

RUNWAY_MODEL_FIELDS = ("variation_deg", "variation_uncertainty_deg", "runway_magnetic_deg", "designator_implied", "verdict")
"""Per-model columns of :func:`compare_runways`, each written ``<model>_<field>``."""

_STATUS_ORDER = {"ok": 0, "warning": 1, "error": 2}


def _worst_status(statuses: pd.DataFrame, reasons: pd.DataFrame) -> tuple[list, list]:
    status, reason = [], []
    for i in range(len(statuses)):
        row = [str(v) for v in statuses.iloc[i]]
        status.append(max(row, key=lambda v: _STATUS_ORDER.get(v, 2)))
        found = {m: str(v) for m, v in reasons.iloc[i].items() if isinstance(v, str) and v.strip()}
        if len(set(found.values())) <= 1:  # the same reason (or none) under every model
            reason.append(next(iter(found.values()), ""))
        else:
            reason.append("; ".join(f"{m}: {v}" for m, v in found.items()))
    return status, reason


def compare_runways(
    runways: Any,
    date: Any,
    models: str | Sequence[Any] | None = None,
    tolerance_deg: float | None = None,
    band_sigmas: float | None = None,
    columns: str | dict | None = None,
    allow_extrapolation: bool = False,
) -> pd.DataFrame:
    """Which runway designators depend on the field model: :func:`headingref.runways.check_runways` per model.

    Parameters
    ----------
    runways : DataFrame or path of a CSV / ``.xlsx`` file, as :func:`headingref.runways.check_runways`.
    date : the check date. models : as :func:`compare_models` (the first is the reference).
    tolerance_deg, band_sigmas, columns, allow_extrapolation : passed to ``check_runways``.

    Returns
    -------
    pandas.DataFrame
        One row per runway end in input order: ``input_row, airport, runway, runway_id,
        true_bearing_deg, ref_lat_deg, ref_lon_deg``; for each model ``<model>_variation_deg``,
        ``<model>_variation_uncertainty_deg``, ``<model>_runway_magnetic_deg``,
        ``<model>_designator_implied`` and ``<model>_verdict`` (:data:`RUNWAY_MODEL_FIELDS`);
        ``variation_spread_deg`` (largest minus smallest variation over the models, degrees);
        ``model_dependent`` (the implied designators differ between models); ``verdict_dependent``
        (the verdicts differ); ``status`` (the worst over the models) and ``reason`` (each model's,
        prefixed with its name where they differ).
        ``attrs['models']`` lists the model names in order.

    The designator rule is ICAO Annex 14 Vol I 5.2.2.4 (the magnetic azimuth to the nearest ten
    degrees, leading digits), as in :mod:`headingref.runways`.

    References
    ----------
    .. [1] ICAO, *Annex 14 to the Convention on International Civil Aviation, Aerodromes*, Vol. I,
       *Aerodrome Design and Operations*, 5.2.2.4 (runway designation marking).
    """
    from .runways import BOUNDARY_TOLERANCE_DEG, check_runways

    loaded = parse_models(models)
    tolerance = BOUNDARY_TOLERANCE_DEG if tolerance_deg is None else tolerance_deg
    tables = []
    for m in loaded:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            tables.append(check_runways(runways, date, horizon_years=0.0, model=m, tolerance_deg=tolerance,
                                        band_sigmas=band_sigmas, columns=columns, allow_extrapolation=allow_extrapolation,
                                        last_fit=False).table)
        for w in caught:  # each model's warnings, said as that model's
            warnings.warn(f"{m.name}: {w.message}", w.category, stacklevel=2)
    first = tables[0]
    out = first[["input_row", "airport", "runway", "runway_id", "true_bearing_deg", "ref_lat_deg", "ref_lon_deg"]].copy()
    for model, t in zip(loaded, tables, strict=True):
        for name in RUNWAY_MODEL_FIELDS:
            out[f"{model.name}_{name}"] = t[name].to_numpy()
    variation = np.column_stack([t.variation_deg.to_numpy(dtype=np.float64) for t in tables])
    relative = wrap_deg(variation - variation[:, :1])
    with np.errstate(invalid="ignore"):
        out["variation_spread_deg"] = np.max(relative, axis=1) - np.min(relative, axis=1)
    designators = pd.DataFrame({m.name: t.designator_implied.astype(str).to_numpy() for m, t in zip(loaded, tables, strict=True)})
    verdicts = pd.DataFrame({m.name: t.verdict.astype(str).to_numpy() for m, t in zip(loaded, tables, strict=True)})
    known = designators.apply(lambda row: {v for v in row if v and v != "nan"}, axis=1)
    out["model_dependent"] = [len(v) > 1 for v in known]
    out["verdict_dependent"] = [len({v for v in row if v and v != "nan"}) > 1 for row in verdicts.itertuples(index=False)]
    status, reason = _worst_status(pd.DataFrame({m.name: t.status.to_numpy() for m, t in zip(loaded, tables, strict=True)}),
                                   pd.DataFrame({m.name: t.reason.to_numpy() for m, t in zip(loaded, tables, strict=True)}))
    out["status"] = status
    out["reason"] = reason
    out = out.reset_index(drop=True)
    out.attrs["models"] = [m.name for m in loaded]
    out.attrs["error_models"] = {m.name: m.error_label() for m in loaded}
    return out


# --------------------------------------------------------------------------- compass bases

BASE_MODEL_FIELDS = ("model_variation_deg", "predicted_variation_deg", "variation_to_mark_deg", "variation_to_mark",
                     "declination_uncertainty_deg", "predicted_diff_deg")
"""Per-model columns of :func:`compare_bases`, each written ``<model>_<field>``."""


def _upkeep_per_model(sites: list, date: Any, model: Model, mark_step_deg: float, allow_extrapolation: bool) -> pd.DataFrame:
    """``base_upkeep`` for every site with one model; a site the model cannot take gets its one-line reason."""
    from .compass_base import base_upkeep
    from .errors import HeadingrefError

    try:
        table = base_upkeep(sites, date, model=model, mark_step_deg=mark_step_deg, allow_extrapolation=allow_extrapolation)
        table["reason"] = ""
        return table
    except HeadingrefError:
        pass
    rows = []
    for site in sites:  # isolate the sites this model refuses (e.g. a survey before its validity)
        try:
            row = base_upkeep([site], date, model=model, mark_step_deg=mark_step_deg, allow_extrapolation=allow_extrapolation)
            row["reason"] = ""
        except HeadingrefError as exc:
            row = pd.DataFrame({"name": [site.name], "row": [site.row], "reason": [f"{model.name}: {exc}"]})
        rows.append(row)
    return pd.concat(rows, ignore_index=True)


def compare_bases(
    bases: Any,
    date: Any,
    models: str | Sequence[Any] | None = None,
    mark_step_deg: float | None = None,
    allow_extrapolation: bool = False,
) -> pd.DataFrame:
    """The variation to mark at each compass base per field model (:func:`headingref.compass_base.base_upkeep`).

    Parameters
    ----------
    bases : path of a compass-base CSV (:func:`headingref.compass_base.read_sites_csv`), or Sites.
    date : the planned swing date. models : as :func:`compare_models` (the first is the reference).
    mark_step_deg : rounding step of the marked variation (default
        :data:`headingref.compass_base.DEFAULT_MARK_STEP_DEG`, 0.5 degree).
    allow_extrapolation : let a model reach back to a survey before its validity (warns).

    Returns
    -------
    pandas.DataFrame
        One row per base: ``name, row, lat_deg, lon_deg, survey_date, swing_date,
        surveyed_variation_deg``; for each model (:data:`BASE_MODEL_FIELDS`)
        ``<model>_model_variation_deg`` (the model's variation on the swing date),
        ``<model>_predicted_variation_deg`` (surveyed plus the model's change since the survey),
        ``<model>_variation_to_mark_deg`` and ``<model>_variation_to_mark`` (rounded to the step),
        ``<model>_declination_uncertainty_deg`` and ``<model>_predicted_diff_deg`` (this model's
        predicted variation minus the first's, degrees east positive); ``max_predicted_diff_deg``
        (largest |difference|), ``max_model_variation_diff_deg`` (the same for the models'
        own variation, which a local survey overrides), ``mark_differs`` (the rounded variation to
        mark is not the same for every model, among the models that took the base), ``status``
        (``ok``; ``warning`` where some model refused the base, its columns then empty;
        ``error`` where every model did) and ``reason`` (each refusal, one line per model). A base's survey outside a model's validity is refused by
        that model unless ``allow_extrapolation``. ``attrs['models']`` lists the model names.

    References
    ----------
    .. [1] National Geospatial-Intelligence Agency, *Handbook of Magnetic Compass Adjustment*
       (2004): the compass swing on a surveyed base with the variation brought forward to the swing date.
    """
    from .compass_base import DEFAULT_MARK_STEP_DEG, read_sites_csv
    from .units import decimal_year, parse_number

    loaded = parse_models(models)
    date = float(decimal_year(date))  # a bad date or step is the caller's error, not one base's: refuse it here
    step = DEFAULT_MARK_STEP_DEG if mark_step_deg is None else parse_number(mark_step_deg, "mark_step_deg")
    if not 0.01 <= step <= 5:
        raise InputError(f"mark step {step!r} deg: give a rounding step from 0.01 to 5 degrees (0.5 or 1)")
    if isinstance(bases, (str, os.PathLike)):
        sites = read_sites_csv(bases)
    else:
        sites = list(bases) if isinstance(bases, (list, tuple)) else [bases]
    tables = [_upkeep_per_model(sites, date, m, step, allow_extrapolation) for m in loaded]
    ok = [t for t in tables if "lat_deg" in t]
    base_cols = ["name", "row", "lat_deg", "lon_deg", "survey_date", "swing_date", "surveyed_variation_deg"]
    out = pd.DataFrame({"name": tables[0]["name"].to_numpy(), "row": tables[0]["row"].to_numpy()})
    for column in base_cols[2:]:
        values = pd.Series([None] * len(out), dtype=object)
        for t in ok:
            values = values.where(values.notna(), t[column].reindex(range(len(out))).astype(object))
        out[column] = values.to_numpy()
    ref = tables[0].get("predicted_variation_deg", pd.Series(np.nan, index=out.index)).to_numpy(dtype=np.float64)
    ref_model = tables[0].get("model_variation_deg", pd.Series(np.nan, index=out.index)).to_numpy(dtype=np.float64)
    diffs, model_diffs, marks = [], [], []
    for model, t in zip(loaded, tables, strict=True):
        t = t.reindex(columns=list(BASE_MODEL_FIELDS[:-1]) + ["reason"])
        for name in BASE_MODEL_FIELDS[:-1]:
            out[f"{model.name}_{name}"] = t[name].to_numpy()
        diff = wrap_deg(t.predicted_variation_deg.to_numpy(dtype=np.float64) - ref)
        out[f"{model.name}_predicted_diff_deg"] = diff
        diffs.append(diff)
        model_diffs.append(wrap_deg(t.model_variation_deg.to_numpy(dtype=np.float64) - ref_model))
        marks.append(t.variation_to_mark_deg.to_numpy(dtype=np.float64))
    with np.errstate(invalid="ignore"), warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN rows: a base every model refused
        out["max_predicted_diff_deg"] = np.nanmax(np.abs(np.column_stack(diffs)), axis=1)
        out["max_model_variation_diff_deg"] = np.nanmax(np.abs(np.column_stack(model_diffs)), axis=1)
    mark = np.column_stack(marks)
    out["mark_differs"] = [len({round(v, 6) for v in row if np.isfinite(v)}) > 1 for row in mark]
    reasons = ["; ".join(r for r in (str(t.reason.iloc[i]) for t in tables) if r and r != "nan") for i in range(len(out))]
    refused = np.column_stack([t.reason.astype(str).replace("nan", "").to_numpy() != "" for t in tables])
    out["status"] = np.where(refused.all(axis=1), "error", np.where(refused.any(axis=1), "warning", "ok"))
    out["reason"] = reasons
    out.attrs["models"] = [m.name for m in loaded]
    out.attrs["mark_step_deg"] = float(step)
    return out
