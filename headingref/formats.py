"""One set of display forms for tables, shared by the console, the report and the notebooks.

The trade writes courses, headings and bearings as three digits (``045``) and variation,
declination and grivation as degrees and minutes with the side (``14°39′ W``); a table column
gets those forms from its name:

- a column ending ``course_deg`` or ``heading_deg`` prints as three digits (``045``), one ending
  ``bearing_deg`` or ``azimuth_deg`` with its tenth (``183.4``: runway designators round it), both
  with :func:`headingref.headings.format_heading`;
- a column ending ``variation_deg``, ``declination_deg`` or ``grivation_deg`` (an east-positive
  angle) prints with :func:`headingref.headings.format_variation`; differences, uncertainties and
  rates (``difference``, ``uncertainty``, ``minus``, ``_per_year`` in the name) stay numbers.

>>> trade_text("magnetic_course_deg", 44.96), trade_text("variation_deg", -14.65)
('045', '14°39′ W')
>>> trade_text("difference_deg", 0.4) is None
True
"""

from __future__ import annotations

import math
from typing import Any

from .headings import format_heading, format_variation

DIRECTION_SUFFIXES = ("course_deg", "heading_deg", "bearing_deg", "azimuth_deg")
_TENTH_SUFFIXES = ("bearing_deg", "azimuth_deg")  # a runway's or a line's bearing keeps its tenth (designators round it)
EAST_POSITIVE_SUFFIXES = ("variation_deg", "declination_deg", "grivation_deg")
_STAY_NUMBERS = ("difference", "uncertainty", "minus", "_per_year", "diff_", "sigma")


def trade_text(column: str, value: Any) -> str | None:
    """The trade's text for ``value`` in ``column``, or None when the column has no trade form.

    NaN prints as ``---`` for a direction and ``undefined`` for a variation.
    """
    name = column.lower().removesuffix("_mid").removesuffix("_end").removesuffix("_start")
    if any(word in name for word in _STAY_NUMBERS) or isinstance(value, bool):
        return None
    try:
        number = float(value)
    except (TypeError, ValueError):
        return None
    if name.endswith(DIRECTION_SUFFIXES):
        if not math.isfinite(number):
            return "---"
        return format_heading(number, decimals=1 if name.endswith(_TENTH_SUFFIXES) else 0)
    if name.endswith(EAST_POSITIVE_SUFFIXES):
        return format_variation(number)
    return None
