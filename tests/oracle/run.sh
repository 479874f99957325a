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
# If the package index cannot be reached, says so and exits 0: the committed
# vectors in tests/data/oracle are still checked by `cargo test`.
set -u

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
bin="${1:-}"
if [ -z "$bin" ] || [ ! -x "$bin" ]; then
    echo "usage: $0 PATH/TO/plumbline (got '${bin}', not an executable)" >&2
    exit 2
fi
bin="$(cd "$(dirname "$bin")" && pwd)/$(basename "$bin")"

python="${PYTHON:-python3}"
if ! command -v "$python" >/dev/null 2>&1; then
    echo "oracle: no $python on this machine; skipping the external checks"
    exit 0
fi

venv="$(mktemp -d "${TMPDIR:-/tmp}/plumbline-oracle.XXXXXX")"
trap 'rm -rf "$venv"' EXIT

if ! "$python" -m venv "$venv" >"$venv.log" 2>&1; then
    echo "oracle: could not create a virtualenv ($(tail -n 1 "$venv.log")); skipping the external checks"
    rm -f "$venv.log"
    exit 0
fi
rm -f "$venv.log"

pins="$("$venv/bin/python" -c "import sys; sys.path.insert(0, '$here'); import oracle_lib as o; print(' '.join(f'{k}=={v}' for k, v in o.PINS.items()))")"
echo "oracle: installing $pins"
if ! "$venv/bin/python" -m pip install --quiet --disable-pip-version-check --timeout 30 --retries 2 $pins \
        >"$venv/pip.log" 2>&1; then
    echo "oracle: could not install the pinned references from the package index:"
    tail -n 3 "$venv/pip.log" | sed 's/^/    /'
    echo "oracle: skipping the external checks (the committed vectors are still checked by cargo test)"
    exit 0
fi

status=0
"$venv/bin/python" "$here/fresh_check.py" "$bin" ${ORACLE_SEED:+--seed "$ORACLE_SEED"} || status=$?
"$venv/bin/python" "$here/sbd_agreement.py" "$bin" || {
    rc=$?
    echo "oracle: sbd_agreement could not run (exit $rc)"
    [ "$status" -eq 0 ] && status=$rc
}
exit "$status"
