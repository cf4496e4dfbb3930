"""The one-command report: a scenario in, a self-contained HTML report and data files out.

:func:`build_report` runs every job a scenario (see :mod:`headingref.scenario`) asks for
through the library, and writes into ``out_dir``:

- ``report.html``: one self-contained page (inline CSS, figures embedded as base64 PNG, no
  external resources) opening with a one-minute summary (which legs lose a usable magnetic
  reference and where, which compass bases need a resurvey and when, which runways need
  redesignation and when), the safety caution, then a section per job with tables and figures;
- CSV tables (route legs and samples with the error budget, zone areas, poles, compass base
  upkeep and setting-out, swing coefficients, residuals and card, runway check and changes);
- GeoJSON (RFC 7946): the routes (legs cut at the antimeridian, stretches without a usable
  magnetic reference) and the weak-field zones.

Everything is first written to a temporary folder beside ``out_dir`` and then moved into place
file by file (``os.replace``), so a failed run leaves no half-written output. A job whose
library module is not installed is skipped with a note in the report. A progress bar (tqdm,
on stderr) shows the steps.

Public API: :func:`build_report`, :class:`ReportResult`, :data:`REPORT_FILE`.

>>> from headingref.report import build_report  # doctest: +SKIP
>>> result = build_report("data/demo/scenario.toml", "demo-out", progress=False)  # doctest: +SKIP
>>> result.html.name  # doctest: +SKIP
'report.html'
"""

from __future__ import annotations

import base64
import contextlib
import datetime as _dt
import html
import io
import json
import math
import os
import shutil
import sys
import tempfile
import warnings
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from .errors import HeadingrefError, InputError
from .notices import CAUTION
from .scenario import Scenario, load_scenario
from .units import decimal_year

__all__ = ["REPORT_FILE", "ReportResult", "build_report"]

REPORT_FILE = "report.html"
_FIG_DPI = 90
_SUMMARY_LIMIT = 15  # summary lines per topic before "... and N more"
_TABLE_LIMIT = 200  # longer runway tables show only the rows needing attention


# --------------------------------------------------------------------------- result containers
@dataclass
class Section:
    """One section of the report: its HTML blocks, notes and whether it was skipped."""

    key: str
    title: str
    blocks: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    skipped: str = ""


@dataclass
class ReportResult:
    """What :func:`build_report` produced.

    ``html`` is the report's path; ``files`` every file written (in ``out_dir``); ``summary``
    the summary lines by topic; ``skipped`` the jobs left out and why; ``tables`` the main
    result tables by name (for checks and notebooks).
    """

    out_dir: Path
    html: Path
    files: list[Path]
    summary: dict[str, list[str]]
    skipped: dict[str, str]
    tables: dict[str, pd.DataFrame] = field(default_factory=dict, repr=False)


class _Missing(Exception):
    """A library part the report needs is not installed."""


def _need(module: str, *names: str):
    """Import ``headingref.<module>`` and return the named attributes, or raise _Missing."""
    import importlib

    try:
        mod = importlib.import_module(f"headingref.{module}")
    except ModuleNotFoundError as exc:
        if exc.name and exc.name.startswith("headingref"):
            raise _Missing(f"headingref.{module} is not available in this installation") from None
        raise
    missing = [n for n in names if not hasattr(mod, n)]
    if missing:
        raise _Missing(f"headingref.{module} has no {', '.join(missing)} yet")
    values = tuple(getattr(mod, n) for n in names)
    return values[0] if len(values) == 1 else values


# --------------------------------------------------------------------------- small helpers
def _esc(value: Any) -> str:
    return html.escape(str(value))


def _figure_html(fig, alt: str, caption: str = "") -> str:
    """Embed a matplotlib figure as a base64 PNG and close it."""
    import matplotlib.pyplot as plt

    buf = io.BytesIO()
    # A tight bounding box costs a second draw; figures with a layout engine are already tight.
    tight = "tight" if fig.get_layout_engine() is None else None
    fig.savefig(buf, format="png", dpi=_FIG_DPI, bbox_inches=tight)
    plt.close(fig)
    data = base64.b64encode(buf.getvalue()).decode("ascii")
    cap = f"<figcaption>{_esc(caption)}</figcaption>" if caption else ""
    return f'<figure><img alt="{_esc(alt)}" src="data:image/png;base64,{data}">{cap}</figure>'


_DECIMALS = (("standard_error_deg", 2), ("minus_model_deg", 2), ("_nT", 0), ("_nm", 1), ("_km", 1), ("_km2", 0), ("_m", 1), ("_min", 1), ("_deg", 1), ("_years", 1), ("_year", 2))


def _format_cell(column: str, value: Any) -> str:
    column = column.removesuffix("_mid").removesuffix("_end")
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    if isinstance(value, (float, np.floating)):
        for suffix, decimals in _DECIMALS:
            if column.endswith(suffix):
                return f"{value:,.{decimals}f}"
        if "km2" in column or abs(value) >= 1e4:  # areas and other large numbers: whole, with separators
            return f"{value:,.0f}"
        if "percent" in column:
            return f"{value:.1f}"
        return f"{value:.4g}"
    return str(value)


def _table_html(frame: pd.DataFrame, columns: dict[str, str] | None = None, css: str = "", highlight: Callable | None = None) -> str:
    """An HTML table of ``frame`` with ``columns`` {name: header} (all columns when None)."""
    columns = columns or {c: c for c in frame.columns}
    columns = {c: h for c, h in columns.items() if c in frame.columns}
    head = "".join(f"<th>{_esc(h)}</th>" for h in columns.values())
    rows = []
    for _, record in frame.iterrows():
        cls = highlight(record) if highlight else ""
        cells = "".join(
            f'<td class="{"num" if isinstance(record[c], (int, float, np.number)) and not isinstance(record[c], (bool, np.bool_)) else ""}">'
            f"{_esc(_format_cell(c, record[c]))}</td>"
            for c in columns
        )
        rows.append(f'<tr class="{cls}">{cells}</tr>' if cls else f"<tr>{cells}</tr>")
    return f'<div class="scroll"><table class="{css}"><thead><tr>{head}</tr></thead><tbody>{"".join(rows)}</tbody></table></div>'


def _latlon_text(lat: float, lon: float) -> str:
    from .units import format_dm

    return f"{format_dm(lat, 'N', 'S')} {format_dm(lon, 'E', 'W')}"


def _stretches(distance_nm: np.ndarray, values: np.ndarray, threshold: float) -> list[tuple[float, float]]:
    """Stretches where ``values < threshold``, ends by linear interpolation between samples (NM)."""
    below = values < threshold
    runs: list[tuple[float, float]] = []
    start = None

    def crossing(a: int, b: int) -> float:
        va, vb = values[a], values[b]
        t = 0.5 if va == vb else (threshold - va) / (vb - va)
        return float(distance_nm[a] + min(max(t, 0.0), 1.0) * (distance_nm[b] - distance_nm[a]))

    for i in range(len(values)):
        if below[i] and start is None:
            start = float(distance_nm[0]) if i == 0 else crossing(i - 1, i)
        elif not below[i] and start is not None:
            runs.append((start, crossing(i - 1, i)))
            start = None
    if start is not None:
        runs.append((start, float(distance_nm[-1])))
    return runs


def _position_at(samples: pd.DataFrame, distance_nm: float) -> tuple[float, float]:
    """Lat/lon at a distance along a leg, interpolated between samples (longitude unwrapped)."""
    d = samples["distance_along_leg_nm"].to_numpy()
    lon = np.degrees(np.unwrap(np.radians(samples["lon_deg"].to_numpy())))
    lat = float(np.interp(distance_nm, d, samples["lat_deg"].to_numpy()))
    return lat, float((np.interp(distance_nm, d, lon) + 180.0) % 360.0 - 180.0)


def _split_antimeridian(lon: np.ndarray, lat: np.ndarray) -> list[list[list[float]]]:
    """Cut a lon/lat polyline where it crosses the antimeridian (RFC 7946 section 3.1.9)."""
    parts: list[list[list[float]]] = [[[float(lon[0]), float(lat[0])]]]
    for i in range(1, len(lon)):
        dlon = lon[i] - lon[i - 1]
        if abs(dlon) > 180.0:
            east = lon[i - 1] > 0  # leaving the east side
            lon_b = lon[i] + (360.0 if east else -360.0)
            edge = 180.0 if east else -180.0
            t = (edge - lon[i - 1]) / (lon_b - lon[i - 1])
            lat_x = float(lat[i - 1] + t * (lat[i] - lat[i - 1]))
            parts[-1].append([edge, lat_x])
            parts.append([[-edge, lat_x]])
        parts[-1].append([float(lon[i]), float(lat[i])])
    return [p for p in parts if len(p) >= 2]


def _line_geometry(lon: np.ndarray, lat: np.ndarray) -> dict:
    parts = _split_antimeridian(np.asarray(lon, dtype=float), np.asarray(lat, dtype=float))
    coords = [[[round(x, 5), round(y, 5)] for x, y in part] for part in parts]
    if len(coords) == 1:
        return {"type": "LineString", "coordinates": coords[0]}
    return {"type": "MultiLineString", "coordinates": coords}


def _json_value(value: Any) -> Any:
    if isinstance(value, (np.floating, float)):
        return None if not math.isfinite(float(value)) else round(float(value), 4)
    if isinstance(value, (np.integer,)):
        return int(value)
    if isinstance(value, (np.bool_,)):
        return bool(value)
    return value


# --------------------------------------------------------------------------- the run
class _Run:
    """State of one report run: scenario, model, staging folder, sections, summary, tables."""

    def __init__(self, scenario: Scenario, stage: Path):
        self.sc = scenario
        self.stage = stage
        self.files: list[str] = []
        self.sections: list[Section] = []
        self.summary: dict[str, list[str]] = {"routes": [], "zones": [], "bases": [], "runways": [], "swing": []}
        self.tables: dict[str, pd.DataFrame] = {}
        self.warnings: list[tuple[type[Warning], str]] = []
        self.model = None
        self.route_results: list[tuple[str, Any]] = []
        self.zone_geojson: dict | None = None

    # output helpers -------------------------------------------------------
    def write_csv(self, name: str, frame: pd.DataFrame) -> str:
        frame.to_csv(self.stage / name, index=False)
        self.files.append(name)
        return name

    def write_json(self, name: str, obj: dict) -> str:
        (self.stage / name).write_text(json.dumps(obj, separators=(",", ":"), default=_json_value), encoding="utf-8")
        self.files.append(name)
        return name

    def files_html(self, names: list[str]) -> str:
        links = ", ".join(f'<a href="{_esc(n)}"><code>{_esc(n)}</code></a>' for n in names)
        return f'<p class="files">Data files: {links}</p>'

    @property
    def date(self) -> str:
        return self.sc.analysis_date

    @property
    def common(self) -> dict:
        return {"model": self.model, "allow_extrapolation": self.sc.allow_extrapolation}

    @property
    def thresholds(self) -> tuple[float, float]:
        z = self.sc.zones
        return (z["blackout_nT"], z["caution_nT"]) if z else (2000.0, 6000.0)

    @property
    def budget(self) -> dict:
        b = self.sc.error_budget
        if b is None:
            from .scenario import SCHEMA

            b = {k: spec.default for k, spec in SCHEMA["error_budget"].items()}
        return b


def _run_section(run: _Run, key: str, title: str, job: Callable[[_Run, Section], None]) -> None:
    section = Section(key, title)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            job(run, section)
        except _Missing as exc:
            section.skipped = f"Skipped: {exc}."
            section.blocks = []
        except HeadingrefError as exc:
            raise type(exc)(f"{title}: {exc}") from None
    seen = set()
    for w in caught:
        text = str(w.message)
        if text not in seen:
            seen.add(text)
            section.notes.append(f"{w.category.__name__}: {text}")
            run.warnings.append((w.category, f"{title}: {text}"))
    run.sections.append(section)


# --------------------------------------------------------------------------- jobs
def _job_routes(run: _Run, sec: Section) -> None:
    settings = run.sc.routes
    route = _need("routes", "route")
    heading_error = _need("detector", "heading_error")
    budget = run.budget
    blackout_nT, caution_nT = run.thresholds
    all_legs, all_samples, features = [], [], []
    sec.blocks.append(
        f"<p>Legs along the WGS84 {_esc(settings['path'])} path, sampled every {settings['spacing_nm']:g} NM; grid "
        f"<code>{_esc(settings['grid'])}</code>; field {_esc(run.sc.model_name)} on {_esc(run.date)}. Courses are at the "
        f"start of each leg (true, magnetic = true − variation, grid = true − convergence). The error budget is for a "
        f"slaved flux-gate detector with a {budget['residual_field_nT']:g} nT residual aircraft field: steady level flight, "
        f"and a {_manoeuvre(budget)} lasting {budget['turn_duration_s']:g} s with slaving on "
        f"(root-sum-square of the terms), against a limit of {budget['limit_deg']:g}°.</p>"
    )
    for plan in settings["plan"]:
        name = plan["name"]
        try:
            result = route(
                str(plan["file"]), run.date, alt_km=settings["alt"], grid=settings["grid"], spacing_nm=settings["spacing_nm"],
                path=settings["path"], **run.common,
            )
        except HeadingrefError as exc:
            raise type(exc)(f"route {name!r} ({plan['file'].name}): {exc}") from None
        run.route_results.append((name, result))
        legs, samples = result.legs.copy(), result.samples.copy()
        lat, lon, alt = (samples[c].to_numpy() for c in ("lat_deg", "lon_deg", "alt_km"))
        steady = heading_error(lat, lon, run.date, alt_km=alt, **run.sc.heading_error_options(manoeuvre=False), **run.common)
        turning = heading_error(lat, lon, run.date, alt_km=alt, **run.sc.heading_error_options(), **run.common)
        samples["budget_steady_deg"] = steady["budget_rss_deg"].to_numpy()
        samples["budget_turn_deg"] = turning["budget_rss_deg"].to_numpy()
        samples["tilt_error_turn_deg"] = turning["tilt_error_deg"].to_numpy()
        samples.insert(0, "route", name)
        legs.insert(0, "route", name)
        steady_max, lost_text = [], []
        for i, leg in legs.iterrows():
            leg_samples = samples[samples["leg"] == i + 1]
            dist = leg_samples["distance_along_leg_nm"].to_numpy()
            steady_max.append(float(leg_samples["budget_steady_deg"].max()))
            parts = []
            for label, threshold in (("blackout", blackout_nT), ("caution", caution_nT)):
                for a, b in _stretches(dist, leg_samples["horizontal_nT"].to_numpy(), threshold):
                    p0, p1 = _position_at(leg_samples, a), _position_at(leg_samples, b)
                    parts.append((label, a, b, p0, p1))
                    if label == "blackout":
                        geometry_rows = leg_samples[(leg_samples.distance_along_leg_nm >= a) & (leg_samples.distance_along_leg_nm <= b)]
                        line_lon = np.concatenate([[p0[1]], geometry_rows.lon_deg.to_numpy(), [p1[1]]])
                        line_lat = np.concatenate([[p0[0]], geometry_rows.lat_deg.to_numpy(), [p1[0]]])
                        features.append({
                            "type": "Feature",
                            "geometry": _line_geometry(line_lon, line_lat),
                            "properties": {"kind": "no usable magnetic reference", "route": name, "from": leg["from"],
                                           "to": leg["to"], "from_nm": round(a, 1), "to_nm": round(b, 1),
                                           "threshold_nT": blackout_nT},
                        })
            over = _stretches(dist, -leg_samples["budget_steady_deg"].to_numpy(), -budget["limit_deg"])
            blackout_parts = [p for p in parts if p[0] == "blackout"]
            caution_parts = [p for p in parts if p[0] == "caution"]
            text = "; ".join(f"{a:.0f}–{b:.0f} NM ({_latlon_text(*p0)} to {_latlon_text(*p1)})" for _, a, b, p0, p1 in blackout_parts)
            lost_text.append(text)
            where = f"{name}, leg {leg['from']}–{leg['to']}"
            if blackout_parts:
                run.summary["routes"].append(
                    f"<b>{_esc(where)}</b>: no usable magnetic reference (H below {blackout_nT:g} nT) over "
                    f"{_esc(text)}; least H {leg['min_horizontal_nT']:.0f} nT. Use true or grid heading there."
                )
            elif caution_parts:
                span = "; ".join(f"{a:.0f}–{b:.0f} NM" for _, a, b, _, _ in caution_parts)
                run.summary["routes"].append(
                    f"{_esc(where)}: degraded magnetic reference (H below {caution_nT:g} nT) over {_esc(span)}; "
                    f"least H {leg['min_horizontal_nT']:.0f} nT."
                )
            if over and not blackout_parts:
                span = "; ".join(f"{a:.0f}–{b:.0f} NM" for a, b in over)
                run.summary["routes"].append(
                    f"{_esc(where)}: heading error budget in steady flight above {budget['limit_deg']:g}° over {_esc(span)}."
                )
            features.append({
                "type": "Feature",
                "geometry": _line_geometry(leg_samples.lon_deg.to_numpy(), leg_samples.lat_deg.to_numpy()),
                "properties": {"kind": "leg", "route": name, **{k: _json_value(leg[k]) for k in (
                    "from", "to", "distance_nm", "true_course_deg", "magnetic_course_deg", "grid_course_deg",
                    "variation_deg", "min_horizontal_nT", "max_declination_uncertainty_deg", "zone") if k in leg}},
            })
        legs["max_budget_steady_deg"] = steady_max
        legs["no_magnetic_reference"] = lost_text
        all_legs.append(legs)
        all_samples.append(samples)
        sec.blocks.append(f"<h3>{_esc(name)}</h3>")
        total = legs["distance_nm"].sum()
        sec.blocks.append(f"<p>{len(legs)} legs, {total:,.0f} NM.</p>")
        sec.blocks.append(_table_html(legs, {
            "from": "from", "to": "to", "distance_nm": "NM", "true_course_deg": "true °", "variation_deg": "variation °",
            "magnetic_course_deg": "magnetic °", "grid_course_deg": "grid °", "grivation_deg": "grivation °",
            "variation_deg_end": "variation at end °", "min_horizontal_nT": "least H nT",
            "max_declination_uncertainty_deg": "max D uncertainty °", "max_budget_steady_deg": "max budget (steady) °",
            "zone": "worst zone", "no_magnetic_reference": "no usable magnetic reference",
        }, highlight=lambda r: "bad" if r["zone"] == "blackout" else ("warn" if r["zone"] == "caution" else "")))
        figures = []
        with contextlib.suppress(_Missing):
            plot_map, plot_profile = _need("plots.route", "plot_route_map", "plot_route_profile")
            figures.append(_figure_html(plot_map(result, model=run.model), f"map of {name}", "Route with isogonic lines and weak-field zones."))
            figures.append(_figure_html(plot_profile(result), f"profile of {name}", "Variation, H and declination uncertainty along the route."))
        figures.append(_figure_html(_budget_profile_figure(samples, budget), f"error budget along {name}",
                                    "Heading-reference error budget along the route."))
        sec.blocks.append('<div class="figs">' + "".join(figures) + "</div>")
    legs_all = pd.concat(all_legs, ignore_index=True)
    samples_all = pd.concat(all_samples, ignore_index=True)
    run.tables["route_legs"] = legs_all
    run.tables["route_samples"] = samples_all
    names = [run.write_csv("route_legs.csv", legs_all), run.write_csv("route_samples.csv", samples_all)]
    names.append(run.write_json("routes.geojson", {"type": "FeatureCollection", "features": features}))
    sec.blocks.append(run.files_html(names))
    if len(run.summary["routes"]) > _SUMMARY_LIMIT:
        extra = len(run.summary["routes"]) - _SUMMARY_LIMIT
        run.summary["routes"][_SUMMARY_LIMIT:] = [f"… and {extra} more legs (see route_legs.csv)."]
    if not run.summary["routes"]:
        run.summary["routes"].append("Every leg keeps a usable magnetic reference (H above the caution threshold throughout).")


def _manoeuvre(budget: dict) -> str:
    """The manoeuvre of the error budget in words."""
    text = f"{budget['bank_angle_deg']:g}° bank turn"
    if budget["acceleration_mps2"]:
        text += f" with {budget['acceleration_mps2']:g} m/s² along-track acceleration"
    return text


def _budget_profile_figure(samples: pd.DataFrame, budget: dict):
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots(figsize=(8, 2.8))
    d = samples["distance_along_route_nm"].to_numpy()
    ax.plot(d, samples["budget_steady_deg"], label="steady level flight", color="C0")
    ax.plot(d, samples["budget_turn_deg"], label=_manoeuvre(budget), color="C1", alpha=0.8)
    ax.axhline(budget["limit_deg"], color="C3", linestyle="--", linewidth=1, label=f"limit {budget['limit_deg']:g}°")
    ax.set_yscale("log")
    ax.set_ylim(0.1, 200)
    ax.set_xlabel("distance along route (NM)")
    ax.set_ylabel("heading error (°, RSS)")
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(loc="upper left", fontsize=8)
    fig.tight_layout()
    return fig


def _zone_area(run: _Run) -> tuple:
    z = run.sc.zones
    edge = z["edge_lat_deg"]
    return (edge, 90.0, -180.0, 180.0) if z["cap"] == "north" else (-90.0, -edge, -180.0, 180.0)


def _job_zones(run: _Run, sec: Section) -> None:
    z = run.sc.zones
    zones_fn, zone_geojson, zone_areas, zone_change = _need("zones", "zones", "zone_geojson", "zone_areas", "zone_change")
    dip_poles, geomagnetic_poles, pole_tracks = _need("zones", "dip_poles", "geomagnetic_poles", "pole_tracks")
    area = _zone_area(run)
    options = {"resolution_deg": z["step_deg"], "thresholds": (z["blackout_nT"], z["caution_nT"]), "model": run.model}
    if z["compare_date"]:
        _, areas, collection = zone_change(area, z["compare_date"], run.date, **options)
    else:
        ds = zones_fn(area, run.date, **options)
        areas, collection = zone_areas(ds), zone_geojson(ds)
    run.zone_geojson = collection
    poles = pd.concat([dip_poles(run.date, model=run.model), geomagnetic_poles(run.date, model=run.model)], ignore_index=True)
    start = float(decimal_year(z["compare_date"])) if z["compare_date"] else run.sc.decimal_year - 10.0
    # Five steps show the track; each dip-pole search costs a few tenths of a second.
    tracks = pole_tracks(start, run.sc.decimal_year, step_years=max((run.sc.decimal_year - start) / 5.0, 0.25), model=run.model)
    run.tables.update({"zone_areas": areas, "poles": poles, "pole_tracks": tracks})
    names = [run.write_json("zones.geojson", collection), run.write_csv("zone_areas.csv", areas),
             run.write_csv("poles.csv", poles), run.write_csv("pole_tracks.csv", tracks)]
    hemi = "north" if z["cap"] == "north" else "south"
    dip = poles[(poles["pole"] == hemi) & (poles["kind"] == "dip")].iloc[0]
    blackout_row = areas[areas["zone"] == "blackout"]
    text = f"The {hemi} dip pole is at {_latlon_text(dip['lat'], dip['lon'])} on {run.date}."
    if z["compare_date"] and not blackout_row.empty:
        r = blackout_row.iloc[0]
        text += (f" The blackout zone (H below {z['blackout_nT']:g} nT) covers {r.iloc[2]:,.0f} km², "
                 f"{r['change_percent']:+.0f}% since {z['compare_date']}.")
    run.summary["zones"].append(_esc(text))
    sec.blocks.append(
        f"<p>Zones of weak horizontal field H over the {hemi} cap (grid step {z['step_deg']:g}°): blackout where "
        f"H &lt; {z['blackout_nT']:g} nT, caution where H &lt; {z['caution_nT']:g} nT (WMM technical reports' zones). "
        "A flux-gate detector senses only H; as H falls its signal shrinks and any disturbing field turns the sensed "
        "direction further. Poles: dip poles where H = 0; geomagnetic poles of the centred dipole.</p>"
    )
    sec.blocks.append('<div class="figs">' + _figure_html(_zone_figure(run, collection, tracks), "weak-field zone map",
                      "Weak-field zones, dip pole track and routes.") + "</div>")
    sec.blocks.append("<h3>Zone areas</h3>" + _table_html(areas))
    sec.blocks.append("<h3>Poles</h3>" + _table_html(poles, {"date": "date", "pole": "pole", "kind": "kind", "lat": "lat °",
                                                              "lon": "lon °", "horizontal_nT": "H at point nT"}))
    sec.blocks.append(run.files_html(names))


def _boundary_pieces(geometry: dict) -> list[tuple[np.ndarray, np.ndarray]]:
    """The real boundary lines of a zone (Multi)Polygon: rings without the edges along the
    antimeridian cut and the pole row, which close the lon/lat polygons but are no boundary."""
    polygons = geometry["coordinates"] if geometry["type"] == "MultiPolygon" else [geometry["coordinates"]]
    pieces = []
    for rings in polygons:
        for ring in rings:
            xy = np.asarray(ring, dtype=float)
            lon, lat = xy[:, 0], xy[:, 1]
            seam = (np.abs(lon) >= 180.0 - 1e-9) | (np.abs(lat) >= 90.0 - 1e-9)
            artificial = seam[:-1] & seam[1:]  # an edge with both ends on the cut or the pole row
            start = 0
            for i in np.flatnonzero(artificial):
                if i + 1 - start >= 2:
                    pieces.append((lon[start:i + 1], lat[start:i + 1]))
                start = i + 1
            if len(lon) - start >= 2:
                pieces.append((lon[start:], lat[start:]))
    return pieces


def _zone_figure(run: _Run, collection: dict, tracks: pd.DataFrame):
    from .plots import basemap

    z = run.sc.zones
    ax, to_map = basemap.map_axes(z["cap"], z["edge_lat_deg"], figsize=(7.5, 7.5))
    colours = {"blackout": "#b2182b", "caution": "#f4a582"}
    dates = sorted({f["properties"].get("date") for f in collection["features"]})
    for feature in collection["features"]:
        props = feature["properties"]
        colour = colours.get(props.get("zone"), "#999999")
        if props.get("date") == dates[-1]:
            basemap.draw_geojson(ax, to_map, feature, style={"facecolor": colour, "edgecolor": "none", "alpha": 0.45})
        else:
            for lon, lat in _boundary_pieces(feature["geometry"]):
                basemap.plot_lonlat(ax, to_map, lon, lat, color=colour, linestyle="--", linewidth=1.0)
    hemi = "north" if z["cap"] == "north" else "south"
    dip = tracks[(tracks["pole"] == hemi) & (tracks["kind"] == "dip")]
    basemap.plot_lonlat(ax, to_map, dip["lon"], dip["lat"], color="k", linewidth=1.2)
    basemap.scatter_lonlat(ax, to_map, dip["lon"].iloc[-1:], dip["lat"].iloc[-1:], marker="*", s=120, color="k", label="dip pole")
    for i, (name, result) in enumerate(run.route_results):
        s = result.samples
        basemap.plot_lonlat(ax, to_map, s["lon_deg"], s["lat_deg"], color=f"C{i}", linewidth=1.6, label=name.split(" ")[0])
    from matplotlib.patches import Patch

    handles, _ = ax.get_legend_handles_labels()
    handles += [Patch(facecolor=colours["blackout"], alpha=0.45, label=f"blackout {dates[-1]}"),
                Patch(facecolor=colours["caution"], alpha=0.45, label=f"caution {dates[-1]}")]
    if len(dates) > 1:
        handles.append(Patch(facecolor="none", edgecolor="0.3", linestyle="--", label=f"boundaries {dates[0]}"))
    ax.legend(handles=handles, loc="lower left", fontsize=7, framealpha=0.9)
    return ax.figure


def _job_budget_map(run: _Run, sec: Section) -> None:
    heading_error_grid = _need("detector", "heading_error_grid")
    b = run.budget
    z = run.sc.zones or {"cap": "north", "edge_lat_deg": 55.0, "step_deg": 0.5}
    area = _zone_area(run) if run.sc.zones else (55.0, 90.0, -180.0, 180.0)
    alt = run.sc.routes["alt"] if run.sc.routes else 0.0
    options = dict(resolution_deg=z["step_deg"], alt_km=alt, model=run.model)
    grids = {"steady": heading_error_grid(area, run.date, **run.sc.heading_error_options(manoeuvre=False), **options),
             "turn": heading_error_grid(area, run.date, **run.sc.heading_error_options(), **options)}
    rows = [{"case": "steady level flight" if k == "steady" else f"{_manoeuvre(b)}, {b['turn_duration_s']:g} s",
             "limit_deg": b["limit_deg"], "area_exceeding_limit_km2": g.attrs.get("area_exceeding_limit_km2", float("nan")),
             "combination": g.attrs.get("combination", "")} for k, g in grids.items()]
    table = pd.DataFrame(rows)
    run.tables["budget_areas"] = table
    names = [run.write_csv("error_budget_areas.csv", table)]
    sec.blocks.append(
        f"<p>The heading-reference error budget at {alt:.1f} km over the cap: residual aircraft field "
        f"{b['residual_field_nT']:g} nT (error up to asin(ΔB/H)), the WMM declination uncertainty, and in the turn the "
        f"detector tilt ({_manoeuvre(b)}; the error grows with the tangent of the inclination) and the "
        f"gyro being dragged by slaving at {b['slaving_rate_deg_per_min']:g}°/min for {b['turn_duration_s']:g} s. "
        f"Shaded where the combined error exceeds {b['limit_deg']:g}°.</p>"
    )
    sec.blocks.append(_table_html(table, {"case": "case", "limit_deg": "limit °", "area_exceeding_limit_km2": "area above limit km²",
                                          "combination": "how the terms combine"}))
    sec.blocks.append('<div class="figs">' + _figure_html(_budget_map_figure(run, grids, b, z), "error budget maps",
                      "Combined heading error (RSS), steady flight and in the turn.") + "</div>")
    sec.blocks.append(run.files_html(names))


def _budget_map_figure(run: _Run, grids: dict, b: dict, z: dict):
    import matplotlib.pyplot as plt
    from matplotlib.colors import BoundaryNorm

    from .plots import basemap

    levels = [0, 0.5, 1, 2, 5, 10, 20, 45, 180]
    cmap = plt.get_cmap("magma_r", len(levels) - 1)
    norm = BoundaryNorm(levels, cmap.N)
    fig, axes = plt.subplots(1, 2, figsize=(12, 6.2))
    for ax, (key, g) in zip(axes, grids.items(), strict=True):
        _, to_map = basemap.map_axes(z["cap"], z["edge_lat_deg"], ax=ax, coastlines=False)
        lon2, lat2 = np.meshgrid(g["lon"].to_numpy(), g["lat"].to_numpy())
        x, y = to_map.transform(lon2, lat2)
        data = np.clip(g["budget_rss_deg"].to_numpy(), 0, 179.9)
        mesh = ax.contourf(x, y, data, levels=levels, cmap=cmap, norm=norm, zorder=0.5)
        ax.contour(x, y, data, levels=[b["limit_deg"]], colors="k", linewidths=1.0, zorder=1.6)
        basemap.draw_coastlines(ax, to_map)
        ax.set_title("steady level flight" if key == "steady" else _manoeuvre(b), fontsize=10)
    fig.colorbar(mesh, ax=list(axes), shrink=0.8, label="combined heading error (°, RSS)")
    return fig


def _survey_history(run: _Run, sites: list) -> pd.DataFrame:
    """Every survey of every base beside the model's variation on the survey date."""
    from .field import field_arrays
    from .units import timestamp_from_decimal_year

    rows = []
    for site in sites:
        for year, value in sorted([*getattr(site, "history", ()), (site.survey_year, site.surveyed_variation_deg)]):
            rows.append({"name": site.name, "lat_deg": site.lat_deg, "lon_deg": site.lon_deg, "alt_km": site.alt_km,
                         "survey_year": year, "surveyed_variation_deg": value})
    table = pd.DataFrame(rows)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # base_upkeep has already warned about the same dates
        model_deg = field_arrays(table["lat_deg"].to_numpy(), table["lon_deg"].to_numpy(), table["survey_year"].to_numpy(),
                                 table["alt_km"].to_numpy(), model=run.model, allow_extrapolation=True)["declination_deg"]
    table.insert(4, "survey_date", [f"{timestamp_from_decimal_year(y).round('D'):%Y-%m-%d}" for y in table["survey_year"]])
    table["model_variation_at_survey_deg"] = model_deg
    table["survey_minus_model_deg"] = table["surveyed_variation_deg"] - model_deg
    return table


def _job_bases(run: _Run, sec: Section) -> None:
    c = run.sc.compass_bases
    read_sites_csv, base_upkeep, setting_out = _need("compass_base", "read_sites_csv", "base_upkeep", "setting_out")
    sites = read_sites_csv(c["file"], tolerance_deg=c["tolerance_deg"], resurvey_years=c["resurvey_years"])
    upkeep = base_upkeep(sites, c["swing_date"], model=run.model, allow_extrapolation=run.sc.allow_extrapolation)
    history = _survey_history(run, sites)
    grid = run.sc.routes["grid"] if run.sc.routes else "polar"
    lines = setting_out(upkeep, lines_deg=c["setting_out_lines_deg"], distances_m=c["setting_out_distances_m"], grid=grid)
    run.tables.update({"base_upkeep": upkeep, "base_history": history, "setting_out": lines})
    names = [run.write_csv("compass_bases.csv", upkeep), run.write_csv("compass_base_history.csv", history),
             run.write_csv("setting_out.csv", lines)]
    for _, r in upkeep.iterrows():
        due, reason = r.get("resurvey_due_date", ""), r.get("resurvey_reason", "")
        due = "" if not isinstance(due, str) else due
        state = "<b>overdue</b> since" if bool(r.get("overdue", False)) else "due"
        due_text = f"resurvey {state} <b>{_esc(due)}</b> ({_esc(reason)})" if due else "no resurvey date within the model's validity"
        run.summary["bases"].append(
            f"{_esc(r['name'])}: {due_text}; mark {_esc(r['variation_to_mark'])} for the swing on {_esc(c['swing_date'])} "
            f"(variation changing {_esc(r['annual_change'])})."
        )
    sec.blocks.append(
        f"<p>For the swing planned on {_esc(c['swing_date'])}: the latest survey of each base carried forward with the model's "
        "change since that survey, the value to mark, the first date the surveyed value is off by more than the tolerance, "
        "and the resurvey due date (that date or the fixed interval, whichever comes first). The survey on the site "
        "governs: the model omits local crustal anomalies.</p>"
    )
    sec.blocks.append(_table_html(upkeep, {
        "name": "base", "survey_date": "last survey", "surveyed_variation_deg": "surveyed °", "model_change_since_survey_deg": "model change since °",
        "predicted_variation_deg": "predicted °", "variation_to_mark": "mark", "annual_change": "annual change",
        "tolerance_deg": "tolerance °", "resurvey_due_date": "resurvey due", "resurvey_reason": "because",
        "mark_off_date": "new mark off tolerance", "horizontal_nT": "H nT", "declination_uncertainty_deg": "D uncertainty °", "zone": "zone",
    }, highlight=lambda r: "bad" if bool(r.get("overdue", False)) else ""))
    sec.blocks.append("<h3>Survey history against the model</h3>" + _table_html(history, {
        "name": "base", "survey_date": "survey", "surveyed_variation_deg": "surveyed °", "model_variation_at_survey_deg": "model °",
        "survey_minus_model_deg": "survey − model °"}))
    sec.blocks.append('<div class="figs">' + _figure_html(_base_history_figure(run, upkeep, history), "survey history",
                      "Surveys, the model carried from the latest survey, and the band the new mark stays valid in.") + "</div>")
    sec.blocks.append(
        "<details><summary>Setting-out table for the survey party</summary>"
        + _table_html(lines, {"name": "base", "line": "magnetic line", "true_azimuth_deg": "true azimuth °",
                              "grid_azimuth_deg": "grid azimuth °", "distance_m": "distance m", "lat_deg": "lat °", "lon_deg": "lon °"})
        + "</details>"
    )
    sec.blocks.append(run.files_html(names))


def _base_history_figure(run: _Run, upkeep: pd.DataFrame, history: pd.DataFrame):
    import matplotlib.pyplot as plt

    from .field import field_arrays

    fig, axes = plt.subplots(1, len(upkeep), figsize=(5.5 * len(upkeep), 3.6), squeeze=False)
    swing_year = float(decimal_year(run.sc.compass_bases["swing_date"]))
    valid_to = run.model.valid_to if run.model is not None else 2030.0
    for ax, (_, base) in zip(axes[0], upkeep.iterrows(), strict=True):
        rows = history[history["name"] == base["name"]]
        years = np.linspace(rows["survey_year"].min() - 1.0, min(swing_year + 5.0, valid_to), 120)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            d = field_arrays(np.full_like(years, base["lat_deg"]), np.full_like(years, base["lon_deg"]), years, base["alt_km"],
                             model=run.model, allow_extrapolation=run.sc.allow_extrapolation)["declination_deg"]
        ax.plot(years, d, color="0.5", linewidth=1, label="model (main field)")
        ax.plot(years, d + base["survey_minus_model_deg"], color="C0", label="carried from latest survey")
        mark, tol = base["variation_to_mark_deg"], base["tolerance_deg"]
        ax.axhspan(mark - tol, mark + tol, color="C2", alpha=0.15, label=f"mark {mark:g}° ± {tol:g}°")
        ax.scatter(rows["survey_year"], rows["surveyed_variation_deg"], color="k", zorder=3, label="surveys")
        ax.axvline(swing_year, color="C1", linestyle=":", label="swing")
        ax.set_title(str(base["name"]), fontsize=10)
        ax.set_xlabel("year")
        ax.set_ylabel("variation (° east +)")
        ax.grid(True, alpha=0.3)
        ax.legend(fontsize=7)
    fig.tight_layout()
    return fig


def _job_swing(run: _Run, sec: Section) -> None:
    s = run.sc.swing
    read_swing_csv, analyse_swing, meanings = _need("swing", "read_swing_csv", "analyse_swing", "COEFFICIENT_MEANINGS")
    magnetic, compass, labels = read_swing_csv(s["file"])
    analysis = analyse_swing(magnetic, compass, limit_deg=s["limit_deg"], rows=labels)
    summary_row = analysis.summary_row()
    run.tables.update({"swing_coefficients": summary_row, "swing_readings": analysis.readings, "swing_card": analysis.card})
    names = [run.write_csv("swing_coefficients.csv", summary_row), run.write_csv("swing_residuals.csv", analysis.readings),
             run.write_csv("swing_card.csv", analysis.card)]
    where = f" on {s['base']}" if s["base"] else ""
    verdict = analysis.verdict.upper()
    run.summary["swing"].append(
        f"Compass swing{_esc(where)}: <b>{_esc(verdict)}</b>, largest residual deviation after B and C are removed "
        f"{analysis.max_residual_deg:.1f}° (limit {s['limit_deg']:g}°)."
    )
    coeffs = analysis.curve.coefficients()
    table = pd.DataFrame({"coefficient": list(coeffs), "value_deg": list(coeffs.values()),
                          "standard_error_deg": list(analysis.coefficients.standard_error_deg),
                          "meaning": [meanings[k] for k in coeffs]})
    sec.blocks.append(
        f"<p>{len(magnetic)} readings{_esc(where)}; deviation east positive (magnetic = compass + deviation), fitted as "
        "A + B sin h + C cos h + D sin 2h + E cos 2h by least squares. Verdict on the residual after the compensator "
        f"removes B and C: <b>{_esc(analysis.verdict)}</b> ({analysis.max_residual_deg:.2f}° against {s['limit_deg']:g}°).</p>"
    )
    sec.blocks.append(_table_html(table, {"coefficient": "coefficient", "value_deg": "value °", "standard_error_deg": "std. error °",
                                          "meaning": "meaning"}))
    figures = []
    with contextlib.suppress(_Missing):
        deviation_figure = _need("plots.swing", "deviation_figure")
        figures.append(_figure_html(deviation_figure(analysis), "deviation curve", "Deviations, fitted curve and residuals."))
    if figures:
        sec.blocks.append('<div class="figs">' + "".join(figures) + "</div>")
    sec.blocks.append("<h3>Correction card</h3>" + _table_html(analysis.card, {
        "for_magnetic": "for magnetic", "steer_compass": "steer compass", "deviation_deg": "deviation there °"}))
    sec.notes.extend(analysis.notes)
    sec.blocks.append(run.files_html(names))


def _job_runways(run: _Run, sec: Section) -> None:
    r = run.sc.runways
    check_runways = _need("runways", "check_runways")
    kwargs = {"tolerance_deg": r["boundary_band_deg"]} if r["boundary_band_deg"] is not None else {}
    result = check_runways(str(r["file"]), run.date, horizon_years=r["horizon_years"], **kwargs, **run.common)
    table, changes = result.table, result.changes
    run.tables.update({"runways": table, "runway_changes": changes})
    names = [run.write_csv("runways.csv", table), run.write_csv("runway_changes.csv", changes)]
    s = result.summary
    ok = table["status"] != "error"
    on_boundary = table["on_boundary"].astype(bool)
    mismatch = table[ok & (~table["designator_matches"].astype(bool)) & (~on_boundary)]
    lines = [
        f"<b>{_esc(row['airport'])} {_esc(row['runway'])}</b>: out of date now; magnetic {row['magnetic_bearing_deg']:.1f}° "
        f"implies {_esc(row['designator_implied'])}."
        for _, row in mismatch.iterrows()
    ]
    lines += [
        f"{_esc(row['airport'])} {_esc(row['runway'])}: becomes {_esc(row['next_designator'])} on {_esc(row['change_date'])}."
        for _, row in changes.iterrows()
    ]
    if len(lines) > _SUMMARY_LIMIT:
        extra = len(lines) - _SUMMARY_LIMIT
        lines = lines[:_SUMMARY_LIMIT] + [f"… and {extra} more (see runways.csv and runway_changes.csv)."]
    run.summary["runways"].extend(lines)
    boundary = table[on_boundary]
    if not boundary.empty:
        ends = [f"{a} {b}" for a, b in zip(boundary["airport"], boundary["runway"], strict=True)]
        more = f" and {len(ends) - _SUMMARY_LIMIT} more" if len(ends) > _SUMMARY_LIMIT else ""
        run.summary["runways"].append(
            f"On a rounding boundary (no verdict; check with the survey): {_esc(', '.join(ends[:_SUMMARY_LIMIT]))}{more}."
        )
    errors = int((~ok).sum())
    if errors:
        run.summary["runways"].append(f"{errors} runway row(s) could not be checked; the reasons are in the table.")
    if not run.summary["runways"]:
        run.summary["runways"].append(f"All {s['rows']} runway ends match and none changes before {s['forecast_end']}.")
    if result.notes:
        run.summary["runways"].append(f"Forecast to {_esc(s['forecast_end'])}: " + _esc(" ".join(result.notes)))
    sec.blocks.append("<p>" + "<br>".join(_esc(line) for line in result.summary_text().splitlines()) + "</p>")

    def attention(row) -> str:
        if row["status"] == "error" or row["verdict"] == "mismatch":
            return "bad"
        changing = isinstance(row["change_date"], str) and row["change_date"] != ""
        return "warn" if bool(row["on_boundary"]) or changing or row["status"] == "warning" else ""

    shown = table
    if len(table) > _TABLE_LIMIT:  # a large batch: list only the rows that need attention
        shown = table[[attention(row) != "" for _, row in table.iterrows()]]
        sec.blocks.append(f"<p>{len(shown)} of {len(table)} runway ends need attention and are listed; all are in runways.csv.</p>")
    sec.blocks.append(_table_html(shown, {
        "airport": "airport", "runway": "runway", "true_bearing_deg": "true °", "variation_deg": "variation °",
        "magnetic_bearing_deg": "magnetic °", "designator_implied": "implied", "verdict": "verdict", "margin_deg": "margin °",
        "change_date": "changes on", "next_designator": "to", "pair_check": "pair", "status": "status", "reason": "reason",
    }, highlight=attention))
    with contextlib.suppress(_Missing):
        runway_bearing_figure = _need("plots.runways", "runway_bearing_figure")
        sec.blocks.append('<div class="figs">' + _figure_html(runway_bearing_figure(result), "runway magnetic azimuth against time",
                          "Magnetic azimuth of the chosen runway ends against time, with the rounding boundaries.") + "</div>")
    sec.notes.extend(result.notes)
    sec.blocks.append(run.files_html(names))


# --------------------------------------------------------------------------- HTML page
_CSS = """
body{font-family:system-ui,-apple-system,'Segoe UI',Roboto,sans-serif;margin:0;color:#1d232a;background:#f5f6f3;line-height:1.45}
main{max-width:1180px;margin:0 auto;padding:1.5rem 2rem 3rem;background:#fff}
header.top{border-bottom:3px solid #24476b;margin-bottom:1rem}
h1{margin:.2rem 0 .3rem;font-size:1.6rem;color:#24476b}
h2{margin-top:2.2rem;border-bottom:1px solid #c9d3dd;padding-bottom:.2rem;color:#24476b}
h3{margin-bottom:.3rem}
.meta{color:#555;font-size:.92rem;margin-bottom:.6rem}
.caution{border:2px solid #a8322d;background:#fcefee;padding:.7rem 1rem;margin:1rem 0;font-weight:600}
.summary{background:#eef3f8;border-left:5px solid #24476b;padding:.6rem 1.2rem}
.summary h3{margin:.7rem 0 .2rem;font-size:1.02rem}
.summary ul{margin:.2rem 0 .4rem;padding-left:1.2rem}
.scroll{overflow-x:auto;margin:.4rem 0 .8rem}
table{border-collapse:collapse;font-size:.82rem}
th,td{border:1px solid #d5dbe1;padding:.2rem .45rem;vertical-align:top}
th{background:#e7edf3;text-align:left}
td.num{text-align:right;font-variant-numeric:tabular-nums}
tr.bad td{background:#f8dcd9}
tr.warn td{background:#fdf1d6}
.figs{display:flex;flex-wrap:wrap;gap:1rem}
figure{margin:.4rem 0;max-width:100%}
figure img{max-width:100%;height:auto;border:1px solid #e0e0e0}
figcaption{font-size:.82rem;color:#555}
.note{font-size:.85rem;color:#6b4e00;background:#fff8e5;padding:.3rem .6rem;margin:.3rem 0}
.skipped{font-style:italic;color:#7a1f1f}
.files{font-size:.85rem}
nav ol{columns:2;font-size:.9rem}
footer{margin-top:2.5rem;font-size:.8rem;color:#666}
@media print{body{background:#fff}main{padding:0}.figs{display:block}}
"""

_SUMMARY_TOPICS = (
    ("routes", "Routes: where the magnetic reference is lost"),
    ("bases", "Compass bases: resurvey"),
    ("runways", "Runways: redesignation"),
    ("swing", "Compass swing"),
    ("zones", "Weak-field zones"),
)


def _page(run: _Run, generated: str) -> str:
    sc = run.sc
    summary = []
    for key, title in _SUMMARY_TOPICS:
        items = run.summary.get(key) or []
        if items:
            summary.append(f"<h3>{_esc(title)}</h3><ul>" + "".join(f"<li>{item}</li>" for item in items) + "</ul>")
    skipped = [s for s in run.sections if s.skipped]
    if skipped:
        summary.append("<h3>Not in this report</h3><ul>" + "".join(f"<li>{_esc(s.title)}: {_esc(s.skipped)}</li>" for s in skipped) + "</ul>")
    nav = "".join(f'<li><a href="#{s.key}">{_esc(s.title)}</a></li>' for s in run.sections)
    body = []
    for s in run.sections:
        notes = "".join(f'<p class="note">{_esc(n)}</p>' for n in s.notes)
        skipped_html = f'<p class="skipped">{_esc(s.skipped)}</p>' if s.skipped else ""
        body.append(f'<section id="{s.key}"><h2>{_esc(s.title)}</h2>{skipped_html}{"".join(s.blocks)}{notes}</section>')
    files = "".join(f'<li><a href="{_esc(n)}"><code>{_esc(n)}</code></a></li>' for n in run.files)
    operator = f"{_esc(sc.operator)} · " if sc.operator else ""
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>{_esc(sc.title)}</title><style>{_CSS}</style></head>
<body><main>
<header class="top"><h1>{_esc(sc.title)}</h1>
<div class="meta">{operator}analysis date {_esc(sc.analysis_date)} · field model {_esc(sc.model_name)} ·
scenario <code>{_esc(sc.path.name)}</code> · generated {_esc(generated)} by headingref</div></header>
<div class="caution" id="caution">{_esc(CAUTION)}</div>
<section id="summary" class="summary"><h2 style="margin-top:.3rem;border:none">Summary</h2>{"".join(summary)}</section>
<nav><ol>{nav}</ol></nav>
{"".join(body)}
<section id="files"><h2>Files written with this report</h2><ul>{files}</ul></section>
<footer>Coastline: Made with Natural Earth (public domain). Field: {_esc(sc.model_name)}. {_esc(CAUTION)}</footer>
</main></body></html>
"""


# --------------------------------------------------------------------------- entry point
_JOBS: tuple[tuple[str, str, str, Callable[[_Run, Section], None]], ...] = (
    ("routes", "routes", "Routes leg by leg", _job_routes),
    ("zones", "zones", "Weak-field zones and magnetic poles", _job_zones),
    ("error_budget", "error-budget", "Heading-reference error budget", _job_budget_map),
    ("compass_bases", "compass-bases", "Compass bases", _job_bases),
    ("swing", "swing", "Compass swing", _job_swing),
    ("runways", "runways", "Runway designators", _job_runways),
)


def _move_into(stage: Path, out_dir: Path, names: list[str]) -> list[Path]:
    out_dir.mkdir(parents=True, exist_ok=True)
    moved = []
    # Data files first, the report last: report.html only appears once everything it links to is there.
    for name in sorted(names, key=lambda n: n == REPORT_FILE):
        os.replace(stage / name, out_dir / name)
        moved.append(out_dir / name)
    return moved


def build_report(scenario: Scenario | str | os.PathLike, out_dir: str | os.PathLike, progress: bool = True) -> ReportResult:
    """Run every job of a scenario and write the HTML report, CSV and GeoJSON files.

    Parameters
    ----------
    scenario : Scenario or path of a scenario TOML file
    out_dir : folder to write into (created if missing; files of the same name are replaced)
    progress : show a progress bar on stderr

    Returns
    -------
    ReportResult

    Raises
    ------
    InputError
        Bad scenario or input files (the message names the section, file and row); nothing
        is written then.
    """
    # Figures are drawn with pyplot and closed once saved, so any backend will do (matplotlib
    # falls back to Agg when there is no display); the user's backend is left alone.
    from tqdm.auto import tqdm

    sc = scenario if isinstance(scenario, Scenario) else load_scenario(scenario)
    out_dir = Path(out_dir).expanduser()
    if out_dir.exists() and not out_dir.is_dir():
        raise InputError(f"output folder {str(out_dir)!r} exists and is not a folder")
    parent = out_dir.resolve().parent
    if not parent.is_dir():
        raise InputError(f"cannot write the report into {str(out_dir)!r}: folder {str(parent)!r} does not exist")
    jobs = [job for job in _JOBS if getattr(sc, job[0]) is not None or (job[0] == "error_budget" and sc.zones is not None)]
    stage = Path(tempfile.mkdtemp(prefix=".headingref-report-", dir=parent))
    try:
        run = _Run(sc, stage)
        steps = tqdm(total=len(jobs) + 2, desc="headingref report", unit="step", file=sys.stderr, disable=not progress, leave=False)
        with steps:
            steps.set_postfix_str("field model")
            from .model import load_model

            run.model = load_model(sc.model) if sc.model is not None else load_model()
            steps.update()
            for _, key, title, job in jobs:
                steps.set_postfix_str(key)
                _run_section(run, key, title, job)
                steps.update()
            steps.set_postfix_str("HTML")
            generated = _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%d %H:%M UTC")
            (stage / REPORT_FILE).write_text(_page(run, generated), encoding="utf-8")
            run.files.append(REPORT_FILE)
            steps.update()
        files = _move_into(stage, out_dir, run.files)
    finally:
        shutil.rmtree(stage, ignore_errors=True)
    for category, text in run.warnings:
        warnings.warn(text, category, stacklevel=2)
    return ReportResult(
        out_dir=out_dir, html=out_dir / REPORT_FILE, files=files, summary=run.summary,
        skipped={s.key: s.skipped for s in run.sections if s.skipped}, tables=run.tables,
    )
