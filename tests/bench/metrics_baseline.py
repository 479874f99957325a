#!/usr/bin/env python3
"""Times the reference libraries on the pairs of the metrics benchmark.

    python tests/bench/metrics_baseline.py PAIRS.jsonl

Run by `cargo bench --bench metrics` (tests/bench/metrics.rs), which writes the
pairs ({"id", "candidate", "reference"} per line) and reads back one JSON object:

    {"python": "3.11.7",
     "rouge_score": {"version": "0.1.2", "pairs": N, "seconds": S, "cpu_seconds": C},
     "sacrebleu": {"version": "2.6.0", "pairs": N, "seconds": S, "cpu_seconds": C}}

rouge-score: RougeScorer(["rouge1", "rouge2", "rougeL"], use_stemmer=True)
.score(target=reference, prediction=candidate) per pair, the package's own
tokeniser and Porter stemmer. sacrebleu: sentence_bleu(candidate, [reference])
with its defaults (13a, exp smoothing, effective order). Each library is timed
on its own over all pairs, once, after the same three pairs have warmed it up
(imports, compiled patterns); "seconds" is wall-clock time, "cpu_seconds" the
thread's time on a processor (time.thread_time), one thread.
"""

from __future__ import annotations

import importlib.metadata
import json
import platform
import sys
import time


def main() -> int:
    if len(sys.argv) != 2:
        print(__doc__, file=sys.stderr)
        return 2
    from rouge_score import rouge_scorer
    import sacrebleu

    pairs = []
    with open(sys.argv[1], encoding="utf-8") as fh:
        for line in fh:
            if line.strip():
                p = json.loads(line)
                pairs.append((p["candidate"], p["reference"]))

    scorer = rouge_scorer.RougeScorer(["rouge1", "rouge2", "rougeL"], use_stemmer=True)
    for cand, ref in pairs[:3]:
        scorer.score(target=ref, prediction=cand)
        sacrebleu.sentence_bleu(cand, [ref])

    checksum = 0.0
    t, c = time.perf_counter(), time.thread_time()
    for cand, ref in pairs:
        s = scorer.score(target=ref, prediction=cand)
        checksum += s["rougeL"].fmeasure
    rouge_seconds, rouge_cpu = time.perf_counter() - t, time.thread_time() - c

    t, c = time.perf_counter(), time.thread_time()
    for cand, ref in pairs:
        checksum += sacrebleu.sentence_bleu(cand, [ref]).score
    bleu_seconds, bleu_cpu = time.perf_counter() - t, time.thread_time() - c

    print(json.dumps({
        "python": platform.python_version(),
        "rouge_score": {"version": importlib.metadata.version("rouge-score"),
                        "pairs": len(pairs), "seconds": rouge_seconds,
                        "cpu_seconds": rouge_cpu},
        "sacrebleu": {"version": importlib.metadata.version("sacrebleu"),
                      "pairs": len(pairs), "seconds": bleu_seconds,
                      "cpu_seconds": bleu_cpu},
        "checksum": checksum,
    }))
    return 0


if __name__ == "__main__":
    sys.exit(main())
