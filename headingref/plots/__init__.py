"""Matplotlib figures for headingref, one module per job.

- :mod:`headingref.plots.basemap`: map axes in a projection that suits the area (polar
  stereographic for the caps, oblique stereographic for a region), the shipped Natural Earth
  coastline, a labelled graticule, and helpers to draw lon/lat lines, points and polygons.

The other modules (routes, zones, compass swing, runways) import the basemap; this package
imports nothing at module level so that ``import headingref`` never pulls in matplotlib.

- :func:`save_figure`: the one way figures are written (atomically, format from the suffix).
- :func:`plain_text`: every text of a figure drawn as typed (no ``$...$`` mathtext), applied by
  each plotting function to the figure it returns, so names from users' files (waypoints,
  airports, compass bases) can never be read as TeX: ``$\\foo{$`` would stop the drawing and
  ``Apron $2 pad $3`` would lose its dollars to italics.
"""

from __future__ import annotations

import os


def plain_text(fig):
    """Turn off mathtext on every text artist of ``fig`` (titles, labels, legends, annotations); return ``fig``.

    Matplotlib reads a text with an even number of unescaped ``$`` as TeX-like math
    (matplotlib's "Writing mathematical expressions" guide); ``Text.set_parse_math(False)`` draws it
    as typed. headingref's own labels use no mathtext (units are written ``km²``, ``°``), so the
    whole figure is switched. Tick labels are numbers formatted by headingref.
    """
    from matplotlib.text import Text

    for artist in fig.findobj(Text):
        artist.set_parse_math(False)
    return fig


def save_figure(fig, target: str | os.PathLike, dpi: int = 150) -> None:
    """Save a figure atomically (temporary file, then rename; format from the suffix) and close it.

    The file is written through :func:`headingref.io.atomic_file`, so an error on the last flush (a
    full disk, ``/dev/full``) is an :class:`~headingref.errors.InputError`, not a silent success.
    """
    from pathlib import Path

    import matplotlib.pyplot as plt

    from ..io import atomic_file

    suffix = Path(target).suffix.lower().lstrip(".") or None
    try:
        plain_text(fig)
        with atomic_file(target, "wb") as handle:
            fig.savefig(handle, format=suffix, dpi=dpi, bbox_inches="tight")
    finally:
        plt.close(fig)
