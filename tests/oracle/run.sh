#!/usr/bin/env bash
# External checks against pinned reference implementations.
#
#   bash tests/oracle/run.sh PATH/TO/plumbline
#
# Makes a throw-away virtualenv, installs the pinned references, then
#   - fresh_check.py: new random pairs, plumbline vs rouge-score/sacrebleu/
#     rapidfuzz to 1e-9 (a disagreement fails this script), and
#   - sbd_agreement.py: plumbline's sentence splitter vs pysbd on Debian's
#     licence texts (a figure only).
# If Python or the package index cannot be reached, says so and exits 0: the
# committed vectors in tests/data/oracle are still checked by `cargo test`.
# With PLUMBLINE_REQUIRE_TOOLS=1 (as .ci/run sets it) it exits 1 instead, so that
# CI cannot pass without the external checks.
set -u

# Says why the external checks cannot run, and ends: exit 0 on a developer
# machine, exit 1 where PLUMBLINE_REQUIRE_TOOLS=1.
skip() {
    echo "oracle: $*"
    if [ "${PLUMBLINE_REQUIRE_TOOLS:-}" = 1 ]; then
        echo "oracle: PLUMBLINE_REQUIRE_TOOLS=1, so this is a failure"
        exit 1
    fi
    echo "oracle: skipping the external checks (the committed vectors are still checked by cargo test)"
    exit 0
}

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
bin="${1:-}"
if [ -z "$bin" ] || [ ! -x "$bin" ]; then
    echo "usage: $0 PATH/TO/plumbline (got '${bin}', not an executable)" >&2
    exit 2
fi
bin="$(cd "$(dirname "$bin")" && pwd)/$(basename "$bin")"

python="${PYTHON:-python3}"
if ! command -v "$python" >/dev/null 2>&1; then
    skip "no $python on this machine"
fi

venv="$(mktemp -d "${TMPDIR:-/tmp}/plumbline-oracle.XXXXXX")"
trap 'rm -rf "$venv"' EXIT

if ! "$python" -m venv "$venv" >"$venv.log" 2>&1; then
    why="$(tail -n 1 "$venv.log")"
    rm -f "$venv.log"
    skip "could not create a virtualenv ($why)"
fi
rm -f "$venv.log"

pins="$("$venv/bin/python" -c "import sys; sys.path.insert(0, '$here'); import oracle_lib as o; print(' '.join(f'{k}=={v}' for k, v in o.PINS.items()))")"
echo "oracle: installing $pins"
if ! "$venv/bin/python" -m pip install --quiet --disable-pip-version-check --timeout 30 --retries 2 $pins \
        >"$venv/pip.log" 2>&1; then
    echo "oracle: could not install the pinned references from the package index:"
    tail -n 3 "$venv/pip.log" | sed 's/^/    /'
    skip "no pinned references"
fi

status=0
"$venv/bin/python" "$here/fresh_check.py" "$bin" ${ORACLE_SEED:+--seed "$ORACLE_SEED"} || status=$?
"$venv/bin/python" "$here/sbd_agreement.py" "$bin" || {
    rc=$?
    echo "oracle: sbd_agreement could not run (exit $rc)"
    [ "$status" -eq 0 ] && status=$rc
}
exit "$status"
