"""A Dask cluster that loses every worker: the run ends with an error row per unfinished document within the
bound, never a hang."""

from __future__ import annotations

import threading
import time

import pytest

from checker.many.batch import run_batch

from .conftest import DATA

MINI = str(DATA / "checklists" / "mini.yaml")


def test_losing_every_worker_ends_the_run_with_error_rows(tmp_path):
    distributed = pytest.importorskip("distributed", reason="Dask distributed is not installed (pip install "
                                                            "'studygap[dask]')")
    paths = []
    for i in range(6):
        p = tmp_path / f"study-{i}.md"
        paragraph = f"Study {i}: three radiologists annotated every scan, and the test set held 120 cases.\n\n"
        p.write_text("# Methods\n\n" + paragraph * 1500, encoding="utf-8")  # a second or so each
        paths.append(str(p))
    out: dict = {}
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=False, dashboard_address=None) \
            as cluster, distributed.Client(cluster) as client:

        def progress(done, total, path):  # noqa: ARG001
            if done == 1:  # the only worker leaves after the first document; Dask waits for another forever
                cluster.scale(0)

        def run():
            started = time.monotonic()
            out["results"] = run_batch(paths, MINI, engine="dask", client=client, progress=progress, lost_after=2)
            out["seconds"] = time.monotonic() - started

        worker = threading.Thread(target=run, daemon=True)
        worker.start()
        worker.join(120)
        assert not worker.is_alive(), "the run hung after the cluster lost its workers"
    results = out["results"]
    assert [r.path for r in results] == paths  # every document accounted for, in input order
    lost = [r for r in results if not r.ok]
    assert lost and results[0].ok
    assert all("no worker" in r.error and r.error.startswith(r.path) for r in lost)
