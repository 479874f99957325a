#!/usr/bin/env python3
"""Byte offsets, digests and citation checks for the demo scenario.

The citations in demo/answers.jsonl point into the documents of demo/store by byte
offsets (half-open, counted over the file as stored) and carry SHA-256 digests of the
files. After editing a document, use this script to find the new offsets and digests,
then run `verify` to see every cited passage again.

    python3 demo/tools/offsets.py sha demo/store/hr/annual-leave.md
    python3 demo/tools/offsets.py find demo/store/hr/annual-leave.md "Unused leave does not"
    python3 demo/tools/offsets.py find demo/store/hr/annual-leave.md "Unused leave" --to "are lost."
    python3 demo/tools/offsets.py show demo/store/hr/annual-leave.md 1414 1677
    python3 demo/tools/offsets.py paragraphs demo/store/support/returns-policy.md
    python3 demo/tools/offsets.py chunks demo/store/support/returns-policy.md
    python3 demo/tools/offsets.py verify            # defaults: demo/store, demo/answers.jsonl

`find` searches the raw bytes of the file, so for an HTML document give the text as it is
written in the file (`&pound;4.95`, not `£4.95`). `verify` resolves each citation through
the store's manifest.json the way SPEC.md describes, prints the cited bytes, and checks
each `quote` against the visible text of the passage (markup, scripts, styles and HTML
comments removed, entities decoded, white space collapsed) and each `sha256` against the
file. It reports what it finds; it does not decide what the demo is meant to show (see
demo/README.md for that). Standard library only.
"""

from __future__ import annotations

import argparse
import hashlib
import html
import html.parser
import json
import re
import sys
from pathlib import Path

DEMO = Path(__file__).resolve().parent.parent
DOC_SUFFIXES = (".txt", ".md", ".markdown", ".html", ".htm")


# --- files and offsets -------------------------------------------------------------


def sha256(path: Path) -> str:
    """Lower-case hex SHA-256 of the file's bytes."""
    return hashlib.sha256(path.read_bytes()).hexdigest()


def find(data: bytes, text: str, to: str | None = None, occurrence: int = 1) -> tuple[int, int]:
    """Half-open byte range of the `occurrence`-th match of `text` in `data`.

    With `to`, the range runs from the start of `text` to the end of the first match of
    `to` after it. Raises ValueError when there is no such match.
    """
    needle = text.encode("utf-8")
    start = -1
    pos = 0
    for _ in range(occurrence):
        start = data.find(needle, pos)
        if start < 0:
            raise ValueError(f"not found (occurrence {occurrence}): {text!r}")
        pos = start + 1
    end = start + len(needle)
    if to is not None:
        tail = to.encode("utf-8")
        t = data.find(tail, start)
        if t < 0:
            raise ValueError(f"end text not found after start: {to!r}")
        end = t + len(tail)
    return start, end


def paragraphs(data: bytes) -> list[tuple[int, int]]:
    """Byte ranges of the paragraphs of a text file: runs of lines between blank lines."""
    out = []
    for m in re.finditer(rb"(?:[^\n]*\S[^\n]*(?:\n|$))+", data):
        end = m.end()
        while end > m.start() and data[end - 1 : end] in (b"\n", b"\r"):
            end -= 1
        out.append((m.start(), end))
    return out


def heading_chunks(data: bytes, level: bytes = b"## ") -> list[dict]:
    """Chunks that start at the file start and at every heading line of `level`.

    Each chunk ends where the next begins, so the chunks cover the file exactly and every
    boundary is the start of a line after a blank line (a paragraph boundary).
    """
    starts = [0] + [m.start() for m in re.finditer(rb"(?m)^" + re.escape(level), data)]
    starts = sorted(set(starts))
    bounds = starts + [len(data)]
    return [
        {"id": f"c{i + 1}", "start": bounds[i], "end": bounds[i + 1]}
        for i in range(len(starts))
    ]


def is_char_boundary(data: bytes, i: int) -> bool:
    """Whether byte offset `i` falls between two UTF-8 characters."""
    if i <= 0 or i >= len(data):
        return True
    return (data[i] & 0xC0) != 0x80


# --- visible text --------------------------------------------------------------------


class _Visible(html.parser.HTMLParser):
    """Collects the text a browser would show: no script, style or comment text."""

    SKIP = {"script", "style", "head", "title"}
    BLOCK = {"p", "h1", "h2", "h3", "h4", "li", "br", "div", "tr", "td", "th", "section"}

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.parts: list[str] = []
        self.skip = 0

    def handle_starttag(self, tag, attrs):
        if tag in self.SKIP:
            self.skip += 1
        elif tag in self.BLOCK:
            self.parts.append("\n")

    def handle_endtag(self, tag):
        if tag in self.SKIP and self.skip:
            self.skip -= 1
        elif tag in self.BLOCK:
            self.parts.append("\n")

    def handle_data(self, data):
        if not self.skip:
            self.parts.append(data)

    def handle_comment(self, data):
        pass


def visible_text(raw: str, suffix: str) -> str:
    """A plain approximation of the visible text of a passage, white space collapsed."""
    if suffix in (".html", ".htm"):
        p = _Visible()
        p.feed(raw)
        p.close()
        text = "".join(p.parts)
    elif suffix in (".md", ".markdown"):
        lines = []
        for line in raw.splitlines():
            line = re.sub(r"^\s{0,3}#{1,6}\s+", "", line)
            line = re.sub(r"^\s*(?:[-*+]|\d{1,3}[.)])\s+", "", line)
            if re.fullmatch(r"\s*\|?[\s:|-]+\|?\s*", line) and "-" in line:
                continue
            line = line.replace("|", " ")
            line = re.sub(r"`([^`]*)`", r"\1", line)
            line = re.sub(r"(\*\*|__)(.+?)\1", r"\2", line)
            line = re.sub(r"\[([^\]]+)\]\([^)]*\)", r"\1", line)
            lines.append(line)
        text = "\n".join(lines)
    else:
        text = raw
    text = text.replace("\u00a0", " ")
    return re.sub(r"\s+", " ", text).strip()


def collapse(s: str) -> str:
    return re.sub(r"\s+", " ", s.replace("\u00a0", " ")).strip()


# --- the store and its manifest --------------------------------------------------------


class Store:
    """The documents of a store, keyed by id, with the manifest applied as SPEC.md says."""

    def __init__(self, root: Path) -> None:
        self.root = root.resolve()
        self.docs: dict[str, dict] = {}
        self.problems: list[str] = []
        by_path: dict[str, dict] = {}
        for f in sorted(self.root.rglob("*")):
            if f.is_file() and f.suffix.lower() in DOC_SUFFIXES:
                rel = f.relative_to(self.root).as_posix()
                by_path[rel] = {"id": rel, "path": rel, "file": f, "access": None, "chunks": {}}
        manifest = self.root / "manifest.json"
        default = None
        if manifest.exists():
            m = json.loads(manifest.read_text(encoding="utf-8"))
            default = m.get("default_access")
            for entry in m.get("documents", []):
                path = entry.get("path", entry.get("id", ""))
                target = (self.root / path).resolve()
                if path.startswith("/") or not target.is_relative_to(self.root):
                    self.problems.append(f"manifest entry leads outside the store: {path!r}")
                    continue
                rel = target.relative_to(self.root).as_posix()
                if rel not in by_path:
                    self.problems.append(f"manifest entry names no document: {path!r}")
                    continue
                d = by_path[rel]
                d["id"] = entry.get("id", rel)
                d["title"] = entry.get("title")
                if "access" in entry:
                    d["access"] = entry["access"]
                d["chunks"] = {c["id"]: (c["start"], c["end"]) for c in entry.get("chunks", [])}
        for d in by_path.values():
            if d["access"] is None:
                d["access"] = default
            self.docs[d["id"]] = d
        self.by_path = by_path

    def resolve(self, doc: str) -> dict | None:
        if doc.startswith("/") or ".." in doc.split("/"):
            return None
        return self.docs.get(doc) or self.by_path.get(doc)


# --- commands ------------------------------------------------------------------------


def cmd_sha(args) -> int:
    for name in args.files:
        p = Path(name)
        print(f"{sha256(p)}  {p.stat().st_size:>6} bytes  {name}")
    return 0


def cmd_find(args) -> int:
    data = Path(args.file).read_bytes()
    start, end = find(data, args.text, args.to, args.occurrence)
    print(json.dumps({"start": start, "end": end}))
    if not args.quiet:
        print(data[start:end].decode("utf-8", errors="replace"))
    return 0


def cmd_show(args) -> int:
    data = Path(args.file).read_bytes()
    print(f"size {len(data)}; boundaries ok: "
          f"{is_char_boundary(data, args.start) and is_char_boundary(data, args.end)}")
    sys.stdout.write(data[args.start : args.end].decode("utf-8", errors="replace") + "\n")
    return 0


def cmd_paragraphs(args) -> int:
    data = Path(args.file).read_bytes()
    for s, e in paragraphs(data):
        first = data[s:e].split(b"\n", 1)[0].decode("utf-8", errors="replace")
        print(f"{s:>6} {e:>6}  {first[:70]}")
    return 0


def cmd_chunks(args) -> int:
    data = Path(args.file).read_bytes()
    print(json.dumps(heading_chunks(data, args.level.encode() + b" ")))
    return 0


def cmd_verify(args) -> int:
    store = Store(Path(args.store))
    principals = json.loads(Path(args.principals).read_text(encoding="utf-8"))
    for p in store.problems:
        print(f"MANIFEST: {p}")
    undecided = [d["id"] for d in store.docs.values() if d["access"] is None]
    print(f"documents: {len(store.docs)}; access unknown for: {', '.join(undecided) or 'none'}")
    bad = 0
    for lineno, line in enumerate(Path(args.answers).read_text(encoding="utf-8").split("\n"), 1):
        if not line.strip():
            continue
        try:
            rec = json.loads(line)
        except json.JSONDecodeError as e:
            print(f"\nline {lineno}: not JSON ({e.msg})")
            continue
        if not isinstance(rec, dict) or "answer" not in rec or "id" not in rec:
            print(f"\nline {lineno}: missing a required field")
            continue
        groups = rec.get("groups", principals.get(rec.get("user")))
        print(f"\nline {lineno}: {rec['id']}  user {rec.get('user')}  groups {groups}")
        for c in rec.get("citations", []):
            head = f"  [{c.get('ref')}] {c.get('doc')}"
            d = store.resolve(c.get("doc", ""))
            if d is None:
                print(f"{head}: no such document (or outside the store)")
                continue
            data = d["file"].read_bytes()
            notes = []
            if "chunk" in c:
                if c["chunk"] not in d["chunks"]:
                    print(f"{head}: unknown chunk {c['chunk']!r}")
                    continue
                start, end = d["chunks"][c["chunk"]]
                notes.append(f"chunk {c['chunk']}")
            elif "start" in c or "end" in c:
                start, end = c.get("start", 0), c.get("end", len(data))
            else:
                start, end = 0, len(data)
                notes.append("whole document")
            if not (0 <= start <= end <= len(data)):
                print(f"{head}: range {start}..{end} outside the file (size {len(data)})")
                continue
            if not (is_char_boundary(data, start) and is_char_boundary(data, end)):
                print(f"{head}: range {start}..{end} not on a character boundary")
                continue
            if "sha256" in c:
                notes.append("sha256 matches" if c["sha256"] == sha256(d["file"]) else "SHA256 DIFFERS")
            access = d["access"]
            if access is None:
                notes.append("access unknown")
            elif groups is None:
                notes.append("principal unknown")
            elif "*" not in access and not set(access) & set(groups):
                notes.append(f"FORBIDDEN (needs {access})")
            passage = data[start:end].decode("utf-8")
            vis = visible_text(passage, d["file"].suffix.lower())
            if "quote" in c:
                found = collapse(c["quote"]) in vis
                notes.append("quote found" if found else "QUOTE NOT FOUND")
                bad += 0 if found else 1
            print(f"{head} {start}..{end} ({'; '.join(notes)})")
            shown = passage if len(passage) <= args.width else passage[: args.width] + " …"
            for ln in shown.splitlines():
                print(f"      | {ln}")
    print(f"\nquotes not found in their passage: {bad}")
    return 0


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    sub = ap.add_subparsers(dest="cmd", required=True)
    s = sub.add_parser("sha", help="SHA-256 and size of files")
    s.add_argument("files", nargs="+")
    s.set_defaults(fn=cmd_sha)
    s = sub.add_parser("find", help="byte range of a text in a file")
    s.add_argument("file")
    s.add_argument("text")
    s.add_argument("--to", help="end the range at the end of this text")
    s.add_argument("--occurrence", type=int, default=1)
    s.add_argument("--quiet", action="store_true")
    s.set_defaults(fn=cmd_find)
    s = sub.add_parser("show", help="print the bytes start..end of a file")
    s.add_argument("file")
    s.add_argument("start", type=int)
    s.add_argument("end", type=int)
    s.set_defaults(fn=cmd_show)
    s = sub.add_parser("paragraphs", help="byte ranges of a file's paragraphs")
    s.add_argument("file")
    s.set_defaults(fn=cmd_paragraphs)
    s = sub.add_parser("chunks", help="manifest chunks split at Markdown headings")
    s.add_argument("file")
    s.add_argument("--level", default="##")
    s.set_defaults(fn=cmd_chunks)
    s = sub.add_parser("verify", help="print every cited passage of an answers file")
    s.add_argument("--store", default=str(DEMO / "store"))
    s.add_argument("--answers", default=str(DEMO / "answers.jsonl"))
    s.add_argument("--principals", default=str(DEMO / "principals.json"))
    s.add_argument("--width", type=int, default=2000, help="print at most this many characters")
    s.set_defaults(fn=cmd_verify)
    args = ap.parse_args()
    return args.fn(args)


if __name__ == "__main__":
    sys.exit(main())
