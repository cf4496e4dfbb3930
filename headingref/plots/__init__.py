"""Matplotlib figures for headingref, one module per job.

- :mod:`headingref.plots.basemap`: map axes in a projection that suits the area (polar
  stereographic for the caps, oblique stereographic for a region), the shipped Natural Earth
  coastline, a labelled graticule, and helpers to draw lon/lat lines, points and polygons.

The other modules (routes, zones, compass swing, runways) import the basemap; this package
imports nothing itself so that ``import headingref`` never pulls in matplotlib.
"""
