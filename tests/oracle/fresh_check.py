#!/usr/bin/env python3
"""Score NEW random pairs with the pinned references and with plumbline, and
compare them to 1e-9.

    python tests/oracle/fresh_check.py PATH/TO/plumbline [--seed N] [--count N]

The seed defaults to the current time and is printed, so a failure can be
replayed.  Prints one summary line; exits 1 on any disagreement, 2 when the
binary cannot be run.
"""

from __future__ import annotations

import argparse
import json
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
import oracle_lib as ol  # noqa: E402


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("binary", help="path of the plumbline binary")
    ap.add_argument("--seed", type=int, default=None)
    ap.add_argument("--count", type=int, default=500)
    ap.add_argument("--show", type=int, default=10, help="disagreements to print in full")
    args = ap.parse_args()

    ol.check_pins(["rouge-score", "sacrebleu", "rapidfuzz"])
    seed = args.seed if args.seed is not None else int(time.time())

    # The fixed edge cases ride along with the random pairs (cheap, and a
    # regression there matters as much as on random text).
    pairs = [ol.pair_record(*p) for p in ol.generate_pairs(seed, args.count, include_fixed=True)]

    with tempfile.TemporaryDirectory() as tmp:
        inp = Path(tmp) / "pairs.jsonl"
        with inp.open("w", encoding="utf-8") as fh:
            for p in pairs:
                fh.write(json.dumps({"id": p["id"], "candidate": p["candidate"],
                                     "reference": p["reference"]}, ensure_ascii=False) + "\n")
        try:
            proc = subprocess.run(
                [args.binary, "score", "--pairs", str(inp), "--tokenizer", "ascii-alnum"],
                capture_output=True, text=True, encoding="utf-8", timeout=600,
            )
        except (OSError, subprocess.TimeoutExpired) as e:
            print(f"fresh_check: cannot run {args.binary}: {e}")
            return 2
    if proc.returncode != 0:
        print(f"fresh_check: {args.binary} exited {proc.returncode}: {proc.stderr.strip()[:500]}")
        return 2

    lines = [json.loads(line) for line in proc.stdout.splitlines() if line.strip()]
    by_id = {}
    for obj in lines:
        if "id" in obj:
            by_id[obj["id"]] = obj

    bad = []
    for p in pairs:
        got = by_id.get(p["id"])
        if got is None:
            bad.append((p, ["no output line for this id"]))
            continue
        diffs = ol.compare_cli_line(p["expected"], got)
        if diffs:
            bad.append((p, diffs))

    for p, diffs in bad[: args.show]:
        print(f"DISAGREE {p['id']}: candidate={p['candidate']!r} reference={p['reference']!r}")
        for d in diffs:
            print(f"    {d}")
    agree = len(pairs) - len(bad)
    print(f"fresh_check: seed {seed}: {agree}/{len(pairs)} pairs agree with "
          f"rouge-score {ol.PINS['rouge-score']}, sacrebleu {ol.PINS['sacrebleu']}, "
          f"rapidfuzz {ol.PINS['rapidfuzz']} to {ol.TOLERANCE:g}; {len(bad)} disagree")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
