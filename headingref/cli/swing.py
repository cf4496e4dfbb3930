"""``headingref swing``: coefficients, residuals, verdict and correction card from swing readings."""

from __future__ import annotations

from ..errors import InputError

EXAMPLES = """\
  headingref swing --input readings.csv
  headingref swing --input readings.csv --limit 5 --output coefficients.csv --card card.csv \\
      --residuals residuals.csv --plot deviation.png --card-plot card.pdf
  headingref swing --input readings.csv --date 2026-12-02 --aircraft ZZ-XYZ --compass SN-0000 \\
      --swung-by "A. N. Other" --conditions "engines running, radios on" \\
      --bases compass_bases.csv --base "Invented apron base" --card-html card.html
  headingref swing --input eight_points.csv --method handbook --verdict-on after_compensation --compensated
  headingref swing --input four_cardinal.csv --coefficients ABCE"""


def finite_float(text, what: str = "value") -> float:
    """A plain finite decimal number (:func:`headingref.units.parse_number`: refuses nan, inf, 1_0 and
    non-ASCII digits), or a one-line InputError naming the option (not argparse's usage block)."""
    from ..units import parse_number

    return parse_number(text, what)


def option_number(value, what: str):
    """An option's value through :func:`finite_float` (None and numbers already parsed pass through)."""
    if value is None or isinstance(value, float):
        return value
    return finite_float(value, what)


def number_list(text: str, what: str) -> list[float]:
    """Parse ``'0,30,60'`` into floats or raise InputError naming the option."""
    items = [part.strip() for part in str(text).split(",") if part.strip()]
    if not items:
        raise InputError(f"{what} {text!r} is empty; give comma-separated numbers such as 0,30,60")
    try:
        return [finite_float(item) for item in items]
    except InputError:
        raise InputError(f"{what} {text!r}: give comma-separated plain finite numbers such as 0,30,60") from None


def register(subparsers) -> None:
    from .common import add_command

    parser = add_command(
        subparsers,
        "swing",
        help_text="compass swing: deviation coefficients A-E, verdict and correction card",
        description=(
            "Fit dev(h) = A + B sin h + C cos h + D sin 2h + E cos 2h (h magnetic heading, deviation east "
            "positive = magnetic - compass) to swing readings by least squares or the handbook's eight-point / "
            "four-cardinal formulas; judge the deviation as measured and the residual once a compensator "
            "removes B and C, each against its limit, and say which one the verdict uses; print the correction "
            "card, also as a signed, printable document. Input CSV: a heading column (magnetic_heading_deg, "
            "heading, ...; degrees or compass points N, NE, ...) and a compass reading or deviation column."
        ),
        examples=EXAMPLES,
    )
    parser.add_argument("--input", required=True, metavar="CSV", help="swing readings (heading and compass reading or deviation columns)")
    parser.add_argument("--columns", metavar="MAP", help="column mapping NAME=COLUMN,... (e.g. magnetic_heading_deg=hdg,compass_reading_deg=cr)")
    parser.add_argument(
        "--limit", default="10", metavar="DEG",
        help="largest deviation allowed as measured (default 10, 14 CFR 23/25/29.1327; tighter for remote-indicating systems)",
    )
    parser.add_argument(
        "--compensated-limit", default=None, metavar="DEG",
        help="largest residual allowed after B and C are removed (default: --limit)",
    )
    parser.add_argument(
        "--verdict-on", choices=["as_measured", "after_compensation"], default="as_measured",
        help="which deviation the verdict judges (default as_measured; both are printed)",
    )
    parser.add_argument("--method", choices=["least_squares", "handbook"], default="least_squares",
                        help="coefficients by least squares (default) or the handbook's eight-point / four-cardinal formulas")
    parser.add_argument("--coefficients", default="ABCDE", help="coefficients to fit (default ABCDE; ABCE for four cardinal headings)")
    parser.add_argument("--card-headings", metavar="LIST", help="magnetic headings on the card (default 0,30,...,330)")
    parser.add_argument("--compensated", action="store_true", help="make the card for the compass after B and C are removed (keeps A, D, E)")
    parser.add_argument("--max-deviation", default="30", metavar="DEG", help="refuse readings further than this from their heading (default 30)")
    parser.add_argument("--date", help="date of the swing (YYYY-MM-DD), printed on the card")
    parser.add_argument("--aircraft", default="", help="aircraft registration, printed on the card")
    parser.add_argument("--compass", default="", help="compass type and serial number, printed on the card")
    parser.add_argument("--swung-by", default="", metavar="NAME", help="person who swung the compass (signature line on the card)")
    parser.add_argument("--conditions", default="", help="swing conditions, e.g. 'engines running, radios on'")
    parser.add_argument("--bases", metavar="CSV", help="compass bases CSV: link the swing to the base's marked variation and survey date")
    parser.add_argument("--base", default="", metavar="NAME", help="name of the compass base the swing was made on")
    parser.add_argument("--output", metavar="FILE", help="coefficients (.csv or .xlsx), one row: A_deg..E_deg, verdict, verdict_basis, max_deviation_deg, max_residual_deg, ...")
    parser.add_argument("--card", metavar="CSV", help="correction card")
    parser.add_argument("--residuals", metavar="CSV", help="per-reading deviation, fit and residuals")
    parser.add_argument("--plot", metavar="FILE", help="deviation curve figure (.png, .pdf, .svg)")
    parser.add_argument("--card-plot", metavar="FILE", help="correction card as a printable sheet (.pdf, .png, .svg)")
    parser.add_argument("--card-html", metavar="FILE", help="correction card as a print-ready HTML page")
    parser.set_defaults(func=run)


def _details(args, result_date):
    from ..swing import CardDetails, base_link

    link = {}
    if args.bases:
        if not args.base:
            raise InputError("--bases needs --base NAME: the compass base the swing was made on")
        if not result_date:
            raise InputError("--bases needs --date: the swing date decides whether the base was in tolerance")
        link = base_link(args.bases, args.base, result_date)
    return CardDetails.make(
        aircraft=args.aircraft, compass=args.compass, base=args.base, swing_date=result_date,
        conditions=args.conditions, swung_by=args.swung_by,
        base_marked_variation=link.get("marked_variation", ""), base_survey_date=link.get("survey_date", ""),
        base_status=link.get("status", ""),
    )


def _analyse(args):
    """Read the readings and fit the curve with the options' limits, method and card headings."""
    from ..swing import analyse_swing, read_swing_csv

    magnetic, compass, rows = read_swing_csv(args.input, columns=args.columns)
    card_headings = number_list(args.card_headings, "--card-headings (card headings)") if args.card_headings else None
    limits = {name: option_number(getattr(args, attr), option) for name, attr, option in (
        ("limit_deg", "limit", "--limit"), ("compensated_limit_deg", "compensated_limit", "--compensated-limit"),
        ("max_plausible_deviation_deg", "max_deviation", "--max-deviation"))}
    return analyse_swing(
        magnetic,
        compass,
        **{k: v for k, v in limits.items() if k != "max_plausible_deviation_deg"},
        verdict_on=args.verdict_on,
        method=args.method,
        card_headings_deg=card_headings,
        coefficients=args.coefficients,
        card_after_compensation=args.compensated,
        max_plausible_deviation_deg=limits["max_plausible_deviation_deg"],
        rows=rows,
    )


def _print_identification(args, result, details) -> None:
    print(f"Compass swing, {len(result.readings)} readings from {args.input} (deviation east positive = magnetic - compass)")
    for key, value in (("aircraft", details.aircraft), ("compass", details.compass), ("date", details.swing_date),
                       ("conditions", details.conditions), ("base", details.base)):
        if value:
            print(f"  {key}: {value}")
    if details.base_marked_variation:
        print(f"  base marked variation {details.base_marked_variation} (surveyed {details.base_survey_date}); {details.base_status}")


def _print_coefficients(result) -> None:
    method = "least squares" if result.method == "least_squares" else f"handbook {result.handbook_formula} formulas"
    print(f"coefficients by {method}")
    print("coefficient    value    std.err  inflation  meaning")
    for _, c in result.coefficients.iterrows():
        if not c.determined and result.method == "least_squares":
            print(f"  {c.coefficient}        (not fitted)")
            continue
        se = f"{c.standard_error_deg:8.2f}°" if c.standard_error_deg == c.standard_error_deg else "     n/a "
        print(f"  {c.coefficient}  {c.value_deg:+8.2f}°  {se}  {c.inflation:8.2f}   {c.meaning}")
    if result.methods_differ:
        print(f"least squares and the handbook {result.handbook_formula} formulas differ:")
        for _, c in result.comparison.iterrows():
            hb = f"{c.handbook_deg:+8.2f}°" if c.handbook_deg == c.handbook_deg else "     n/a "
            print(f"  {c.coefficient}  least squares {c.least_squares_deg:+8.2f}°  handbook {hb}")
    print(f"condition number {result.condition_number:.2f}, rms fit residual {result.rms_fit_residual_deg:.2f}°")


def _write_outputs(args, result, details) -> None:
    """Every output the options ask for, or none (io.all_or_nothing)."""
    from ..io import all_or_nothing, write_csv, write_text
    from ..swing import card_html
    from ..tables import write_output

    with all_or_nothing():
        if args.output:
            write_output(args.output, result.summary_row())  # .xlsx: a workbook with units in the header
        if args.card:
            write_csv(args.card, result.card)
        if args.residuals:
            write_csv(args.residuals, result.readings)
        if args.card_html:
            write_text(args.card_html, card_html(result, details))
        if args.plot or args.card_plot:
            from ..plots.swing import card_figure, deviation_figure, save_figure

            if args.plot:
                save_figure(deviation_figure(result), args.plot)
            if args.card_plot:
                save_figure(card_figure(result, details=details), args.card_plot)


def run(args) -> int:
    from .common import check_outputs

    check_outputs(files=[args.output, args.card, args.residuals, args.card_html], figures=[args.plot, args.card_plot],
                  inputs=[args.input, args.bases])
    if args.date is not None and not args.date.strip():
        raise InputError("--date is empty; give the swing date as YYYY-MM-DD")
    result = _analyse(args)
    details = _details(args, args.date)
    _print_identification(args, result, details)
    _print_coefficients(result)
    print(result.verdict_text())
    print(f"correction card, curve {result.card_terms()}:")
    print("  for magnetic  " + " ".join(result.card.for_magnetic))
    print("  steer compass " + " ".join(result.card.steer_compass))
    _write_outputs(args, result, details)
    return 0
