"""The one-command report: a scenario in, a self-contained HTML report and data files out.

:func:`build_report` runs every job a scenario (see :mod:`headingref.scenario`) asks for
through the library, and writes into ``out_dir``:

- ``report.html``: one self-contained page (inline CSS, figures embedded as base64 PNG, no
  external resources) opening with the safety caution and a one-minute summary (which legs
  lose a usable magnetic reference and where, which compass bases need a resurvey and when,
  which runways need redesignation and when), then a section per job with tables and figures;
- CSV tables (route legs and samples with the error budget, zone areas, poles, compass base
  upkeep and setting-out, swing coefficients, residuals and card, runway check and changes,
  VOR station declination, the model comparison) and the print-ready swing card
  ``swing_card.html``;
- GeoJSON (RFC 7946): the routes (legs cut at the antimeridian, stretches without a usable
  magnetic reference) and the weak-field zones.

How it is made:

- one module per job (:mod:`~headingref.report.routes`, :mod:`~headingref.report.zones`,
  :mod:`~headingref.report.error_budget`, :mod:`~headingref.report.compass_bases`,
  :mod:`~headingref.report.swing`, :mod:`~headingref.report.runways`,
  :mod:`~headingref.report.navaids`, :mod:`~headingref.report.compare`), each with ``KEY``,
  ``TITLE``, ``TOPIC`` and ``job(context) -> Section``: plain data (summary items, parts with
  text, tables and figures, files, notes) defined in :mod:`headingref.report.content`. Figures
  come from :mod:`headingref.plots`. A new job is one such module added to
  :data:`headingref.report.build.JOBS`;
- :mod:`headingref.report.render`: jinja2 templates with autoescaping and the stylesheet, both
  package resources (``templates/``, ``static/``);
- :mod:`headingref.report.folder`: the report folder is built beside ``out_dir`` and switched
  in as a whole; folders holding the scenario's inputs are refused.

Bad input stops the report with one line naming the section (nothing is written). Any other
failure of a job is shown as a failed section with the reason (in the summary and the section)
and in :attr:`ReportResult.failed`. A progress bar (tqdm, on stderr) shows the steps.

Public API: :func:`build_report`, :class:`ReportResult`, :data:`REPORT_FILE`.

>>> from headingref.report import build_report  # doctest: +SKIP
>>> result = build_report("my_study.toml", "my_study_report", progress=False)  # doctest: +SKIP
>>> result.html.name  # doctest: +SKIP
'report.html'
"""

from .build import REPORT_FILE, ReportResult, build_report

__all__ = ["REPORT_FILE", "ReportResult", "build_report"]
