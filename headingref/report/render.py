"""HTML of the report: jinja2 templates (autoescaped) and the stylesheet, both package resources.

``templates/report.html.j2`` is the page, ``templates/macros.html.j2`` the blocks (tables,
figures, parts); ``static/report.css`` is inlined so the page stays self-contained. Every value
reaches the page through jinja2's autoescaping: nothing here builds HTML by hand.
"""

from __future__ import annotations

import functools
import math
from importlib import resources
from typing import Any

import jinja2
import numpy as np
import pandas as pd

from ..formats import trade_text
from ..notices import CAUTION
from .content import Section, Table

_DECIMALS = (("standard_error_deg", 2), ("minus_model_deg", 2), ("margin_deg", 2), ("band_deg", 2), ("diff_deg", 2), ("difference_deg", 2),
             ("uncertainty_deg", 2), ("years_to_change", 1), ("_nT", 0), ("_nm", 1), ("_km", 1), ("_km2", 0), ("_m", 1),
             ("_min", 1), ("_deg", 1), ("_years", 1), ("_year", 2))

SUMMARY_TOPICS = (
    ("routes", "Routes: where the magnetic reference is lost"),
    ("bases", "Compass bases: resurvey"),
    ("runways", "Runways: redesignation"),
    ("navaids", "Navaids: station declination"),
    ("swing", "Compass swing"),
    ("models", "Field models: where the choice matters"),
    ("zones", "Weak-field zones"),
)


def format_cell(column: str, value: Any) -> str:
    """A table cell as text: decimals by the column's unit suffix, yes/no, blank for missing."""
    column = column.removesuffix("_mid").removesuffix("_end")
    if value is None or value is pd.NA or (isinstance(value, (float, np.floating)) and math.isnan(value)):
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    trade = trade_text(column, value)
    if trade is not None:  # courses as three digits, variation as 14°39′ W (headingref.formats)
        return trade
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


def _is_number(value: Any) -> bool:
    return isinstance(value, (int, float, np.number)) and not isinstance(value, (bool, np.bool_))


def table_view(table: Table) -> dict:
    """Headers and formatted rows ``{"level", "cells": [(text, is_number)]}`` of a :class:`Table`."""
    frame = table.frame
    columns = table.columns or {c: c for c in frame.columns}
    levels = table.levels or [""] * len(frame)
    rows = []
    for level, values in zip(levels, frame[list(columns)].itertuples(index=False, name=None), strict=True):
        cells = [(format_cell(c, v), _is_number(v)) for c, v in zip(columns, values, strict=True)]
        rows.append({"level": level, "cells": cells})
    return {"headers": list(columns.values()), "rows": rows, "caption": table.caption}


@functools.lru_cache(maxsize=1)
def environment() -> jinja2.Environment:
    """The jinja2 environment: templates from the package, autoescaping on, undefined names are errors."""
    env = jinja2.Environment(
        loader=jinja2.PackageLoader("headingref.report", "templates"),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
    )
    env.filters["table_view"] = table_view
    return env


def stylesheet() -> str:
    """The report's CSS (package resource ``static/report.css``)."""
    return resources.files("headingref.report").joinpath("static", "report.css").read_text(encoding="utf-8")


def render_page(scenario: Any, sections: list[Section], files: list[str], generated: str) -> str:
    """The whole report page."""
    topics = [(title, [item for s in sections if s.topic == key for item in s.summary]) for key, title in SUMMARY_TOPICS]
    return environment().get_template("report.html.j2").render(
        sc=scenario, sections=sections, topics=[t for t in topics if t[1]], failed=[s for s in sections if s.failed],
        files=files, generated=generated, caution=CAUTION, css=stylesheet(),
    )
