#!/usr/bin/env python3
"""Regenerate the committed reference vectors under tests/data/oracle/.

Run inside a throw-away virtualenv holding the pinned references
(see oracle_lib.PINS; tests/oracle/run.sh shows how to make one):

    python tests/oracle/make_vectors.py [--words /usr/share/dict/words]

Writes
  tests/data/oracle/pairs.jsonl    (candidate, reference) pairs with rouge-score,
                                   sacrebleu and rapidfuzz outputs
  tests/data/oracle/fuzzy.jsonl    short string pairs with rapidfuzz outputs
  tests/data/oracle/stems.tsv      word<TAB>stem from snowballstemmer 'english'
  tests/data/oracle/versions.json  versions, seeds and counts of the above
and, when Debian's unicode-data package is installed, vendors
  tests/data/unicode/SentenceBreakTest.txt
"""

from __future__ import annotations

import argparse
import json
import platform
import random
import re
import shutil
import subprocess
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
import oracle_lib as ol  # noqa: E402

PAIRS_SEED = 20020707  # arbitrary, fixed
PAIRS_RANDOM = 400
FUZZY_SEED = 19900101  # arbitrary, fixed
FUZZY_RANDOM = 400
STEMS_MAX_BYTES = 990_000
SBT_SOURCE = Path("/usr/share/unicode/auxiliary/SentenceBreakTest.txt")


def debian_version(pkg: str) -> str | None:
    try:
        out = subprocess.run(
            ["dpkg-query", "-W", "-f=${Version}", pkg], capture_output=True, text=True, check=True
        )
        return out.stdout.strip() or None
    except (OSError, subprocess.CalledProcessError):
        return None


def load_words(path: Path) -> list[str]:
    words = set()
    with path.open(encoding="utf-8", errors="replace") as fh:
        for line in fh:
            w = line.strip().lower()
            if re.fullmatch(r"[a-z]+", w):
                words.add(w)
    return sorted(words)


def write_jsonl(path: Path, records) -> int:
    n = 0
    with path.open("w", encoding="utf-8", newline="\n") as fh:
        for r in records:
            fh.write(json.dumps(r, ensure_ascii=False) + "\n")
            n += 1
    return n


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--words", type=Path, default=Path("/usr/share/dict/words"),
                    help="word list (Debian package wamerican)")
    args = ap.parse_args()

    versions = ol.check_pins(["rouge-score", "sacrebleu", "rapidfuzz", "snowballstemmer"])
    ol.DATA_DIR.mkdir(parents=True, exist_ok=True)

    if not args.words.exists():
        sys.exit(f"{args.words} not found: install Debian's wamerican (apt-get install wamerican)")
    words = load_words(args.words)

    # 1. (candidate, reference) pairs.
    pairs = [ol.pair_record(*p) for p in ol.generate_pairs(PAIRS_SEED, PAIRS_RANDOM)]
    n_pairs = write_jsonl(ol.DATA_DIR / "pairs.jsonl", pairs)

    # 2. Fuzzy word pairs (a few hundred words sampled from the word list).
    sample = random.Random(FUZZY_SEED).sample(words, 300)
    fuzzy = []
    for pid, a, b in ol.generate_fuzzy_pairs(FUZZY_SEED, FUZZY_RANDOM, sample):
        fuzzy.append({"id": pid, "a": a, "b": b, **ol.fuzzy_ref(a, b)})
    n_fuzzy = write_jsonl(ol.DATA_DIR / "fuzzy.jsonl", fuzzy)

    # 3. Stems.  Every word whose stem differs from it, then words that the
    # stemmer leaves alone, in a seeded order, until the size budget.
    import snowballstemmer

    stemmer = snowballstemmer.stemmer("english")
    stems = {w: stemmer.stemWord(w) for w in words}
    changed = [w for w in words if stems[w] != w]
    unchanged = [w for w in words if stems[w] == w]
    random.Random(PAIRS_SEED).shuffle(unchanged)
    chosen = list(changed)
    size = sum(len(w) + len(stems[w]) + 2 for w in chosen)
    for w in unchanged:
        extra = 2 * len(w) + 2
        if size + extra > STEMS_MAX_BYTES:
            break
        chosen.append(w)
        size += extra
    chosen.sort()
    with (ol.DATA_DIR / "stems.tsv").open("w", encoding="utf-8", newline="\n") as fh:
        for w in chosen:
            fh.write(f"{w}\t{stems[w]}\n")

    # 4. Unicode's sentence-break test file, licence header and all.
    sbt = None
    if SBT_SOURCE.exists():
        dest = ol.REPO_ROOT / "tests" / "data" / "unicode" / "SentenceBreakTest.txt"
        dest.parent.mkdir(parents=True, exist_ok=True)
        shutil.copyfile(SBT_SOURCE, dest)
        sbt = {"debian_package": "unicode-data", "debian_version": debian_version("unicode-data"),
               "first_line": SBT_SOURCE.read_text(encoding="utf-8").splitlines()[0]}

    meta = {
        "generator": "tests/oracle/make_vectors.py",
        "python": platform.python_version(),
        "packages": versions,
        "tolerance": ol.TOLERANCE,
        "pairs": {
            "file": "pairs.jsonl", "count": n_pairs, "seed": PAIRS_SEED,
            "rouge": "rouge_score.rouge_scorer.RougeScorer(['rouge1','rouge2','rougeL'], use_stemmer=False)"
                     ".score(target=reference, prediction=candidate)",
            "bleu": "sacrebleu.sentence_bleu(candidate, [reference]) (defaults: 13a, exp smoothing, effective order)",
            "fuzzy": "rapidfuzz.distance Levenshtein.distance / Levenshtein.normalized_similarity / "
                     "Jaro.similarity / JaroWinkler.similarity on the whole strings",
            "tokens": "candidate_tokens/reference_tokens: rouge_score.tokenize.tokenize(text, None); "
                      "candidate_13a/reference_13a: Tokenizer13a()(text.rstrip()).split()",
        },
        "fuzzy": {"file": "fuzzy.jsonl", "count": n_fuzzy, "seed": FUZZY_SEED},
        "stems": {
            "file": "stems.tsv", "count": len(chosen), "changed_by_stemmer": len(changed),
            "algorithm": "snowballstemmer.stemmer('english').stemWord",
            "vocabulary": "Debian wamerican /usr/share/dict/words, lower-cased, [a-z]+ only, deduplicated",
            "wamerican_version": debian_version("wamerican"), "vocabulary_size": len(words),
        },
        "sentence_break_test": sbt,
    }
    (ol.DATA_DIR / "versions.json").write_text(json.dumps(meta, indent=2, ensure_ascii=False) + "\n",
                                              encoding="utf-8")
    print(f"pairs {n_pairs}, fuzzy {n_fuzzy}, stems {len(chosen)} ({size} bytes), "
          f"sentence-break test {'vendored' if sbt else 'not found'}")


if __name__ == "__main__":
    main()
