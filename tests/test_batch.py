"""Many documents: serial, local process pool and Dask give the same rows, in input order, with error rows."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from checker.many.batch import BatchResult, run_batch
from checker.reports.json import dumps

DEMO = Path(__file__).resolve().parent.parent / "fixtures" / "demo"


def as_json(results: list[BatchResult]) -> str:
    return dumps([r.report.to_dict() if r.ok else {"path": r.path, "error": r.error} for r in results])


@pytest.fixture(scope="module")
def batch_paths(tmp_path_factory) -> list[str]:
    folder = tmp_path_factory.mktemp("batch")
    manuscript = (DEMO / "wrist-fracture-manuscript.md").read_text(encoding="utf-8")
    paras = manuscript.split("\n\n")
    short = folder / "short-manuscript.md"
    short.write_text("\n\n".join(paras[:40]) + "\n", encoding="utf-8")
    # a web page saved under a .pdf name: a common way for a download to go wrong
    broken = folder / "saved-page.pdf"
    broken.write_text("<!DOCTYPE html><html><body><p>Sign in to read this article</p></body></html>",
                      encoding="utf-8")
    proposal = folder / "kidney-stone-benchmark-proposal.md"
    shutil.copy(DEMO / "kidney-stone-benchmark-proposal.md", proposal)
    return [str(short), str(broken), str(proposal), str(folder / "not-there.md")]


@pytest.fixture(scope="module")
def serial(batch_paths) -> list[BatchResult]:
    return run_batch(batch_paths, "validation-study", jobs=1)


def test_rows_in_input_order_with_error_rows(serial, batch_paths):
    assert [r.path for r in serial] == batch_paths
    assert [r.ok for r in serial] == [True, False, True, False]
    broken, missing = serial[1], serial[3]
    assert broken.error.startswith(batch_paths[1]) and "HTML" in broken.error and "\n" not in broken.error
    assert missing.error.startswith(batch_paths[3]) and "no such file" in missing.error
    assert serial[0].report.checklist_id == "validation-study"


def test_local_pool_equals_serial_byte_for_byte(serial, batch_paths):
    seen = []
    pooled = run_batch(batch_paths, "validation-study", jobs=2, progress=lambda d, t, p: seen.append((d, t, p)))
    assert as_json(pooled) == as_json(serial)
    assert [d for d, _, _ in seen] == [1, 2, 3, 4] and {t for _, t, _ in seen} == {4}
    assert sorted(p for _, _, p in seen) == sorted(batch_paths)


def test_bad_engine_and_jobs_are_usage_errors(batch_paths):
    from checker.core.errors import UsageError

    with pytest.raises(UsageError, match="engine"):
        run_batch(batch_paths, engine="spark")
    with pytest.raises(UsageError, match="jobs"):
        run_batch(batch_paths, jobs=0)
    with pytest.raises(UsageError, match="scheduler"):
        run_batch(batch_paths, engine="dask")


def test_dask_equals_local_pool_byte_for_byte(serial, batch_paths):
    distributed = pytest.importorskip("distributed", reason="Dask distributed is not installed (pip install "
                                                            "'studygap[dask]')")
    pooled = run_batch(batch_paths, "validation-study", jobs=2)
    # threads in this process keep the test fast; the tasks and their results travel as they would to a cluster
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False, dashboard_address=None) \
            as cluster, distributed.Client(cluster) as client:
        by_path = run_batch(batch_paths, "validation-study", engine="dask", client=client)
        by_bytes = run_batch(batch_paths, "validation-study", engine="dask", client=client, send="bytes")
    assert as_json(by_path) == as_json(pooled) == as_json(serial)
    # workers that only got the bytes name the document exactly as the ones that read the file
    assert as_json(by_bytes) == as_json(pooled)
    assert by_bytes[0].report.items[0].evidence[0].location.file == batch_paths[0] or \
        not by_bytes[0].report.items[0].evidence
