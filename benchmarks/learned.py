"""Does a learned scorer beat the hand-written cues and weights on documents it was not trained on?

    python benchmarks/learned.py [--dev DIR] [--extra DIR ...] [--test DIR ...] [--folds K] [--jobs N]

An experiment, not part of the checker: it needs scikit-learn (installed with the test extra). Every labelled
document is checked once with the checklist its label names. Two models are then trained per item, in K folds
grouped by document, so that each document is judged by models that never saw it:

1. a sentence scorer: logistic regression on hashed lemma unigrams and bigrams of a sentence, its section role,
   its block kind, whose statement it is (checker.matching.attribution) and whether a cue of the item hit it,
   trained to find the sentences that hold the labelled passage;
2. an item judge: logistic regression from the sentence scores (best, second, mean of the top three, how many
   above one half) and the checker's own verdict (status, share of facets found, best facet score) to the
   labelled status (reported, partial or missing).

It prints, per labelled folder, the checker's figures against the learned ones (binary macro-F1, kappa,
three-class agreement), and how often the top three sentences cover the labelled passage for the checker's
evidence and for the learned scorer. Features are hashed, so no word of any document is kept. `--test DIR` adds
labelled folders that are never trained on: their documents are judged by models trained on all the others.
"""

from __future__ import annotations

import argparse
import os
import re
import sys
import zlib
from collections import defaultdict
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

BUCKETS = 1 << 18
POSITIVE = ("reported", "partial")
WORD = re.compile(r"[a-z][a-z-]+")
NUMBER = re.compile(r"\d+(?:[.,]\d+)?%?")


def _features(sentence) -> list[int]:
    words = []
    for lemma in sentence["lemmas"]:
        if NUMBER.fullmatch(lemma):
            words.append("<number>")
        elif WORD.fullmatch(lemma):
            words.append(lemma)
    names = set(words) | {a + "_" + b for a, b in zip(words, words[1:])}
    names |= {"@role=" + sentence["role"], "@kind=" + sentence["kind"], "@whose=" + sentence["whose"]}
    return sorted({zlib.crc32(n.encode()) % BUCKETS for n in names})


def _check(task):
    """One labelled document: its sentences and, per labelled item, the checker's verdict and the label."""
    document, checklist, labels = task
    from checker.core.limits import DEFAULT_LIMITS
    from checker.engine import compiled_for
    from checker.matching.nlp import parse_blocks
    from checker.reading import read_document
    from checker.verdicts.decide import evaluate

    try:
        doc = read_document(document, DEFAULT_LIMITS)
        docs = list(parse_blocks(b.text for b in doc.blocks))
        compiled = compiled_for(checklist)
        scan = compiled.scan(doc, regex_seconds=DEFAULT_LIMITS.regex_seconds, docs=docs)
        results = evaluate(compiled, scan, {})
    except Exception as exc:  # noqa: BLE001 - a document that cannot be checked is named, the others go on
        return {"document": document, "error": str(exc)}
    sentences = []
    for i, s in enumerate(scan.sentences):
        di, a, b = scan.spans[i]
        sentences.append({"text": s.text, "lemmas": [(t.lemma_ or t.lower_).lower() for t in docs[di][a:b]],
                          "role": s.role, "kind": s.kind, "whose": scan.attribution(i).kind,
                          "weight": scan.weight(i)})
    items = {}
    for ii, (item, res) in enumerate(zip(compiled.checklist.items, results)):
        if item.id not in labels:
            continue
        hit = sorted({h.sentence for k, hs in scan.hits.items() if k.startswith(f"{ii}:") for h in hs})
        items[item.id] = {"tool": res.status, "evidence": [e.text for e in res.evidence], "hit": hit,
                          "facets": [(f.found, f.score) for f in res.facets], "label": labels[item.id]}
    return {"document": document, "sentences": sentences, "items": items}


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--dev", type=Path, default=ROOT.parent / "shared" / "eval" / "dev")
    ap.add_argument("--extra", type=Path, action="append", default=[])
    ap.add_argument("--test", type=Path, action="append", default=[],
                    help="labelled documents judged by models trained on all the others, never trained on")
    ap.add_argument("--folds", type=int, default=8)
    ap.add_argument("--jobs", type=int, default=min(2, os.cpu_count() or 1))
    args = ap.parse_args(argv)
    if not (args.dev / "labels").is_dir():
        print(f"learned: skipped, no labelled documents at {args.dev}")
        return 0
    try:
        import numpy as np
        from scipy.sparse import csr_matrix, vstack
        from sklearn.linear_model import LogisticRegression
    except ImportError:
        print("learned: skipped, scikit-learn is not installed (pip install -e '.[test]')")
        return 0
    from checker.many.evaluation import (Pair, binary_kappa, load_labels, macro_f1, quote_covers, three_class,
                                         three_class_agreement)

    tasks, folder_of = [], {}
    for folder in [args.dev, *args.extra, *args.test]:
        for lf in load_labels(folder / "labels"):
            tasks.append((lf.document, lf.checklist, {it.item_id: (it.status, it.quote) for it in lf.items}))
            folder_of[lf.document] = folder.name
    with ProcessPoolExecutor(max_workers=max(1, args.jobs)) as pool:
        checked = list(pool.map(_check, tasks))
    for d in checked:
        if "error" in d:
            print(f"  not checked: {d['document']}: {d['error']}")
    checked = [d for d in checked if "error" not in d]

    matrices, rows = {}, []
    for d in checked:
        feats = [_features(s) for s in d["sentences"]]
        ind = [j for f in feats for j in f]
        ptr = np.cumsum([0] + [len(f) for f in feats])
        matrices[d["document"]] = (csr_matrix((np.ones(len(ind)), ind, ptr), shape=(len(feats), BUCKETS)),
                                   np.array([s["weight"] for s in d["sentences"]]))
        for item_id, it in d["items"].items():
            status, quote = it["label"]
            hit = np.zeros((len(feats), 1))
            hit[it["hit"]] = 1
            wanted = set()
            if status in POSITIVE and quote:
                wanted = {i for i, s in enumerate(d["sentences"])
                          if len(s["text"]) >= 10 and quote_covers(quote, [s["text"]])}
            rows.append({"doc": d, "item": item_id, "human": status, "quote": quote or "", "it": it, "hit": hit,
                         "wanted": wanted})

    def x_of(r):
        from scipy.sparse import hstack

        return hstack([matrices[r["doc"]["document"]][0], csr_matrix(r["hit"])]).tocsr()

    documents = sorted(matrices)
    tested = {folder.name for folder in args.test}
    trained = [d for d in documents if folder_of[d] not in tested]
    fold = {doc: k % args.folds for k, doc in enumerate(np.random.RandomState(0).permutation(trained))}
    fold.update({d: args.folds for d in documents if folder_of[d] in tested})  # judged by models of all the rest
    rounds = range(args.folds + (1 if tested else 0))

    def learns_from(doc: str, f: int) -> bool:
        return fold[doc] != f and fold[doc] != args.folds

    scores: dict[int, np.ndarray] = {}
    for f in rounds:
        by_item = defaultdict(list)
        for r in rows:
            if learns_from(r["doc"]["document"], f):
                by_item[r["item"]].append(r)
        models = {}
        for item_id, rs in by_item.items():
            y = np.concatenate([[int(i in r["wanted"]) for i in range(len(r["doc"]["sentences"]))] for r in rs])
            if y.sum() >= 3:
                models[item_id] = LogisticRegression(C=0.5, class_weight="balanced", solver="liblinear").fit(
                    vstack([x_of(r) for r in rs]), y)
        for k, r in enumerate(rows):
            if fold[r["doc"]["document"]] == f:
                m = models.get(r["item"])
                weights = matrices[r["doc"]["document"]][1]
                p = m.predict_proba(x_of(r))[:, 1] if m is not None else np.zeros(len(weights))
                scores[k] = p * np.minimum(1.0, weights / 0.9)
        print(f"  round {f + 1} of {len(rounds)} scored", file=sys.stderr)

    statuses = ["missing", "not-applicable", "partial", "reported"]

    def judge_features(k):
        r, p = rows[k], np.sort(scores[k])[::-1]
        p = np.concatenate([p, [0.0, 0.0, 0.0]])
        facets = r["it"]["facets"]
        return [p[0], p[1], p[:3].mean(), min(5, int((p > 0.5).sum())) / 5] + \
               [float(r["it"]["tool"] == s) for s in statuses] + \
               [sum(f for f, _ in facets) / max(1, len(facets)), max([s for _, s in facets] + [0.0])]

    feats = {k: judge_features(k) for k in range(len(rows))}
    learned: dict[int, str] = {}
    for f in rounds:
        by_item = defaultdict(list)
        for k, r in enumerate(rows):
            if learns_from(r["doc"]["document"], f):
                by_item[r["item"]].append(k)
        judges = {}
        for item_id, ks in by_item.items():
            y = [three_class(rows[k]["human"]) for k in ks]
            judges[item_id] = y[0] if len(set(y)) < 2 else LogisticRegression(max_iter=3000).fit([feats[k] for k in ks], y)
        for k, r in enumerate(rows):
            if fold[r["doc"]["document"]] == f:
                j = judges.get(r["item"])
                status = r["it"]["tool"] if j is None else j if isinstance(j, str) else j.predict([feats[k]])[0]
                learned[k] = "not-applicable" if status == "missing" and r["it"]["tool"] == "not-applicable" else status

    print(f"\n{len(documents)} documents, {len(rows)} labelled items, {args.folds} folds grouped by document"
          + (f"; never trained on: {', '.join(sorted(tested))}" if tested else ""))
    print(f"{'folder':<12} {'':<10} {'macro-F1':>9} {'kappa':>7} {'3-class':>8} {'passage in top 3':>18}")
    for folder in sorted(set(folder_of.values())):
        ks = [k for k, r in enumerate(rows) if folder_of[r["doc"]["document"]] == folder]
        for name, tool in (("checker", lambda k: rows[k]["it"]["tool"]), ("learned", lambda k: learned[k])):
            pairs = [Pair(rows[k]["doc"]["document"], "", rows[k]["item"], rows[k]["item"], rows[k]["human"],
                          tool(k)) for k in ks]
            both = [k for k in ks if rows[k]["human"] in POSITIVE and rows[k]["it"]["tool"] in POSITIVE
                    and rows[k]["quote"].strip()]
            if name == "checker":
                covered = sum(quote_covers(rows[k]["quote"], rows[k]["it"]["evidence"][:3]) for k in both)
            else:
                covered = sum(quote_covers(rows[k]["quote"], [rows[k]["doc"]["sentences"][i]["text"]
                                                         for i in np.argsort(-scores[k], kind="stable")[:3]])
                              for k in both)
            f1, kappa, three = macro_f1(pairs), binary_kappa(pairs), three_class_agreement(pairs)
            print(f"{folder:<12} {name:<10} {f1 or 0:>9.3f} {kappa or 0:>7.3f} {three or 0:>8.3f} "
                  f"{covered:>8}/{len(both):<4} {covered / max(1, len(both)):.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
