"""Run a scenario's jobs, write their files and the page into a staging folder, switch it in.

See :mod:`headingref.report` for what the report holds and :mod:`headingref.report.content`
for what a job returns.
"""

from __future__ import annotations

import datetime as _dt
import json
import os
import sys
import warnings
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from types import ModuleType

import pandas as pd

from ..errors import HeadingrefError, HeadingrefWarning, InputError
from ..io import write_csv, write_text
from ..model import load_model
from ..routes import _json_value
from ..scenario import Scenario, load_scenario
from . import compare, compass_bases, error_budget, navaids, routes, runways, swing, zones
from .content import Section, SummaryItem
from .context import Context
from .folder import check_out_dir, staged
from .render import SUMMARY_TOPICS, render_page

REPORT_FILE = "report.html"

# The jobs in page order, each with the test of whether the scenario asks for it. Routes come
# first: the zone map draws them.
JOBS: tuple[tuple[ModuleType, Callable[[Scenario], bool]], ...] = (
    (routes, lambda sc: sc.routes is not None),
    (zones, lambda sc: sc.zones is not None),
    (error_budget, lambda sc: sc.error_budget is not None or sc.zones is not None),
    (compass_bases, lambda sc: sc.compass_bases is not None),
    (swing, lambda sc: sc.swing is not None),
    (runways, lambda sc: sc.runways is not None),
    (navaids, lambda sc: sc.navaids is not None),
    # after routes (its samples are compared) and runways (the designators by model)
    (compare, lambda sc: sc.compare_models is not None),
)


@dataclass
class ReportResult:
    """What :func:`build_report` produced.

    ``html`` is the report's path; ``files`` every file written (in ``out_dir``); ``summary``
    the summary lines by topic as plain text (``routes``, ``bases``, ``runways``, ``navaids``,
    ``swing``, ``models``, ``zones``); ``failed`` the sections that could not be made and why (shown in the report
    too); ``tables`` the main result tables by name; ``sections`` what each job returned.
    """

    out_dir: Path
    html: Path
    files: list[Path]
    summary: dict[str, list[str]]
    failed: dict[str, str] = field(default_factory=dict)
    tables: dict[str, pd.DataFrame] = field(default_factory=dict, repr=False)
    sections: list[Section] = field(default_factory=list, repr=False)

    def summary_text(self) -> str:
        """The one-minute summary as plain text, one topic per heading."""
        lines = [f"section failed: {key}: {why}" for key, why in self.failed.items()]
        for key, title in SUMMARY_TOPICS:
            if self.summary.get(key):
                lines.append(f"{title}:")
                lines += [f"  - {line}" for line in self.summary[key]]
        return "\n".join(lines)


def _run_job(ctx: Context, module: ModuleType, caught: list) -> Section:
    """One job's Section. Bad input stops the report (the error names the section); any other
    failure becomes a failed section with its reason, shown in the page and the result."""
    with warnings.catch_warnings(record=True) as seen:
        warnings.simplefilter("always")
        try:
            section = module.job(ctx)
        except HeadingrefError as exc:
            raise type(exc)(f"{module.TITLE}: {exc}") from None
        except Exception as exc:  # a library change or a bug: shown as a failed section, never dropped
            section = Section(module.KEY, module.TITLE, module.TOPIC, failed=f"{type(exc).__name__}: {exc}")
    texts = list(dict.fromkeys((w.category, str(w.message)) for w in seen))
    section.notes += [f"{category.__name__}: {text}" for category, text in texts]
    caught += [(category, f"{module.TITLE}: {text}") for category, text in texts]
    return section


def _write_files(stage: Path, sections: list[Section]) -> list[str]:
    names: list[str] = []
    for section in sections:
        for item in section.files:
            if item.name in names or item.name == REPORT_FILE:
                raise HeadingrefError(f"report section {section.title!r} writes {item.name!r} a second time")
            if isinstance(item.content, pd.DataFrame):
                write_csv(stage / item.name, item.content)
            elif isinstance(item.content, str):
                write_text(stage / item.name, item.content)
            else:
                write_text(stage / item.name, json.dumps(item.content, separators=(",", ":"), default=_json_value))
            names.append(item.name)
    return names


def build_report(scenario: Scenario | str | os.PathLike, out_dir: str | os.PathLike, progress: bool = True) -> ReportResult:
    """Run every job of a scenario and write the HTML report, CSV and GeoJSON files.

    Parameters
    ----------
    scenario : Scenario or path of a scenario TOML file
    out_dir : the report folder. Created if missing; an earlier report there is replaced as a
        whole (new folder switched in, old one deleted). Refused: a folder that holds any of the
        scenario's inputs, or anything that is not an earlier report.
    progress : show a progress bar on stderr

    Returns
    -------
    ReportResult

    Raises
    ------
    InputError
        Bad arguments, scenario or input files (the message names the section, file and row), a
        report folder that cannot be used or written; the report folder is then left as it was.
    """
    from tqdm.auto import tqdm

    if isinstance(scenario, Scenario):
        sc = scenario
    elif isinstance(scenario, (str, os.PathLike)):
        sc = load_scenario(scenario)
    else:
        raise InputError(f"scenario = {scenario!r}: give a Scenario or the path of a scenario TOML file")
    real = check_out_dir(out_dir, sc.input_paths(), REPORT_FILE)
    jobs = [module for module, wanted in JOBS if wanted(sc)]
    caught: list[tuple[type[Warning], str]] = []
    sections: list[Section] = []
    steps = tqdm(total=len(jobs) + 2, desc="headingref report", unit="step", file=sys.stderr, disable=not progress, leave=False)
    with steps, staged(real) as stage:
        steps.set_postfix_str("field model")
        ctx = Context(sc, load_model(sc.model) if sc.model is not None else load_model())
        steps.update()
        for module in jobs:
            steps.set_postfix_str(module.KEY)
            sections.append(_run_job(ctx, module, caught))
            steps.update()
        steps.set_postfix_str("HTML")
        names = _write_files(stage, sections)
        generated = _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%d %H:%M UTC")
        write_text(stage / REPORT_FILE, render_page(sc, sections, [*names, REPORT_FILE], generated))
        steps.update()
    for section in sections:
        if section.failed:
            caught.append((HeadingrefWarning, f"{section.title}: section not made: {section.failed}"))
    for category, text in caught:
        warnings.warn(text, category, stacklevel=2)
    summary = {key: [str(item) for s in sections if s.topic == key for item in s.summary] for key, _ in SUMMARY_TOPICS}
    return ReportResult(
        out_dir=real, html=real / REPORT_FILE, files=[real / n for n in [*names, REPORT_FILE]], summary=summary,
        failed={s.key: s.failed for s in sections if s.failed}, tables={k: v for s in sections for k, v in s.tables.items()},
        sections=sections,
    )


__all__ = ["REPORT_FILE", "JOBS", "ReportResult", "SummaryItem", "build_report"]
