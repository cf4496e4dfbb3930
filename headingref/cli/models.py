"""``headingref models``: the field models known by name, their validity, degree and error model."""

from __future__ import annotations

from .common import add_command

EXAMPLES = """\
  headingref models
  headingref models --output models.csv

Any --model option (and a scenario's model key) takes one of these names or a coefficient file path.
Columns: name, valid_from, valid_to (decimal years), nmax (degree), sv_nmax (degree of the secular
variation), error_model (the declination error model applied), source (file and publisher)."""


def register(subparsers) -> None:
    parser = add_command(
        subparsers,
        "models",
        "list the field models known by name (validity, degree, error model)",
        "The models every --model option accepts by name: IGRF-14 (from ppigrf) and the WMM editions and "
        "WMMHR2025 (NOAA NCEI / BGS / CIRES, public domain, from pygeomag), with validity, degree and the "
        "declination error model headingref applies to each.",
        EXAMPLES,
    )
    parser.add_argument("--output", metavar="FILE", help="write the table to this file (.csv, or .xlsx: rounded, units in the header)")
    parser.set_defaults(func=run)


def run(args) -> int:
    import sys

    from ..model import list_models
    from ..notices import CAUTION
    from ..tables import write_output
    from .common import check_outputs

    check_outputs(files=[args.output])
    table = list_models()
    if args.output:
        write_output(args.output, table)  # .xlsx: a workbook with units in the header
    for row in table.itertuples():
        print(f"{row.name:<10} valid {row.valid_from:g} to {row.valid_to:g}  degree {row.nmax:>3} "
              f"(secular variation to {row.sv_nmax})")
        print(f"{'':<10} declination error model: {row.error_model.split('constants of ')[-1]}")
        print(f"{'':<10} {row.source}")
    print("\nDeclination uncertainty: sqrt(a^2 + (b/H)^2) degrees, 1 sigma, a and b of the WMM edition named.")
    if args.output:
        print(f"wrote {args.output} ({len(table)} rows)")
    print("\n" + CAUTION, file=sys.stderr)
    return 0
