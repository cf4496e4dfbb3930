"""The workbench helpers: explorers redraw from their controls, tables print in the trade's forms."""

from __future__ import annotations

import base64

import ipywidgets as widgets
import pandas as pd
from matplotlib.figure import Figure

from headingref.workbench import date_picker, explorer, render, status_line, styled


def test_figure_renders_as_png():
    fig = Figure(figsize=(2, 2))
    fig.add_subplot().plot([0, 1], [0, 1])
    data = base64.b64decode(render(fig)["image/png"])
    assert data[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (RFC 2083, section 3.1)


def test_explorer_redraws_when_a_control_changes():
    slider = widgets.IntSlider(value=3, min=0, max=10)
    box = explorer(lambda n: f"n squared is {n * n}", {"n": slider})
    output = box.children[-1]
    assert output.outputs[0]["data"]["text/plain"] == "n squared is 9"
    slider.value = 4
    assert output.outputs[0]["data"]["text/plain"] == "n squared is 16"
    assert "headingref-explorer" in box._dom_classes


def test_explorer_shows_an_error_as_a_status_line_instead_of_losing_it():
    slider = widgets.IntSlider(value=0)
    box = explorer(lambda n: 1 / n, {"n": slider})
    assert "ZeroDivisionError" in box.children[-1].outputs[0]["data"]["text/plain"]


def test_styled_table_uses_trade_formats():
    table = pd.DataFrame({"true_course_deg": [5.0, 359.0], "variation_deg": [-14.65, 0.5], "zone": ["caution", "normal"],
                          "decimal_year": [2024.0 + 183 / 366, 2026.0]})
    html = styled(table).to_html()
    # headings as three digits (common practice); 14.65 deg = 14 deg 39 min (60 min to the degree), west negative
    assert ">005<" in html and ">359<" in html
    assert "14°39′ W" in html and "0°30′ E" in html
    assert "2024-07-02" in html  # 2024 + 183/366 is 2 July of the leap year 2024 (Gregorian calendar)
    assert html.index("zone") < html.index("true_course_deg")  # safety column first
    assert "#fce8b2" in html  # caution shaded


def test_date_picker_starts_on_the_given_day():
    assert str(date_picker(2024.0 + 183 / 366, "swing date").value) == "2024-07-02"


def test_status_line_escapes_user_text():
    assert "&lt;b&gt;" in status_line("<b>base</b>")["text/html"]


def test_field_history_figure_draws_the_table_and_the_wmm_thresholds():
    import headingref
    from headingref.plots.field import field_history_figure

    history = headingref.field(78.25, 15.47, ["2020-01-01", "2025-01-01"])
    fig = field_history_figure(history, title="Apron $2 pad $3")
    top, middle, _ = fig.axes[:3]
    assert list(top.lines[0].get_ydata()) == list(history.declination_deg)
    # caution and blackout thresholds of H: 6000 and 2000 nT (WMM2025 technical report, section on blackout zones)
    assert sorted(line.get_ydata()[0] for line in middle.lines[1:]) == [2000.0, 6000.0]
    assert fig._suptitle.get_text() == "Apron $2 pad $3" and not fig._suptitle.get_parse_math()


def test_slider_starts_on_its_step():
    from headingref.workbench import slider

    # the case: 2026.918 on a 0.25 step from 1990; the nearest step is 2027.00 (147.67 steps -> 148)
    year = slider(2026.918, 1990, 2030, 0.25, "year")
    assert year.value == 2027.0
    assert ((year.value - year.min) / year.step).is_integer()
    assert slider(99.0, 0.5, 10, 0.5, "limit (°)").value == 10.0  # clipped to the top end
    assert year.style.description_width == "initial"  # the label in words is shown whole


def test_with_warnings_turns_headingref_warnings_into_status_lines():
    import warnings

    from headingref.errors import DataQualityWarning
    from headingref.workbench import with_warnings

    def noisy(x):
        warnings.warn("runways.csv line 8: weak horizontal field", DataQualityWarning, stacklevel=2)
        warnings.warn("runways.csv line 8: weak horizontal field", DataQualityWarning, stacklevel=2)
        return x + 1

    result, lines = with_warnings(noisy, 1)
    assert result == 2
    assert [line["text/plain"] for line in lines] == ["WARNING: runways.csv line 8: weak horizontal field"]


def test_other_libraries_warnings_pass_through():
    import warnings

    import pytest

    from headingref.workbench import with_warnings

    with pytest.warns(RuntimeWarning, match="not ours"):
        _, lines = with_warnings(lambda: warnings.warn("not ours", RuntimeWarning, stacklevel=2))
    assert lines == []


def test_plots_used_by_explorers_leave_pyplot_alone():
    # figures drawn from a widget callback must not touch pyplot's global figure list
    # (JupyterLab runs the callback on another thread while later cells draw)
    import matplotlib.pyplot as plt

    from headingref.plots.basemap import map_axes
    from headingref.plots.detector import plot_budget_profile

    before = plt.get_fignums()
    ax, _ = map_axes("north", 70.0, coastlines=False, graticule=False)
    fig = plot_budget_profile([0.0, 10.0], {"steady": [0.5, 1.0]}, limit_deg=2.0)
    assert plt.get_fignums() == before
    assert isinstance(ax.figure, Figure) and isinstance(fig, Figure)


def test_a_change_from_another_thread_is_drawn_on_the_explorers_own_thread():
    # JupyterLab can deliver a widget change on a comm subshell thread while cells run on the main
    # thread (ipykernel 7 subshells); the explorer hands the redraw to the loop it was built on
    import asyncio
    import threading

    drawn_on = []

    def update(n):
        drawn_on.append(threading.current_thread())
        return f"n is {n}"

    async def notebook():
        slider = widgets.IntSlider(value=1, min=0, max=5)
        box = explorer(update, {"n": slider})
        worker = threading.Thread(target=lambda: setattr(slider, "value", 2))
        worker.start()
        worker.join()
        assert box.children[-1].outputs[0]["data"]["text/plain"] == "n is 1"  # not drawn on the worker
        await asyncio.sleep(0.05)
        return box.children[-1].outputs[0]["data"]["text/plain"]

    assert asyncio.run(notebook()) == "n is 2"
    assert drawn_on == [threading.main_thread()] * 2


def test_styled_table_prints_flags_as_words_and_counts_as_whole_numbers():
    table = pd.DataFrame({"exceeds_limit": [True, False], "n_readings": [12, 24000],
                          "note": pd.Series(["x", pd.NA], dtype="string")})
    html = styled(table).to_html()
    assert ">yes<" in html and ">no<" in html  # not 1.00 / 0.00
    assert ">12<" in html and ">24,000<" in html  # a count has no decimals (common practice)
    assert "&lt;NA&gt;" not in html


def test_budget_profile_log_axis_reads_as_plain_numbers_when_rendered():
    # render() draws every text as typed (plots.plain_text); a log axis's default labels are mathtext
    # ($\mathdefault{10^{1}}$) and would show raw, so the profile labels its decades as plain numbers
    from headingref.plots.detector import plot_budget_profile

    fig = plot_budget_profile([0.0, 10.0], {"steady": [0.5, 30.0]}, limit_deg=2.0)
    render(fig)
    ax = fig.axes[0]
    low, high = ax.get_ylim()
    labels = [t.get_text() for t in ax.get_yticklabels() if low <= t.get_position()[1] <= high and t.get_text()]
    assert labels == ["0.1", "1", "10", "100"]  # the axis spans 0.1 to 200 degrees, one label per decade


def test_report_and_notebook_tables_share_the_trade_forms():
    from headingref.report.render import format_cell

    # three-digit courses and degrees-and-minutes variation (common practice); 183.44 keeps its tenth
    # because a runway designator rounds it (ICAO Annex 14, nearest tenth of the magnetic azimuth)
    assert format_cell("magnetic_course_deg", 44.96) == "045"
    assert format_cell("true_bearing_deg", 183.44) == "183.4"
    assert format_cell("variation_deg", -14.65) == "14°39′ W"  # 0.65 deg = 39 min, west negative
    assert format_cell("difference_deg", -0.123) == "-0.12"  # a difference stays a signed number
    html = styled(pd.DataFrame({"magnetic_course_deg": [44.96], "variation_deg": [-14.65]})).to_html()
    assert ">045<" in html and "14°39′ W" in html
