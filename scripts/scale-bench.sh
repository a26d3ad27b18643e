#!/usr/bin/env bash
# The scale benchmark: generated laser sheets of 1,000, 10,000 and 50,000 bays (varied bays,
# fixing holes, an outline), each planned end to end by `conicut plan`, and in the same run the
# baseline of reading the same DXF with the `dxf` crate and writing as many bytes.
#
#   scripts/scale-bench.sh [BAYS ...]      (default: 1000 10000 50000)
#
# Prints one row per sheet: wall and CPU seconds and peak memory of both, and the ratio of the
# CPU times. Needs GNU time (/usr/bin/time). The sheets need a larger table than the bundled
# laser's, so the bundled profile is copied with its travel raised to 10 m × 10 m.
set -euo pipefail
cd "$(dirname "$0")/.."
sizes=("$@")
[ ${#sizes[@]} -gt 0 ] || sizes=(1000 10000 50000)
if [ ! -x /usr/bin/time ]; then
  echo "scale-bench: needs GNU time at /usr/bin/time" >&2
  exit 1
fi
cargo build --release --quiet --bin conicut --example sheet --example read_write_baseline
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
sed -e 's/^x_max = .*/x_max = 10000.0/' -e 's/^y_max = .*/y_max = 10000.0/' \
  machine-profiles/laser.toml > "$work/big-laser.toml"
measure() { # command...: prints "wall cpu peak_MB" (seconds to the millisecond)
  local out="$work/time.txt" t
  TIMEFORMAT='%3R %3U %3S'
  t=$( { time /usr/bin/time -f "%M" -o "$out" "${@}" > /dev/null 2>&1; } 2>&1 )
  read -r wall user sys <<< "$t"
  awk -v w="$wall" -v u="$user" -v s="$sys" '{printf "%.3f %.3f %.0f", w, u + s, $1 / 1024}' "$out"
}
printf '%8s %10s %10s %10s %10s %10s %10s %8s\n' bays dxf_MB base_wall base_cpu conicut_wall conicut_cpu peak_MB cpu_ratio
for n in "${sizes[@]}"; do
  ./target/release/examples/sheet "$n" 1 > "$work/sheet.dxf" 2> /dev/null
  size=$(stat -c %s "$work/sheet.dxf")
  read -r bw bc bm <<< "$(measure ./target/release/examples/read_write_baseline "$work/sheet.dxf" "$work/copy")"
  read -r cw cc cm <<< "$(measure ./target/release/conicut plan "$work/sheet.dxf" --machine "$work/big-laser.toml" --out "$work/out")"
  ratio=$(awk -v a="$cc" -v b="$bc" 'BEGIN { if (b > 0) printf "%.1f", a / b; else printf "n/a" }')
  printf '%8d %10.1f %10s %10s %10s %10s %10s %8s\n' "$n" "$(awk -v s="$size" 'BEGIN{print s/1e6}')" "$bw" "$bc" "$cw" "$cc" "$cm" "$ratio"
done
