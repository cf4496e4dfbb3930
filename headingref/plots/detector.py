"""Figure of the heading-reference error budget along a route.

- :func:`plot_budget_profile`: the combined (root-sum-square) error budget of
  :func:`headingref.heading_error` against distance along a route, one line per case (e.g.
  steady level flight and a turn), with the acceptable limit; log scale, 0.1 to 200 degrees.

The budget map over a cap is :func:`headingref.plots.zones.plot_error_map`.

>>> import matplotlib
>>> matplotlib.use("Agg")
>>> from headingref.plots.detector import plot_budget_profile
>>> fig = plot_budget_profile([0.0, 10.0, 20.0], {"steady level flight": [0.5, 1.0, 3.0]}, limit_deg=2.0)
>>> len(fig.axes)
1
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

from . import save_figure

__all__ = ["plot_budget_profile", "save_figure"]


def plot_budget_profile(distance_nm: Sequence[float], cases: Mapping[str, Sequence[float]], limit_deg: float,
                        figsize: tuple[float, float] = (8.0, 2.8)):
    """Error budget (degrees, RSS) against distance along the route (NM) for each case; returns the Figure.

    ``cases`` maps a label (drawn as plain text) to the budget at each distance.
    """
    from matplotlib.figure import Figure
    from matplotlib.ticker import FuncFormatter

    fig = Figure(figsize=figsize)
    ax = fig.add_subplot()
    d = np.asarray(distance_nm, dtype=np.float64)
    for i, (label, values) in enumerate(cases.items()):
        ax.plot(d, np.asarray(values, dtype=np.float64), label=str(label), color=f"C{i}", alpha=1.0 if i == 0 else 0.8)
    ax.axhline(limit_deg, color="C3", linestyle="--", linewidth=1, label=f"limit {limit_deg:g}°")
    ax.set_yscale("log")
    ax.set_ylim(0.1, 200)
    # plain numbers (0.1, 1, 10, 100), not the log axis's default mathtext, which plots.plain_text would show raw
    ax.yaxis.set_major_formatter(FuncFormatter(lambda value, _position: f"{value:g}"))
    ax.set_xlabel("distance along route (NM)")
    ax.set_ylabel("heading error (°, RSS)")
    ax.grid(True, which="both", alpha=0.3)
    legend = ax.legend(loc="upper left", fontsize=8)
    for text in legend.get_texts():  # user text is drawn as it is, never as mathtext
        text.set_parse_math(False)
    fig.tight_layout()
    return fig
