"""Maps read at a glance: framed on the route, dip pole marked, labels upright and apart, honest legends.

Outside sources: pyproj (the map projection's inverse, to read the drawn positions back as
lon/lat), ppigrf (an independent IGRF-14 synthesis: H is near zero where the dip-pole star is
drawn, and whether the view holds a blackout or caution zone), matplotlib's own renderer (the
label boxes as drawn). Upright text: a label rotated beyond +-90 degrees reads upside down
(common practice in cartography).
"""

from __future__ import annotations

import io

import matplotlib
import numpy as np
import pandas as pd
import ppigrf
import pytest

matplotlib.use("Agg")

import headingref  # noqa: E402
from headingref.elements import BLACKOUT_NT, CAUTION_NT  # noqa: E402
from headingref.plots import basemap  # noqa: E402
from headingref.plots.route import plot_route_map  # noqa: E402
from headingref.plots.zones import plot_error_map, plot_zone_map  # noqa: E402

DATE = "2026-12-02"
ROUTE_65N = [("ALFA", 64.0, -22.0), ("BRAVO", 66.0, -40.0), ("CHARL", 65.5, -60.0)]
ROUTE_POLE = [("ALFA", 69.0, 18.0), ("BRAVO", 78.2, 15.6), ("CHARL", 82.0, -80.0), ("DELT", 70.0, -150.0)]


def _h_ppigrf(lon, lat) -> np.ndarray:
    east, north, _ = ppigrf.igrf(np.asarray(lon, float), np.asarray(lat, float), 0.0, pd.Timestamp(DATE))
    return np.hypot(np.ravel(east), np.ravel(north))


def _drawn(fig) -> None:
    fig.savefig(io.BytesIO(), format="png", dpi=60, bbox_inches="tight")  # as save_figure writes it


def _map_axes(fig):
    return next(ax for ax in fig.axes if any(t.get_gid() == basemap.LABEL_GID for t in ax.texts))


def _to_map(result):
    """The drawn map's projection, rebuilt from the route's samples the way plot_route_map chooses it."""
    from headingref.plots.route import choose_map

    kind, extent, central_lon = choose_map(result.samples.lat_deg.to_numpy(), result.samples.lon_deg.to_numpy())
    return basemap._transformer(basemap.map_crs(kind, extent, central_lon=central_lon))


def _assert_labels_apart(fig) -> int:
    renderer = basemap._renderer(fig)
    count = 0
    for ax in fig.axes:
        boxes = [t.get_window_extent(renderer) for t in ax.texts if t.get_gid() == basemap.LABEL_GID and t.get_visible()]
        count += len(boxes)
        for i, a in enumerate(boxes):
            for b in boxes[i + 1:]:
                assert not a.overlaps(b), "two graticule labels overprint each other"
    return count


@pytest.fixture(scope="module")
def route_65n():
    return headingref.route(ROUTE_65N, DATE)


@pytest.fixture(scope="module")
def route_pole():
    return headingref.route(ROUTE_POLE, DATE)


def test_route_at_65n_is_framed_with_margin_and_clear_of_the_legend(route_65n):
    fig = plot_route_map(route_65n, mesh=40)
    _drawn(fig)
    ax = _map_axes(fig)
    to_map = _to_map(route_65n)
    x, y = to_map.transform(route_65n.samples.lon_deg.to_numpy(), route_65n.samples.lat_deg.to_numpy())
    x0, x1 = ax.get_xlim()
    y0, y1 = ax.get_ylim()
    span = max(np.ptp(x), np.ptp(y))
    # inside the view with at least 5% of the route's extent to every edge
    assert x.min() - x0 > 0.05 * span and x1 - x.max() > 0.05 * span
    assert y.min() - y0 > 0.05 * span and y1 - y.max() > 0.05 * span
    # ... and the route fills the view: its extent is over half the view's larger side (the old cap map: a fifth)
    assert span > 0.5 * max(x1 - x0, y1 - y0)
    # the legend sits outside the map, so it hides no part of the route
    renderer = basemap._renderer(fig)
    legend_box = ax.get_legend().get_window_extent(renderer)
    assert legend_box.y1 <= ax.get_window_extent(renderer).y0
    assert _assert_labels_apart(fig) >= 3


def test_route_legend_lists_only_what_is_drawn(route_65n):
    fig = plot_route_map(route_65n, mesh=40)
    ax = _map_axes(fig)
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    # ppigrf on a mesh of the view: at 64-66 N between 22 and 60 W, H is far above the caution
    # threshold, and the dip pole (near 85 N) is outside: no zone and no pole entry
    to_map = _to_map(route_65n)
    gx, gy = np.meshgrid(np.linspace(*ax.get_xlim(), 12), np.linspace(*ax.get_ylim(), 12))
    lon, lat = to_map.transform(gx.ravel(), gy.ravel(), direction="INVERSE")
    assert _h_ppigrf(lon, lat).min() > CAUTION_NT
    assert labels[0].startswith("route")
    assert not any("caution" in t or "blackout" in t or "dip pole" in t for t in labels)
    # the isogonic entry says "west dashed" only when west (negative) lines are drawn: here every
    # variation is west (about 14 to 30 W; ppigrf at the waypoints)
    east, north, _ = ppigrf.igrf(np.array([-22.0, -60.0]), np.array([64.0, 65.5]), 0.0, pd.Timestamp(DATE))
    assert np.all(np.degrees(np.arctan2(np.ravel(east), np.ravel(north))) < 0)
    assert any(t.startswith("isogonic") and "west dashed" in t for t in labels)


def test_polar_route_marks_the_dip_pole_where_ppigrf_has_no_horizontal_field(route_pole):
    fig = plot_route_map(route_pole, mesh=60)
    _drawn(fig)
    ax = _map_axes(fig)
    stars = [c for c in ax.collections if c.get_label().startswith("dip pole")]
    assert len(stars) == 1
    x, y = stars[0].get_offsets()[0]
    lon, lat = _to_map(route_pole).transform(x, y, direction="INVERSE")
    # ppigrf: H at the drawn star is a few nT (it is 20,000-60,000 nT elsewhere); 200 nT is about 1 km off
    assert _h_ppigrf([lon], [lat])[0] < 200.0
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert any(t.startswith("dip pole") for t in labels)
    # this view holds both zones (ppigrf H at the star is below the blackout threshold)
    assert any(t.startswith("blackout") for t in labels) and any(t.startswith("caution") for t in labels)
    assert BLACKOUT_NT > 200.0
    # isogonic labels upright: rotation within +-90 degrees of horizontal (matplotlib gives 0..360)
    rotations = [t.get_rotation() for t in ax.texts if t.get_gid() != basemap.LABEL_GID and t.get_text().endswith(("E", "W", "°"))]
    assert rotations
    assert all(r <= 90.0 + 1e-6 or r >= 270.0 - 1e-6 for r in rotations)
    _assert_labels_apart(fig)


def test_dense_graticule_labels_are_thinned_not_overprinted():
    # 5-degree meridians on a cap: 72 labels round the edge, far more than fit at 7 pt
    ax, _ = basemap.map_axes("north", 60, lon_step=5.0, figsize=(4.0, 4.0))
    fig = ax.figure
    _drawn(fig)
    labels = [t for t in ax.texts if t.get_gid() == basemap.LABEL_GID]
    hidden = sum(not t.get_visible() for t in labels)
    assert hidden > 0 and hidden < len(labels)
    assert _assert_labels_apart(fig) > 8


def test_zone_and_error_maps_mark_the_dip_pole_and_keep_labels_apart():
    ds = headingref.zones("north", DATE, resolution_deg=2.0)
    fig = plot_zone_map(ds)
    _drawn(fig)
    ax = _map_axes(fig)
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert any(t.startswith("dip pole") for t in labels)
    assert _assert_labels_apart(fig) >= 6
    from headingref.detector import heading_error_grid

    fig = plot_error_map(heading_error_grid("south", DATE, resolution_deg=3.0))
    _drawn(fig)
    ax = _map_axes(fig)
    stars = [c for c in ax.collections if c.get_label().startswith("dip pole")]
    assert len(stars) == 1  # the south dip pole (about 64 S 135 E) lies in the south cap
    _assert_labels_apart(fig)


def test_zone_legend_omits_a_zone_with_no_area():
    # thresholds chosen so that only the lower band exists over the region (ppigrf: H there is
    # above 10,000 nT everywhere, below 60,000 nT): the empty band must not be listed
    ds = headingref.zones((50.0, 55.0, 0.0, 10.0), DATE, resolution_deg=1.0, thresholds=[1000.0, 60000.0],
                          labels=["weak", "strong"])
    lon, lat = np.meshgrid(np.arange(0.0, 10.1, 2.5), np.arange(50.0, 55.1, 2.5))
    h = _h_ppigrf(lon.ravel(), lat.ravel())
    assert h.min() > 10000.0 and h.max() < 60000.0
    fig = plot_zone_map(ds)
    labels = [t.get_text() for t in _map_axes(fig).get_legend().get_texts()]
    assert any(t.startswith("strong") for t in labels)
    assert not any(t.startswith("weak") for t in labels)


def test_frame_limits():
    to_map = basemap._transformer(basemap.map_crs("north"))
    lon, lat = np.array([-22.0, -60.0]), np.array([64.0, 65.5])
    x0, x1, y0, y1 = basemap.frame_limits(to_map, lon, lat, margin=0.1)
    x, y = to_map.transform(lon, lat)
    span = max(np.ptp(x), np.ptp(y))
    assert x0 <= x.min() - 0.1 * span + 1e-6 and x1 >= x.max() + 0.1 * span - 1e-6
    assert min(x1 - x0, y1 - y0) >= 0.6 * max(x1 - x0, y1 - y0) - 1e-6
    with pytest.raises(headingref.InputError, match="none of the points"):
        basemap.frame_limits(to_map, [0.0], [-90.0])  # the south pole is off the north polar map


def test_region_zone_map_lists_only_tracks_in_view():
    # the geomagnetic poles (about 80 N 73 W and 80 S 107 E; pyproj-projected below) lie outside a
    # region over the Chukchi and Beaufort seas; the dip-pole track of the 1990s passes through it
    tracks = headingref.pole_tracks(1990, 2030, 10)
    ds = headingref.zones((60.0, 85.0, 150.0, -120.0), DATE, resolution_deg=2.0)
    fig = plot_zone_map(ds, tracks=tracks)
    ax = _map_axes(fig)
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert len(labels) == len(set(labels))  # each entry once
    to_map = basemap._transformer(basemap.map_crs("region", (60.0, 85.0, 150.0, -120.0)))
    x0, x1 = ax.get_xlim()
    y0, y1 = ax.get_ylim()
    for kind, group in tracks.groupby("kind"):
        x, y = to_map.transform(group.lon.to_numpy(), group.lat.to_numpy())
        seen = bool(np.any((x >= x0) & (x <= x1) & (y >= y0) & (y <= y1)))
        listed = sum(t.startswith(f"{kind} pole") for t in labels)
        assert listed == int(seen), kind
    assert not any(t.startswith("geomagnetic") for t in labels) and any(t.startswith("dip pole") for t in labels)
