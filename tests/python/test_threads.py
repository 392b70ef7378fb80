"""The GIL is released while an engine runs: two Python threads run two viewsheds at once, and
each gets the result it gets alone."""
import threading
import time

from conftest import raster

SITES = [(425087.5, 5597212.5), (431512.5, 5592787.5)]  # demo_sites.csv: Merrowdun, Ashgrise


def test_two_threads_run_two_viewsheds_at_once(lookfar):
    dem = lookfar.read_dem(raster("demo_coast.tif"))
    alone = [lookfar.viewshed(dem, observer=p, method="reference", threads=1).visible
             for p in SITES]
    spans, results = {}, {}

    def work(i):
        start = time.monotonic()
        results[i] = lookfar.viewshed(dem, observer=SITES[i], method="reference",
                                      threads=1).visible
        spans[i] = (start, time.monotonic())

    threads = [threading.Thread(target=work, args=(i,)) for i in range(2)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    # Each run takes about half a second. Had a run held the GIL, the other could not have
    # started before it ended: the spans would overlap by a few milliseconds at most (the time
    # between a thread's clock reading and its call). Released, they overlap by most of a run.
    overlap = min(e for _, e in spans.values()) - max(s for s, _ in spans.values())
    assert overlap > 0.5 * min(e - s for s, e in spans.values())
    for i in range(2):
        assert results[i].tobytes() == alone[i].tobytes()
