"""lookfar.horizon and lookfar.horizon_at against the CLI: the same run class (HorizonRun), so
the same cells (the arrays hold NaN where the rasters hold -9999), the same CSV bytes and the
same summary."""
import numpy as np
import pytest

from conftest import band_bytes, cli_json, cli_sentence, comparable, raster

DEMO = raster("demo_coast.tif")
HILLS = raster("geographic_hills.tif")
# The demo's observer point of the CLI tests (test_rasters/README.md: on the coastal hills).
SPOT = (425087.5, 5597212.5)


def cells_as_python(path, bands):
    """Every band of a horizon raster as the module returns it: -9999 (no data) as NaN."""
    cells = np.stack([band_bytes(path, b + 1) for b in range(bands)])
    cells[cells == -9999] = np.nan
    return cells


def assert_same_bits(array, expected):
    assert array.dtype == np.float32 and expected.dtype == np.float32
    assert array.shape == expected.shape
    assert array.tobytes() == expected.tobytes()


@pytest.mark.parametrize("dem, directions, reach", [(DEMO, 8, 3000), (HILLS, 5, None)])
def test_horizon_equals_cli(lookfar, tmp_path, dem, directions, reach):
    reach_args = ["--reach", reach] if reach else []
    cli = cli_json("horizon", dem, "-o", tmp_path / "a.tif", "--distance", tmp_path / "d.tif",
                   "--svf", tmp_path / "s.tif", "--dip", tmp_path / "p.tif", "--directions",
                   directions, *reach_args)
    r = lookfar.horizon(dem, directions=directions, reach=reach, distance=True, svf=True,
                        dip=True)
    assert_same_bits(r.angle, cells_as_python(tmp_path / "a.tif", directions))
    assert_same_bits(r.distance, cells_as_python(tmp_path / "d.tif", directions))
    assert_same_bits(r.svf, cells_as_python(tmp_path / "s.tif", 1)[0])
    assert_same_bits(r.dip, cells_as_python(tmp_path / "p.tif", 1)[0])
    assert comparable(r.summary) == comparable(cli)
    assert r.summary["horizon"]["directions"] == directions
    rows, cols = band_bytes(dem).shape
    assert r.angle.shape == (directions, rows, cols)


def test_horizon_output_writes_the_cli_raster_and_one_direction_keeps_three_axes(lookfar,
                                                                                 tmp_path):
    cli_json("horizon", HILLS, "-o", tmp_path / "cli.tif", "--directions", 1)
    r = lookfar.horizon(HILLS, directions=1, output=tmp_path / "py.tif")
    assert r.angle.shape == (1, 200, 240)  # test_rasters/README.md: 240 columns × 200 rows
    assert band_bytes(tmp_path / "py.tif").tobytes() == band_bytes(tmp_path / "cli.tif").tobytes()
    assert r.summary["outputs"]["angle"] == str(tmp_path / "py.tif")
    assert r.distance is None and r.svf is None and r.dip is None


def test_horizon_in_tiles_gives_the_same_cells(lookfar, tmp_path):
    # demo_coast.tif resampled to 1000 × 800 cells: over a 32 MiB budget, as in
    # tests/cli/HorizonTilesCliTest.cpp.
    from osgeo import gdal
    dem = str(tmp_path / "coast_1000.tif")
    gdal.Translate(dem, DEMO, width=1000, height=800, resampleAlg="bilinear",
                   creationOptions=["TILED=YES"])
    whole = lookfar.horizon(dem, directions=7, reach=1000, svf=True)
    tiled = lookfar.horizon(dem, directions=7, reach=1000, svf=True, memory="32M")
    assert "tiles" not in whole.summary["horizon"]
    assert tiled.summary["horizon"]["tiles"]["count"] > 1
    assert_same_bits(tiled.angle, whole.angle)
    assert_same_bits(tiled.svf, whole.svf)


def test_horizon_at_equals_cli(lookfar, tmp_path):
    cli = cli_json("horizon", DEMO, "--at", "%r,%r" % SPOT, "--step", 2, "--reach", 8000,
                   "--csv", tmp_path / "cli.csv", "--plot", tmp_path / "cli.svg")
    r = lookfar.horizon_at(DEMO, SPOT, step=2, reach=8000, csv=tmp_path / "py.csv",
                           plot=tmp_path / "py.svg")
    assert (tmp_path / "py.csv").read_bytes() == (tmp_path / "cli.csv").read_bytes()
    assert (tmp_path / "py.svg").read_bytes() == (tmp_path / "cli.svg").read_bytes()
    assert comparable(r.summary) == comparable(cli)
    expected = np.genfromtxt(tmp_path / "cli.csv", delimiter=",", names=True)
    assert np.array_equal(r.azimuth, expected["azimuth_deg"])
    assert np.array_equal(r.angle, expected["angle_deg"], equal_nan=True)
    assert np.array_equal(r.distance, expected["distance_m"], equal_nan=True)
    # The DEM's edge within the 8 km reach in some directions, beyond it in others.
    assert np.array_equal(r.edge_distance, expected["edge_distance_m"], equal_nan=True)
    assert np.isnan(r.edge_distance).any() and np.isfinite(r.edge_distance).any()
    assert len(r.azimuth) == 180 and r.azimuth[1] == 2.0
    assert r.summary["horizon"]["directions"] == 180


def test_horizon_at_on_a_geographic_dem(lookfar):
    cli = cli_json("horizon", HILLS, "--at", "11.1,47.0", "--step", 5)
    r = lookfar.horizon_at(HILLS, (11.1, 47.0), step=5)
    assert comparable(r.summary) == comparable(cli)
    assert np.isfinite(r.angle).all() and len(r.angle) == 72


@pytest.mark.parametrize("cli_args, call, kwargs", [
    (["-o", "h.tif", "--directions", "0"], "horizon", {"directions": 0}),
    (["-o", "h.tif", "--memory", "lots"], "horizon", {"memory": "lots"}),
    (["--at", "425087.5,5597212.5", "--step", "100"], "horizon_at",
     {"at": SPOT, "step": 100}),
])
def test_bad_values_raise_usage_error_with_the_cli_sentence(lookfar, tmp_path, cli_args, call,
                                                            kwargs):
    args = [a if a != "h.tif" else str(tmp_path / a) for a in cli_args]
    code, sentence = cli_sentence("horizon", DEMO, *args)
    assert code == 2
    with pytest.raises(lookfar.UsageError) as e:
        getattr(lookfar, call)(DEMO, **kwargs)
    assert str(e.value) == sentence
    assert list(tmp_path.iterdir()) == []


def test_horizon_at_outside_the_dem_raises_input_error(lookfar):
    code, sentence = cli_sentence("horizon", DEMO, "--at", "1,2")
    assert code == 3
    with pytest.raises(lookfar.InputError) as e:
        lookfar.horizon_at(DEMO, (1, 2))
    assert str(e.value) == sentence


def test_horizon_of_a_wall_from_a_numpy_terrain(lookfar):
    # A wall 50 m high on flat ground (flat Earth, no refraction): looking east (band 1 of 4,
    # azimuth 90°) from a cell d metres west of it, the horizon is the wall's top,
    # atan((50 - 1.7) / d) above the eye's horizontal (plain trigonometry, no source needed).
    z = np.zeros((21, 31))
    z[:, 20] = 50.0  # 10 m cells, the wall in column 20
    wall = lookfar.Dem.from_array(z, (500000, 10, 0, 6000000, 0, -10), "EPSG:32630")
    r = lookfar.horizon(wall, directions=4, earth_model="flat", refraction=0, distance=True)
    d = (20 - np.arange(20)) * 10.0
    assert np.allclose(r.angle[1, 10, :20], np.degrees(np.arctan((50 - 1.7) / d)), atol=1e-4)
    assert np.allclose(r.distance[1, 10, :20], d, atol=1e-3)
    # The last column looks east past the DEM's edge: no terrain, NaN (-9999 in the raster).
    assert np.isnan(r.angle[1, :, 30]).all()


def test_no_terrain_is_said_not_hidden(lookfar):
    # Issue 12 item 11: a spot on a one-cell DEM has no terrain in any direction; a DEM of no data
    # gives rasters of no data, with a warning (the CLI's stderr sentence).
    one = lookfar.Dem.from_array(np.array([[12.0]]), (500000, 10, 0, 6000000, 0, -10),
                                 "EPSG:32630")
    r = lookfar.horizon_at(one, (500005, 5999995), step=10)
    assert r.summary["horizon"]["no_terrain"].startswith("there is no terrain within the DEM")
    assert np.isnan(r.angle).all() and len(r.azimuth) == 36
    empty = lookfar.Dem.from_array(np.full((5, 5), np.nan), (500000, 10, 0, 6000000, 0, -10),
                                   "EPSG:32630")
    with pytest.warns(UserWarning, match="every cell is no data, so no cell has a horizon"):
        g = lookfar.horizon(empty, directions=4)
    assert np.isnan(g.angle).all()
