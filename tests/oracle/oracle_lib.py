"""Shared pieces of the oracle scripts: pinned reference versions, the
generator of (candidate, reference) pairs, and the reference computations.

Everything here is deterministic for a given seed.  The reference libraries
are imported lazily so that `PINS` can be read without them installed.
"""

from __future__ import annotations

import importlib.metadata
import random
import sys
from pathlib import Path

# Exact versions the committed vectors were produced with.  run.sh installs
# these; make_vectors.py refuses to run with anything else.
PINS = {
    "rouge-score": "0.1.2",
    "sacrebleu": "2.6.0",
    "rapidfuzz": "3.14.6",
    "snowballstemmer": "2.2.0",
    "pysbd": "0.3.4",
}

TOLERANCE = 1e-9

REPO_ROOT = Path(__file__).resolve().parents[2]
DATA_DIR = REPO_ROOT / "tests" / "data" / "oracle"


def check_pins(names=None) -> dict:
    """Return {package: version}; exit if an installed version is not the pin."""
    found = {}
    bad = []
    for name in names or PINS:
        try:
            v = importlib.metadata.version(name)
        except importlib.metadata.PackageNotFoundError:
            v = None
        found[name] = v
        if v != PINS[name]:
            bad.append(f"{name}: want {PINS[name]}, have {v}")
    if bad:
        sys.exit("pinned reference versions not installed:\n  " + "\n  ".join(bad))
    return found


# ---------------------------------------------------------------------------
# Invented vocabulary.  Plain English function words plus made-up nouns, so
# that the fixtures name no real person, company or product.

FUNCTION_WORDS = (
    "the a an of to in on at by for with from and or but not is are was were be "
    "been has have had it this that these those which who what when where why how "
    "all any each some no more most less than then so as if because while after "
    "before under over between into out up down very also only just can may must "
    "will would should could do does did"
).split()

CONTENT_WORDS = (
    "report ledger invoice contract clause policy tenant vessel harbour quarry "
    "lantern meadow orchard copper falcon river glacier signal beacon archive "
    "tariff permit warranty schedule payment refund deadline quarter budget "
    "audit council bridge tunnel engine valve sensor battery filter pump "
    "running runs ran runner happily happiness generous generously connected "
    "connection connecting connects organisation organization analysed analyzed "
    "zorvath quillane brembly tasker ostrin varnel pellucid brindle-free "
    "review reviewed reviewing approve approved approval reject rejected "
    "increase increased decreases fell rose doubled halved estimated "
    "retention holiday allowance employee manager supplier customer "
    "cafe paragraph section appendix annex table figure page volume"
).split()

ACCENTED = [
    "café", "naïve", "résumé", "façade", "coöperate", "jalapeño", "Zürbel-like",
    "crème brûlée", "Säoma", "Ångmar", "smörgåsbord", "déjà vu", "Ærøbek",
    "e\u0301te\u0301",  # decomposed é (e + COMBINING ACUTE)
    "ﬁnal", "ﬂoor",  # ligatures fi / fl
    "straße", "STRASSE", "İstel-ish", "ıi", "Σίσυλος", "ΣΊΣΥΛΟΣ",
    "\u212a" + "ettle",  # KELVIN SIGN lower-cases to ASCII 'k' in Python
    "Ωmega", "ℌalden", "①②③", "１２３ ＡＢＣ",  # fullwidth digits and letters
]

CJK = [
    "文档中的答案", "答案不在文档中", "東京の報告書によると", "報告書", "보고서에 따르면",
    "第3条の規定", "价格为100元。", "中文，标点！", "한국어 문장입니다.",
]

EMOJI = ["👍", "🎉 done", "👩‍💻 dev", "✔︎ ok", "🇫🇷", "a😀b", "x\u200dy"]

PUNCT_ONLY = [
    "...", "!!!", "?!", "—", "–", "-", "--", "(", ")", "[]", "{}", "\"", "'", "''",
    ",,,", ";:", "…", "· • ·", "/ \\ |", "@#$%^&*", "~`", "<>", "&", "&&&", "-\n",
]

NUMBERS = [
    "3.14", "1,000", "1,000.50", "2-3", "10-20%", "2024-06-01", "v1.2.3", "12:30",
    "$5", "€5,00", "5.", ".5", "1.,2", "x.5,y", "3.14, 2,5.6.7", "1-2-3", "a-1",
    "-5", "+7", "1e10", "0x1F", "100%", "No. 7", "§ 4.2(b)", "1st 2nd 3rd",
]

ENTITIES = [
    "&amp;", "&quot;quoted&quot;", "&lt;tag&gt;", "a &amp; b", "&amp;amp;",
    "<skipped>", "before <skipped> after", "well-\nknown", "end-\n", "&nbsp;",
    "R&D-like", "Q&A",
]

QUOTES = [
    "“quoted”", "‘single’", "«guillemets»", "„low high“", "it’s", "don't",
    "‹a›", "\"straight\"", "`back`", "'apostrophe'",
]

WHITESPACE = [
    "\t", "\n", "\r\n", "\r", "  ", "\u00a0", "\u2003", "\u3000", "\u2028", "\u0085",
    "\u000b", "\u000c", "\u200b",  # ZERO WIDTH SPACE: not whitespace for either
]

# Characters that Python's str.split() treats as separators but the Unicode
# White_Space property does not (information separators 1-4).
PY_ONLY_SEPARATORS = ["\x1c", "\x1d", "\x1e", "\x1f"]


def _sentence(rng: random.Random, n: int) -> list[str]:
    words = []
    for _ in range(n):
        if rng.random() < 0.45:
            words.append(rng.choice(FUNCTION_WORDS))
        else:
            words.append(rng.choice(CONTENT_WORDS))
    return words


def _decorate(rng: random.Random, words: list[str]) -> str:
    """Join words with a mix of separators, capitals and punctuation."""
    out = []
    for i, w in enumerate(words):
        r = rng.random()
        if r < 0.08:
            w = w.capitalize()
        elif r < 0.11:
            w = w.upper()
        if rng.random() < 0.08:
            w += rng.choice([",", ".", ";", ":", "!", "?", "'s", ")", "%"])
        if rng.random() < 0.03:
            w = rng.choice(["(", "\"", "“", "'"]) + w
        if i and rng.random() < 0.05:
            out.append(rng.choice([" ", "  ", "\t", "\n", " - ", " — "]))
        elif i:
            out.append(" ")
        out.append(w)
    s = "".join(out)
    if s and rng.random() < 0.5:
        s += rng.choice([".", "!", "?", "...", " .", ""])
    return s


def _mutate(rng: random.Random, words: list[str]) -> list[str]:
    """Make a candidate from reference words: delete, insert, swap, replace."""
    w = list(words)
    for _ in range(rng.randint(0, max(1, len(w) // 3))):
        op = rng.random()
        if op < 0.25 and w:
            del w[rng.randrange(len(w))]
        elif op < 0.5:
            w.insert(rng.randint(0, len(w)), rng.choice(FUNCTION_WORDS + CONTENT_WORDS))
        elif op < 0.75 and len(w) > 1:
            i = rng.randrange(len(w) - 1)
            w[i], w[i + 1] = w[i + 1], w[i]
        elif w:
            w[rng.randrange(len(w))] = rng.choice(CONTENT_WORDS)
    return w


def _exotic(rng: random.Random) -> str:
    pool = rng.choice([ACCENTED, CJK, EMOJI, PUNCT_ONLY, NUMBERS, ENTITIES, QUOTES])
    return rng.choice(pool)


def generate_pairs(seed: int, n_random: int, include_fixed: bool = True):
    """Yield (id, category, candidate, reference)."""
    rng = random.Random(seed)
    fixed = []
    if include_fixed:
        fixed += [
            ("empty-both", "", ""),
            ("empty-candidate", "", "the report was approved"),
            ("empty-reference", "the report was approved", ""),
            ("whitespace-only", " \t\n ", "  "),
            ("identical", "The tenant paid the deposit in March.", "The tenant paid the deposit in March."),
            ("identical-long", " ".join(_sentence(random.Random(1), 80)), " ".join(_sentence(random.Random(1), 80))),
            ("one-token-same", "ledger", "ledger"),
            ("one-token-diff", "ledger", "invoice"),
            ("one-token-case", "Ledger", "ledger"),
            ("one-token-vs-two", "ledger", "ledger ledger"),
            ("repeated-cand", "the the the the the the the", "the cat is on the mat"),
            ("repeated-ref", "the cat", "the the the the"),
            ("repeated-both", "a a a b b", "a b a b a b"),
            ("case-only", "THE REPORT WAS APPROVED", "the report was approved"),
            ("case-mixed", "The Report Was Approved", "the REPORT was approved"),
            ("punct-only-both", "...", "!!!"),
            ("punct-only-cand", "?!", "the deadline passed"),
            ("punct-vs-words", "the, deadline; passed.", "the deadline passed"),
            ("cafe", "café naïve", "cafe naive"),
            ("cafe-same", "café", "café"),
            ("cafe-decomposed", "cafe\u0301", "café"),
            ("kelvin", "\u212a", "k"),
            ("dotted-i", "İstel", "istel"),
            ("sharp-s", "straße", "strasse"),
            ("ligature", "ﬁnal ﬂoor", "final floor"),
            ("fullwidth", "１２３ ＡＢＣ", "123 ABC"),
            ("greek-sigma", "ΣΊΣΥΛΟΣ", "σίσυλος"),
            ("cjk-same", "文档中的答案", "文档中的答案"),
            ("cjk-diff", "文档中的答案", "答案不在文档中"),
            ("cjk-mixed", "price 价格为100元。 per unit", "price is 100 per unit"),
            ("korean", "보고서에 따르면 3%", "보고서에 따르면 4%"),
            ("emoji", "👍 approved 🎉", "approved 👍"),
            ("zwj", "👩‍💻 dev", "👩 dev"),
            ("quotes-curly", "“approved” by the council’s chair", "\"approved\" by the council's chair"),
            ("guillemets", "«approved»", "approved"),
            ("tabs", "the\tdeadline\tpassed", "the deadline passed"),
            ("newlines", "the deadline\npassed\r\nyesterday", "the deadline passed yesterday"),
            ("hyphen-newline", "well-\nknown supplier", "wellknown supplier"),
            ("trailing-hyphen-newline", "the supplier-\n", "the supplier-"),
            ("trailing-whitespace", "the supplier \t\n", "the supplier"),
            ("leading-whitespace", "\n\t the supplier", "the supplier"),
            ("entities", "a &amp; b &lt;tag&gt; &quot;q&quot;", "a & b <tag> \"q\""),
            ("entity-double", "&amp;amp;", "&amp;"),
            ("skipped", "before <skipped> after", "before after"),
            ("numbers-decimal", "3.14 is more than 2.71", "3.14 is more than 2,71"),
            ("numbers-thousands", "1,000 units at $5.50 each", "1000 units at $5.50 each"),
            ("numbers-dash", "pages 10-20 and 2024-06-01", "pages 10 - 20 and 2024-06-01"),
            ("numbers-tricky", "1.,2 x.5,y 3.14, 2,5.6.7", "1., 2 x .5, y"),
            ("dash-after-digit", "a-1 1-a 1-2-3", "a - 1 1 - a 1 - 2 - 3"),
            ("period-comma", "a.b,c a. b, c", "a . b , c"),
            ("nbsp", "the\u00a0deadline\u00a0passed", "the deadline passed"),
            ("em-space", "the\u2003deadline\u3000passed", "the deadline passed"),
            ("line-sep", "the\u2028deadline\u0085passed", "the deadline passed"),
            ("vt-ff", "the\u000bdeadline\u000cpassed", "the deadline passed"),
            ("zero-width-space", "the\u200bdeadline", "the deadline"),
            ("nul", "the\u0000deadline", "the deadline"),
            ("py-separators", "the\x1cdeadline\x1dpassed\x1eon\x1fmonday", "the deadline passed on monday"),
            ("underscore", "snake_case and kebab-case", "snake case and kebab case"),
            ("apostrophes", "the council's decision isn't final", "the councils decision isnt final"),
            ("urls", "see https://example.invalid/a_b?c=1&d=2", "see example invalid a b c 1 d 2"),
            ("long-vs-short", " ".join(_sentence(random.Random(2), 300)), "the report"),
            ("short-vs-long", "the report", " ".join(_sentence(random.Random(3), 300))),
            ("reordered", "gunman the kill police", "police killed the gunman"),
            ("paper-lin-s2", "police kill the gunman", "police killed the gunman"),
            ("paper-lin-s3", "the gunman kill police", "police killed the gunman"),
            ("brevity", "the cat", "the cat sat on the mat"),
            ("longer-cand", "the cat sat on the mat today in the sun", "the cat sat on the mat"),
            ("bigram-only", "cat the mat on", "the cat on the mat"),
            ("three-match", "a b c x", "a b c y"),
            ("four-match", "a b c d x", "a b c d y"),
        ]
        for i, (cat, c, r) in enumerate(fixed):
            yield (f"fixed-{i:03d}-{cat}", cat, c, r)

    for i in range(n_random):
        kind = rng.random()
        n = rng.choice([1, 2, 3, 4, 5, 8, 12, 20, 35, 60, 120])
        ref_words = _sentence(rng, n)
        if kind < 0.55:
            cat = "mutated"
            cand_words = _mutate(rng, ref_words)
        elif kind < 0.70:
            cat = "unrelated"
            cand_words = _sentence(rng, rng.choice([1, 3, 7, 15, 40]))
        elif kind < 0.80:
            cat = "shuffled"
            cand_words = list(ref_words)
            rng.shuffle(cand_words)
        else:
            cat = "exotic"
            cand_words = _mutate(rng, ref_words)
            for _ in range(rng.randint(1, 4)):
                target = cand_words if rng.random() < 0.5 else ref_words
                target.insert(rng.randint(0, len(target)), _exotic(rng))
        cand = _decorate(rng, cand_words)
        ref = _decorate(rng, ref_words)
        if rng.random() < 0.05:
            sep = rng.choice(WHITESPACE + PY_ONLY_SEPARATORS)
            cand = cand.replace(" ", sep, rng.randint(1, 3))
        yield (f"rand-{seed}-{i:04d}-{cat}", cat, cand, ref)


# ---------------------------------------------------------------------------
# Fuzzy-match word pairs.

def generate_fuzzy_pairs(seed: int, n: int, words: list[str] | None = None):
    """Yield (id, a, b): random strings over small alphabets (so that matches
    and transpositions are frequent), edited copies of words, and a few fixed
    edge cases."""
    rng = random.Random(seed)
    fixed = [
        ("", ""), ("", "a"), ("a", ""), ("a", "a"), ("a", "b"), ("ab", "ba"),
        ("abc", "abc"), ("abc", "cba"), ("kitten", "sitting"), ("flaw", "lawn"),
        ("MARTHA", "MARHTA"), ("DWAYNE", "DUANE"), ("DIXON", "DICKSONX"),
        ("café", "cafe"), ("cafe\u0301", "café"), ("naïve", "naive"),
        ("😀", "😃"), ("a😀b", "ab"), ("文档", "文件"), ("straße", "strasse"),
        ("abcdefghij", "jihgfedcba"), ("aaaa", "aaab"), ("prefix match", "prefix matcH"),
        ("crate", "trace"), ("dixon", "dicksonx"), ("tones", "toneson"),
        ("abcvwxyz", "cabvwxyz"), ("same prefix differs late", "same prefix differs soon"),
    ]
    for i, (a, b) in enumerate(fixed):
        yield (f"fuzzy-fixed-{i:03d}", a, b)
    alphabets = ["ab", "abc", "abcd", "acgt", "abcdefghijklmnopqrstuvwxyz", "aé😀文"]
    for i in range(n):
        r = rng.random()
        if words and r < 0.5:
            a = rng.choice(words)
            b = list(a)
            for _ in range(rng.randint(0, 3)):
                op = rng.random()
                if op < 0.3 and b:
                    del b[rng.randrange(len(b))]
                elif op < 0.6:
                    b.insert(rng.randint(0, len(b)), rng.choice("abcdefghijklmnopqrstuvwxyz"))
                elif op < 0.8 and len(b) > 1:
                    j = rng.randrange(len(b) - 1)
                    b[j], b[j + 1] = b[j + 1], b[j]
                elif b:
                    b[rng.randrange(len(b))] = rng.choice("aeiou")
            b = "".join(b)
            if rng.random() < 0.2:
                b = rng.choice(words)
        else:
            alpha = rng.choice(alphabets)
            a = "".join(rng.choice(alpha) for _ in range(rng.randint(0, 14)))
            b = "".join(rng.choice(alpha) for _ in range(rng.randint(0, 14)))
        yield (f"fuzzy-{seed}-{i:04d}", a, b)


# ---------------------------------------------------------------------------
# Reference computations.

_scorer = None


def rouge_ref(candidate: str, reference: str) -> dict:
    global _scorer
    from rouge_score import rouge_scorer

    if _scorer is None:
        _scorer = rouge_scorer.RougeScorer(["rouge1", "rouge2", "rougeL"], use_stemmer=False)
    s = _scorer.score(target=reference, prediction=candidate)
    return {
        k: {"precision": s[k].precision, "recall": s[k].recall, "f": s[k].fmeasure}
        for k in ("rouge1", "rouge2", "rougeL")
    }


def rouge_tokens(text: str) -> list[str]:
    from rouge_score import tokenize

    return tokenize.tokenize(text, None)


def bleu_ref(candidate: str, reference: str) -> dict:
    import sacrebleu

    b = sacrebleu.sentence_bleu(candidate, [reference])
    return {
        "score": b.score,
        "precisions": list(b.precisions),
        "bp": b.bp,
        "sys_len": b.sys_len,
        "ref_len": b.ref_len,
    }


def tokens_13a(text: str) -> list[str]:
    # What sentence_bleu does to each segment before counting n-grams
    # (BLEU._preprocess_segment with lowercase=False, then str.split()).
    from sacrebleu.tokenizers.tokenizer_13a import Tokenizer13a

    return Tokenizer13a()(text.rstrip()).split()


def fuzzy_ref(a: str, b: str) -> dict:
    from rapidfuzz.distance import Jaro, JaroWinkler, Levenshtein

    return {
        "levenshtein": Levenshtein.distance(a, b),
        "levenshtein_similarity": Levenshtein.normalized_similarity(a, b),
        "jaro": Jaro.similarity(a, b),
        "jaro_winkler": JaroWinkler.similarity(a, b),
    }


def pair_record(pid: str, cat: str, candidate: str, reference: str) -> dict:
    return {
        "id": pid,
        "category": cat,
        "candidate": candidate,
        "reference": reference,
        "expected": {
            "candidate_tokens": rouge_tokens(candidate),
            "reference_tokens": rouge_tokens(reference),
            "candidate_13a": tokens_13a(candidate),
            "reference_13a": tokens_13a(reference),
            **rouge_ref(candidate, reference),
            "bleu": bleu_ref(candidate, reference),
            **fuzzy_ref(candidate, reference),
        },
    }


def close(a, b, tol=TOLERANCE) -> bool:
    return abs(float(a) - float(b)) <= tol


def compare_cli_line(exp: dict, got: dict) -> list[str]:
    """Differences between expected reference outputs and one line printed
    by `plumbline score --pairs`; empty when they agree."""
    diffs = []
    if "error" in got:
        return [f"error line: {got['error']}"]
    for k in ("rouge1", "rouge2", "rougeL"):
        for f in ("precision", "recall", "f"):
            if not close(exp[k][f], got[k][f]):
                diffs.append(f"{k}.{f}: ours {got[k][f]!r} theirs {exp[k][f]!r}")
    eb, gb = exp["bleu"], got["bleu"]
    for f in ("score", "bp"):
        if not close(eb[f], gb[f]):
            diffs.append(f"bleu.{f}: ours {gb[f]!r} theirs {eb[f]!r}")
    for i in range(4):
        if not close(eb["precisions"][i], gb["precisions"][i]):
            diffs.append(f"bleu.precisions[{i}]: ours {gb['precisions'][i]!r} theirs {eb['precisions'][i]!r}")
    for f in ("sys_len", "ref_len"):
        if eb[f] != gb[f]:
            diffs.append(f"bleu.{f}: ours {gb[f]!r} theirs {eb[f]!r}")
    if exp["levenshtein"] != got["levenshtein"]["distance"]:
        diffs.append(f"levenshtein.distance: ours {got['levenshtein']['distance']} theirs {exp['levenshtein']}")
    if not close(exp["levenshtein_similarity"], got["levenshtein"]["similarity"]):
        diffs.append(
            f"levenshtein.similarity: ours {got['levenshtein']['similarity']!r} theirs {exp['levenshtein_similarity']!r}"
        )
    if not close(exp["jaro_winkler"], got["jaro_winkler"]):
        diffs.append(f"jaro_winkler: ours {got['jaro_winkler']!r} theirs {exp['jaro_winkler']!r}")
    return diffs
