"""Errors raise the module's exceptions with the CLI's sentences, and leave nothing behind."""
import numpy as np
import pytest

from conftest import cli_sentence, raster

CONE_POINT = (430505.0, 5589495.0)  # cone.tif (test_rasters/README.md)


def assert_same_error(lookfar, error, code, dem, point, out, cli_args=(), **kwargs):
    """The CLI exits with `code` and the function raises `error` with the CLI's sentence."""
    cli_code, sentence = cli_sentence("viewshed", raster(dem), "--observer", "%r,%r" % point,
                                      *cli_args, "-o", out)
    assert cli_code == code
    with pytest.raises(getattr(lookfar, error)) as e:
        lookfar.viewshed(raster(dem), observer=point, output=out, **kwargs)
    assert str(e.value) == sentence


def test_exception_classes(lookfar):
    assert issubclass(lookfar.UsageError, ValueError)
    assert issubclass(lookfar.InputError, ValueError)
    assert issubclass(lookfar.OutputError, OSError)
    assert not issubclass(lookfar.UsageError, lookfar.InputError)


@pytest.mark.parametrize("cli_args, kwargs, error, code", [
    # An out-of-range value: exit 2 in the CLI, UsageError here.
    (["--refraction", "1.5"], {"refraction": 1.5}, "UsageError", 2),
    (["--observer-height", "-3"], {"observer_height": -3}, "UsageError", 2),
    (["--method", "quick"], {"method": "quick"}, "UsageError", 2),
    (["--earth-radius", "6000000"], {"earth_radius": 6000000}, "UsageError", 2),
    (["--crs", "EPSG:99999999"], {"crs": "EPSG:99999999"}, "UsageError", 2),
])
def test_bad_values_raise_usage_error_with_the_cli_sentence(lookfar, tmp_path, cli_args, kwargs,
                                                            error, code):
    assert_same_error(lookfar, error, code, "cone.tif", CONE_POINT, tmp_path / "v.tif",
                      cli_args, **kwargs)
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("dem, point", [
    ("no_such_dem.tif", CONE_POINT),        # missing
    ("not_a_raster.tif", CONE_POINT),       # not a raster
    ("rotated.tif", CONE_POINT),            # rotated geotransform
    ("cone.tif", (1.0, 2.0)),               # observer outside the DEM
    ("nodata_hole.tif", (430505.0, 5589505.0)),  # observer on no-data (rows/cols 45-54)
])
def test_bad_input_raises_input_error_with_the_cli_sentence(lookfar, tmp_path, dem, point):
    assert_same_error(lookfar, "InputError", 3, dem, point, tmp_path / "v.tif")
    assert list(tmp_path.iterdir()) == []


def test_read_dem_refuses_what_the_cli_refuses(lookfar):
    _, sentence = cli_sentence("info", raster("rotated.tif"))
    with pytest.raises(lookfar.InputError) as e:
        lookfar.read_dem(raster("rotated.tif"))
    assert str(e.value) == sentence
    with pytest.raises(lookfar.UsageError, match="--z-unit: 'furlong' is not m, ft or us-ft"):
        lookfar.read_dem(raster("cone.tif"), z_unit="furlong")
    with pytest.raises(lookfar.UsageError, match="^band: 2 is not a band of"):
        lookfar.read_dem(raster("cone.tif"), band=2)


def test_existing_output_raises_output_error_and_is_kept(lookfar, tmp_path):
    out = tmp_path / "v.tif"
    out.write_bytes(b"keep me")
    assert_same_error(lookfar, "OutputError", 4, "cone.tif", CONE_POINT, out)
    assert out.read_bytes() == b"keep me"
    assert [p.name for p in tmp_path.iterdir()] == ["v.tif"]
    r = lookfar.viewshed(raster("cone.tif"), observer=CONE_POINT, output=out, overwrite=True)
    assert out.read_bytes() != b"keep me" and r.visible.shape == (301, 301)


def test_missing_output_folder_raises_output_error(lookfar, tmp_path):
    assert_same_error(lookfar, "OutputError", 4, "cone.tif", CONE_POINT,
                      tmp_path / "no" / "v.tif")


GT = (500000.0, 10.0, 0.0, 6000000.0, 0.0, -10.0)


@pytest.mark.parametrize("z, gt, crs, error, words", [
    (np.zeros((3, 4, 5)), GT, "EPSG:32630", "UsageError", "must be a 2-D array"),
    (np.zeros(7), GT, "EPSG:32630", "UsageError", "must be a 2-D array"),
    (np.array([["a", "b"]]), GT, "EPSG:32630", "UsageError", "give elevations as numbers"),
    (np.zeros((2, 2), dtype=bool), GT, "EPSG:32630", "UsageError", "give elevations as numbers"),
    (np.zeros((4, 4)), GT[:5], "EPSG:32630", "UsageError", "six numbers"),
    (np.zeros((4, 4)), (500000.0, 10.0, 1.0, 6000000.0, 1.0, -10.0), "EPSG:32630",
     "InputError", "rotated or sheared"),
    (np.zeros((4, 4)), (500000.0, 10.0, 0.0, 6000000.0, 0.0, 10.0), "EPSG:32630",
     "InputError", "south-up"),
    (np.zeros((4, 4)), GT, "not a crs", "UsageError",
     "'not a crs' is not a coordinate reference system PROJ knows"),
])
def test_from_array_refuses_bad_grids(lookfar, z, gt, crs, error, words):
    with pytest.raises(getattr(lookfar, error), match=words):
        lookfar.Dem.from_array(z, gt, crs)


def test_bad_keyword_types(lookfar):
    with pytest.raises(lookfar.UsageError, match="--observer: give the point as a pair"):
        lookfar.viewshed(raster("cone.tif"), observer=(1.0, 2.0, 3.0))
    with pytest.raises(lookfar.UsageError, match="dem must be a path or a lookfar.Dem"):
        lookfar.viewshed(42, observer=CONE_POINT)
    with pytest.raises(lookfar.UsageError,
                       match="give either --observer X,Y .* or --sites FILE"):
        lookfar.viewshed(raster("cone.tif"))
