#!/usr/bin/env python3
"""Times the reference libraries on the pairs of the metrics benchmark.

    python tests/bench/metrics_baseline.py PAIRS.jsonl

Run by `cargo bench --bench metrics` (tests/bench/metrics.rs), which writes the
pairs ({"id", "candidate", "reference"} per line) and reads back one JSON object:

    {"python": "3.11.7", "runs": 3,
     "rouge_score": {"version": "0.1.2", "pairs": N, "seconds": S, "cpu_seconds": C},
     "sacrebleu": {"version": "2.6.0", "pairs": N, "seconds": S, "cpu_seconds": C}}

rouge-score: RougeScorer(["rouge1", "rouge2", "rougeL"], use_stemmer=True)
.score(target=reference, prediction=candidate) per pair, the package's own
tokeniser and Porter stemmer. sacrebleu: sentence_bleu(candidate, [reference])
with its defaults (13a, exp smoothing, effective order). Each library is timed
on its own over all pairs, after the same three pairs have warmed it up
(imports, compiled patterns), RUNS times; the best run is reported, as the
Rust side reports its best of three. "seconds" is wall-clock time,
"cpu_seconds" the thread's time on a processor (time.thread_time, its best
run), one thread.
"""

from __future__ import annotations

import importlib.metadata
import json
import platform
import sys
import time


RUNS = 3


def best_of(f):
    """Least wall-clock and least thread time of RUNS calls of f."""
    wall, cpu = float("inf"), float("inf")
    for _ in range(RUNS):
        t, c = time.perf_counter(), time.thread_time()
        f()
        wall, cpu = min(wall, time.perf_counter() - t), min(cpu, time.thread_time() - c)
    return wall, cpu


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

    def rouge_pass():
        nonlocal checksum
        for cand, ref in pairs:
            checksum += scorer.score(target=ref, prediction=cand)["rougeL"].fmeasure

    def bleu_pass():
        nonlocal checksum
        for cand, ref in pairs:
            checksum += sacrebleu.sentence_bleu(cand, [ref]).score

    rouge_seconds, rouge_cpu = best_of(rouge_pass)
    bleu_seconds, bleu_cpu = best_of(bleu_pass)

    print(json.dumps({
        "python": platform.python_version(),
        "runs": RUNS,
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
