"""Matplotlib figures for headingref, one module per job.

- :mod:`headingref.plots.basemap`: map axes in a projection that suits the area (polar
  stereographic for the caps, oblique stereographic for a region), the shipped Natural Earth
  coastline, a labelled graticule, and helpers to draw lon/lat lines, points and polygons.

The other modules (routes, zones, compass swing, runways) import the basemap; this package
imports nothing at module level so that ``import headingref`` never pulls in matplotlib.

- :func:`save_figure`: the one way figures are written (atomically, format from the suffix).
"""

from __future__ import annotations

import os


def save_figure(fig, target: str | os.PathLike, dpi: int = 150) -> None:
    """Save a figure atomically (temporary file, then rename; format from the suffix) and close it."""
    import matplotlib.pyplot as plt

    from ..io import atomic_path

    with atomic_path(target) as tmp:
        fig.savefig(tmp, dpi=dpi, bbox_inches="tight")
    plt.close(fig)
