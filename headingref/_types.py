"""Type aliases for the argument kinds that recur across the public functions.

They document what a signature accepts; they change no behaviour (every function still checks
its input and raises :class:`~headingref.errors.InputError` on anything else). Imported under
``from __future__ import annotations`` they cost nothing at run time.

``DateLike``
    One date: ISO text (``"2026-12-02"``, ``"2026-12-02T06:00Z"``), a decimal year (``2026.92``),
    ``datetime.date``/``datetime.datetime``, ``numpy.datetime64`` or ``pandas.Timestamp``
    (see :func:`headingref.units.decimal_year`; UTC, naive times taken as UTC).
``DatesLike``
    One date or a sequence/array of them.
``AngleArray``
    Degrees, a scalar or anything NumPy turns into an array (latitude, longitude, azimuth,
    variation); the units and sign convention are in each parameter's name and docstring.
``HeightArray``
    Heights in km above the WGS84 ellipsoid, scalar or array-like.
``ModelLike``
    A field model: ``None`` (IGRF-14), a loaded :class:`~headingref.model.Model`, a model name
    (``"WMM2025"``, see ``headingref models``) or a coefficient file (``.shc``, WMM ``.COF``).
``PathLike``
    A file name: ``str`` or :class:`os.PathLike`.
``TableSource``
    A table given as a :class:`pandas.DataFrame` or as a CSV/.xlsx file name.
"""

from __future__ import annotations

import datetime as _dt
import os
from collections.abc import Sequence
from typing import TYPE_CHECKING, TypeAlias

import numpy as np
import numpy.typing as npt
import pandas as pd

if TYPE_CHECKING:  # the model module imports units, which may import this one
    from .model import Model

__all__ = ["AngleArray", "DateLike", "DatesLike", "HeightArray", "ModelLike", "PathLike", "TableSource"]

DateLike: TypeAlias = str | float | int | _dt.date | np.datetime64 | pd.Timestamp
DatesLike: TypeAlias = DateLike | Sequence[DateLike] | npt.NDArray[np.generic] | pd.Series | pd.DatetimeIndex
AngleArray: TypeAlias = npt.ArrayLike
HeightArray: TypeAlias = npt.ArrayLike
PathLike: TypeAlias = str | os.PathLike[str]
ModelLike: TypeAlias = "Model | str | os.PathLike[str] | None"
TableSource: TypeAlias = pd.DataFrame | str | os.PathLike[str]
