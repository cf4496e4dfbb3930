"""The plain data a report job returns: what the page shows and which files it writes.

A job (one module of this package per job) takes the run's :class:`Context` and returns one
:class:`Section`. It never writes HTML or files itself: the builder writes ``Section.files``
into the staging folder and the jinja2 templates (autoescaped) render everything else, so user
text (route, airport and base names) is escaped in one place.

- :class:`SummaryItem`: one line of the one-minute summary; ``lead`` is shown in bold and
  ``level`` (``""``, ``"warn"``, ``"bad"``) colours it. ``str(item)`` is its plain text.
- :class:`Table`: a DataFrame with the columns to show ``{column: header}`` and, optionally,
  a level per row (``""``, ``"warn"``, ``"bad"``) that colours the row.
- :class:`Figure`: an image already encoded (PNG or SVG bytes), with alt text and caption;
  :func:`figure_from` turns a matplotlib Figure from :mod:`headingref.plots` into one.
- :class:`Part`: a sub-heading with paragraphs, bullet items, tables and figures (``collapsed``
  folds it).
- :class:`OutputFile`: a data file of the report: a DataFrame (CSV), a dict (GeoJSON/JSON) or
  text (``str``, written as UTF-8, e.g. a printable HTML card).
- :class:`Section`: ``key`` (the HTML anchor), ``title``, ``topic`` (the summary heading it
  feeds), ``summary`` items, ``parts``, ``files``, ``notes`` (plain sentences) and ``tables``
  (result tables by name, handed to the caller in ``ReportResult.tables``); ``failed`` holds the
  reason when the job could not run.
"""

from __future__ import annotations

import base64
import io
from dataclasses import dataclass, field
from typing import Any

import pandas as pd

from ..units import format_dm

FIGURE_DPI = 90
LEVELS = ("", "warn", "bad")


@dataclass
class SummaryItem:
    """One summary line: ``lead`` (bold, may be empty) and ``text``; ``level`` '', 'warn' or 'bad'."""

    text: str
    lead: str = ""
    level: str = ""

    def __str__(self) -> str:
        return f"{self.lead}: {self.text}" if self.lead else self.text


@dataclass
class Table:
    """A table to show: ``columns`` {column: header} (all columns when None), ``levels`` per row."""

    frame: pd.DataFrame
    columns: dict[str, str] | None = None
    levels: list[str] | None = None
    caption: str = ""

    def __post_init__(self) -> None:
        # A column the library no longer gives is an error (the section shows as failed), never a silent gap.
        missing = [c for c in (self.columns or {}) if c not in self.frame.columns]
        if missing:
            raise KeyError(f"table has no column(s) {', '.join(missing)}")
        if self.levels is not None and len(self.levels) != len(self.frame):
            raise ValueError(f"{len(self.levels)} row levels for {len(self.frame)} rows")


@dataclass
class Figure:
    """An embedded image: ``data`` (PNG or SVG bytes), ``mime`` ('image/png' or 'image/svg+xml')."""

    data: bytes
    alt: str
    caption: str = ""
    mime: str = "image/png"

    @property
    def base64(self) -> str:
        return base64.b64encode(self.data).decode("ascii")


@dataclass
class Part:
    """A block of a section: optional sub-heading, paragraphs, a bullet list, tables, figures; ``collapsed`` folds it."""

    title: str = ""
    text: list[str] = field(default_factory=list)
    items: list[str] = field(default_factory=list)
    tables: list[Table] = field(default_factory=list)
    figures: list[Figure] = field(default_factory=list)
    collapsed: bool = False


@dataclass
class OutputFile:
    """A data file written with the report: ``content`` a DataFrame (CSV), a dict (JSON) or text (as is)."""

    name: str
    content: pd.DataFrame | dict | str


@dataclass
class Section:
    """What one job returns (see the module docstring)."""

    key: str
    title: str
    topic: str = ""
    summary: list[SummaryItem] = field(default_factory=list)
    parts: list[Part] = field(default_factory=list)
    files: list[OutputFile] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    tables: dict[str, pd.DataFrame] = field(default_factory=dict)
    failed: str = ""


def figure_from(fig: Any, alt: str, caption: str = "", fmt: str = "png") -> Figure:
    """Encode a matplotlib Figure (PNG at :data:`FIGURE_DPI`, or SVG) and close it."""
    import matplotlib.pyplot as plt

    buf = io.BytesIO()
    try:  # a tight box, as plots.save_figure: titles wider than the axes are kept whole
        fig.savefig(buf, format=fmt, dpi=FIGURE_DPI, bbox_inches="tight")
    finally:
        plt.close(fig)
    return Figure(buf.getvalue(), alt, caption, "image/svg+xml" if fmt == "svg" else "image/png")


def flag(value: Any) -> bool:
    """A table cell as a yes/no: missing (None, NaN, pd.NA) is no."""
    return False if value is None or (pd.api.types.is_scalar(value) and pd.isna(value)) else bool(value)


def latlon_text(lat: float, lon: float) -> str:
    """A position as degrees and minutes with N/S and E/W."""
    return f"{format_dm(lat, 'N', 'S')} {format_dm(lon, 'E', 'W')}"


def capped(items: list[SummaryItem], limit: int, more: str) -> list[SummaryItem]:
    """The first ``limit`` items and one line counting the rest (``more`` names where they are)."""
    if len(items) <= limit:
        return items
    return [*items[:limit], SummaryItem(f"… and {len(items) - limit} more {more}.")]
