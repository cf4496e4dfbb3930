"""Building blocks for the Jupyter workbench: explorers that redraw safely, and readable tables.

An *explorer* is a row of controls above an output. When a control changes, the explorer calls
your ``update`` function with every control's value by name and shows what it returns (figures,
tables, text) in the output, replacing what was there. Three habits make explorers stable in
JupyterLab, where a control's change can arrive on another thread while later cells still run:

- a change that arrives on another thread is redrawn on the kernel's main thread (its asyncio
  loop, between cells), so an explorer never draws while a cell draws;
- the output is replaced in one step (``Output.outputs`` set to finished display data), never
  captured through ``with output:`` (which routes whatever the kernel prints meanwhile into it);
- figures are :class:`matplotlib.figure.Figure` objects rendered to PNG here, never pyplot's
  global current figure, so a callback and a cell cannot draw into each other's axes.

The first output is drawn when the explorer is built, with the controls' starting values, so
Run All gives the same page every time.

>>> from headingref.workbench import render
>>> sorted(render("H below 2000 nT"))
['text/plain']

:func:`styled` formats a table for reading: courses as three digits, variation as ``12°34′ E``,
decimal years as dates, safety-relevant columns (zone, stretches without a magnetic reference,
flags) first and highlighted.
"""

from __future__ import annotations

import base64
import io
import threading
from collections.abc import Callable, Iterable, Mapping
from typing import Any

import numpy as np
import pandas as pd

from .formats import trade_text
from .units import timestamp_from_decimal_year

__all__ = ["explorer", "render", "styled", "status_line", "date_picker", "slider", "choice", "with_warnings", "show"]

_FIRST_COLUMNS = ("case", "name", "from", "to", "airport", "runway", "ident", "zone", "verdict", "exceeds", "exceeds_limit",
                  "saturated_by", "declination_flag",
                  "blackout_stretches_nm", "caution_stretches_nm")
_ZONE_COLOURS = {"blackout": "background-color: #f4c7c3", "caution": "background-color: #fce8b2"}


def render(item: Any) -> dict[str, Any]:
    """One displayable item as a Jupyter mime bundle.

    A matplotlib Figure becomes a PNG (100 dpi, tight box); a DataFrame or Styler becomes HTML
    with a plain-text fallback; anything else is shown as its text.
    """
    from matplotlib.figure import Figure

    if isinstance(item, Figure):
        from .plots import plain_text

        plain_text(item)  # user names are drawn as typed, never as mathtext
        buffer = io.BytesIO()
        item.savefig(buffer, format="png", dpi=100, bbox_inches="tight")
        return {"image/png": base64.b64encode(buffer.getvalue()).decode("ascii"), "text/plain": "<figure>"}
    if isinstance(item, pd.DataFrame):
        return {"text/html": item.to_html(), "text/plain": item.to_string()}
    if hasattr(item, "to_html") and hasattr(item, "data"):  # pandas Styler
        return {"text/html": item.to_html(), "text/plain": item.data.to_string()}
    if isinstance(item, Mapping) and item and all(isinstance(k, str) and "/" in k for k in item):
        return dict(item)  # already a mime bundle (e.g. status_line)
    return {"text/plain": str(item)}


def show(*items: Any) -> None:
    """Display each item (Figure, table, Styler, text or a status line) as :func:`render` does.

    Figures go out as PNG from the Figure object itself, never through pyplot's current figure.
    """
    from IPython.display import display

    for item in items:
        for output in _as_outputs(item):
            display(output["data"], raw=True)


def _as_outputs(items: Any) -> tuple[dict, ...]:
    if items is None:
        return ()
    if isinstance(items, (str, pd.DataFrame)) or not isinstance(items, Iterable) or isinstance(items, Mapping):
        items = [items]
    return tuple({"output_type": "display_data", "data": render(item), "metadata": {}} for item in items)


def explorer(update: Callable[..., Any], controls: Mapping[str, Any], title: str = ""):
    """A box of ``controls`` above an output that shows ``update(**values)``.

    Parameters
    ----------
    update
        Called with each control's current value by its key; returns one item or a list of items
        (Figure, DataFrame, Styler, text or a mime bundle) to show.
    controls
        Keyword name -> ipywidgets control (anything with ``value`` and ``observe``).
    title
        Optional heading above the controls.

    Returns
    -------
    ipywidgets.VBox
        With the CSS class ``headingref-explorer``; display it (the last expression of a cell).
    """
    import ipywidgets as widgets

    output = widgets.Output()
    lock = threading.Lock()
    home, loop = threading.current_thread(), _running_loop()

    def redraw(_change=None) -> None:
        values = {name: control.value for name, control in controls.items()}
        with lock:
            try:
                outputs = _as_outputs(update(**values))
            except Exception as error:  # shown to the user in the explorer, not lost on a thread
                outputs = _as_outputs(status_line(f"{type(error).__name__}: {error}", level="error"))
            output.outputs = outputs

    def changed(change=None) -> None:
        # JupyterLab may deliver a control's change on a comm subshell thread while the notebook's
        # cells still run (and draw) on the main thread; matplotlib's font cache is shared, so draw
        # on the kernel's main thread, between cells, instead.
        if loop is not None and threading.current_thread() is not home and not loop.is_closed():
            loop.call_soon_threadsafe(redraw)
        else:
            redraw(change)

    for control in controls.values():
        control.observe(changed, names="value")
    redraw()
    children = ([widgets.HTML(f"<b>{title}</b>")] if title else []) + [widgets.HBox(list(controls.values()), layout=widgets.Layout(flex_flow="row wrap")), output]
    box = widgets.VBox(children)
    box.add_class("headingref-explorer")
    return box


def _running_loop():
    """The asyncio loop running on this thread (the kernel's main loop inside a cell), or None."""
    import asyncio

    try:
        return asyncio.get_running_loop()
    except RuntimeError:
        return None


def date_picker(value: Any, description: str):
    """An ipywidgets DatePicker starting on ``value`` (a date-like or decimal year), labelled in words."""
    import ipywidgets as widgets

    if isinstance(value, (int, float, np.floating)):
        value = timestamp_from_decimal_year(float(value))
    day = pd.Timestamp(value).date()
    return widgets.DatePicker(value=day, description=description, style={"description_width": "initial"})


def slider(value: float, low: float, high: float, step: float, description: str):
    """A FloatSlider labelled in words whose starting value is on its step (no snap on first render).

    ``value`` is clipped to ``[low, high]`` and rounded to the nearest ``low + k * step``: a
    browser snaps an off-step value and sends the change back, which redraws while later cells run.
    """
    import ipywidgets as widgets

    steps = round((min(max(float(value), low), high) - low) / step)
    start = min(low + steps * step, high)
    return widgets.FloatSlider(value=round(start, 10), min=low, max=high, step=step, description=description,
                               style={"description_width": "initial"}, continuous_update=False)


def choice(options: Iterable[Any], value: Any, description: str):
    """A Dropdown labelled in words; ``options`` may be values or ``(label, value)`` pairs."""
    import ipywidgets as widgets

    return widgets.Dropdown(options=list(options), value=value, description=description,
                            style={"description_width": "initial"})


def with_warnings(call: Callable[..., Any], *args: Any, **kwargs: Any) -> tuple[Any, list[dict[str, str]]]:
    """``call(*args, **kwargs)`` with headingref's warnings caught: ``(result, status lines)``.

    Data-quality and extrapolation warnings become highlighted :func:`status_line` items (shown
    above a table) instead of raw stderr blocks; other libraries' warnings pass through.
    """
    import warnings

    from .errors import HeadingrefWarning

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", HeadingrefWarning)
        result = call(*args, **kwargs)
    lines = []
    for record in caught:
        if issubclass(record.category, HeadingrefWarning):
            text = str(record.message)
            if text not in {line["text/plain"].split(": ", 1)[1] for line in lines}:
                lines.append(status_line(text))
        else:
            warnings.warn_explicit(record.message, record.category, record.filename, record.lineno)
    return result, lines


def status_line(text: str, level: str = "warning") -> dict[str, str]:
    """A highlighted one-line status (``info``, ``warning`` or ``error``) as a mime bundle."""
    import html

    colours = {"info": "#e8f0fe", "warning": "#fef7e0", "error": "#fce8e6"}
    style = (f"background:{colours.get(level, colours['warning'])};padding:4px 8px;border-radius:3px;"
             "white-space:pre-wrap")
    return {"text/html": f'<div style="{style}">{html.escape(level.upper())}: {html.escape(text)}</div>',
            "text/plain": f"{level.upper()}: {text}"}


def _format_value(column: str, value: Any) -> str:
    if value is None or value is pd.NA or value is pd.NaT:
        return ""
    if isinstance(value, float) and not np.isfinite(value):
        return "" if np.isnan(value) else str(value)
    name = column.lower()
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    if isinstance(value, (int, np.integer)) and not name.endswith(("_deg", "_nt", "_year")):
        return f"{int(value):,}" if abs(int(value)) >= 10000 else str(int(value))
    trade = trade_text(column, value)
    if trade is not None:  # the same forms as the console and the report (headingref.formats)
        return trade
    if isinstance(value, (int, float, np.integer, np.floating)):
        number = float(value)
        if name == "decimal_year" or name.endswith("_year") and not name.endswith("per_year") and number > 1000:
            return str(timestamp_from_decimal_year(number).date())
        if name.endswith("_nt"):
            return f"{number:,.0f}"
        return f"{number:.2f}" if abs(number) < 1000 else f"{number:,.0f}"
    return str(value)


def styled(table: pd.DataFrame, columns: Iterable[str] | None = None):
    """A pandas Styler for reading ``table``: trade formats, safety columns first and highlighted.

    Courses, headings and bearings print as three digits (``005``), variation, declination and
    grivation as degrees and minutes with E/W (``12°34′ E``), decimal years as dates, field
    intensities as whole nT. The zone column is shaded (caution amber, blackout red).
    """
    frame = table if columns is None else table[list(columns)]
    first = [c for c in _FIRST_COLUMNS if c in frame.columns]
    frame = frame[first + [c for c in frame.columns if c not in first]]
    styler = frame.style.format({c: (lambda v, c=c: _format_value(c, v)) for c in frame.columns})
    if "zone" in frame.columns:
        styler = styler.map(lambda v: _ZONE_COLOURS.get(str(v), ""), subset=["zone"])
    return styler.hide(axis="index")
