"""lookfar.viewshed against the CLI (same run class: the cells must be equal byte for byte, the
summary equal) and against a terrain with a known answer."""
import numpy as np
import pytest

from conftest import (assert_same_cells, cli_json, comparable, raster)

# Points of test_rasters/README.md.
MERROWDUN = (425087.5, 5597212.5)  # demo_coast.tif, Merrowdun Hill (demo_sites.csv)
CONE_TOP = (431505.0, 5588495.0)   # cone.tif, the middle cell


@pytest.mark.parametrize("dem, point, options", [
    ("demo_coast.tif", MERROWDUN, {"observer_height": 25, "target_height": 2}),
    ("demo_coast.tif", MERROWDUN, {"reach": 4000, "refraction": 0.25, "method": "reference"}),
    ("cone.tif", (430505.0, 5589495.0), {"earth_model": "sphere", "earth_radius": 6000000}),
    ("nodata_hole.tif", (430105.0, 5589895.0), {"observer_height": 3}),
    ("geographic_hills.tif", (11.1, 47.0), {"observer_height": 10, "earth_model": "flat"}),
])
def test_viewshed_equals_cli(lookfar, tmp_path, dem, point, options):
    flags = []
    for key, value in options.items():
        flags += ["--" + key.replace("_", "-"), str(value)]
    cli = cli_json("viewshed", raster(dem), "--observer", "%r,%r" % point, *flags,
                   "-o", tmp_path / "v.tif", "--margin", tmp_path / "m.tif",
                   "--angle", tmp_path / "a.tif")
    r = lookfar.viewshed(raster(dem), observer=point, margin=True, angle=True, **options)
    assert_same_cells(r.visible, tmp_path / "v.tif")
    assert_same_cells(r.margin, tmp_path / "m.tif")
    assert_same_cells(r.angle, tmp_path / "a.tif")
    assert comparable(r.summary) == comparable(cli)
    assert r.count is None


def test_viewshed_of_sites_equals_cli(lookfar, tmp_path):
    sites = raster("demo_sites.csv")
    cli = cli_json("viewshed", raster("demo_coast.tif"), "--sites", sites, "--reach", 5000,
                   "-o", tmp_path / "c.tif")
    r = lookfar.viewshed(raster("demo_coast.tif"), sites=sites, reach=5000)
    assert_same_cells(r.count, tmp_path / "c.tif")
    assert comparable(r.summary) == comparable(cli)
    assert r.visible is None
    # The same sites given as a list of rows (demo_sites.csv's first two).
    rows = [("Skerrow Head", 422937.5, 5598337.5, 15), ("Saltinghow Point", 422837.5, 5594512.5)]
    by_rows = lookfar.viewshed(raster("demo_coast.tif"), sites=rows, reach=5000)
    names = [o["name"] for o in by_rows.summary["observers"]]
    assert names == ["Skerrow Head", "Saltinghow Point"]
    assert [o["height_m"] for o in by_rows.summary["observers"]] == [15, 1.7]


def test_output_is_written_as_by_the_cli(lookfar, tmp_path):
    cli_json("viewshed", raster("demo_coast.tif"), "--observer", "%r,%r" % MERROWDUN,
             "-o", tmp_path / "cli.tif")
    out = tmp_path / "py.tif"
    r = lookfar.viewshed(raster("demo_coast.tif"), observer=MERROWDUN, output=out)
    assert_same_cells(r.visible, tmp_path / "cli.tif")
    assert_same_cells(r.visible, out)
    assert r.summary["outputs"] == {"visibility": str(out)}
    assert sorted(p.name for p in tmp_path.iterdir()) == ["cli.tif", "py.tif"]


def test_read_dem_gives_the_cells_the_cli_reads(lookfar):
    dem = lookfar.read_dem(raster("cone.tif"))
    assert dem.array.dtype == np.float32 and dem.shape == (301, 301)
    # cone.tif: z = 300 (1 - r/1500) at the middle cell r = 0 (test_rasters/README.md).
    assert dem.array[150, 150] == 300.0
    assert dem.geotransform == (430000.0, 10.0, 0.0, 5590000.0, 0.0, -10.0)
    assert "UTM zone 30N" in dem.crs
    assert not dem.array.flags.writeable
    hole = lookfar.read_dem(raster("nodata_hole.tif")).array
    # Rows and columns 45-54 hold the no-data value (README): NaN here.
    assert np.isnan(hole[45:55, 45:55]).all() and not np.isnan(hole[:45]).any()


def test_read_dem_converts_feet(lookfar):
    # twin_usft.tif holds the metre twin's terrain in US survey feet (README): same metres.
    metres = lookfar.read_dem(raster("twin_metres.tif")).array
    feet = lookfar.read_dem(raster("twin_usft.tif")).array
    assert np.allclose(metres, feet, atol=1e-4)
    as_stored = lookfar.read_dem(raster("twin_usft.tif"), z_unit="m").array
    assert np.allclose(as_stored, metres * 3937 / 1200, atol=1e-3)


def test_from_array_gives_the_result_of_the_file(lookfar):
    wall = lookfar.read_dem(raster("wall.tif"))
    copy = lookfar.Dem.from_array(np.array(wall.array), wall.geotransform, "EPSG:32630")
    assert copy.path is None
    point = (430505.0, 5589005.0)
    a = lookfar.viewshed(wall, observer=point, observer_height=60, margin=True)
    b = lookfar.viewshed(copy, observer=point, observer_height=60, margin=True)
    assert a.visible.tobytes() == b.visible.tobytes()
    assert a.margin.tobytes() == b.margin.tobytes()
    assert b.summary["dem"]["path"] is None
    assert comparable(a.summary)["observers"] == comparable(b.summary)["observers"]


def test_wall_casts_the_shadow_of_similar_triangles(lookfar):
    # A wall 50 m high and one 10 m cell thick on flat ground; an eye h = 77 m above the ground
    # a = 600 m west of it. On a flat Earth (no curvature, k = 0) the sightline over the wall top
    # meets the ground again a*50/(h-50) = 1111.1 m east of the wall (similar triangles; the
    # wall.tif entry of test_rasters/README.md): cells 10 to 1110 m east of it are hidden, the
    # rest of the row visible. In the observer's row every sample sits on a cell centre, so the
    # rule of docs/design.md gives exactly this.
    z = np.zeros((21, 301), dtype=np.float64)
    z[:, 100] = 50.0
    gt = (500000.0, 10.0, 0.0, 6000000.0, 0.0, -10.0)
    dem = lookfar.Dem.from_array(z, gt, "EPSG:32630")
    row = 10
    observer = (500000.0 + 40 * 10 + 5, 6000000.0 - row * 10 - 5)  # column 40, a = 600 m
    r = lookfar.viewshed(dem, observer=observer, observer_height=77, earth_model="flat",
                         refraction=0.0)
    east = (np.arange(301) - 100) * 10.0  # metres east of the wall
    expected = np.where((east > 0) & (east < 600 * 50 / 27), 0, 1).astype(np.uint8)
    assert r.visible[row].tolist() == expected.tolist()
    assert r.summary["observers"][0]["ground_m"] == 0.0


def test_from_array_nodata_becomes_nan_and_no_data_in_the_result(lookfar):
    z = np.full((20, 30), 10.0, dtype=np.float32)
    z[5, 7] = -9999.0
    dem = lookfar.Dem.from_array(z, (0.0, 5.0, 0.0, 100.0, 0.0, -5.0), "EPSG:32630",
                                 nodata=-9999.0)
    assert np.isnan(dem.array[5, 7]) and np.isnan(dem.array).sum() == 1
    r = lookfar.viewshed(dem, observer=(52.5, 52.5))
    # docs/design.md: a target on no-data is no data (255) in the output.
    assert r.visible[5, 7] == 255
    assert (r.visible == 1).sum() == 20 * 30 - 1


def test_progress_is_called_with_growing_fractions(lookfar):
    seen = []
    lookfar.viewshed(raster("demo_coast.tif"), observer=MERROWDUN, method="reference",
                     threads=1, progress=seen.append)
    assert seen and seen[-1] == 1.0
    assert all(0 < f <= 1 for f in seen)
    assert seen == sorted(seen) and len(set(seen)) == len(seen)
