"""Ctrl-C stops a run and raises KeyboardInterrupt with nothing written; an exception raised by
the progress callable stops the run the same way and is raised."""
import os
import signal
import subprocess
import sys
import time

import numpy as np
import pytest

from conftest import raster

# A viewshed that takes many seconds: the reference engine on 1500 x 1500 rough cells, one thread.
CHILD = r"""
import os, sys
import numpy as np
import lookfar
out = sys.argv[1]
z = np.random.default_rng(7).random((1500, 1500)).astype(np.float32) * 50
dem = lookfar.Dem.from_array(z, (500000, 10, 0, 6000000, 0, -10), "EPSG:32630")
told = []
def progress(fraction):
    if not told:
        told.append(fraction)
        print("running", flush=True)
try:
    lookfar.viewshed(dem, observer=(507505, 5992495), method="reference", threads=1,
                     output=os.path.join(out, "v.tif"), margin=os.path.join(out, "m.tif"),
                     progress=progress)
except KeyboardInterrupt:
    del dem
    print("KeyboardInterrupt", flush=True)
    sys.exit(42)
print("finished", flush=True)
"""


def test_sigint_raises_keyboard_interrupt_and_leaves_nothing(tmp_path):
    out, tmp = tmp_path / "out", tmp_path / "tmp"
    out.mkdir()
    tmp.mkdir()
    env = dict(os.environ, TMPDIR=str(tmp))
    child = subprocess.Popen([sys.executable, "-c", CHILD, str(out)], env=env, text=True,
                             stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    try:
        assert child.stdout.readline().strip() == "running"
        sent = time.monotonic()
        child.send_signal(signal.SIGINT)
        stdout, stderr = child.communicate(timeout=60)
    finally:
        child.kill()
    assert child.returncode == 42, stdout + stderr
    assert stdout.strip() == "KeyboardInterrupt"
    # The engine stops within its next check, long before the run would have ended.
    assert time.monotonic() - sent < 10
    assert list(out.iterdir()) == []   # no output, no temporary beside it
    assert list(tmp.iterdir()) == []   # the run's and the array's temporary folders are gone


def test_an_exception_of_progress_stops_the_run(lookfar, tmp_path):
    def progress(fraction):
        raise RuntimeError("stop at %.2f" % fraction)

    out = tmp_path / "v.tif"
    with pytest.raises(RuntimeError, match="stop at"):
        lookfar.viewshed(raster("demo_coast.tif"), observer=(425087.5, 5597212.5),
                         method="reference", threads=1, output=out, progress=progress)
    assert list(tmp_path.iterdir()) == []
