"""Figure for the runway designator check: magnetic azimuth against time with the rounding boundaries.

- :func:`runway_bearing_figure`: one panel per chosen runway end; the model's magnetic azimuth of
  the centre line from the check date to the end of the forecast, the rounding boundaries (azimuths
  ending in 5) with the 'on boundary' band either side, the designator each side of a boundary, the
  published designator, and the forecast change date.
- :func:`choose_rows`: the default choice of runway ends (soonest changes, then the smallest margins).

>>> from headingref.runways import check_runways
>>> from headingref.plots.runways import runway_bearing_figure
>>> import pandas as pd
>>> ends = pd.DataFrame({"airport": ["XAA"], "runway": ["13"], "lat": [64.8], "lon": [-147.6],
...                      "true_bearing_deg": [139.5]})
>>> fig = runway_bearing_figure(check_runways(ends, "2026-12-02", horizon_years=3))
>>> len(fig.axes)
1
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ..errors import InputError
from ..runways import RunwayCheck, designator_from_magnetic, format_designator, magnetic_bearing_series
from ..units import decimal_year
from . import plain_text
from .swing import save_figure

__all__ = ["choose_rows", "runway_bearing_figure", "save_figure"]

_LINE_COLOUR = "#1b6f8a"
_BOUNDARY_COLOUR = "#b5462f"
_BAND_COLOUR = "#f1d3c9"


def choose_rows(result: RunwayCheck, runways: Sequence[str] | None = None, limit: int = 6) -> list[int]:
    """Row positions to plot.

    ``runways`` names ends as ``'AIRPORT RWY'`` (e.g. ``'NORDVIK 09'``) or by row position
    (``'3'``); with none given, the soonest changes, then the ends closest to a boundary, one
    end per runway.
    """
    table = result.table
    usable = np.flatnonzero(np.isfinite(table["runway_magnetic_deg"].to_numpy(dtype=float)))
    if runways:
        labels = (table["airport"].astype(str) + " " + table["runway"].astype(str)).str.upper().tolist()
        chosen = []
        for name in runways:
            key = " ".join(str(name).split()).upper()
            if key.isdigit() and int(key) < len(table):
                position = int(key)
            elif key in labels:
                position = labels.index(key)
            else:
                raise InputError(f"runway {name!r} is not in the table; name it as 'AIRPORT RWY' (e.g. 'NORDVIK 09')")
            if position not in usable:
                raise InputError(f"runway {name!r} has no magnetic azimuth to plot: {table['reason'].iat[position]}")
            chosen.append(position)
        return chosen
    changing = [int(r) for r in result.changes["row"]] if len(result.changes) else []
    by_margin = usable[np.argsort(table["margin_deg"].to_numpy(dtype=float)[usable], kind="stable")]
    ordered = list(dict.fromkeys(changing + [int(i) for i in by_margin]))
    # one panel per runway: the two ends of a pair share one decision (the same curve, 180 deg apart)
    keys = (table["airport"].astype(str) + " " + table["runway_id"].astype(str)).to_numpy()
    seen: set[str] = set()
    unique = [i for i in ordered if not (keys[i] in seen or seen.add(keys[i]))]
    return unique[:limit]


def runway_bearing_figure(result: RunwayCheck, runways: Sequence[str] | None = None, limit: int = 6, samples: int = 240):
    """Magnetic azimuth against time for chosen runway ends, with the rounding boundaries.

    Parameters
    ----------
    result : RunwayCheck
        From :func:`headingref.runways.check_runways`.
    runways : sequence of str, optional
        Ends to show (see :func:`choose_rows`); default the soonest changes / smallest margins.
    limit : int
        Most panels when choosing by default.
    samples : int
        Dates sampled between the check date and the forecast end.

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.figure import Figure
    from matplotlib.ticker import FuncFormatter

    rows = choose_rows(result, runways, limit)
    if not rows:
        raise InputError("no runway end has a magnetic azimuth to plot")
    start = float(decimal_year(result.summary["date"]))
    end = float(decimal_year(result.summary["forecast_end"]))
    if end <= start:
        end = start + 1.0 / 12.0
    years = np.linspace(start, end, samples)
    series = magnetic_bearing_series(result, rows, years)
    valid_to = result.model.valid_to if result.model is not None else np.inf
    fig = Figure(figsize=(8.0, 1.2 + 2.0 * len(rows)), layout="constrained")
    axes = np.atleast_1d(fig.subplots(len(rows), 1, sharex=True, squeeze=False)[:, 0])
    for ax, position, column in zip(axes, rows, series.columns, strict=True):
        row = result.table.iloc[position]
        band = float(row.band_deg) if np.isfinite(row.band_deg) else result.summary["tolerance_deg"]
        values = series[column].to_numpy()
        low, high = float(values.min()), float(values.max())
        pad = max(1.0, 0.25 * (high - low))
        y_low, y_high = low - pad, high + pad
        ax.set_ylim(y_low, y_high)
        boundaries = np.arange(np.floor((y_low - 5.0) / 10.0) * 10.0 + 5.0, y_high + 10.0, 10.0)
        for boundary in boundaries:
            ax.axhspan(boundary - band, boundary + band, color=_BAND_COLOUR, linewidth=0)
            ax.axhline(boundary, color=_BOUNDARY_COLOUR, linewidth=0.9, linestyle="--")
        for lower in boundaries:  # label each designator's band where it shows
            shown_low, shown_high = max(lower, y_low), min(lower + 10.0, y_high)
            if shown_high - shown_low > 0.2 * (y_high - y_low):
                number = int(designator_from_magnetic(lower + 5.0))
                ax.text(years[-1], 0.5 * (shown_low + shown_high), f" {format_designator(number)}", va="center",
                        ha="left", fontsize=8, color=_BOUNDARY_COLOUR)
        ax.plot(years, values, color=_LINE_COLOUR, linewidth=1.6)
        if valid_to < end:
            ax.axvspan(max(valid_to, start), end, color="#dddddd", linewidth=0, zorder=0)
            ax.text(max(valid_to, start), y_high, " extrapolated", va="top", ha="left", fontsize=7, color="#555555")
        title = f"{row.airport} {row.runway}: implied {row.designator_implied} ({row.verdict or row.status})"
        if row.last_fit_date:
            title += f", painted number last fitted {row.last_fit_date}"
        if row.change_date:
            change = float(decimal_year(row.change_date))
            ax.axvline(change, color="black", linewidth=0.8, linestyle=":")
            title += f", becomes {row.next_designator} on {row.change_date}"
        ax.set_title(title, fontsize=9, loc="left")
        ax.set_ylabel("magnetic az. (deg)")
        ax.yaxis.set_major_formatter(FuncFormatter(_wrapped_degrees_text))
        ax.grid(axis="x", linewidth=0.3)
    axes[-1].set_xlabel("year")
    fig.suptitle(
        f"Runway magnetic azimuth ({result.summary['model']}; mean of both ends for a pair); dashed: rounding "
        f"boundaries, shaded: band ({result.summary.get('band', '')}) either side",
        fontsize=9,
    )
    return plain_text(fig)  # airport and runway names from the user's table are drawn as typed


def _wrapped_degrees_text(value: float, _position=None) -> str:
    """Tick label: azimuth modulo 360 as three digits, with a decimal where the tick needs one
    (half-degree ticks would otherwise repeat: 194, 194, 195) (the plotted series is unwrapped)."""
    wrapped = value % 360.0
    if abs(wrapped - round(wrapped)) < 1e-6:
        return f"{round(wrapped) % 360:03d}"
    return f"{wrapped:05.1f}"
