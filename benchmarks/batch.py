"""Batch throughput: documents per second for 1 and 2 local workers and for Dask with 2 workers, same corpus.

    python benchmarks/batch.py [--documents N] [--seed S] [--no-dask]

The corpus is generated in a temporary folder from the demo manuscript (paragraphs left out at random with a
fixed seed). Each engine is warmed first (pipeline and checklist built), so the figures are steady-state
throughput; the Dask cluster runs real worker processes. It also checks that every engine gave the same JSON.
"""

from __future__ import annotations

import argparse
import random
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

CHECKLIST = "validation-study"


def make_corpus(folder: Path, n: int, seed: int) -> list[str]:
    paras = (ROOT / "fixtures" / "demo" / "wrist-fracture-manuscript.md").read_text(encoding="utf-8").split("\n\n")
    rng = random.Random(seed)
    paths = []
    for i in range(n):
        kept = [p for p in paras if p.startswith("#") or rng.random() < 0.75]
        path = folder / f"doc-{i:03d}.md"
        path.write_text("\n\n".join(kept) + "\n", encoding="utf-8")
        paths.append(str(path))
    return paths


def as_json(results) -> str:
    from checker.reports.json import dumps

    return dumps([r.report.to_dict() if r.ok else {"path": r.path, "error": r.error} for r in results])


def timed(fn) -> tuple[float, str]:
    started = time.perf_counter()
    results = fn()
    return time.perf_counter() - started, as_json(results)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--documents", type=int, default=60, help="documents in the generated corpus (default 60)")
    ap.add_argument("--seed", type=int, default=0)
    ap.add_argument("--no-dask", action="store_true", help="skip the Dask measurement")
    args = ap.parse_args(argv)

    from checker.many.batch import run_batch, warm

    with tempfile.TemporaryDirectory(prefix="studygap-bench-") as tmp:
        paths = make_corpus(Path(tmp), args.documents, args.seed)
        warm(CHECKLIST)
        rows = []
        one, reference = timed(lambda: run_batch(paths, CHECKLIST, jobs=1))
        rows.append(("local, 1 worker", one, True))
        two, out = timed(lambda: run_batch(paths, CHECKLIST, jobs=2))
        rows.append(("local, 2 workers", two, out == reference))
        if not args.no_dask:
            try:
                from distributed import Client, LocalCluster
            except ImportError:
                print("Dask distributed is not installed; pip install 'studygap[dask]' to measure it")
            else:
                with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cl, \
                        Client(cl) as client:
                    client.run(warm, CHECKLIST)
                    dask, out = timed(lambda: run_batch(paths, CHECKLIST, engine="dask", client=client))
                rows.append(("dask, 2 workers", dask, out == reference))
        print(f"{args.documents} generated documents, checklist {CHECKLIST}")
        print(f"{'engine':<18} {'seconds':>8} {'docs/s':>8} {'vs 1 worker':>12}  same JSON")
        for name, seconds, same in rows:
            print(f"{name:<18} {seconds:>8.2f} {args.documents / seconds:>8.2f} {one / seconds:>11.2f}x  "
                  f"{'yes' if same else 'NO'}")
        return 0 if all(same for _, _, same in rows) else 1


if __name__ == "__main__":
    sys.exit(main())
