#!/usr/bin/env bash
# Runs every fuzz target (or those named) for SECONDS each and prints, per target, the
# executions, the corpus it grew and whether an invariant broke.
#
#   bash tests/fuzz/run.sh SECONDS [TARGET...]
#
# Needs cargo-fuzz (`cargo install cargo-fuzz --locked`); runs on the stable toolchain
# with `--sanitizer none` (libFuzzer's coverage guidance still works; no AddressSanitizer,
# which needs nightly, and the crate forbids unsafe code anyway). Targets are built in
# release mode with debug assertions on, as cargo-fuzz does by default.
#
# Builds go to target/fuzz/build. The committed seeds (tests/fuzz/seeds/TARGET) are read, never written; the growing
# corpus lives in target/fuzz/corpus/TARGET and failing inputs in
# target/fuzz/artifacts/TARGET. An input that breaks an invariant belongs in
# tests/fuzz/regressions/TARGET/ once the defect is fixed: `cargo test` replays it.
# Extra libFuzzer flags can be given in FUZZ_FLAGS. Exits 1 if any target failed.
set -euo pipefail
cd "$(dirname "$0")/../.."

secs=${1:?usage: tests/fuzz/run.sh SECONDS [TARGET...]}
shift
command -v cargo-fuzz >/dev/null || { echo "fuzz: cargo-fuzz is not installed (cargo install cargo-fuzz --locked)"; exit 1; }
dir=(--fuzz-dir tests/fuzz)
if [ $# -gt 0 ]; then
  targets=("$@")
else
  mapfile -t targets < <(cargo fuzz list "${dir[@]}")
fi

echo "== building ${#targets[@]} fuzz targets"
cargo fuzz build "${dir[@]}" --sanitizer none --target-dir target/fuzz/build

out=target/fuzz
mkdir -p "$out/logs"
failed=0
summary=()
for t in "${targets[@]}"; do
  corpus="$out/corpus/$t"
  artifacts="$out/artifacts/$t/"
  mkdir -p "$corpus" "$artifacts"
  log="$out/logs/$t.log"
  echo "== $t: ${secs}s"
  set +e
  # shellcheck disable=SC2086
  cargo fuzz run "${dir[@]}" --sanitizer none --target-dir target/fuzz/build "$t" "$corpus" "tests/fuzz/seeds/$t" -- \
    -max_total_time="$secs" -timeout=10 -rss_limit_mb=2048 -print_final_stats=1 \
    -artifact_prefix="$artifacts" ${FUZZ_FLAGS:-} >"$log" 2>&1
  rc=$?
  set -e
  execs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log" | tail -1)
  files=$(find "$corpus" -type f | wc -l)
  bytes=$(find "$corpus" -type f -printf '%s\n' | awk '{s+=$1} END {print s+0}')
  if [ "$rc" = 0 ]; then
    result=ok
  else
    result="FAILED (exit $rc; see $log and $artifacts)"
    failed=1
    grep -E "panicked at|ERROR: libFuzzer|SUMMARY" "$log" | head -5 || true
  fi
  summary+=("$(printf '%-18s %10s %8s %10s  %s' "$t" "${execs:-?}" "$files" "$bytes" "$result")")
done

echo
printf '%-18s %10s %8s %10s  %s\n' target executions corpus bytes result
printf '%s\n' "${summary[@]}"
exit "$failed"
