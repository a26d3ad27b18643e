#!/usr/bin/env bash
# Coverage-guided fuzzing of one target with cargo fuzz (needs a nightly toolchain and
# `cargo install cargo-fuzz`). Seeds the target's corpus from the repository, then runs RUNS
# executions (default 10 million) and prints libFuzzer's summary. A crash leaves its input in
# fuzz/artifacts/TARGET/: save it under tests/fuzz-regressions/TARGET/ and fix the cause.
#
#   scripts/fuzz.sh dxf|job|profile|gcode|gcode_pictures [RUNS] [JOBS]
set -euo pipefail
cd "$(dirname "$0")/.."
target="${1:?which target: dxf, job, profile, gcode or gcode_pictures}"
runs="${2:-10000000}"
jobs="${3:-1}"
corpus="fuzz/corpus/$target"
mkdir -p "$corpus"
case "$target" in
  dxf) cp demo-parts/*.dxf "$corpus/" ;;
  job) cp demo-parts/*.toml "$corpus/" ;;
  profile) cp machine-profiles/*.toml "$corpus/" ;;
  gcode | gcode_pictures) cp tests/snapshots/*.ngc "$corpus/" ;;
  *) echo "no target $target: dxf, job, profile, gcode or gcode_pictures" >&2; exit 2 ;;
esac
cp tests/fuzz-regressions/"${target%_pictures}"/* "$corpus/" 2>/dev/null || true
cd fuzz
# -runs counts executions per job; with several jobs each runs its share (and logs to
# fuzz/fuzz-N.log).
parallel=()
if [ "$jobs" -gt 1 ]; then parallel=(-jobs="$jobs" -workers="$jobs"); fi
exec cargo +nightly fuzz run -O "$target" "../$corpus" -- \
  -runs=$((runs / jobs)) "${parallel[@]}" -max_len=1048576 -print_final_stats=1
