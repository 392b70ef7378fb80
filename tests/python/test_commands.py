"""lookfar.link, intervis, select and signal against the CLI: the same run classes, so the same
cells and CSV bytes, and the same summary."""
import numpy as np
import pytest

from conftest import (assert_same_cells, band_bytes, cli_json, cli_sentence, cli_table, comparable,
                      raster)

DEMO = raster("demo_coast.tif")
SITES = raster("demo_sites.csv")
# demo_sites.csv (test_rasters/README.md): Quarrel Knap and Tollan Rigg.
QUARREL = (426937.5, 5594387.5)
TOLLAN = (429787.5, 5598562.5)


def xy(point):
    return "%r,%r" % point


def test_link_equals_cli(lookfar, tmp_path):
    cli = cli_json("link", DEMO, "--from", xy(QUARREL), "--to", xy(TOLLAN), "--from-height", 20,
                   "--to-height", 10, "--frequency-mhz", 2400, "--refraction", 0.25,
                   "--csv", tmp_path / "cli.csv")
    r = lookfar.link(DEMO, from_=QUARREL, to=TOLLAN, from_height=20, to_height=10,
                     frequency_mhz=2400, refraction=0.25, csv=tmp_path / "py.csv")
    assert (tmp_path / "py.csv").read_bytes() == (tmp_path / "cli.csv").read_bytes()
    assert comparable(r.summary) == comparable(cli)
    expected = np.genfromtxt(tmp_path / "cli.csv", delimiter=",", names=True)
    for name in expected.dtype.names:
        assert np.array_equal(r.profile[name], expected[name], equal_nan=True), name
    assert r.summary["line_of_sight"] in ("clear", "blocked")


def test_link_pairs_equals_cli_and_single_links(lookfar, tmp_path):
    pairs = tmp_path / "pairs.csv"
    pairs.write_text("from_name,from_x,from_y,from_height,to_name,to_x,to_y,to_height,"
                     "frequency_mhz\n"
                     "Quarrel Knap,%r,%r,20,Tollan Rigg,%r,%r,10,\n"
                     "Tollan Rigg,%r,%r,10,Quarrel Knap,%r,%r,20,5800\n"
                     % (QUARREL + TOLLAN + TOLLAN + QUARREL))
    cli = cli_json("link", DEMO, "--pairs", pairs, "--frequency-mhz", 2400, "--refraction", 0.25,
                   "--required-clearance", 0.6, "--csv", tmp_path / "cli.csv")
    r = lookfar.link(DEMO, pairs=pairs, frequency_mhz=2400, refraction=0.25,
                     required_clearance=0.6, csv=tmp_path / "py.csv", ground_permittivity=22,
                     ground_conductivity=0.003, polarization="vertical")
    assert (tmp_path / "py.csv").read_bytes() == (tmp_path / "cli.csv").read_bytes()
    assert comparable(r.summary) == comparable(cli)
    assert r.links["from_name"] == ["Quarrel Knap", "Tollan Rigg"]
    assert r.summary["link_count"] == 2
    # Each link as a single run gives the same figures (issue 14 item 6).
    one = lookfar.link(DEMO, from_=TOLLAN, to=QUARREL, from_height=10, to_height=20,
                       frequency_mhz=5800, refraction=0.25, required_clearance=0.6)
    entry = r.summary["links"][1]
    for key in ("path_length_m", "basic_loss_db", "min_fresnel_fraction", "required_clearance",
                "from", "to"):
        assert entry[key] == one.summary[key], key


def test_intervis_equals_cli(lookfar, tmp_path):
    cli = cli_json("intervis", DEMO, "--stations", SITES, "--reach", 6000, "--all-pairs",
                   "-o", tmp_path / "cli.csv")
    r = lookfar.intervis(DEMO, SITES, reach=6000, all_pairs=True, output=tmp_path / "py.csv")
    assert (tmp_path / "py.csv").read_bytes() == (tmp_path / "cli.csv").read_bytes()
    assert comparable(r.summary) == comparable(cli)
    lines = (tmp_path / "cli.csv").read_text().splitlines()
    assert len(r.matrix["from"]) == len(lines) - 1 == 7 * 6  # every ordered pair of 7 sites
    assert set(r.matrix["visible"]) <= {"yes", "no"}
    # Without output= the matrix stays in memory and the summary names no file.
    mem = lookfar.intervis(DEMO, SITES, reach=6000, all_pairs=True)
    assert "output" not in mem.summary.get("outputs", {})
    assert mem.matrix["from"] == r.matrix["from"]


def test_select_equals_cli(lookfar, tmp_path):
    cli = cli_json("select", DEMO, "--candidates", SITES, "--count", 3, "--reach", 8000,
                   "--target-height", 2, "-o", tmp_path / "c.tif", "--csv", tmp_path / "cli.csv")
    r = lookfar.select(DEMO, SITES, count=3, reach=8000, target_height=2,
                       csv=tmp_path / "py.csv")
    assert_same_cells(r.count, tmp_path / "c.tif")
    assert (tmp_path / "py.csv").read_bytes() == (tmp_path / "cli.csv").read_bytes()
    assert comparable(r.summary) == comparable(cli)
    assert r.ranked["rank"].tolist() == [1, 2, 3]


def test_signal_equals_cli(lookfar, tmp_path):
    cli = cli_json("signal", DEMO, "--tx", xy(QUARREL), "--frequency-mhz", 900, "--reach", 4000,
                   "--eirp-dbm", 50, "--min-level-dbm", -90, "-o", tmp_path / "loss.tif",
                   "--level", tmp_path / "level.tif", "--served", tmp_path / "served.tif",
                   "--fresnel", tmp_path / "fresnel.tif")
    r = lookfar.signal(DEMO, tx=QUARREL, frequency_mhz=900, reach=4000, eirp_dbm=50,
                       min_level_dbm=-90, level=True, served=True, fresnel=True)
    for name in ("loss", "level", "served", "fresnel"):
        assert_same_cells(getattr(r, name), tmp_path / (name + ".tif"))
    assert comparable(r.summary) == comparable(cli)
    assert r.loss.dtype == np.float32 and r.served.dtype == np.uint8


@pytest.mark.parametrize("cli_args, call", [
    (["link", DEMO, "--from", xy(QUARREL), "--to", xy(TOLLAN), "--frequency-mhz", "-5"],
     lambda lf: lf.link(DEMO, from_=QUARREL, to=TOLLAN, frequency_mhz=-5)),
    (["signal", DEMO, "--tx", xy(QUARREL), "-o", "unused.tif"],
     lambda lf: lf.signal(DEMO, tx=QUARREL)),
    (["select", DEMO, "--candidates", SITES, "--count", "0", "-o", "unused.tif"],
     lambda lf: lf.select(DEMO, SITES, count=0)),
    (["intervis", DEMO, "--stations", raster("no_such.csv"), "-o", "unused.csv"],
     lambda lf: lf.intervis(DEMO, raster("no_such.csv"))),
])
def test_errors_carry_the_cli_sentence(lookfar, cli_args, call):
    code, sentence = cli_sentence(*cli_args)
    error = {2: lookfar.UsageError, 3: lookfar.InputError}[code]
    with pytest.raises(error) as e:
        call(lookfar)
    assert str(e.value) == sentence


def test_info_equals_cli(lookfar):
    cli = cli_json("info", raster("twin_usft.tif"))
    r = lookfar.info(lookfar.read_dem(raster("twin_usft.tif")))
    assert comparable(r.summary) == comparable(cli)
    assert r.table == cli_table("info", raster("twin_usft.tif"))


def test_viewshed_polygons_are_written_as_by_the_cli(lookfar, tmp_path):
    cli = cli_json("viewshed", DEMO, "--observer", xy(QUARREL), "--reach", 3000,
                   "-o", tmp_path / "v.tif", "--polygons", tmp_path / "cli.geojson")
    r = lookfar.viewshed(DEMO, observer=QUARREL, reach=3000, polygons=tmp_path / "py.geojson")
    assert comparable(r.summary)["polygons"]["features"] == cli["polygons"]["features"]
    assert (tmp_path / "py.geojson").read_bytes() == (tmp_path / "cli.geojson").read_bytes()


def test_viewshed_per_site_rasters_are_the_clis(lookfar, tmp_path):
    cli_json("viewshed", DEMO, "--sites", SITES, "--reach", 3000, "-o", tmp_path / "c.tif",
             "--per-site", tmp_path / "cli")
    r = lookfar.viewshed(DEMO, sites=SITES, reach=3000, per_site=tmp_path / "py")
    names = sorted(p.name for p in (tmp_path / "cli").iterdir())
    assert len(names) == 7 and "Quarrel_Knap.tif" in names
    assert sorted(p.name for p in (tmp_path / "py").iterdir()) == names
    for name in names:
        assert_same_cells(band_bytes(tmp_path / "py" / name), tmp_path / "cli" / name)
    assert [o["raster"].endswith(".tif") for o in r.summary["observers"]] == [True] * 7


def test_viewshed_points_are_written_as_by_the_cli(lookfar, tmp_path):
    cli_json("viewshed", DEMO, "--sites", raster("demo_sites.csv"), "--reach", 3000,
             "-o", tmp_path / "c.tif", "--points", tmp_path / "cli.geojson")
    lookfar.viewshed(DEMO, sites=raster("demo_sites.csv"), reach=3000,
                     points=tmp_path / "py.geojson")
    assert (tmp_path / "py.geojson").read_bytes() == (tmp_path / "cli.geojson").read_bytes()
