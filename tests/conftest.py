"""Shared fixtures: the demo scenario's files and a writer of small CSV inputs.

Reference values from outside libraries live in ``tests/reference.py`` (import them with
``from reference import ppigrf_declination``; pytest puts this folder on ``sys.path``).
"""

from __future__ import annotations

import csv
from collections.abc import Callable, Sequence
from pathlib import Path

import pytest

TESTS = Path(__file__).resolve().parent
DEMO_DIR = TESTS.parent / "data" / "demo"
TEST_DATA = TESTS / "data"


@pytest.fixture(scope="session")
def demo_dir() -> Path:
    """The invented demo scenario's folder (data/demo)."""
    return DEMO_DIR


@pytest.fixture(scope="session")
def demo_scenario() -> Path:
    """The demo scenario file, data/demo/scenario.toml."""
    return DEMO_DIR / "scenario.toml"


@pytest.fixture
def write_csv(tmp_path: Path) -> Callable[..., Path]:
    """``write_csv(name, header, rows)`` or ``write_csv(name, text)``: a CSV file in ``tmp_path``, UTF-8."""

    def write(name: str, header: Sequence[str] | str, rows: Sequence[Sequence] = ()) -> Path:
        path = tmp_path / name
        if isinstance(header, str):
            path.write_text(header, encoding="utf-8")
            return path
        with path.open("w", newline="", encoding="utf-8") as fh:
            writer = csv.writer(fh, lineterminator="\n")
            writer.writerow(header)
            writer.writerows(rows)
        return path

    return write
