"""Grids beyond memory: :func:`headingref.elements.field_grid` computed chunk by chunk with dask.

``field_grid(..., chunks={"lat": 600, "lon": 1200, "time": 1})`` returns an xarray Dataset whose
variables are dask arrays. Nothing is computed until the values are asked for (``.compute()``,
``.to_netcdf()``, ``.to_zarr()``, a plot); each chunk is then one eager ``field_grid`` call on that
chunk's latitudes, longitudes and dates (the same numba kernels), so the chunked result equals the
eager one node for node. All variables of a chunk come from one task, so writing the Dataset
computes each chunk once; memory holds a few chunks at a time, not the cube. The same graph runs on
a ``dask.distributed`` cluster unchanged (the model travels with the tasks).

dask is an optional dependency: ``pip install "headingref[dask]"``.
"""

from __future__ import annotations

import warnings
from typing import Any

import numpy as np

from .errors import InputError, UndefinedDeclinationWarning

DIMS = ("time", "lat", "lon")


def chunk_sizes(chunks: Any, sizes: dict[str, int]) -> dict[str, int]:
    """Validated chunk lengths per dimension (``time``, ``lat``, ``lon``); a missing one is the whole dimension."""
    if not isinstance(chunks, dict):
        raise InputError(f"field_grid chunks={chunks!r}: give a dict such as {{'lat': 600, 'lon': 1200, 'time': 1}}")
    unknown = sorted(set(chunks) - set(DIMS))
    if unknown:
        raise InputError(f"field_grid chunks: unknown dimension(s) {', '.join(map(repr, unknown))}; accepted: time, lat, lon")
    out = {}
    for dim in DIMS:
        value = chunks.get(dim, sizes[dim])
        if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
            raise InputError(f"field_grid chunks[{dim!r}] = {value!r}: give a whole number of nodes, at least 1")
        out[dim] = min(int(value), sizes[dim])
    return out


def _block(eager, lats, lons, years, alt_km, model) -> dict[str, np.ndarray]:
    """One chunk: an eager grid (``eager`` is field_grid; dates already checked), as a dict of (time, lat, lon) arrays."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UndefinedDeclinationWarning)  # issued once for the whole grid
        ds = eager(lats, lons, np.asarray(years, dtype=np.float64), alt_km=alt_km, model=model, allow_extrapolation=True)
    return {name: ds[name].values for name in ds.data_vars}


def chunked_field_grid(lat_a: np.ndarray, lon_a: np.ndarray, years: np.ndarray, alt_km: float, model, chunks: Any,
                       multi: bool, eager):
    """The lazy (dask-backed) counterpart of :func:`headingref.elements.field_grid` (inputs already validated).

    ``eager`` is :func:`headingref.elements.field_grid` itself, passed in so this module does not import
    :mod:`headingref.elements` (which imports this one)."""
    try:
        import dask
        import dask.array as da
    except ImportError:
        raise InputError('field_grid chunks= needs dask, an optional dependency: pip install "headingref[dask]"') from None
    import xarray as xr

    sizes = {"time": years.size, "lat": lat_a.size, "lon": lon_a.size}
    step = chunk_sizes(chunks, sizes)
    # the variables, their attributes and dtypes from a one-node eager grid: the template of every chunk
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UndefinedDeclinationWarning)
        template = eager(lat_a[:1], lon_a[:1], years[:1], alt_km=alt_km, model=model, allow_extrapolation=True)
    names = list(template.data_vars)
    bounds = {dim: list(range(0, sizes[dim], step[dim])) for dim in DIMS}
    pieces: dict[str, list] = {name: [] for name in names}
    block = dask.delayed(_block, pure=True)
    for t0 in bounds["time"]:
        rows = {name: [] for name in names}
        for a0 in bounds["lat"]:
            cols = {name: [] for name in names}
            for o0 in bounds["lon"]:
                ty, la, lo = years[t0:t0 + step["time"]], lat_a[a0:a0 + step["lat"]], lon_a[o0:o0 + step["lon"]]
                task = block(eager, la, lo, ty, alt_km, model)
                shape = (ty.size, la.size, lo.size)
                for name in names:
                    cols[name].append(da.from_delayed(task[name], shape=shape, dtype=template[name].dtype))
            for name in names:
                rows[name].append(da.concatenate(cols[name], axis=2))
        for name in names:
            pieces[name].append(da.concatenate(rows[name], axis=1))
    variables = {name: (DIMS, da.concatenate(pieces[name], axis=0), template[name].attrs) for name in names}
    if np.any(np.abs(lat_a) == 90.0):
        warnings.warn("declination is undefined on the geographic-pole row(s) of the grid; NaN there",
                      UndefinedDeclinationWarning, stacklevel=3)
    attrs = dict(template.attrs)
    attrs["declination_uncertainty_model"] = model.error_label(years)
    ds = xr.Dataset(
        variables,
        coords={
            "time": ("time", years, template.time.attrs),
            "lat": ("lat", lat_a, template.lat.attrs),
            "lon": ("lon", lon_a, template.lon.attrs),
        },
        attrs=attrs,
    )
    return ds if multi else ds.isel(time=0)
