"""Does a learned checklist choice beat counting cue words, on documents it was not trained on?

    python benchmarks/choice.py [--dev DIR] [--extra DIR ...] [--test DIR ...] [--folds K] [--jobs N] [--write]

Every labelled document is read and parsed once; what `--checklist auto` reads of it (checker.matching.choice:
the `choose_when` cue counts per checklist and per cue, whether it is built like a paper, the kinds of its headings
and the words it uses, hashed) is the input, the checklist its label names the answer. A multinomial logistic
regression is trained in K folds over the documents, so that each document is chosen for by a model that never
saw it, and compared with the cue counts alone (which were written while reading many of these documents, so their
figure is in-sample). `--test DIR` adds labelled folders never trained on: their documents are chosen for by the
model of all the others. `--write` stores the model of all trained documents in checklists/choice.json (the
buckets of the largest weights only). The last column gives the same on two excerpts of about EXCERPT_WORDS words
of each document (its opening and a passage further on): cue counts, then learned. It needs scikit-learn
(installed with the test extra).
"""

from __future__ import annotations

import argparse
import dataclasses
import os
import sys
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from checker.matching.choice import CHOICE_FILE  # noqa: E402

BUCKETS = 1 << 18
#: the inverse of the regularisation strength, chosen by cross-validation on the 420 documents of dev and fresh32-71:
#: C = 1, 3, 10, 30, 100 chose right for 398, 399, 402, 402, 402 documents (cue counts: 391)
C = 10.0
#: buckets kept in the shipped model: those of the largest weights
KEEP = 6000
#: words in each excerpt scored beside the whole documents (see _excerpts)
EXCERPT_WORDS = 150


def _features(task):
    """One labelled document: what the choice reads of it and the cue counts' own choice."""
    document, _checklist = task
    from checker.core.config import Config
    from checker.core.limits import DEFAULT_LIMITS
    from checker.engine import _read_parsed
    from checker.matching.choice import choice_features, choose_by_cues, cue_counts, hashed, paper_skeleton
    from checker.matching.nlp import parse_blocks
    from checker.reading import read_document

    try:
        doc, docs = _read_parsed(document, Config(), DEFAULT_LIMITS, read_document, parse_blocks)
    except Exception as exc:  # noqa: BLE001 - a document that cannot be read is named, the others go on
        return {"document": document, "error": str(exc)}
    counts = cue_counts(docs)
    excerpts = []
    for a, b in _excerpts(doc, document):
        part = dataclasses.replace(doc, blocks=doc.blocks[a:b])
        c = cue_counts(docs[a:b])
        excerpts.append((hashed(choice_features(docs[a:b], part, c), BUCKETS),
                         choose_by_cues(c, paper_skeleton(part))[0]))
    return {"document": document, "features": hashed(choice_features(docs, doc, counts), BUCKETS),
            "cues": choose_by_cues(counts, paper_skeleton(doc))[0], "excerpts": excerpts}


def _excerpts(doc, name: str) -> list[tuple[int, int]]:
    """Block ranges of a document's opening and of one passage further on, each of about EXCERPT_WORDS words: how
    well the choice does on short texts (a draft's first page, a short web page), by models that never saw the
    document. Training on such excerpts too was tried: it helped the excerpts and cost the whole documents."""
    import random
    import zlib

    sizes = [len(b.text.split()) for b in doc.blocks]
    if sum(sizes) < 2 * EXCERPT_WORDS:
        return []

    def upto(a: int) -> tuple[int, int]:
        b, n = a, 0
        while b < len(sizes) and n < EXCERPT_WORDS:
            n, b = n + sizes[b], b + 1
        return a, b

    later = random.Random(zlib.crc32(str(name).encode())).randrange(1, max(2, len(sizes) // 2))
    return [upto(0), upto(later)]


def _fit(x, y, keep: int | None = None):
    import numpy as np
    from sklearn.linear_model import LogisticRegression

    m = LogisticRegression(C=C, max_iter=5000).fit(x, y)
    if keep is not None:  # prune to the largest weights, as the shipped model keeps them
        strength = np.abs(m.coef_).max(axis=0)
        cut = np.sort(strength)[-keep] if len(strength) > keep else 0.0
        m.coef_[:, strength < cut] = 0.0
    return m


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--dev", type=Path, default=ROOT.parent / "shared" / "eval" / "dev")
    ap.add_argument("--extra", type=Path, action="append", default=[])
    ap.add_argument("--test", type=Path, action="append", default=[],
                    help="labelled documents chosen for by the model of all the others, never trained on")
    ap.add_argument("--folds", type=int, default=8)
    ap.add_argument("--keep", type=int, default=KEEP, help="buckets kept in the shipped model")
    ap.add_argument("--jobs", type=int, default=min(2, os.cpu_count() or 1))
    ap.add_argument("--write", action="store_true",
                    help=f"store the model fitted on all documents but --test ones in checklists/{CHOICE_FILE}")
    ap.add_argument("--misses", action="store_true", help="list the documents the model chose wrongly for")
    args = ap.parse_args(argv)
    if not (args.dev / "labels").is_dir():
        print(f"choice: skipped, no labelled documents at {args.dev}")
        return 0
    try:
        import numpy as np
        from scipy.sparse import csr_matrix
    except ImportError:
        print("choice: skipped, scikit-learn is not installed (pip install -e '.[test]')")
        return 0
    from checker.many.evaluation import load_labels

    tasks, folder_of, answer = [], {}, {}
    for folder in [args.dev, *args.extra, *args.test]:
        for lf in load_labels(folder / "labels"):
            tasks.append((lf.document, lf.checklist))
            folder_of[lf.document], answer[lf.document] = folder.name, lf.checklist
    with ProcessPoolExecutor(max_workers=max(1, args.jobs)) as ex:
        done = list(ex.map(_features, tasks, chunksize=4))
    for d in done:
        if "error" in d:
            print(f"choice: left out {d['document']}: {d['error']}")
    done = [d for d in done if "error" not in d]
    def matrix(features):
        rows, cols, vals = [], [], []
        for r, fs in enumerate(features):
            for b, v in sorted(fs.items()):
                rows.append(r), cols.append(b), vals.append(v)
        return csr_matrix((vals, (rows, cols)), shape=(len(features), BUCKETS))

    x = matrix([d["features"] for d in done])
    y = np.array([answer[d["document"]] for d in done])
    owner = np.array([k for k, d in enumerate(done) for _ in d["excerpts"]], dtype=int)
    xe = matrix([e for d in done for e, _ in d["excerpts"]])
    cues_e = [c for d in done for _, c in d["excerpts"]]
    ye = y[owner] if len(owner) else np.array([], dtype=object)
    tested = {folder.name for folder in args.test}
    train = np.array([folder_of[d["document"]] not in tested for d in done])
    order = np.random.RandomState(0).permutation(int(train.sum()))
    fold = np.full(len(done), -1)
    fold[np.flatnonzero(train)[order]] = np.arange(len(order)) % args.folds
    chosen = np.empty(len(done), dtype=object)
    chosen_e = np.empty(len(owner), dtype=object)

    def fit(docs_in):
        return _fit(x[docs_in], y[docs_in], args.keep)

    for f in range(args.folds):
        m = fit(train & (fold != f))
        chosen[fold == f] = m.predict(x[fold == f])
        if len(owner) and (fold[owner] == f).any():
            chosen_e[fold[owner] == f] = m.predict(xe[fold[owner] == f])
    final = fit(train)
    if (~train).any():
        chosen[~train] = final.predict(x[~train])
        if len(owner) and (~train[owner]).any():
            chosen_e[~train[owner]] = final.predict(xe[~train[owner]])
    print(f"{'folder':<14} {'documents':>9} {'cue counts':>11} {'learned':>8}   (learned: cross-validated; "
          f"--test folders: model of all the others; last column: excerpts of about {EXCERPT_WORDS} words)")
    folders = list(dict.fromkeys(folder_of[d["document"]] for d in done))
    for name in [*folders, "all"]:
        ks = [k for k, d in enumerate(done) if name == "all" or folder_of[d["document"]] == name]
        cues = sum(done[k]["cues"] == y[k] for k in ks)
        learned = sum(chosen[k] == y[k] for k in ks)
        in_folder = set(ks)
        es = [j for j, k in enumerate(owner) if k in in_folder]
        short = f"{sum(cues_e[j] == ye[j] for j in es)} {sum(chosen_e[j] == ye[j] for j in es)}/{len(es)}" if es else ""
        print(f"{name:<14} {len(ks):>9} {cues:>11} {learned:>8}   {short:>13}")
    if args.misses:
        for k, d in enumerate(done):
            if chosen[k] != y[k]:
                print(f"  {folder_of[d['document']]}/{Path(d['document']).name}: {y[k]} -> {chosen[k]}")
    if args.write:
        _write(final, int(train.sum()), args.keep)
    return 0


def _write(model, documents: int, keep: int) -> None:
    import json

    import numpy as np

    from checker.core.output import write_atomic

    strength = np.abs(model.coef_).max(axis=0)
    kept = sorted(int(b) for b in np.argsort(-strength, kind="stable")[:keep] if strength[b] > 0)
    data = {"about": f"fitted by benchmarks/choice.py --write on {documents} labelled documents; hashed words only",
            "buckets": BUCKETS, "classes": [str(c) for c in model.classes_],
            "intercept": [round(float(v), 4) for v in model.intercept_],
            "weights": {str(b): [round(float(w), 4) for w in model.coef_[:, b]] for b in kept}}
    target = ROOT / "checklists" / CHOICE_FILE
    write_atomic(target, json.dumps(data, sort_keys=True, separators=(",", ":")) + "\n")
    print(f"wrote {target} ({len(kept)} buckets, {target.stat().st_size // 1024} KiB)")


if __name__ == "__main__":
    sys.exit(main())
