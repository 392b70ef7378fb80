"""Shared helpers of the Python module's tests (run by ctest, label "python").

ctest sets PYTHONPATH to build/python, LOOKFAR_CLI to the built command line and
LOOKFAR_SOURCE_DIR to the repository; run by hand the same way:
    PYTHONPATH=build/python LOOKFAR_CLI=build/lookfar python3 -m pytest tests/python
"""
import json
import os
import subprocess
from pathlib import Path

import numpy as np
import pytest
from osgeo import gdal

gdal.UseExceptions()

SOURCE_DIR = Path(os.environ.get("LOOKFAR_SOURCE_DIR", Path(__file__).resolve().parents[2]))
CLI = os.environ.get("LOOKFAR_CLI", str(SOURCE_DIR / "build" / "lookfar"))
RASTERS = SOURCE_DIR / "test_rasters"


def raster(name):
    """A test raster of test_rasters/ (its README says how each was made)."""
    return str(RASTERS / name)


def run_cli(*args):
    """Runs the CLI; returns (exit code, stdout, stderr)."""
    p = subprocess.run([CLI, *map(str, args)], capture_output=True, text=True, check=False)
    return p.returncode, p.stdout, p.stderr


def cli_json(*args):
    """Runs the CLI with --json --quiet and returns its summary (fails the test on an error)."""
    code, out, err = run_cli(*args, "--json", "--quiet")
    assert code == 0, err
    return json.loads(out)


def cli_table(*args):
    """The CLI's summary table (stdout without --json)."""
    code, out, err = run_cli(*args, "--quiet")
    assert code == 0, err
    return out


def cli_sentence(*args):
    """The exit code and the sentence the CLI prints for an error ("lookfar: " left off)."""
    code, _, err = run_cli(*args)
    first = err.splitlines()[0]
    assert first.startswith("lookfar: "), err
    return code, first[len("lookfar: "):]


def band_bytes(path, band=1):
    """The cells of a band as numpy (its own type)."""
    ds = gdal.Open(str(path))
    return ds.GetRasterBand(band).ReadAsArray()


def comparable(summary):
    """A summary without what differs between two runs of the same work: the time taken, the
    command line as typed and the output paths."""
    s = dict(summary)
    for key in ("elapsed_s", "command_line", "outputs"):
        s.pop(key, None)
    return s


def assert_same_cells(array, path, band=1):
    """The array equals the raster's band byte for byte (same type, same cells)."""
    expected = band_bytes(path, band)
    assert array.dtype == expected.dtype
    assert array.shape == expected.shape
    assert array.tobytes() == expected.tobytes()


@pytest.fixture
def lookfar():
    import lookfar as module
    return module
