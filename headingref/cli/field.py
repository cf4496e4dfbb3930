"""``headingref field``: the main field at one place or at every row of a CSV.

Scale: a CSV of plain decimal degrees is read with pandas' C parser (a fast path; any other form,
a quoted cell or a bad value takes the row-by-row reader of :mod:`headingref.io`, which names the
file line); heights and dates are parsed once per distinct text. The field is computed and written
in chunks of :data:`CHUNK_ROWS` rows (:mod:`headingref.fastcsv`), so a million places take a few
seconds and well under 1 GB. Beyond :data:`TABLE_ROWS` rows the console gets a summary; every row
goes to ``--output`` (or ``--csv``).
"""

from __future__ import annotations

import datetime as _dt
import sys

from .common import add_command, add_model_options, add_place_options

PLACE_COLUMNS = ("lat", "lon", "name", "alt", "alt_km", "alt_m", "alt_ft", "date")
"""Columns of a places CSV (lat, lon required); what ``--columns`` may map onto."""
HEIGHT_COLUMNS = ("alt", "alt_km", "alt_m", "alt_ft")
TABLE_ROWS = 300
"""Most rows printed as a readable table; a larger input gets a summary (the rows go to --output/--csv)."""
CHUNK_ROWS = 32_768
"""Rows computed and written at a time (about 10 MB of text)."""

EXAMPLES = """\
  headingref field --lat 61.17 --lon -150.0 --date 2026-12-02
  headingref field --lat "N78°13.5′" --lon "015 38 E" --alt FL350 --date 2027-06-01
  headingref field --input sites.csv --date 2026-12-02 --output sites_field.csv
  headingref field --lat 80 --lon 10 --date 2026-12-02 --csv > one.csv
  headingref field --lat 70 --lon 20 --date 2027-01-01 --model WMM_2025.COF

CSV input: columns lat, lon (decimal degrees or degrees/minutes with N/S/E/W), optional
name, a height and date (ISO or decimal year; else --date). The height is alt with a unit in
every value (450 m, 35000 ft, FL350; a bare number there is refused) or alt_km / alt_m / alt_ft
holding plain numbers in that unit. Other column names: --columns lat=latitude,alt_m=elev.
More than 300 rows print a summary; --output (or --csv) has every row, angles to 6 decimals of a
degree and intensities to 0.001 nT. Where H < 100 nT (near a dip pole) the declination is flagged
'no usable declination', its uncertainty is 180° and it has no annual change."""


def register(subparsers) -> None:
    parser = add_command(
        subparsers,
        "field",
        "declination, inclination and intensities at places and dates",
        "The Earth's main field (IGRF-14 by default) at a place or at each row of a CSV: declination "
        "(variation, east positive), inclination, H, X, Y, Z, F, their annual rates, the WMM declination "
        "uncertainty and the weak-field zone.",
        EXAMPLES,
    )
    add_place_options(parser, "CSV of places (see below)")
    parser.add_argument("--columns", metavar="MAP", help="column mapping NAME=COLUMN,... (e.g. lat=latitude,lon=longitude,alt_m=elev)")
    parser.add_argument("--output", metavar="FILE", help="write the full table to this file (.csv, or .xlsx: rounded, units in the header)")
    parser.add_argument("--csv", action="store_true", help="print CSV (machine output, every row) instead of the readable table")
    add_model_options(parser)
    parser.set_defaults(func=run)


# --------------------------------------------------------------------------- reading places


class _Places:
    """What the reader found: one entry per place (arrays), the file lines, and the source name."""

    def __init__(self, names, lines, lat, lon, alt, years, source):
        self.names, self.lines, self.lat, self.lon, self.alt, self.years, self.source = (
            names, lines, lat, lon, alt, years, source)


def _parse_each_distinct(cells, lines, parse, where: str, what: str = ""):
    """``parse`` applied once per distinct cell text (pandas.factorize), spread back to every row.

    The same values and errors as parsing row by row: distinct texts are tried in order of first
    appearance, so an error names the first file line holding a bad text (``where`` line N: ...)."""
    import numpy as np
    import pandas as pd

    from ..errors import InputError

    codes, uniques = pd.factorize(np.asarray(cells, dtype=object), sort=False)
    values = np.empty(len(uniques), dtype=np.float64)
    for q, cell in enumerate(uniques):
        try:
            values[q] = parse(cell)
        except InputError as exc:
            raise InputError(f"{where} line {lines[int(np.argmax(codes == q))]}: {what}{exc}") from None
    return values[codes]


def _heights_and_dates(columns: dict, lines, source: str, default_date: str, args):
    """alt (km) and dates (decimal years) of every row; ``columns`` maps name -> array of stripped text."""
    import numpy as np

    from ..errors import DateRangeError, InputError
    from ..model import load_model
    from ..units import decimal_year, height_column, parse_height_km

    try:
        height, unit = height_column(columns, "alt")  # alt: unit in each value; alt_km/_m/_ft: numbers in that unit
    except InputError as exc:
        raise InputError(f"{source}: {exc}") from None
    if height:
        alt = _parse_each_distinct(columns[height], lines, lambda c: parse_height_km(c, default_unit=unit) if c else 0.0, source)
    else:
        alt = 0.0
    dates = columns.get("date")
    filled = None if dates is None else dates != ""
    if filled is not None and filled.all():
        years = _parse_each_distinct(dates, lines, decimal_year, source, "date: ")
        model = load_model(getattr(args, "model", None))
        outside = (years < model.valid_from) | (years > model.valid_to)
        if outside.any() and not getattr(args, "extrapolate", False):
            i = int(np.argmax(outside))
            raise DateRangeError(
                f"{source} line {lines[i]}: date {dates[i]!r} is outside {model.name}'s validity "
                f"{model.valid_from:g} to {model.valid_to:g}; give a date inside it, or opt in with --extrapolate"
            )
        return alt, years
    if filled is not None and filled.any():
        raise InputError(f"{source}: some rows have a date and some do not; fill every date or none")
    return alt, decimal_year(default_date)


def _read_fast(path, mapping=None):
    """The places of a CSV of plain decimal degrees, read by pandas' C parser; None when the file is
    anything else (then :func:`_read_slow` reads it and names the line of any problem).

    Taken only when the row number of every record is certain: header on line 1, no blank or
    whitespace-only line before the end, no double quote (so no field runs over lines), lat and lon
    plain ASCII decimals (the C parser refuses ``6_1``, other digits and signs) that are finite and
    within +-90 / +-180 degrees. Data row k (from 0) is then file line k + 2. A column
    ``mapping`` (headingref name -> file column) renames the header; a mapping that names an
    absent column or shadows another leaves the file to the slow reader, which says so.
    """
    import io as _io
    from pathlib import Path

    import numpy as np
    import pandas as pd

    from ..io import MAX_TABLE_BYTES

    path = Path(path)
    try:
        if not path.is_file() or path.stat().st_size > MAX_TABLE_BYTES:
            return None
        raw = path.read_bytes()
    except OSError:
        return None
    if b"\x00" in raw or b'"' in raw or (b"\r" in raw and raw.count(b"\r") != raw.count(b"\r\n")):
        return None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        return None
    del raw
    first = text.split("\n", 1)[0]
    body = text.rstrip()
    if not first.strip() or "\n\n" in body or "\n\r\n" in body:
        return None
    delimiter = max([",", ";", "\t"], key=first.count)
    header = [cell.strip().lower() for cell in first.rstrip("\r").split(delimiter)]
    if mapping:
        if any(src not in header or (name in header and name not in mapping.values()) for name, src in mapping.items()):
            return None
        renamed = {src: name for name, src in mapping.items()}
        header = [renamed.get(cell, cell) for cell in header]
    if "lat" not in header or "lon" not in header or "" in header or len(set(header)) != len(header):
        return None
    wanted = [name for name in ("name", "lat", "lon", *HEIGHT_COLUMNS, "date") if name in header]
    dtype = {name: (np.float64 if name in ("lat", "lon") else object) for name in wanted}
    try:
        table = pd.read_csv(_io.StringIO(body), sep=delimiter, header=0, names=header, usecols=wanted, dtype=dtype,
                            na_filter=False, engine="c", skip_blank_lines=False, quoting=3)
    except (ValueError, pd.errors.ParserError):
        return None
    del text, body
    if table.empty:
        return None
    lat, lon = table["lat"].to_numpy(), table["lon"].to_numpy()
    if not ((np.abs(lat) <= 90.0).all() and (np.abs(lon) <= 180.0).all()):
        return None  # NaN, infinities, out of range: the slow reader names the line
    columns = {name: np.array([cell.strip() for cell in table[name].to_numpy()], dtype=object)
               for name in ("name", *HEIGHT_COLUMNS, "date") if name in table}
    return columns, np.arange(2, len(table) + 2), lat, lon


def _read_slow(path, mapping=None):
    """Row by row with :mod:`headingref.io` (any accepted coordinate form; errors name the line)."""

    from .. import io

    table = io.read_table(path, required=["lat", "lon"], optional=PLACE_COLUMNS[2:], what="places", columns=mapping)
    lat = io.coordinate_column(table, "lat", "lat")
    lon = io.coordinate_column(table, "lon", "lon")
    columns = {name: table[name].to_numpy(dtype=object) for name in ("name", *HEIGHT_COLUMNS, "date") if name in table}
    return columns, table.index.to_numpy(), lat, lon, table.attrs["source"]


def _inputs(args) -> _Places:
    from pathlib import Path

    import numpy as np

    from ..errors import InputError
    from ..tables import parse_column_mapping
    from ..units import decimal_year, parse_coordinate, parse_height_km

    default_date = args.date or _dt.datetime.now(_dt.UTC).date().isoformat()
    if args.input:
        if args.lat or args.lon:
            raise InputError("give either --input or --lat/--lon, not both")
        mapping = parse_column_mapping(getattr(args, "columns", None), PLACE_COLUMNS, "--columns")
        fast = _read_fast(args.input, mapping)
        if fast is not None:
            columns, lines, lat, lon = fast
            source = Path(args.input).name
        else:
            columns, lines, lat, lon, source = _read_slow(args.input, mapping)
        alt, years = _heights_and_dates(columns, lines, source, default_date, args)
        names = columns.get("name")
        if names is None:
            names = np.array([f"line {n}" for n in lines], dtype=object)
        return _Places(names, lines, lat, lon, alt, years, source)
    if not (args.lat and args.lon):
        raise InputError("give --lat and --lon (or --input CSV); see headingref field --help")
    return _Places(np.array(["place"], dtype=object), np.array([0]), np.array([parse_coordinate(args.lat, "lat")]),
                   np.array([parse_coordinate(args.lon, "lon")]), parse_height_km(args.alt), decimal_year(default_date),
                   "--lat/--lon")


# --------------------------------------------------------------------------- writing


def _csv_names(names):
    """Names as CSV cells: inert for spreadsheets (io.spreadsheet_safe_text, OWASP) and quoted when needed."""
    import re

    import numpy as np

    from ..io import spreadsheet_safe_text

    out = np.array([str(name) for name in names], dtype=object)
    # one regular-expression scan of all names first: in the usual file nothing needs changing
    if not re.search(r'(?m)^[=+\-@\t\r]|[",\r\n]', "\n".join(out)):
        return out
    for i, name in enumerate(out):
        cell = spreadsheet_safe_text(name)
        if any(ch in cell for ch in ',"\n\r'):
            cell = '"' + cell.replace('"', '""') + '"'
        out[i] = cell
    return out


class _Summary:
    """Running totals over the chunks, for the console summary of a large input."""

    def __init__(self):
        import numpy as np

        self.rows = 0
        self.zones = np.zeros(3, dtype=np.int64)
        self.flags = np.zeros(4, dtype=np.int64)
        self.least_h = (np.inf, -1)
        self.d_range = [np.inf, -np.inf]
        self.years = [np.inf, -np.inf]

    def add(self, f, start: int) -> None:
        import numpy as np

        self.rows += len(f["horizontal_nT"])
        self.zones += np.bincount(f["zone_code"], minlength=3)
        self.flags += np.bincount(f["declination_flag"].codes, minlength=4)
        i = int(np.argmin(f["horizontal_nT"]))
        if f["horizontal_nT"][i] < self.least_h[0]:
            self.least_h = (float(f["horizontal_nT"][i]), start + i)
        usable = f["declination_flag"].codes == 0
        if usable.any():
            d = f["declination_deg"][usable]
            self.d_range = [min(self.d_range[0], float(d.min())), max(self.d_range[1], float(d.max()))]
        self.years = [min(self.years[0], float(f["decimal_year"].min())), max(self.years[1], float(f["decimal_year"].max()))]


DECIMALS_NT, DECIMALS_OTHER = 3, 6


def _stream(places: _Places, model, extrapolate: bool, sinks, keep: bool):
    """Compute and write the field chunk by chunk to every text stream in ``sinks``; return the summary
    and, when ``keep``, the whole field as one dict of arrays (for the readable table)."""
    import warnings

    import numpy as np

    from ..elements import FLAG_REASONS, NUMERIC, ZONE_NAMES, _warn_flags, field_arrays
    from ..errors import UndefinedDeclinationWarning
    from ..fastcsv import format_rows

    n = len(places.lat)
    decimals = [DECIMALS_NT if name.endswith(("nT", "nT_per_year")) else DECIMALS_OTHER for name in NUMERIC]
    header = ",".join(("name", *NUMERIC, "zone", "declination_flag")) + "\n"
    for sink in sinks:
        sink.write(header)
    names = _csv_names(places.names) if sinks else None
    summary, kept, caught_all = _Summary(), [], {}
    for start in range(0, max(n, 1), CHUNK_ROWS):
        part = slice(start, min(start + CHUNK_ROWS, n))

        def each(values, part=part):
            return values[part] if np.ndim(values) else values

        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            f = field_arrays(places.lat[part], places.lon[part], each(places.years), each(places.alt),
                             model=model, allow_extrapolation=extrapolate)
        for w in caught:  # one copy of each warning for the whole run, the flag counts summed below
            if not issubclass(w.category, UndefinedDeclinationWarning):
                caught_all.setdefault((w.category, str(w.message)), w)
        summary.add(f, start)
        if keep:
            kept.append(f)
        if sinks:
            table = np.stack([f[name] for name in NUMERIC])
            text = format_rows(table, decimals, [(f["zone_code"], ZONE_NAMES),
                                                 (f["declination_flag"].codes, FLAG_REASONS)]).decode("ascii")
            chunk = "".join([f"{a},{b}\n" for a, b in zip(names[part], text.split("\n"), strict=False)])
            for sink in sinks:
                sink.write(chunk)
    for (category, message), _w in caught_all.items():
        warnings.warn(message, category, stacklevel=2)
    if summary.flags[1:].any():
        _warn_flags(np.repeat(np.arange(4, dtype=np.int8), summary.flags), stacklevel=2)
    whole = None
    if keep:
        import pandas as pd

        whole = {key: (pd.Categorical(np.concatenate([np.asarray(k[key]) for k in kept]).astype(object).astype(str))
                       if key == "declination_flag" else np.concatenate([k[key] for k in kept])) for key in kept[0]}
    return summary, whole


# --------------------------------------------------------------------------- the command


def _error_model_label(model, year: float) -> str:
    """Which declination error model gave the uncertainty (a WMM edition, or the proxy used for IGRF)."""
    error_model = model.error_model(float(year))
    return f"error model {error_model.label}" if error_model is not None else "no error model for this date"


def run(args) -> int:
    import contextlib
    import io as _io
    import warnings
    from pathlib import Path

    import numpy as np

    from .. import io
    from ..elements import FLAG_REASONS, NO_DECLINATION_NT, ZONE_NAMES
    from ..errors import InputError
    from ..model import load_model
    from ..notices import CAUTION
    from ..tables import EXCEL_SUFFIXES, write_output
    from ..units import format_dm, timestamp_from_decimal_year
    from .common import check_outputs

    check_outputs(files=[args.output], inputs=[args.input, args.model])
    places = _inputs(args)
    model = load_model(args.model)
    with warnings.catch_warnings():  # dates checked before any output starts; the warning comes once, later
        warnings.simplefilter("ignore")
        model.check_dates(np.atleast_1d(np.asarray(places.years, dtype=np.float64)), args.extrapolate)
    n = len(places.lat)
    keep = n <= TABLE_ROWS and not args.csv
    workbook = args.output and Path(args.output).suffix.lower() in EXCEL_SUFFIXES
    if workbook and n > 1_048_575:
        raise InputError(f"--output {args.output}: {n:,} rows do not fit in one .xlsx sheet (1,048,575 at most); write a .csv")
    with contextlib.ExitStack() as stack:
        sinks = []
        if args.output:  # a workbook is made from the same CSV text once every row is computed
            sinks.append(_io.StringIO() if workbook else stack.enter_context(io.atomic_file(args.output, "w")))
        if args.csv:
            sinks.append(sys.stdout)
        summary, f = _stream(places, model, args.extrapolate, sinks, keep)
    if workbook:
        import pandas as pd

        write_output(args.output, pd.read_csv(_io.StringIO(sinks[0].getvalue()), keep_default_na=False, na_values=[""]))
    if args.csv:
        return 0
    model_name = args.model or "IGRF-14"
    if f is not None and n == 1:
        r = {key: value[0] for key, value in f.items()}
        when = timestamp_from_decimal_year(r["decimal_year"]).strftime("%Y-%m-%d")
        rate_min = r["declination_deg_per_year"] * 60
        flag = str(r["declination_flag"])
        if flag == FLAG_REASONS[3]:  # the model's value is kept in the table, but printed as what it is: no heading
            declination = f"{'not usable':>10}   model value {format_dm(r['declination_deg'])}"
            uncertainty = f"{r['declination_uncertainty_deg']:9.2f}°   (no heading: any direction)"
        else:
            declination = (f"{r['declination_deg']:9.3f}°" if np.isfinite(r["declination_deg"]) else f"{'':>10}") + (
                f"   {format_dm(r['declination_deg'])}")
            uncertainty = (f"{r['declination_uncertainty_deg']:9.2f}°   (1 sigma, excludes crustal anomalies)"
                           if np.isfinite(r["declination_uncertainty_deg"]) else f"{'not given':>10}")
        change = f"{abs(rate_min):9.1f}′/yr {'E' if rate_min >= 0 else 'W'}" if np.isfinite(rate_min) else f"{'undefined':>9}"
        lines = [
            f"Field at {format_dm(r['lat_deg'], 'N', 'S', 1)} {format_dm(r['lon_deg'], 'E', 'W', 1)}, "
            f"{r['alt_km']:g} km above WGS84, {when} ({r['decimal_year']:.3f}), model {model_name}",
            f"  declination (variation)  {declination}" + (f"   [{flag}]" if flag else ""),
            f"  annual change            {change}",
            f"  uncertainty              {uncertainty}   [{_error_model_label(model, r['decimal_year'])}]",
            f"  inclination (dip)        {r['inclination_deg']:9.3f}°   ({r['inclination_deg_per_year'] * 60:+.1f}′/yr)",
            f"  horizontal H             {r['horizontal_nT']:9.1f} nT ({r['horizontal_nT_per_year']:+.1f} nT/yr)   "
            f"zone: {ZONE_NAMES[r['zone_code']]}",
            f"  north X / east Y / down Z {r['north_nT']:9.1f} / {r['east_nT']:.1f} / {r['down_nT']:.1f} nT",
            f"  total F                  {r['total_nT']:9.1f} nT ({r['total_nT_per_year']:+.1f} nT/yr)",
        ]
        print("\n".join(lines))
    elif f is not None:
        import pandas as pd

        usable = f["declination_flag"].codes == 0
        rate = f["declination_deg_per_year"] * 60
        view = pd.DataFrame({
            "name": places.names, "lat_deg": f["lat_deg"], "lon_deg": f["lon_deg"], "alt_km": f["alt_km"],
            "decimal_year": f["decimal_year"],
            "variation": [format_dm(d) if ok else ("not usable" if np.isfinite(d) else "undefined")
                          for d, ok in zip(f["declination_deg"], usable, strict=True)],
            "change_min_per_yr": [f"{v:+.1f}" if np.isfinite(v) else "undefined" for v in rate],
            "uncert_deg": f["declination_uncertainty_deg"].round(2),
            "dip_deg": f["inclination_deg"].round(2),
            "H_nT": f["horizontal_nT"].round(0).astype(int),
            "zone": np.asarray(ZONE_NAMES)[f["zone_code"]],
        })
        print(view.to_string(index=False))
    else:
        where = lambda i: f"{places.source} line {places.lines[i]} ({places.names[i]})"  # noqa: E731
        low, high = summary.years
        dates = f"{low:.3f}" if low == high else f"{low:.3f} to {high:.3f}"
        zones = ", ".join(f"{name} {count:,}" for name, count in zip(ZONE_NAMES, summary.zones, strict=True))
        d_low, d_high = summary.d_range
        lines = [
            f"Field at {n:,} places from {places.source}, model {model_name}, decimal year {dates}",
            f"  zones: {zones}",
            f"  declination {format_dm(d_low)} to {format_dm(d_high)} where usable" if np.isfinite(d_low) else
            "  no usable declination at any place",
            f"  no usable declination (H < {NO_DECLINATION_NT:g} nT) at {summary.flags[3]:,} place(s); "
            f"undefined (geographic pole or H = 0) at {summary.flags[1] + summary.flags[2]:,}",
            f"  least H {summary.least_h[0]:.1f} nT at {where(summary.least_h[1])}",
            f"  more than {TABLE_ROWS} rows: no table printed; "
            + (f"every row is in {args.output}" if args.output else "give --output FILE (or --csv) for every row"),
        ]
        print("\n".join(lines))
    if args.output:
        print(f"wrote {args.output} ({n:,} rows)")
    print("\n" + CAUTION, file=sys.stderr)
    return 0
