"""``headingref swing``: coefficients, residuals, verdict and correction card from swing readings."""

from __future__ import annotations

from ..errors import InputError

EXAMPLES = """\
  headingref swing --input readings.csv
  headingref swing --input readings.csv --limit 5 --output coefficients.csv --card card.csv \\
      --residuals residuals.csv --plot deviation.png --card-plot card.png
  headingref swing --input four_cardinal.csv --coefficients ABCE"""


def number_list(text: str, what: str) -> list[float]:
    """Parse ``'0,30,60'`` into floats or raise InputError naming the option."""
    items = [part.strip() for part in str(text).split(",") if part.strip()]
    if not items:
        raise InputError(f"{what} {text!r} is empty; give comma-separated numbers such as 0,30,60")
    try:
        return [float(item) for item in items]
    except ValueError:
        raise InputError(f"{what} {text!r}: give comma-separated numbers such as 0,30,60") from None


def register(subparsers) -> None:
    from .common import add_command

    parser = add_command(
        subparsers,
        "swing",
        help_text="compass swing: deviation coefficients A-E, verdict and correction card",
        description=(
            "Fit dev(h) = A + B sin h + C cos h + D sin 2h + E cos 2h (h magnetic heading, deviation east "
            "positive = magnetic - compass) to swing readings by least squares; give the residuals once a "
            "compensator removes B and C, a verdict against the limit, and the correction card. "
            "Input CSV columns: magnetic_heading_deg, compass_reading_deg."
        ),
        examples=EXAMPLES,
    )
    parser.add_argument("--input", required=True, metavar="CSV", help="swing readings (magnetic_heading_deg, compass_reading_deg)")
    parser.add_argument(
        "--limit", type=float, default=10.0, metavar="DEG",
        help="largest residual deviation allowed after B and C (default 10, 14 CFR 23/25/29.1327; tighter for remote-indicating systems)",
    )
    parser.add_argument("--coefficients", default="ABCDE", help="coefficients to fit (default ABCDE; ABCE for four cardinal headings)")
    parser.add_argument("--card-headings", metavar="LIST", help="magnetic headings on the card (default 0,30,...,330)")
    parser.add_argument("--compensated", action="store_true", help="make the card for the compass after B and C are removed")
    parser.add_argument("--max-deviation", type=float, default=30.0, metavar="DEG", help="refuse readings further than this from their heading (default 30)")
    parser.add_argument("--output", metavar="CSV", help="coefficients, one row: A_deg..E_deg, max_residual_deg, verdict, ...")
    parser.add_argument("--card", metavar="CSV", help="correction card")
    parser.add_argument("--residuals", metavar="CSV", help="per-reading deviation, fit and residuals")
    parser.add_argument("--plot", metavar="FILE", help="deviation curve figure (.png, .pdf, .svg)")
    parser.add_argument("--card-plot", metavar="FILE", help="correction card as a printable table figure")
    parser.set_defaults(func=run)


def run(args) -> int:
    from ..io import write_csv
    from ..swing import analyse_swing, read_swing_csv
    from .common import check_outputs

    check_outputs(files=[args.output, args.card, args.residuals], figures=[args.plot, args.card_plot], inputs=[args.input])

    magnetic, compass, rows = read_swing_csv(args.input)
    card_headings = number_list(args.card_headings, "--card-headings") if args.card_headings else None
    result = analyse_swing(
        magnetic,
        compass,
        limit_deg=args.limit,
        card_headings_deg=card_headings,
        coefficients=args.coefficients,
        card_after_compensation=args.compensated,
        max_plausible_deviation_deg=args.max_deviation,
        rows=rows,
    )
    print(f"Compass swing, {len(result.readings)} readings from {args.input} (deviation east positive = magnetic - compass)")
    print("coefficient    value    std.err  inflation  meaning")
    for _, c in result.coefficients.iterrows():
        if not c.determined:
            print(f"  {c.coefficient}        (not fitted)")
            continue
        se = f"{c.standard_error_deg:8.2f}°" if c.standard_error_deg == c.standard_error_deg else "     n/a "
        print(f"  {c.coefficient}  {c.value_deg:+8.2f}°  {se}  {c.inflation:8.2f}   {c.meaning}")
    print(f"condition number {result.condition_number:.2f}, rms fit residual {result.rms_fit_residual_deg:.2f}°")
    print(
        f"largest residual after B and C: {result.max_residual_deg:.2f}° on {result.max_residual_heading_deg:05.1f} "
        f"({result.max_residual_row}); limit {result.limit_deg:g}°: {result.verdict.upper()}"
    )
    print("correction card" + (" (after B and C removed)" if args.compensated else "") + ":")
    print("  for magnetic  " + " ".join(result.card.for_magnetic))
    print("  steer compass " + " ".join(result.card.steer_compass))
    if args.output:
        write_csv(args.output, result.summary_row())
    if args.card:
        write_csv(args.card, result.card)
    if args.residuals:
        write_csv(args.residuals, result.readings)
    if args.plot or args.card_plot:
        from ..plots.swing import card_figure, deviation_figure, save_figure

        if args.plot:
            save_figure(deviation_figure(result), args.plot)
        if args.card_plot:
            save_figure(card_figure(result), args.card_plot)
    return 0
