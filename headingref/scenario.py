"""Scenario files: one TOML file that ties a study's inputs and options together.

A scenario names the analysis date and field model, the routes to fly, the weak-field zone
and error-budget settings, the compass bases and a swing, and the runways to check. Every key
is validated once, here: an unknown key is rejected with a suggestion, a bad value with the
key, the value and what is accepted. Relative file names are taken relative to the folder of
the TOML file. The format is documented in ``data/demo/README.md`` (see the bundled
``data/demo/scenario.toml``).

Layout (every section is optional; a missing section's job is left out of the report)::

    title = "..."                      # optional, free text
    operator = "..."                   # optional, free text
    analysis_date = "2026-12-02"       # required: ISO date or decimal year
    model = "IGRF-14"                  # or a coefficient file (.shc / .COF)
    allow_extrapolation = false
    compare_models = ["IGRF-14", "WMM2025"]   # optional: the report's model comparison

    [routes]        spacing_nm, path, grid, alt, columns, and [[routes.plan]] name, file[, route, grid, alt, columns]
    [zones]         cap, edge_lat_deg, step_deg, blackout_nT, caution_nT, compare_date
    [error_budget]  residual_field_nT, joint_limit_deg, slaving_rate_deg_per_min,
                    slaving_cutout_bank_deg, limit_deg (detector.DetectorSettings) and
                    bank_angle_deg, acceleration_mps2, pitch_deg, turn_duration_s (detector.Manoeuvre)
    [compass_bases] file, swing_date, tolerance_deg, resurvey_years, setting_out_lines_deg,
                    setting_out_distances_m, columns
    [swing]         file, base, limit_deg, compensated_limit_deg, verdict_on, method,
                    card_after_compensation, date, aircraft, compass, swung_by, conditions, columns
    [runways]       file, horizon_years, boundary_band_deg, band_sigmas, columns
    [navaids]       file, tolerance_deg, horizon_years, columns

Public API: :func:`load_scenario`, :class:`Scenario`, :data:`SCHEMA`, :data:`DEMO_SCENARIO`.

>>> from headingref.scenario import load_scenario, DEMO_SCENARIO
>>> sc = load_scenario(DEMO_SCENARIO)
>>> sc.analysis_date, sc.routes["spacing_nm"] > 0
('2026-12-02', True)
"""

from __future__ import annotations

import difflib
import math
import os
import tomllib
from dataclasses import asdict, dataclass, field, fields
from pathlib import Path
from typing import Any, NamedTuple

from ._types import PathLike
from .detector import DetectorSettings, Manoeuvre
from .errors import InputError
from .geogrid import CAPS
from .notices import DATA_DIR

__all__ = ["DEMO_SCENARIO", "SCHEMA", "Scenario", "load_scenario"]

DEMO_SCENARIO: Path = DATA_DIR / "demo" / "scenario.toml"
"""The bundled, invented demo scenario."""

DEFAULT_MODEL_NAMES = ("igrf-14", "igrf14", "default")


class Key(NamedTuple):
    """One accepted key: its kind, default, bounds and a short description."""

    kind: str  # str, date, bool, float, floats, choice, path, model, height, grid, plans
    default: Any = None
    required: bool = False
    low: float | None = None
    high: float | None = None
    choices: tuple[str, ...] = ()
    doc: str = ""
    open_low: bool = False  # low bound excluded


_POSITIVE = {"low": 0.0, "open_low": True}

SCHEMA: dict[str, dict[str, Key]] = {
    "": {
        "title": Key("str", "headingref scenario", doc="report title"),
        "operator": Key("str", "", doc="operator or organisation"),
        "analysis_date": Key("date", required=True, doc="date of the study (ISO date or decimal year)"),
        "model": Key("model", None, doc="a model name (IGRF-14 default, WMM2015, WMM2015v2, WMM2020, WMM2025, WMMHR2025; "
                     "see `headingref models`) or a coefficient file (.shc or WMM .COF)"),
        "allow_extrapolation": Key("bool", False, doc="evaluate the model outside its validity (warns)"),
        "compare_models": Key("models", None, doc="two or more models to compare in the report, the first the reference "
                              "(names or coefficient files), e.g. [\"IGRF-14\", \"WMM2025\", \"WMMHR2025\"]"),
    },
    "routes": {
        "spacing_nm": Key("float", 10.0, high=500.0, doc="sample spacing along legs, NM", **_POSITIVE),
        "path": Key("choice", "geodesic", choices=("geodesic", "rhumb"), doc="path between waypoints"),
        "grid": Key("grid", "auto", doc="grid for grid courses: auto (polar grid of each route's nearest pole), polar, "
                    "polar-south, polar:LON, lcc:LAT1,LAT2,LON0, utm:ZONE, EPSG:NNNN"),
        "alt": Key("height", 0.0, high=30.0, doc="altitude of waypoints that give none: km, or '35000 ft', 'FL350'"),
        "plan": Key("plans", required=True, doc="the routes, as [[routes.plan]] tables with name and file"),
        "columns": Key("str", "", doc="column mapping of the waypoint CSVs NAME=COLUMN,... (e.g. 'name=ident,lat=wp_lat')"),
    },
    "routes.plan": {
        "name": Key("str", required=True, doc="route name"),
        "file": Key("path", required=True, doc="waypoint CSV (name, lat, lon[, alt with a unit, or alt_ft, alt_m, alt_km]) "
                    "or a GPX, KML or GeoJSON route file"),
        "route": Key("str", None, doc="which route, track or line of a GPX/KML/GeoJSON file holding several"),
        "grid": Key("grid", None, doc="this route's grid (default: the [routes] grid)"),
        "alt": Key("height", None, high=30.0, doc="this route's altitude of waypoints that give none (default: the [routes] alt)"),
        "columns": Key("str", None, doc="this route's column mapping (default: the [routes] columns)"),
    },
    "zones": {
        "cap": Key("choice", "north", choices=("north", "south"), doc="polar cap to map"),
        "edge_lat_deg": Key("float", None, low=0.0, high=85.0,
                            doc="latitude of the map's edge (absolute), deg; default the cap's edge in geogrid.CAPS (55 N, 50 S)"),
        "step_deg": Key("float", 0.5, low=0.05, high=5.0, doc="grid step of the zone maps, deg"),
        "blackout_nT": Key("float", 2000.0, high=60000.0, doc="H below this: blackout zone, nT", **_POSITIVE),
        "caution_nT": Key("float", 6000.0, high=60000.0, doc="H below this: caution zone, nT", **_POSITIVE),
        "compare_date": Key("date", None, doc="second date to show how the zone boundary moves"),
    },
    "error_budget": {  # one key per field of detector.DetectorSettings and detector.Manoeuvre, same defaults
        spec.name: Key("float", spec.default, low=spec.metadata["low"], high=spec.metadata["high"],
                       doc=f"{spec.metadata['doc']}, {spec.metadata['unit']}", open_low=spec.metadata["open_low"])
        for cls in (DetectorSettings, Manoeuvre) for spec in fields(cls)
    },
    "compass_bases": {
        "file": Key("path", required=True, doc="bases CSV: name, lat, lon, surveyed_variation, survey_date[, tolerance_deg, resurvey_years]"),
        "swing_date": Key("date", None, doc="planned swing date (default: analysis_date)"),
        "tolerance_deg": Key("float", 0.5, high=10.0, doc="default tolerance of the marked variation, deg", **_POSITIVE),
        "resurvey_years": Key("float", None, high=50.0, doc="default fixed resurvey interval, years", **_POSITIVE),
        "setting_out_lines_deg": Key("floats", [float(h) for h in range(0, 360, 30)], low=0.0, high=360.0,
                                     doc="magnetic heading lines to set out, deg"),
        "setting_out_distances_m": Key("floats", [50.0, 100.0], low=0.0, high=10000.0, doc="distances of marks from the centre, m"),
        "columns": Key("str", "", doc="column mapping NAME=COLUMN,... (e.g. 'name=site,surveyed_variation=var_deg')"),
    },
    "swing": {
        "file": Key("path", required=True, doc="readings CSV: magnetic_heading_deg, compass_reading_deg"),
        "base": Key("str", "", doc="compass base the swing was made on (a name in the bases CSV)"),
        "limit_deg": Key("float", 10.0, high=45.0, doc="largest deviation allowed as measured, deg (14 CFR 23.1327)", **_POSITIVE),
        "compensated_limit_deg": Key("float", None, high=45.0, doc="largest residual allowed after B and C are removed, deg (default: limit_deg)", **_POSITIVE),
        "verdict_on": Key("choice", "as_measured", choices=("as_measured", "after_compensation"), doc="which deviation the verdict judges"),
        "method": Key("choice", "least_squares", choices=("least_squares", "handbook"), doc="coefficients by least squares or the handbook's formulas"),
        "card_after_compensation": Key("bool", False, doc="card for the compass after B and C are removed (keeps A, D, E)"),
        "date": Key("date", None, doc="date of the swing, on the card (default: compass_bases swing_date, else analysis_date)"),
        "aircraft": Key("str", "", doc="aircraft registration, on the card"),
        "compass": Key("str", "", doc="compass type and serial number, on the card"),
        "swung_by": Key("str", "", doc="person who swung the compass, on the card's signature line"),
        "conditions": Key("str", "", doc="swing conditions, e.g. 'engines running, radios on' (14 CFR 23.1547)"),
        "columns": Key("str", "", doc="column mapping NAME=COLUMN,... (e.g. 'magnetic_heading_deg=hdg,deviation_deg=dev')"),
    },
    "runways": {
        "file": Key("path", required=True, doc="runway CSV or .xlsx: airport, runway, lat, lon and end_lat, end_lon or "
                    "true_bearing_deg (or one row per runway: end1_runway, end1_lat, ... end2_lon)"),
        "horizon_years": Key("float", 10.0, low=0.0, high=50.0, doc="forecast horizon, years"),
        "boundary_band_deg": Key("float", None, low=0.0, high=2.0, doc="band either side of a rounding boundary, deg (default 0.25)"),
        "band_sigmas": Key("float", None, low=0.0, high=5.0, doc="band = this many local declination sigmas instead of boundary_band_deg"),
        "columns": Key("str", "", doc="column mapping NAME=COLUMN,... (e.g. 'runway=ident,lat=le_lat')"),
    },
    "navaids": {
        "file": Key("path", required=True, doc="VOR CSV or .xlsx: ident, lat, lon, station_declination_deg[, alignment_date, elevation]"),
        "tolerance_deg": Key("float", 3.0, low=0.0, high=30.0, doc="largest acceptable |variation - station declination|, deg"),
        "horizon_years": Key("float", 10.0, low=0.0, high=50.0, doc="look-ahead for the realignment date, years"),
        "columns": Key("str", "", doc="column mapping NAME=COLUMN,... (e.g. 'ident=id')"),
    },
}
"""Every accepted key by section ('' is the top level)."""

SECTIONS = tuple(name for name in SCHEMA if name and "." not in name)


@dataclass(frozen=True)
class Scenario:
    """A validated scenario.

    Each section is a dict of its keys (defaults filled in), or None when the file has no such
    section. Paths are absolute. ``model`` is None for IGRF-14, a model name (str, see
    :data:`headingref.model.MODEL_NAMES`) or the coefficient file's path.
    """

    path: Path
    title: str
    operator: str
    analysis_date: str
    decimal_year: float
    model: Path | str | None
    allow_extrapolation: bool
    routes: dict | None = None
    zones: dict | None = None
    error_budget: dict | None = None
    compass_bases: dict | None = None
    swing: dict | None = None
    runways: dict | None = None
    navaids: dict | None = None
    compare_models: list | None = None
    raw: dict = field(default_factory=dict, repr=False)

    @property
    def folder(self) -> Path:
        return self.path.parent

    @property
    def model_name(self) -> str:
        return "IGRF-14" if self.model is None else self.model if isinstance(self.model, str) else self.model.name

    def input_paths(self) -> list[Path]:
        """Every file the scenario reads: the TOML itself, a coefficient file and each section's files."""
        paths = [self.path] + ([self.model] if isinstance(self.model, Path) else [])
        if self.routes:
            paths += [plan["file"] for plan in self.routes["plan"]]
        paths += [section["file"] for section in (self.compass_bases, self.swing, self.runways, self.navaids) if section]
        paths += [m for m in self.compare_models or () if isinstance(m, Path)]
        return paths

    def route_options(self, plan: dict) -> dict:
        """Keyword arguments of :func:`headingref.route` for one ``[[routes.plan]]`` entry.

        The plan's own ``grid`` and ``alt`` win over the ``[routes]`` ones. The grid ``auto``
        (default) is passed as is: each route gets the polar grid of the pole it comes nearest
        to, so northern and southern routes can share one scenario.
        """
        settings = self.routes or {}
        default = {key: spec.default for key, spec in SCHEMA["routes"].items()}
        pick = {key: settings.get(key, default[key]) for key in ("spacing_nm", "path", "grid", "alt", "columns")}
        return {
            "alt_km": plan["alt"] if plan.get("alt") is not None else pick["alt"],
            "grid": plan["grid"] if plan.get("grid") is not None else pick["grid"],
            "spacing_nm": pick["spacing_nm"],
            "path": pick["path"],
            "route_name": plan.get("route"),
            "columns": plan["columns"] if plan.get("columns") is not None else pick["columns"],
        }

    def heading_error_options(self, manoeuvre: bool = True) -> dict:
        """The ``[error_budget]`` section as keyword arguments of :func:`headingref.heading_error`
        and :func:`headingref.detector.heading_error_grid` (defaults when the section is absent).

        The keys are the section's own keys, the fields of :class:`headingref.detector.DetectorSettings`
        and :class:`headingref.detector.Manoeuvre`. ``manoeuvre=False`` gives steady level flight
        (``Manoeuvre.level()``: no bank, no acceleration) with the same detector settings.
        """
        budget = self.error_budget or {key: spec.default for key, spec in SCHEMA["error_budget"].items()}
        detector = DetectorSettings(**{f.name: budget[f.name] for f in fields(DetectorSettings)})
        turn = Manoeuvre(**{f.name: budget[f.name] for f in fields(Manoeuvre)}) if manoeuvre else Manoeuvre.level()
        return {**asdict(detector), **asdict(turn)}


def _label(section: str, key: str) -> str:
    return f"[{section}] {key}" if section else key


def _suggest(word: str, options) -> str:
    close = difflib.get_close_matches(word, list(options), n=1, cutoff=0.6)
    return f" (did you mean {close[0]!r}?)" if close else ""


def _check_unknown(table: dict, section: str, where: str) -> None:
    accepted = SCHEMA[section]
    extra = set(SECTIONS) if section == "" else set()
    for key in table:
        if key not in accepted and key not in extra:
            names = sorted(accepted) + (sorted(f"[{s}]" for s in SECTIONS) if section == "" else [])
            raise InputError(
                f"{where}: unknown key {_label(section, key)!r}{_suggest(key, list(accepted) + list(extra))}; "
                f"accepted{' in [' + section + ']' if section else ''}: {', '.join(names)}"
            )


def _number(value: Any, label: str, spec: Key, where: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(f"{where}: {label} = {value!r} is not a number; {spec.doc}")
    value = float(value)
    if not math.isfinite(value):
        raise InputError(f"{where}: {label} = {value!r} is not a finite number; {spec.doc}")
    low_ok = spec.low is None or (value > spec.low if spec.open_low else value >= spec.low)
    high_ok = spec.high is None or value <= spec.high
    if not (low_ok and high_ok):
        low = "above" if spec.open_low else "from"
        raise InputError(f"{where}: {label} = {value:g} is out of range; accepted {low} {spec.low:g} to {spec.high:g} ({spec.doc})")
    return value


def _path(value: Any, label: str, spec: Key, where: str, folder: Path) -> Path:
    if not isinstance(value, str) or not value.strip():
        raise InputError(f"{where}: {label} = {value!r} must be a file name (relative to the scenario's folder); {spec.doc}")
    path = Path(os.path.expanduser(value.strip()))
    path = path if path.is_absolute() else folder / path
    try:
        exists = path.is_file()
    except (OSError, ValueError) as exc:  # name too long, NUL character
        raise InputError(f"{where}: {label} = {value[:60]!r}: not a usable file name ({exc})") from None
    if not exists:
        raise InputError(f"{where}: {label} = {value!r}: no such file {str(path)!r}")
    return path.resolve()


# One checker per schema kind, each (value, label, spec, where, folder) -> the checked value; _value
# dispatches on Key.kind through _CHECKERS.
def _str_value(value: Any, label: str, spec: Key, where: str, folder: Path) -> str:
    if not isinstance(value, str):
        raise InputError(f"{where}: {label} = {value!r} must be text in quotes; {spec.doc}")
    return value.strip()


def _bool_value(value: Any, label: str, spec: Key, where: str, folder: Path) -> bool:
    if not isinstance(value, bool):
        raise InputError(f"{where}: {label} = {value!r} must be true or false")
    return value


def _float_value(value: Any, label: str, spec: Key, where: str, folder: Path) -> float:
    return _number(value, label, spec, where)


def _floats_value(value: Any, label: str, spec: Key, where: str, folder: Path) -> list[float]:
    if not isinstance(value, list) or not value:
        raise InputError(f"{where}: {label} = {value!r} must be a non-empty list of numbers, e.g. [0, 90, 180]; {spec.doc}")
    return [_number(v, label, spec, where) for v in value]


def _choice_value(value: Any, label: str, spec: Key, where: str, folder: Path) -> str:
    if not isinstance(value, str) or value.strip().lower() not in spec.choices:
        raise InputError(f"{where}: {label} = {value!r} is not accepted; use one of {', '.join(spec.choices)}")
    return value.strip().lower()


def _date_value(value: Any, label: str, spec: Key, where: str, folder: Path) -> str:
    from .units import decimal_year

    if isinstance(value, bool) or not isinstance(value, (str, int, float)) and not hasattr(value, "isoformat"):
        raise InputError(f"{where}: {label} = {value!r} is not a date; give an ISO date such as \"2026-12-02\" or a decimal year")
    text = value.isoformat() if hasattr(value, "isoformat") else value
    try:
        decimal_year(text)
    except InputError as exc:
        raise InputError(f"{where}: {label}: {exc}") from None
    return str(text)


def _height_value(value: Any, label: str, spec: Key, where: str, folder: Path) -> float:
    from .units import parse_height_km

    if isinstance(value, bool):
        raise InputError(f"{where}: {label} = {value!r} is not a height; give km, or text such as '35000 ft' or 'FL350'")
    try:
        return float(parse_height_km(value, max_km=spec.high if spec.high is not None else 1000.0))
    except InputError as exc:
        raise InputError(f"{where}: {label}: {exc}") from None


def _grid_value(value: Any, label: str, spec: Key, where: str, folder: Path) -> str:
    if not isinstance(value, str):
        raise InputError(f"{where}: {label} = {value!r} must be text; {spec.doc}")
    from .headings import AUTO_GRID, parse_grid

    try:
        if value.strip().lower() != AUTO_GRID:  # auto: resolved per route from its latitudes
            parse_grid(value)
    except InputError as exc:
        raise InputError(f"{where}: {label}: {exc}") from None
    return value.strip()


def _path_value(value: Any, label: str, spec: Key, where: str, folder: Path) -> Path:
    return _path(value, label, spec, where, folder)


def _model_value(value: Any, label: str, spec: Key, where: str, folder: Path) -> str | Path | None:
    if not isinstance(value, str) or not value.strip():
        raise InputError(f"{where}: {label} = {value!r}; give a model name (`headingref models`) or a coefficient file name")
    if value.strip().lower() in DEFAULT_MODEL_NAMES:
        return None
    from .model import model_name

    named = model_name(value.strip())
    if named is not None:  # a model known by name (headingref.model.MODEL_NAMES)
        return None if named == "IGRF-14" else named
    return _path(value, label, spec, where, folder)


def _models_value(value: Any, label: str, spec: Key, where: str, folder: Path) -> list[str | Path]:
    """A list of model names or files (the report's model comparison)."""
    items = [v.strip() for v in value.split(",")] if isinstance(value, str) else value
    if not isinstance(items, list) or len(items) < 2 or not all(isinstance(v, str) and v.strip() for v in items):
        raise InputError(f"{where}: {label} = {value!r}; give two or more model names or files, {spec.doc}")
    models = [_model_value(v, label, spec, where, folder) for v in items]
    return ["IGRF-14" if m is None else m for m in models]


def _plans_value(value: Any, label: str, spec: Key, where: str, folder: Path) -> list[dict]:
    if not isinstance(value, list) or not value or not all(isinstance(v, dict) for v in value):
        raise InputError(f"{where}: {label} must be one or more [[routes.plan]] tables with name and file")
    plans = [_section(v, "routes.plan", f"{where} [[routes.plan]] #{i + 1}", folder) for i, v in enumerate(value)]
    names = [p["name"] for p in plans]
    dupes = sorted({n for n in names if names.count(n) > 1})
    if dupes:
        raise InputError(f"{where}: route name(s) {', '.join(dupes)} appear more than once in [[routes.plan]]")
    return plans


_CHECKERS = {
    "str": _str_value, "bool": _bool_value, "float": _float_value, "floats": _floats_value,
    "choice": _choice_value, "date": _date_value, "height": _height_value, "grid": _grid_value,
    "path": _path_value, "model": _model_value, "models": _models_value, "plans": _plans_value,
}


def _value(value: Any, section: str, key: str, spec: Key, where: str, folder: Path) -> Any:
    return _CHECKERS[spec.kind](value, _label(section, key), spec, where, folder)


def _section(table: Any, section: str, where: str, folder: Path) -> dict:
    if not isinstance(table, dict):
        raise InputError(f"{where}: [{section}] must be a table of keys, not {table!r}")
    _check_unknown(table, section, where)
    out = {}
    for key, spec in SCHEMA[section].items():
        if key in table:
            out[key] = _value(table[key], section, key, spec, where, folder)
        elif spec.required:
            raise InputError(f"{where}: {_label(section, key)} is missing; {spec.doc}")
        else:
            out[key] = list(spec.default) if isinstance(spec.default, list) else spec.default
    return out


def _read_toml(path: Any) -> tuple[dict, Path, str]:
    """The parsed TOML of a scenario file, its resolved path and the ``where`` of its messages."""
    if not isinstance(path, (str, os.PathLike)):
        raise InputError(f"load_scenario: path {path!r} of type {type(path).__name__} is not a file name; "
                         "give the path of a scenario TOML file")
    path = Path(path).expanduser()
    where = f"scenario {path.name}"
    if not path.is_file():
        raise InputError(f"{where}: no such file {str(path)!r}")
    try:
        raw = tomllib.loads(path.read_text(encoding="utf-8-sig"))
    except UnicodeDecodeError:
        raise InputError(f"{where}: not UTF-8 text; save the scenario as UTF-8") from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{where}: not valid TOML ({exc})") from None
    except RecursionError:  # tomllib recurses once per nesting level ([[[[...]]]] 5,000 deep)
        raise InputError(f"{where}: arrays or tables nested too deeply; a scenario needs a few levels at most") from None
    return raw, path.resolve(), where


def _check_column_mappings(sections: dict, where: str) -> None:
    """Check every section's ``columns`` mapping now, not when the job runs."""
    from importlib import import_module

    from .tables import parse_column_mapping

    accepted_of = {"runways": ("runways", "ACCEPTED_COLUMNS"), "navaids": ("navaids", "COLUMNS"),
                   "routes": ("routes", "WAYPOINT_COLUMNS"), "compass_bases": ("compass_base", "SITE_COLUMNS"),
                   "swing": ("swing", "MAPPED_COLUMNS")}
    for name, (module, constant) in accepted_of.items():
        section = sections.get(name)
        if not section:
            continue
        mappings = [(f"[{name}] columns", section.get("columns"))]
        if name == "routes":
            mappings += [(f"[[routes.plan]] {plan.get('name')!r} columns", plan.get("columns")) for plan in section["plan"]]
        for label, text in mappings:
            if text:
                mod = import_module(f".{module}", __package__)
                accepted = mod.REQUIRED + mod.OPTIONAL if constant == "COLUMNS" else getattr(mod, constant)
                try:
                    parse_column_mapping(text, accepted, label)
                except InputError as exc:
                    raise InputError(f"{where}: {exc}") from None


def _fill_dependent_values(sections: dict, top: dict, where: str) -> None:
    """Defaults that depend on other keys (cap edge, swing dates) and checks across keys, in place."""
    zones = sections["zones"]
    if zones and zones["edge_lat_deg"] is None:
        zones["edge_lat_deg"] = CAPS[zones["cap"]].edge_lat_deg
    if zones and zones["blackout_nT"] >= zones["caution_nT"]:
        raise InputError(
            f"{where}: [zones] blackout_nT = {zones['blackout_nT']:g} must be below caution_nT = {zones['caution_nT']:g}"
        )
    bases = sections["compass_bases"]
    if bases and bases["swing_date"] is None:
        bases["swing_date"] = top["analysis_date"]
    swing = sections["swing"]
    if swing and swing["date"] is None:
        swing["date"] = bases["swing_date"] if bases else top["analysis_date"]


def load_scenario(path: PathLike) -> Scenario:
    """Read and validate a scenario TOML file.

    Parameters
    ----------
    path : str or path-like
        The TOML file. Relative file names inside it are resolved against its folder.

    Returns
    -------
    Scenario

    Raises
    ------
    InputError
        Unreadable or malformed TOML; unknown keys (with a suggestion); missing required keys;
        values of the wrong type or out of range; files that do not exist.
    """
    raw, path, where = _read_toml(path)
    folder = path.parent
    top = _section({k: v for k, v in raw.items() if k not in SECTIONS}, "", where, folder)
    from .units import decimal_year

    sections = {name: _section(raw[name], name, where, folder) if name in raw else None for name in SECTIONS}
    _check_column_mappings(sections, where)
    _fill_dependent_values(sections, top, where)
    return Scenario(
        path=path,
        title=top["title"],
        operator=top["operator"],
        analysis_date=top["analysis_date"],
        decimal_year=float(decimal_year(top["analysis_date"])),
        model=top["model"],
        allow_extrapolation=top["allow_extrapolation"],
        compare_models=top["compare_models"],
        raw=raw,
        **sections,
    )
