#!/usr/bin/env bash
# The labelled accuracy benchmark (see DEVELOPERS.md, "Accuracy benchmark").
#
#   tests/accuracy/run.sh full [--write-readme] [harness options]   # both splits and the sweep
#   tests/accuracy/run.sh ci   [harness options]                    # reduced test split, checked against README
#
# Harness options: --seed N, --sentences N (per split), --ci-sentences N, --no-sweep,
# --config FILE (settings for the checked run), --write-readme (full run only).
#
# Installs the two Debian documentation packages the store is built from when they are
# missing (apt-get; needs root, as CI has), copies their files into target/accuracy/store
# (copies, not links: plumbline never follows a link), builds the harness in release mode
# and runs it. Nothing of the packages is committed.
set -euo pipefail
cd "$(dirname "$0")/../.."

mode=${1:-full}
shift || true
case "$mode" in
  full | ci) ;;
  *)
    echo "usage: tests/accuracy/run.sh [full|ci] [harness options]" >&2
    exit 2
    ;;
esac

PG_PKG=postgresql-doc-15
PY_PKG=python3.11-doc
PG_DIR=/usr/share/doc/postgresql-doc-15/html
PY_DIR=/usr/share/doc/python3.11/html/_sources

missing=()
[ -d "$PG_DIR" ] || missing+=("$PG_PKG")
[ -d "$PY_DIR" ] || missing+=("$PY_PKG")
if [ ${#missing[@]} -gt 0 ]; then
  if command -v apt-get >/dev/null 2>&1 && [ "$(id -u)" = 0 ]; then
    echo "installing ${missing[*]} (Debian packages the benchmark store is built from)" >&2
    apt-get update -qq
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
  else
    echo "the accuracy benchmark needs the Debian packages ${missing[*]}; install them (apt-get install ${missing[*]}) and run again" >&2
    exit 2
  fi
fi

version() { dpkg-query -W -f='${Version}' "$1" 2>/dev/null || echo unknown; }
versions="$PG_PKG=$(version "$PG_PKG"),$PY_PKG=$(version "$PY_PKG")"

# The store: the PostgreSQL manual's HTML pages as they are, and the Python documentation's
# reST sources (shipped as .rst.txt), copied as regular files.
store=target/accuracy/store
rm -rf "$store"
mkdir -p "$store/pg" "$store/py"
find "$PG_DIR" -maxdepth 1 -name '*.html' -type f -exec cp -t "$store/pg/" {} +
(cd "$PY_DIR" && find . -name '*.txt' -type f -print0) |
  while IFS= read -r -d '' f; do
    mkdir -p "$store/py/$(dirname "$f")"
    cp -L "$PY_DIR/$f" "$store/py/$f"
  done

exec cargo bench --locked --quiet --bench accuracy -- \
  --mode "$mode" --store "$store" --work target/accuracy --packages "$versions" "$@"
