"""A plain (non-editable) install carries what the package reads at run time.

The wheel is built from this checkout with pip (PEP 517 through setuptools) and its file list
checked: the coastline, the whole invented demo scenario, the report's templates and stylesheet,
and the PEP 561 ``py.typed`` marker. The package finds its data through importlib.resources, not
through the checkout's top-level ``data`` (a link to ``headingref/data``).
"""

from __future__ import annotations

import subprocess
import sys
import zipfile
from pathlib import Path

from headingref.notices import DATA_DIR

ROOT = Path(__file__).resolve().parent.parent


def test_wheel_carries_the_package_data(tmp_path):
    subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "-q", "-w", str(tmp_path),
                    str(ROOT)], check=True, capture_output=True, timeout=300)
    (wheel,) = tmp_path.glob("headingref-*.whl")
    names = set(zipfile.ZipFile(wheel).namelist())
    shipped = {f"headingref/data/{p.relative_to(DATA_DIR).as_posix()}" for p in DATA_DIR.rglob("*") if p.is_file()}
    assert "headingref/data/demo/scenario.toml" in shipped and "headingref/data/ne_110m_coastline.geojson" in shipped
    assert shipped <= names, f"missing from the wheel: {sorted(shipped - names)}"
    assert {"headingref/py.typed", "headingref/report/static/report.css",
            "headingref/report/templates/report.html.j2"} <= names


def test_data_is_found_inside_the_package():
    assert DATA_DIR.resolve() == (ROOT / "headingref" / "data").resolve()
    assert (DATA_DIR / "demo" / "scenario.toml").is_file()
