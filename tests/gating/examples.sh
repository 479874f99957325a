#!/usr/bin/env bash
# Runs the README's release-gating examples exactly as written: the CI recipe and the
# sharded check with `xargs -P`. Each example is the ```sh block that follows its
# "<!-- tested: NAME" marker in README.md; it runs in a scratch folder laid out as the
# example expects (docs/, candidate.jsonl, release/findings.json, …), made from the demo
# scenario, with the given plumbline first on PATH.
#
# usage: tests/gating/examples.sh path/to/plumbline
set -euo pipefail
here="$(cd "$(dirname "$0")/../.." && pwd)"
bin="$(cd "$(dirname "$1")" && pwd)/$(basename "$1")"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
mkdir -p "$work/bin"
ln -s "$bin" "$work/bin/plumbline"
export PATH="$work/bin:$PATH"

# The block after the marker line "<!-- tested: NAME", without its fences.
block() {
  awk -v name="$1" '
    index($0, "<!-- tested: " name) == 1 { found = 1; next }
    found && /^```sh$/ { inside = 1; next }
    inside && /^```$/ { exit }
    inside { print }
  ' "$here/README.md"
}

fail() { echo "examples.sh: $*" >&2; exit 1; }

# A scratch folder with the demo's inputs under the names the examples use.
layout() {
  local dir="$1"
  mkdir -p "$dir"
  cp -r "$here/demo/store" "$dir/docs"
  cp "$here/demo/principals.json" "$here/demo/decisions.jsonl" "$dir/"
}

echo "== CI recipe"
recipe="$(block ci-recipe)"
[ -n "$recipe" ] || fail "no ci-recipe block in README.md"
# The release's findings: the demo log as it is.
layout "$work/ci"
cd "$work/ci"
cp "$here/demo/answers.jsonl" release.jsonl
mkdir -p release
plumbline check --quiet --store docs/ --answers release.jsonl --principals principals.json \
  --accept decisions.jsonl --json release/findings.json || [ $? -eq 1 ]
# 1. A candidate that answers as the release did: not worse, exit 0.
cp release.jsonl candidate.jsonl
status=0; (set -e; eval "$recipe") || status=$?
[ "$status" -eq 0 ] || fail "unchanged candidate: recipe exited $status, expected 0"
for f in findings.json report.html junit.xml findings.sarif comparison.json comparison.html; do
  [ -s "out/$f" ] || fail "recipe did not write out/$f"
done
echo "unchanged candidate: exit 0, every output written"
# 2. A candidate whose first answer now cites a document that is not in the store.
python3 - <<'PY'
import json
lines = open("release.jsonl", encoding="utf-8").read().splitlines()
first = json.loads(lines[0])
first["citations"][0]["doc"] = "hr/annual-leave-2019"
lines[0] = json.dumps(first, ensure_ascii=False)
open("candidate.jsonl", "w", encoding="utf-8").write("\n".join(lines) + "\n")
PY
rm -rf out
status=0; (set -e; eval "$recipe") || status=$?
[ "$status" -eq 1 ] || fail "regressed candidate: recipe exited $status, expected 1"
grep -q '"worse": true' out/comparison.json || fail "comparison does not say worse"
echo "regressed candidate: exit 1, the comparison says worse"

echo "== shards with xargs -P"
shards="$(block shards)"
[ -n "$shards" ] || fail "no shards block in README.md"
layout "$work/shards"
cd "$work/shards"
# A larger log: the demo answers ten times over, with distinct ids.
python3 - <<'PY'
import json
src = open("../ci/release.jsonl", encoding="utf-8").read().splitlines()
out = []
for r in range(10):
    for line in src:
        try:
            a = json.loads(line)
        except ValueError:
            out.append(line)          # keep the demo's unreadable lines
            continue
        if isinstance(a, dict) and isinstance(a.get("id"), str):
            a["id"] = f"{a['id']}-r{r}"
        out.append(json.dumps(a, ensure_ascii=False))
open("answers.jsonl", "w", encoding="utf-8").write("\n".join(out) + "\n")
PY
status=0; (set -e; eval "$shards") || status=$?
[ "$status" -eq 1 ] || fail "shards: merge exited $status, expected 1 (the demo fails its gate)"
[ -s findings.json ] && [ -s report.html ] || fail "shards: merge wrote no findings or report"
# The merged run against a single run over the whole log: nothing changed.
plumbline check --quiet --store docs/ --answers answers.jsonl --json single.json || [ $? -eq 1 ]
plumbline compare single.json findings.json --json same.json --quiet \
  || fail "shards: merged findings differ from the single run"
python3 - <<'PY'
import json
a, b = json.load(open("single.json")), json.load(open("findings.json"))
for doc in (a, b):
    for k in ("generated_at", "command", "shard", "merged_from"):
        doc.pop(k, None)
assert a == b, "merged findings differ from the single run beyond the run record"
n = len(json.load(open("findings.json"))["merged_from"])
print(f"4 shards, {n} parts merged: equal to the single run over {len(a['answers'])} answers and {len(a['rejected'])} unreadable lines")
PY
echo "examples.sh: every README example ran as documented"
