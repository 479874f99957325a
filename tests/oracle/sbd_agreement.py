#!/usr/bin/env python3
"""How often does plumbline's chat-answer sentence splitter agree with pysbd
on real English prose?

    python tests/oracle/sbd_agreement.py PATH/TO/plumbline [--dir DIR ...] [--max N]

Prose comes from text files that Debian installs on every system
(/usr/share/common-licenses by default; add more with --dir).  Each file is
cut into paragraphs at blank lines and each paragraph's lines are joined with
single spaces.  Both splitters see the same paragraph; sentences are compared
after trimming whitespace.

Prints the share of paragraphs split identically and the precision/recall of
plumbline's internal boundaries against pysbd's.  This is a figure, not a
test: it exits 0 whenever it could run, 2 when it could not.
"""

from __future__ import annotations

import argparse
import json
import re
import subprocess
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
import oracle_lib as ol  # noqa: E402


def paragraphs(dirs: list[Path], max_n: int) -> list[tuple[str, str]]:
    seen_files = set()
    seen = set()
    out = []
    for d in dirs:
        if not d.is_dir():
            continue
        for f in sorted(d.iterdir()):
            try:
                real = f.resolve()
            except OSError:
                continue
            if real in seen_files or not real.is_file():
                continue
            seen_files.add(real)
            try:
                text = real.read_text(encoding="utf-8")
            except (OSError, UnicodeDecodeError):
                continue
            for block in re.split(r"\n\s*\n", text):
                para = " ".join(line.strip() for line in block.splitlines()).strip()
                # Prose only: long enough, mostly letters, at least one full stop
                # followed by more text (so that there is something to split).
                letters = sum(ch.isalpha() for ch in para)
                if len(para) < 80 or letters < 0.7 * len(para.replace(" ", "")):
                    continue
                if not re.search(r"[.!?]\s+\S", para):
                    continue
                if para in seen:
                    continue
                seen.add(para)
                out.append((f.name, para))
                if len(out) >= max_n:
                    return out
    return out


def boundaries(para: str, sentences: list[str]) -> list[int] | None:
    """Character offsets where each sentence but the last ends, found by
    locating the trimmed sentences in order; None if they cannot be found."""
    pos = 0
    ends = []
    for s in sentences:
        s = s.strip()
        if not s:
            continue
        i = para.find(s, pos)
        if i < 0:
            return None
        pos = i + len(s)
        ends.append(pos)
    return ends[:-1]


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("binary")
    ap.add_argument("--dir", type=Path, action="append", default=None)
    ap.add_argument("--max", type=int, default=400)
    ap.add_argument("--show", type=int, default=5, help="differing paragraphs to print")
    args = ap.parse_args()

    ol.check_pins(["pysbd"])
    import pysbd

    dirs = args.dir or [Path("/usr/share/common-licenses")]
    paras = paragraphs(dirs, args.max)
    if not paras:
        print(f"sbd_agreement: no prose paragraphs found in {', '.join(map(str, dirs))}")
        return 2

    seg = pysbd.Segmenter(language="en", clean=False)
    same = 0
    tp = fp = fn = 0
    unlocated = 0
    shown = 0
    for name, para in paras:
        theirs = [s.strip() for s in seg.segment(para) if s.strip()]
        try:
            proc = subprocess.run([args.binary, "sentences", "--text", para],
                                  capture_output=True, text=True, encoding="utf-8", timeout=60)
        except (OSError, subprocess.TimeoutExpired) as e:
            print(f"sbd_agreement: cannot run {args.binary}: {e}")
            return 2
        if proc.returncode != 0:
            print(f"sbd_agreement: {args.binary} sentences exited {proc.returncode}: {proc.stderr.strip()[:300]}")
            return 2
        ours = [s["text"].strip() for s in json.loads(proc.stdout) if s["text"].strip()]
        if ours == theirs:
            same += 1
        elif shown < args.show:
            shown += 1
            print(f"--- {name}: {para[:160]!r}...")
            print(f"    plumbline: {len(ours)} sentences, pysbd: {len(theirs)}")
        b_ours, b_theirs = boundaries(para, ours), boundaries(para, theirs)
        if b_ours is None or b_theirs is None:
            unlocated += 1
            continue
        so, st = set(b_ours), set(b_theirs)
        tp += len(so & st)
        fp += len(so - st)
        fn += len(st - so)

    n = len(paras)
    precision = tp / (tp + fp) if tp + fp else 1.0
    recall = tp / (tp + fn) if tp + fn else 1.0
    print(f"sbd_agreement: {n} paragraphs from {', '.join(map(str, dirs))}; "
          f"identical splits {same}/{n} ({100 * same / n:.1f}%); "
          f"plumbline boundaries vs pysbd {ol.PINS['pysbd']}: precision {precision:.3f}, "
          f"recall {recall:.3f} (tp {tp}, fp {fp}, fn {fn}"
          f"{f', {unlocated} paragraphs not located' if unlocated else ''})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
