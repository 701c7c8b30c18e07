"""Does a learned scorer beat the hand-written cues and weights on documents it was not trained on?

    python benchmarks/learned.py [--dev DIR] [--extra DIR ...] [--test DIR ...] [--folds K] [--jobs N]
                                 [--sentences shipped [--towards-shipped C]] [--write]

An experiment, not part of the checker: it needs scikit-learn (installed with the test extra). Every labelled
document is checked once with the checklist its label names. Two models are then trained per item, in K folds
grouped by document, so that each document is judged by models that never saw it:

1. a sentence scorer: logistic regression on hashed lemma unigrams and bigrams of a sentence, its section role,
   the words of its two innermost headings, its block kind, whose statement it is (checker.matching.attribution),
   whether a cue of the item hit it and which of the item's facets' own cues matched it, trained to find the
   sentences that hold the labelled passage;
2. an item judge: logistic regression from the sentence scores (best, second, mean of the top three, how many above
   one half), the checker's own verdict (status, share of facets found, best facet score) and which built-in
   checklist the label names, to the labelled status (reported, partial or missing); it asks first whether the item
   is there at all (partial and reported together against missing), then which of the two.

It prints, per labelled folder, the checker's figures against the learned ones (binary macro-F1, kappa,
three-class agreement), and how often the top three sentences cover the labelled passage for the checker's
evidence and for the learned scorer. Features are hashed, so no word of any document is kept. `--test DIR` adds
labelled folders that are never trained on: their documents are judged by models trained on all the others.

When the documents the shipped models were fitted on are no longer at hand, `--sentences shipped` keeps the shipped
sentence scorers and fits the item judges alone, and `--towards-shipped C` pulls each judge's weights towards the
shipped judge's rather than towards zero: the new labels adjust it (further as C grows) instead of replacing what
many more documents taught it. The shipped judge's figures on the same scores are printed beside.
"""

from __future__ import annotations

import argparse
import os
import sys
from collections import defaultdict
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from checker.verdicts.judge import JUDGE_FILE  # noqa: E402

BUCKETS = 1 << 18
POSITIVE = ("reported", "partial")
#: words kept per item's sentence scorer: those of the largest weights (a smaller file, the same verdicts)
KEEP_WORDS = 3000


def _check(task):
    """One labelled document: its sentences and, per labelled item, the checker's verdict and the label."""
    document, checklist, labels = task
    from checker.core.limits import DEFAULT_LIMITS
    from checker.engine import compiled_for
    from checker.matching.nlp import parse_blocks
    from checker.reading import read_document
    from checker.verdicts.decide import evaluate
    from checker.verdicts.judge import (cue_sentences, facet_sentences, features_of, needed_facets, only_mentioned,
                                        quotable_sentences)

    try:
        doc = read_document(document, DEFAULT_LIMITS)
        docs = list(parse_blocks(b.text for b in doc.blocks))
        compiled = compiled_for(checklist)
        scan = compiled.scan(doc, regex_seconds=DEFAULT_LIMITS.regex_seconds, docs=docs)
        results = evaluate(compiled, scan, {})
        held = needed_facets(compiled.checklist)
    except Exception as exc:  # noqa: BLE001 - a document that cannot be checked is named, the others go on
        return {"document": document, "error": str(exc)}
    sentences = []
    for i, s in enumerate(scan.sentences):
        di, a, b = scan.spans[i]
        sentences.append({"text": s.text, "weight": scan.weight(i)})
    features = features_of(scan, BUCKETS)
    items = {}
    for ii, (item, res) in enumerate(zip(compiled.checklist.items, results)):
        if item.id not in labels:
            continue
        items[item.id] = {"tool": res.status, "evidence": [e.text for e in res.evidence],
                          "hit": sorted(cue_sentences(scan, ii)), "facets": [(f.found, f.score) for f in res.facets],
                          "quotable": bool(quotable_sentences(scan, ii, [f.id for f in item.facets])),
                          "mention_only": only_mentioned(held.get(item.id), res.facets),
                          "label": labels[item.id],
                          "facet_hits": {f: sorted(v) for f, v in
                                         facet_sentences(scan, ii, [f.id for f in item.facets]).items() if v},
                          "checklist": checklist}
    return {"document": document, "sentences": sentences, "features": features, "items": items}


def _sentence_model(lr, keep: int, facet_ids: list[str]) -> dict:
    """A fitted sentence scorer as the judge file keeps it: the `keep` words of the largest weights, rounded, and
    the weight of each facet's own cue."""
    import numpy as np

    coef = lr.coef_[0]
    words = coef[:BUCKETS]
    nz = np.flatnonzero(words)
    top = nz[np.argsort(-np.abs(words[nz]), kind="stable")[:keep]]
    return {"bias": round(float(lr.intercept_[0]), 4), "cue": round(float(coef[BUCKETS]), 4),
            "words": {int(j): round(float(words[j]), 4) for j in sorted(top)},
            "facets": {f: round(float(coef[BUCKETS + 1 + j]), 4) for j, f in enumerate(facet_ids)}}


def _scores_of(models, rows: list[dict], wanted) -> dict[int, list[float]]:
    """Every wanted row's sentence scores by these models (zeros for an item they have no scorer for)."""
    out, z_of = {}, {}
    for k, r in enumerate(rows):
        if not wanted(k, r):
            continue
        doc = r["doc"]
        if r["item"] not in models.items:
            out[k] = [0.0] * len(doc["sentences"])
            continue
        if doc["document"] not in z_of:
            z_of[doc["document"]] = models.scores(doc["features"], [s["weight"] for s in doc["sentences"]])
        out[k] = models.item_scores(*z_of[doc["document"]], r["item"], set(r["it"]["hit"]),
                                    {f: set(v) for f, v in r["it"]["facet_hits"].items()})
    return out


#: an item with too few labelled passages to learn from scores every sentence near zero
NO_WORDS = {"bias": -30.0, "cue": 0.0, "words": {}}


def _judge_model(y: list[str], x: list[list[float]], positive_first: bool = True, prior: dict | None = None,
                 c: float = 1.0) -> dict:
    """The item judge: multinomial logistic regression. With `prior` (a judge fitted before) its weights are pulled
    towards the prior's rather than towards zero, so a few hundred new labels adjust a judge fitted on many more
    instead of replacing it; `c` is how far they may move it (larger: further)."""
    from sklearn.linear_model import LogisticRegression

    if len(set(y)) < 2:
        return {"classes": [y[0]], "coef": [], "intercept": []}
    classes = sorted(set(y))
    if prior is not None and len(prior.get("classes", [])) == 3 and set(classes) <= set(prior["classes"]):
        # a status the new labels never give keeps the prior's weights, lowered only as far as the labels push it
        classes = list(prior["classes"])
        coef, intercept = _fit_towards(classes, y, x, prior, c)
    else:
        m = LogisticRegression(max_iter=3000, C=c if prior is None else 1.0).fit(x, y)
        coef, intercept, classes = m.coef_, m.intercept_, [str(k) for k in m.classes_]
    return {"classes": classes, "coef": [[round(float(v), 4) for v in row] for row in coef],
            "intercept": [round(float(v), 4) for v in intercept], "positive_first": positive_first}


def _fit_towards(classes: list[str], y: list[str], x: list[list[float]], prior: dict, c: float):
    """Minimise c * (negative log-likelihood) + 1/2 |W - W_prior|^2 (intercepts unpenalised), from the prior."""
    import numpy as np
    from scipy.optimize import minimize
    from scipy.special import logsumexp

    X = np.asarray(x, dtype=float)
    Y = np.zeros((len(y), len(classes)))
    Y[np.arange(len(y)), [classes.index(v) for v in y]] = 1.0
    w0, b0 = np.asarray(prior["coef"], dtype=float), np.asarray(prior["intercept"], dtype=float)
    k, d = w0.shape

    def loss(theta):
        w, b = theta[:k * d].reshape(k, d), theta[k * d:]
        z = X @ w.T + b
        lse = logsumexp(z, axis=1)
        p = np.exp(z - lse[:, None])
        nll = float(np.sum(lse - np.sum(Y * z, axis=1)))
        gz = c * (p - Y)
        gw = gz.T @ X + (w - w0)
        return c * nll + 0.5 * float(np.sum((w - w0) ** 2)), np.concatenate([gw.ravel(), gz.sum(axis=0)])

    theta = minimize(loss, np.concatenate([w0.ravel(), b0]), jac=True, method="L-BFGS-B",
                     options={"maxiter": 3000}).x
    return theta[:k * d].reshape(k, d), theta[k * d:]


def _verdict(row: dict, judge: dict | None, x: list[float]) -> tuple[str, str]:
    """What a judge says of a labelled item (the cues' status without one), and the status it may give where
    quotes can back it (checker.verdicts.judge.allowed)."""
    from checker.verdicts.judge import allowed, predict

    it = row["it"]
    said = it["tool"] if judge is None else predict(judge, x)
    return said, allowed(it["tool"], said, bool(it["evidence"]) or it["quotable"], it["mention_only"])


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--dev", type=Path, default=ROOT.parent / "shared" / "eval" / "dev")
    ap.add_argument("--extra", type=Path, action="append", default=[])
    ap.add_argument("--test", type=Path, action="append", default=[],
                    help="labelled documents judged by models trained on all the others, never trained on")
    ap.add_argument("--folds", type=int, default=8)
    ap.add_argument("--keep", type=int, default=KEEP_WORDS, help="words kept per item's sentence scorer")
    ap.add_argument("--jobs", type=int, default=min(2, os.cpu_count() or 1))
    ap.add_argument("--write", action="store_true",
                    help=f"store the models fitted on all documents but --test ones in checklists/{JUDGE_FILE}")
    ap.add_argument("--compare", action="store_true",
                    help="also show the judge that takes the likeliest of the three statuses at once")
    ap.add_argument("--sentences", choices=("fit", "shipped"), default="fit",
                    help="fit the sentence scorers per fold (fit), or keep the shipped ones and fit the item judges "
                         "alone (shipped: the judges learn the labels' conventions from the scores users get)")
    ap.add_argument("--towards-shipped", type=float, metavar="C",
                    help="fit each item judge towards the shipped one's weights rather than towards zero; C: how far "
                         "the labels may move it (with --sentences shipped)")
    ap.add_argument("--reuse", type=Path, help="keep the checked documents in this file and reuse them next time "
                                                "the same labelled documents are asked for (only while the "
                                                "documents and the checklists stay the same)")
    ap.add_argument("--dump", type=Path, help="write every labelled item's statuses (cues, judge, human) as JSON")
    args = ap.parse_args(argv)
    if not (args.dev / "labels").is_dir():
        print(f"learned: skipped, no labelled documents at {args.dev}")
        return 0
    try:
        import numpy as np
        from scipy.sparse import csr_matrix, hstack, vstack
        from sklearn.linear_model import LogisticRegression
    except ImportError:
        print("learned: skipped, scikit-learn is not installed (pip install -e '.[test]')")
        return 0
    from checker.many.evaluation import (Pair, binary_kappa, load_labels, macro_f1, quote_covers, three_class,
                                         three_class_agreement)
    from checker.verdicts.judge import Models, judge_features

    tasks, folder_of = [], {}
    for folder in [args.dev, *args.extra, *args.test]:
        for lf in load_labels(folder / "labels"):
            tasks.append((lf.document, lf.checklist, {it.item_id: (it.status, it.quote) for it in lf.items}))
            folder_of[lf.document] = folder.name
    import pickle

    kept = pickle.loads(args.reuse.read_bytes()) if args.reuse and args.reuse.is_file() else {}
    if isinstance(kept, dict) and kept.get("tasks") == tasks:  # the same documents with the same labels
        checked = kept["checked"]
    else:
        with ProcessPoolExecutor(max_workers=max(1, args.jobs)) as pool:
            checked = list(pool.map(_check, tasks))
        if args.reuse:
            args.reuse.write_bytes(pickle.dumps({"tasks": tasks, "checked": checked}))
    for d in checked:
        if "error" in d:
            print(f"  not checked: {d['document']}: {d['error']}")
    checked = [d for d in checked if "error" not in d]

    facets_of: dict[str, list[str]] = defaultdict(list)  # item -> its facet ids, one column each
    for d in checked:
        for item_id, it in d["items"].items():
            facets_of[item_id] = sorted(set(facets_of[item_id]) | set(it["facet_hits"]))
    matrices, rows = {}, []
    for d in checked:
        feats = d["features"]
        ind = [j for f in feats for j in f]
        ptr = np.cumsum([0] + [len(f) for f in feats])
        matrices[d["document"]] = csr_matrix((np.ones(len(ind)), ind, ptr), shape=(len(feats), BUCKETS))
        for item_id, it in d["items"].items():
            status, quote = it["label"]
            hit = np.zeros((len(feats), 1 + len(facets_of[item_id])))
            hit[it["hit"], 0] = 1
            for j, f in enumerate(facets_of[item_id]):
                hit[it["facet_hits"].get(f, []), 1 + j] = 1
            wanted = set()
            if status in POSITIVE and quote:
                wanted = {i for i, s in enumerate(d["sentences"])
                          if len(s["text"]) >= 10 and quote_covers(quote, [s["text"]])}
            rows.append({"doc": d, "item": item_id, "human": status, "quote": quote or "", "it": it, "hit": hit,
                         "wanted": wanted})

    def x_of(r):
        return hstack([matrices[r["doc"]["document"]], csr_matrix(r["hit"])]).tocsr()

    documents = sorted(matrices)
    tested = {folder.name for folder in args.test}
    trained = [d for d in documents if folder_of[d] not in tested]
    fold = {doc: k % args.folds for k, doc in enumerate(np.random.RandomState(0).permutation(trained))}
    fold.update({d: args.folds for d in documents if folder_of[d] in tested})  # judged by models of all the rest
    rounds = range(args.folds + 1)  # the last round: models of all trained documents (those --write stores)

    def learns_from(doc: str, f: int) -> bool:
        return fold[doc] != f and fold[doc] != args.folds

    scores: dict[int, list[float]] = {}
    sentence_models: dict[str, dict] = {}
    prior, raw_about, shipped_scores = None, "", {}
    if args.sentences != "fit" or args.towards_shipped is not None:
        import json

        from checker.verdicts.judge import parse_model

        source = ROOT / "checklists" / JUDGE_FILE
        if not source.is_file():
            print(f"learned: no shipped checklists/{JUDGE_FILE} to start from")
            return 2
        text = source.read_text(encoding="utf-8")
        prior, raw = parse_model(text, f"checklists/{JUDGE_FILE}"), json.loads(text)
        raw_about = str(raw.get("about", ""))
        shipped_scores = _scores_of(prior, rows, lambda k, r: True)
        if args.sentences == "shipped":
            sentence_models = {i: {**m["sentence"], "words": {int(b): w for b, w in m["sentence"]["words"].items()}}
                               for i, m in raw["items"].items()}  # as read (the words' buckets are numbers)
            scores = shipped_scores
    for f in rounds if args.sentences != "shipped" else ():
        by_item = defaultdict(list)
        for r in rows:
            if learns_from(r["doc"]["document"], f):
                by_item[r["item"]].append(r)
        fitted = {}
        for item_id, rs in sorted(by_item.items()):
            y = np.concatenate([[int(i in r["wanted"]) for i in range(len(r["doc"]["sentences"]))] for r in rs])
            fitted[item_id] = NO_WORDS if y.sum() < 3 else _sentence_model(LogisticRegression(
                C=0.5, class_weight="balanced", solver="liblinear").fit(vstack([x_of(r) for r in rs]), y), args.keep,
                facets_of[item_id])
        models = Models.build(BUCKETS, fitted, {})
        scores.update(_scores_of(models, rows, lambda k, r, f=f: fold[r["doc"]["document"]] == f))
        if f == args.folds:
            sentence_models = fitted
        print(f"  round {f + 1} of {len(rounds)} scored", file=sys.stderr)

    feats = {k: judge_features(scores[k], r["it"]["tool"], r["it"]["facets"], r["it"]["checklist"])
             for k, r in enumerate(rows)}
    # the shipped judge asks first whether the item is there at all; --compare also shows the one that takes the
    # likeliest of the three statuses at once
    variants = {"judged": True, "argmax": False} if args.compare else {"judged": True}
    c_judge = args.towards_shipped if args.towards_shipped is not None else 1.0

    def prior_of(item_id: str) -> dict | None:
        return None if args.towards_shipped is None else prior.judges.get(item_id)

    learned_by: dict[str, dict[int, str]] = {}
    free: dict[int, str] = {}  # what the shipped judge said before `allowed` (for --dump)
    judges_all: dict[str, dict] = {}
    for variant, positive_first in variants.items():
        learned: dict[int, str] = {}
        for f in rounds:
            by_item = defaultdict(list)
            for k, r in enumerate(rows):
                if learns_from(r["doc"]["document"], f):
                    by_item[r["item"]].append(k)
            judges = {item_id: _judge_model([three_class(rows[k]["human"]) for k in ks], [feats[k] for k in ks],
                                            positive_first, prior=prior_of(item_id), c=c_judge)
                      for item_id, ks in sorted(by_item.items())}
            for k, r in enumerate(rows):
                if fold[r["doc"]["document"]] == f:
                    said, learned[k] = _verdict(r, judges.get(r["item"]), feats[k])
                    if variant == "judged":
                        free[k] = said
            if f == args.folds and variant == "judged":
                judges_all = judges
        learned_by[variant] = learned
    learned = learned_by["judged"]
    if prior is not None:  # the shipped sentence scorers and item judges, for comparison
        variants["shipped judge"] = True
        learned_by["shipped judge"] = {
            k: _verdict(r, prior.judges.get(r["item"]), judge_features(shipped_scores[k], r["it"]["tool"],
                                                                        r["it"]["facets"], r["it"]["checklist"]))[1]
            for k, r in enumerate(rows)}

    print(f"\n{len(documents)} documents, {len(rows)} labelled items, {args.folds} folds grouped by document"
          + (f"; never trained on: {', '.join(sorted(tested))}" if tested else ""))
    print(f"{'folder':<12} {'':<10} {'macro-F1':>9} {'kappa':>7} {'3-class':>8} {'passage in top 3':>18}")
    groups = [(folder, [k for k, r in enumerate(rows) if folder_of[r["doc"]["document"]] == folder])
              for folder in sorted(set(folder_of.values()))]
    groups.append(("all trained", [k for k, r in enumerate(rows) if folder_of[r["doc"]["document"]] not in tested]))
    if tested:
        groups.append(("all tested", [k for k, r in enumerate(rows) if folder_of[r["doc"]["document"]] in tested]))
    for folder, ks in groups:
        shown = [("cues", lambda k: rows[k]["it"]["tool"])] + \
            [(v, lambda k, v=v: learned_by[v][k]) for v in variants]
        for name, tool in shown:
            pairs = [Pair(rows[k]["doc"]["document"], "", rows[k]["item"], rows[k]["item"], rows[k]["human"],
                          tool(k)) for k in ks]
            both = [k for k in ks if rows[k]["human"] in POSITIVE and rows[k]["it"]["tool"] in POSITIVE
                    and rows[k]["quote"].strip()]
            if name == "cues":
                covered = sum(quote_covers(rows[k]["quote"], rows[k]["it"]["evidence"][:3]) for k in both)
            else:
                by = shipped_scores if name == "shipped judge" else scores
                covered = sum(quote_covers(rows[k]["quote"], [rows[k]["doc"]["sentences"][i]["text"]
                                                         for i in np.argsort(-np.asarray(by[k]),
                                                                             kind="stable")[:3]])
                              for k in both)
            f1, kappa, three = macro_f1(pairs), binary_kappa(pairs), three_class_agreement(pairs)
            print(f"{folder:<12} {name:<10} {f1 or 0:>9.3f} {kappa or 0:>7.3f} {three or 0:>8.3f} "
                  f"{covered:>8}/{len(both):<4} {covered / max(1, len(both)):.2f}")
    if args.dump:
        import json

        out = [{"document": rows[k]["doc"]["document"], "folder": folder_of[rows[k]["doc"]["document"]],
                "item": rows[k]["item"], "human": rows[k]["human"], "cues": rows[k]["it"]["tool"],
                "judged": learned[k], "free": free[k], "hits": len(rows[k]["it"]["hit"]),
                "evidence": len(rows[k]["it"]["evidence"])} for k in range(len(rows))]
        args.dump.write_text(json.dumps(out, indent=1) + "\n", encoding="utf-8")
    if args.write:
        about = f"fitted by benchmarks/learned.py --write on {len(trained)} labelled documents; hashed words only"
        if args.sentences == "shipped":
            before = raw_about.split(";")[0]  # where the kept sentence scorers come from
            before = before if before.startswith("sentence scorers") else f"sentence scorers {before}"
            how = f"--sentences shipped --towards-shipped {args.towards_shipped}" if args.towards_shipped else \
                "--sentences shipped"
            about = (f"{before}; item judges refitted{' towards those before' if args.towards_shipped else ''} on "
                     f"{len(trained)} labelled documents ({how}); hashed words only")
        _write(sentence_models, judges_all, about)
    return 0


def _write(sentence_models: dict, judges: dict, about: str) -> None:
    import json

    from checker.core.output import write_atomic

    items = {i: {"sentence": sentence_models.get(i, NO_WORDS), "judge": judges[i]} for i in sorted(judges)}
    data = {"about": about, "buckets": BUCKETS, "items": items}
    target = ROOT / "checklists" / JUDGE_FILE
    write_atomic(target, json.dumps(data, sort_keys=True, separators=(",", ":")) + "\n")
    print(f"wrote {target} ({len(items)} items, {target.stat().st_size // 1024} KiB)")


if __name__ == "__main__":
    sys.exit(main())
