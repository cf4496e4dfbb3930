"""One-off conversion of the Natural Earth 1:110m coastline shapefile to compact GeoJSON.

Run once by a maintainer; headingref never runs it and never reads the shapefile at run time.
Needs pyshp (``pip install pyshp``), which is *not* a dependency of headingref.

    python tools/convert_coastline.py /path/to/ne_110m_coastline.zip data/ne_110m_coastline.geojson

Each shapefile part becomes one GeoJSON LineString feature (properties: ``scalerank``);
coordinates are rounded to 4 decimals (about 11 m, far below the 1:110m source's own
accuracy) and consecutive points made identical by the rounding are dropped.
"""

from __future__ import annotations

import io
import json
import os
import sys
import zipfile
from pathlib import Path

import shapefile  # pyshp

DECIMALS = 4


def convert(zip_path: str | os.PathLike, out_path: str | os.PathLike) -> int:
    with zipfile.ZipFile(zip_path) as archive:
        stem = next(n[:-4] for n in archive.namelist() if n.endswith(".shp"))
        version = archive.read(f"{stem}.VERSION.txt").decode().strip() if f"{stem}.VERSION.txt" in archive.namelist() else ""
        reader = shapefile.Reader(
            shp=io.BytesIO(archive.read(f"{stem}.shp")),
            shx=io.BytesIO(archive.read(f"{stem}.shx")),
            dbf=io.BytesIO(archive.read(f"{stem}.dbf")),
        )
        features = []
        for shape_record in reader.iterShapeRecords():
            shape, record = shape_record.shape, shape_record.record
            bounds = list(shape.parts) + [len(shape.points)]
            for start, stop in zip(bounds[:-1], bounds[1:], strict=True):
                coords: list[list[float]] = []
                for lon, lat in shape.points[start:stop]:
                    point = [round(min(max(lon, -180.0), 180.0), DECIMALS), round(lat, DECIMALS)]
                    if not coords or point != coords[-1]:
                        coords.append(point)
                if len(coords) >= 2:
                    features.append(
                        {
                            "type": "Feature",
                            "properties": {"scalerank": int(record["scalerank"])},
                            "geometry": {"type": "LineString", "coordinates": coords},
                        }
                    )
    collection = {
        "type": "FeatureCollection",
        "name": f"{stem} (Natural Earth {version}, made with Natural Earth, public domain)",
        "features": features,
    }
    text = json.dumps(collection, separators=(",", ":"))
    out_path = Path(out_path)
    tmp = out_path.with_name(f".{out_path.name}.tmp")
    tmp.write_text(text + "\n", encoding="utf-8")
    os.replace(tmp, out_path)
    return len(features)


if __name__ == "__main__":
    if len(sys.argv) != 3:
        sys.exit("usage: python tools/convert_coastline.py NE_ZIP OUT_GEOJSON")
    count = convert(sys.argv[1], sys.argv[2])
    print(f"wrote {count} lines to {sys.argv[2]}")
