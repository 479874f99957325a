#!/usr/bin/env bash
# Runs the README's examples of the other store forms and field maps exactly as written
# (section "Beyond the contract: other inputs"). Each example is the ```sh block after its
# "<!-- tested: NAME" marker; it runs in a scratch folder laid out as the example expects,
# made from the demo scenario, with the given plumbline first on PATH, and its findings
# are compared with those of the demo's folder store where the two must agree.
#
# usage: tests/stores/examples.sh path/to/plumbline
# The PostgreSQL example needs PLUMBLINE_PG_URL (tests/stores/pg.sh start) and the PDF
# example Ghostscript; without them those examples fail when PLUMBLINE_REQUIRE_TOOLS is
# set (CI) and are skipped otherwise.
set -euo pipefail
here="$(cd "$(dirname "$0")/../.." && pwd)"
bin="$(cd "$(dirname "$1")" && pwd)/$(basename "$1")"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
mkdir -p "$work/bin"
ln -s "$bin" "$work/bin/plumbline"
export PATH="$work/bin:$PATH"

block() {
  awk -v name="$1" '
    index($0, "<!-- tested: " name) == 1 { found = 1; next }
    found && /^```sh$/ { inside = 1; next }
    inside && /^```$/ { exit }
    inside { print }
  ' "$here/README.md"
}

fail() { echo "examples.sh: $*" >&2; exit 1; }

skip_or_fail() {
  if [ -n "${PLUMBLINE_REQUIRE_TOOLS:-}" ]; then fail "$1 is required (PLUMBLINE_REQUIRE_TOOLS is set)"; fi
  echo "notice: skipping: needs $1"
}

# Runs block $1 in the current folder; the demo's gate fails by design, so 0 and 1 are
# both a completed run.
run_block() {
  local code
  code="$(block "$1")"
  [ -n "$code" ] || fail "no $1 block in README.md"
  local status=0
  (set -e; eval "$code") || status=$?
  [ "$status" -le 1 ] || fail "$1: exited $status"
}

layout() {
  mkdir -p "$1"
  cp -r "$here/demo/store" "$1/docs"
  cp "$here/demo/answers.jsonl" "$here/demo/principals.json" "$here/demo/decisions.jsonl" "$1/"
}

# The findings of the demo's folder store, without reviewer decisions.
layout "$work/base"
(cd "$work/base" && plumbline check --quiet --store docs/ --answers answers.jsonl \
  --principals principals.json --json findings.json) || [ $? -eq 1 ]

# Whether two findings files found the same (everything but the run record).
same_findings() {
  python3 - "$1" "$2" <<'PY'
import json, sys
a, b = (json.load(open(p, encoding="utf-8")) for p in sys.argv[1:3])
keys = ["answers", "summary", "rejected"]
bad = [k for k in keys if a[k] != b[k]]
if bad:
    sys.exit(f"{sys.argv[1]} and {sys.argv[2]} differ in {bad}")
PY
}

echo "== chunk export"
layout "$work/chunks"; cd "$work/chunks"
plumbline export --quiet --store docs/ --out chunks.jsonl
run_block store-chunks
[ -s report.html ] || fail "store-chunks: no report"
same_findings findings.json "$work/base/findings.json"
echo "chunk export: the folder's findings"

echo "== SQLite"
layout "$work/sqlite"; cd "$work/sqlite"
python3 - <<'PY'
import json, sqlite3
db = sqlite3.connect("kb.db")
db.execute("CREATE TABLE passages (chunk_id INTEGER PRIMARY KEY, content TEXT NOT NULL, source TEXT, acl TEXT, embedding BLOB)")
rows = [
    (1, "Full-time staff receive 27 days of paid annual leave.", "hr/leave", '["all-staff"]'),
    (2, "Unused leave does not carry over.", "hr/leave", '["all-staff"]'),
    (3, "Refunds are paid within 14 days.", "support/returns", "all-staff, support"),
]
db.executemany("INSERT INTO passages VALUES (?, ?, ?, ?, x'00ff')", rows)
db.commit()
with open("answers.jsonl", "w", encoding="utf-8") as f:
    f.write(json.dumps({"id": "s1", "groups": ["all-staff"], "answer": "Staff receive 27 days of paid annual leave [1]. Unused leave does not carry over [2].",
                        "citations": [{"ref": "1", "doc": "1"}, {"ref": "2", "doc": "hr/leave", "chunk": "2"}]}) + "\n")
PY
run_block store-sqlite
python3 - <<'PY'
import json
f = json.load(open("findings.json"))
assert f["inputs"]["store"]["form"] == "sqlite" and f["inputs"]["store"]["documents"] == 3, f["inputs"]["store"]
a = f["answers"][0]
assert [c["status"] for c in a["citations"]] == ["ok", "ok"], a["citations"]
assert [s["verdict"] for s in a["sentences"]] == ["supported", "supported"], a["sentences"]
PY
echo "SQLite: both citations resolve, both sentences supported"

echo "== PostgreSQL"
if [ -z "${PLUMBLINE_PG_URL:-}" ]; then
  skip_or_fail "a PostgreSQL server (PLUMBLINE_PG_URL)"
else
  layout "$work/pg"; cd "$work/pg"
  plumbline export --quiet --store docs/ --out rows.jsonl
  eval "$(python3 - "$PLUMBLINE_PG_URL" <<'PY'
import sys, urllib.parse
u = urllib.parse.urlsplit(sys.argv[1])
print(f"export PGHOST={u.hostname} PGPORT={u.port} PGUSER={u.username} PGPASSWORD={u.password}")
PY
)"
  python3 - <<'PY' > rows.sql
import json
q = lambda v: "NULL" if v is None else "'" + str(v).replace("'", "''") + "'"
print("DROP TABLE IF EXISTS chunks; CREATE TABLE chunks (id text PRIMARY KEY, text text NOT NULL, doc text, access jsonb, title text, format text, chunks jsonb, embedding real[]);")
for line in open("rows.jsonl", encoding="utf-8"):
    r = json.loads(line)
    acc = json.dumps(r["access"]) if "access" in r else None
    ch = json.dumps(r["chunks"]) if "chunks" in r else None
    print(f"INSERT INTO chunks VALUES ({q(r['id'])}, {q(r['text'])}, {q(r.get('doc'))}, {q(acc)}, {q(r.get('title'))}, {q(r['format'])}, {q(ch)}, '{{0.1,0.2}}');")
PY
  psql -q -v ON_ERROR_STOP=1 -d postgres -c "DROP DATABASE IF EXISTS kb" -c "CREATE DATABASE kb" >/dev/null
  psql -q -v ON_ERROR_STOP=1 -d kb -f rows.sql >/dev/null
  run_block store-postgres
  same_findings findings.json "$work/base/findings.json"
  grep -q "$PGPASSWORD" findings.json report.html && fail "the password is in the findings or report"
  python3 - <<'PY'
import json
f = json.load(open("findings-lazy.json"))
s = f["inputs"]["store"]
assert s["read"] == "lazy" and s["searched"] is False, s
PY
  psql -q -d postgres -c "DROP DATABASE kb" >/dev/null
  echo "PostgreSQL: the folder's findings whole, a lazy read recorded as such, no password"
fi

echo "== PDF"
if ! command -v gs >/dev/null 2>&1; then
  skip_or_fail "Ghostscript (gs)"
else
  mkdir -p "$work/pdf/docs"; cd "$work/pdf"
  printf '%s\n' '%!PS' '/Helvetica findfont 11 scalefont setfont' \
    '72 720 moveto (Travel is booked through the travel desk.) show' 'showpage' \
    '/Helvetica findfont 11 scalefont setfont' \
    '72 720 moveto (Economy class is used for flights under six hours.) show' 'showpage' > travel.ps
  gs -q -dNOPAUSE -dBATCH -dSAFER -sDEVICE=pdfwrite -sOutputFile=docs/travel.pdf travel.ps
  echo '{"default_access": ["staff"]}' > docs/manifest.json
  echo '{"id": "t1", "groups": ["staff"], "answer": "Economy class is used for flights under six hours [1].", "citations": [{"ref": "1", "doc": "travel.pdf", "page": 2}]}' > answers.jsonl
  run_block store-pdf
  python3 - <<'PY'
import json
s = json.load(open("findings.json"))["answers"][0]["sentences"][0]
assert s["verdict"] == "supported" and s["evidence"]["page"] == 2, s
PY
  grep -q "p. 2," report.html || fail "the report does not show the page"
  echo "PDF: supported on page 2, and the report says so"
fi

echo "== saved index"
layout "$work/index"; cd "$work/index"
run_block store-index
[ -s docs.idx ] || fail "no saved index"
same_findings findings.json "$work/base/findings.json"
echo "saved index: the folder's findings"

echo "== the demo in SQLite form"
mkdir -p "$work/demo"; cp -r "$here/demo" "$work/demo/"; rm -rf "$work/demo/demo/out"; cd "$work/demo"
run_block demo-sqlite
plumbline check --quiet --store demo/store --answers demo/answers.jsonl --principals demo/principals.json \
  --accept demo/decisions.jsonl --json folder.json || [ $? -eq 1 ]
same_findings demo/out/findings-sqlite.json folder.json
[ -s demo/out/report-sqlite.html ] || fail "no report"
echo "demo in SQLite form: the folder's findings"

echo "== field map"
layout "$work/map"; cd "$work/map"
# The demo's answers as traces of another shape, with the citations that use offsets or
# none; and the same answers in the answers format, to compare with.
python3 - <<'PY'
import json
plain, traces = [], []
for line in open("answers.jsonl", encoding="utf-8"):
    if not line.strip():
        continue
    try:
        a = json.loads(line)
    except ValueError:
        continue
    if not isinstance(a, dict) or not isinstance(a.get("citations"), list) or "user" not in a:
        continue
    cites = [c for c in a["citations"] if isinstance(c, dict) and "chunk" not in c and "quote" not in c and "sha256" not in c]
    if len(cites) != len(a["citations"]) or not isinstance(a.get("answer"), str):
        continue
    plain.append({"id": a["id"], "user": a["user"], "answer": a["answer"],
                  "citations": [{k: c[k] for k in ("doc", "start", "end") if k in c} for c in cites]})
    traces.append({"request_id": a["id"], "caller": {"user": a["user"]}, "response": {"text": a["answer"],
                   "sources": [dict({"source_id": c["doc"]}, **({"span": [c["start"], c["end"]]} if "start" in c else {})) for c in cites]}})
assert len(plain) > 5, len(plain)
open("plain.jsonl", "w", encoding="utf-8").write("".join(json.dumps(p) + "\n" for p in plain))
open("traces.jsonl", "w", encoding="utf-8").write("".join(json.dumps(t) + "\n" for t in traces))
PY
run_block input-map
plumbline check --quiet --store docs/ --answers plain.jsonl --principals principals.json --json plain.json || [ $? -eq 1 ]
same_findings findings.json plain.json
echo "field map: the findings of the same answers in the answers format"
echo "examples.sh: every example ran as written"
