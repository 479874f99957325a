#!/usr/bin/env bash
# The HTML report in a real browser (Debian's Chromium, headless).
#
#   bash tests/browser/run.sh REPORT.html
#
# For REPORT.html (with the findings.json of the same run beside it, when there is one)
# and for a report of the hostile fixture (tests/data/report/hostile), made here:
#   * opened at #selftest, the page's script filters by every verdict, flag and citation
#     status, steps with j/k and records a decision; the counts it saw must equal the
#     findings JSON's, and no injected text may have run (check_dom.py);
#   * with its script refused (a copy whose policy allows none, as with scripts off),
#     every answer must be shown and the script's tools stay hidden;
#   * the browser log must hold no uncaught error and no policy violation.
# Then: the decision the hostile page recorded is fed back to `plumbline check --accept`
# and must waive exactly one finding; a copy of the report with an injected inline script
# must be blocked by the page's policy, with the violation in the log (the control that
# shows the log check can fail); and a screenshot of REPORT.html is saved to
# target/browser/report.png.
#
# Without Chromium the test fails, unless PLUMBLINE_SKIP_BROWSER=1 says to skip it.
set -euo pipefail
cd "$(dirname "$0")/../.."

report=${1:?usage: tests/browser/run.sh REPORT.html}
chromium=${CHROMIUM:-/usr/bin/chromium}
if [ ! -x "$chromium" ]; then
  echo "browser test: no Chromium at $chromium (Debian: apt-get install chromium)"
  if [ "${PLUMBLINE_SKIP_BROWSER:-}" = 1 ]; then
    echo "browser test: skipped, as PLUMBLINE_SKIP_BROWSER=1 asks"
    exit 0
  fi
  exit 1
fi
[ -f "$report" ] || { echo "browser test: no report at $report"; exit 1; }

target=${CARGO_TARGET_DIR:-target}
bin="$target/debug/plumbline"
[ -x "$bin" ] || cargo build --quiet
out="$target/browser"
rm -rf "$out"
mkdir -p "$out"
abs() { (cd "$(dirname "$1")" && printf '%s/%s' "$(pwd -P)" "$(basename "$1")"); }

# One headless Chromium run with a fresh profile; browser log to $1, the rest as given.
chrome() {
  local log=$1
  shift
  local profile
  profile=$(mktemp -d)
  timeout 120 "$chromium" --headless --no-sandbox --disable-gpu --disable-quic \
    --no-first-run --disable-background-networking --disable-component-update \
    --disable-sync --user-data-dir="$profile" --enable-logging=stderr --v=0 "$@" 2>"$log"
  local rc=$?
  rm -rf "$profile"
  return $rc
}

failed=0
# check_page NAME REPORT [FINDINGS]
check_page() {
  local name=$1 page=$2 findings=${3:-}
  local url
  url="file://$(abs "$page")"
  echo "== $name: self-test ($page)"
  chrome "$out/$name.selftest.log" --dump-dom "$url#selftest" >"$out/$name.selftest.html"
  python3 tests/browser/check_dom.py selftest "$out/$name.selftest.html" \
    "$out/$name.selftest.log" $findings || failed=1
  echo "== $name: without its script (a copy whose policy allows no script)"
  sed "s/script-src [^;]*;/script-src \&#x27;none\&#x27;;/" "$page" >"$out/$name.blocked.html"
  grep -q "script-src &#x27;none&#x27;;" "$out/$name.blocked.html" ||
    { echo "  FAIL could not find the policy's script-src in $page"; failed=1; }
  chrome "$out/$name.blocked.log" --dump-dom "file://$(abs "$out/$name.blocked.html")#selftest" \
    >"$out/$name.blocked.dom.html"
  python3 tests/browser/check_dom.py blocked "$out/$name.blocked.dom.html" \
    "$out/$name.blocked.log" || failed=1
}

findings="$(dirname "$report")/findings.json"
if [ -f "$findings" ]; then
  check_page report "$report" "$findings"
else
  echo "(no findings.json beside $report: its counts are not compared)"
  check_page report "$report"
fi

hostile=tests/data/report/hostile
set +e
"$bin" check --store "$hostile/store" --answers "$hostile/answers.jsonl" \
  --principals "$hostile/principals.json" --accept "$hostile/decisions.jsonl" \
  --json "$out/hostile.json" --html "$out/hostile.html" --quiet
rc=$?
set -e
[ "$rc" = 1 ] || { echo "FAIL: the hostile fixture's check exited $rc, expected 1"; exit 1; }
check_page hostile "$out/hostile.html" "$out/hostile.json"

echo "== hostile: the page's decision, fed back with --accept"
python3 - "$out/hostile.selftest.html" "$out/decided.jsonl" <<'EOF'
import html.parser, json, sys
class P(html.parser.HTMLParser):
    found = None
    def handle_starttag(self, tag, attrs):
        if tag == "body":
            P.found = dict(attrs).get("data-selftest")
P().feed(open(sys.argv[1], encoding="utf-8").read())
open(sys.argv[2], "w", encoding="utf-8").write(json.loads(P.found or "{}").get("decisions_file", ""))
EOF
set +e
"$bin" check --store "$hostile/store" --answers "$hostile/answers.jsonl" \
  --principals "$hostile/principals.json" --accept "$out/decided.jsonl" \
  --json "$out/decided.json" --quiet
set -e
python3 - "$out/decided.json" <<'EOF' || failed=1
import json, sys
d = json.load(open(sys.argv[1], encoding="utf-8"))
dec = d["decisions"]
ok = dec["applied"] == 1 and not dec["stale"] and not dec["rejected"] and d["summary"]["accepted"] >= 1
print(("  ok   " if ok else "  FAIL ") + f"the recorded decision waives a finding (applied {dec['applied']}, "
      f"stale {len(dec['stale'])}, rejected {len(dec['rejected'])}, accepted {d['summary']['accepted']})")
sys.exit(0 if ok else 1)
EOF

echo "== control: an injected inline script in a copy of the report"
sed 's#</body>#<script>document.body.setAttribute("data-injected","control")</script></body>#' \
  "$out/hostile.html" >"$out/control.html"
chrome "$out/control.log" --dump-dom "file://$(abs "$out/control.html")" >"$out/control.dom.html"
python3 tests/browser/check_dom.py control "$out/control.dom.html" "$out/control.log" || failed=1

echo "== screenshot"
chrome "$out/screenshot.log" --hide-scrollbars --window-size=1280,2400 \
  --screenshot="$(abs "$out")/report.png" "file://$(abs "$report")" >/dev/null
if [ -s "$out/report.png" ]; then
  echo "screenshot: $out/report.png"
else
  echo "FAIL: no screenshot"
  failed=1
fi

if [ "$failed" != 0 ]; then
  echo "browser test: FAILED (logs and DOM dumps in $out)"
  exit 1
fi
echo "browser test: passed"
