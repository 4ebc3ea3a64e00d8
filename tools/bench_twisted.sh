#!/usr/bin/env bash
# Twisted-ring bench (not a test): the physical-sector solve of the example band at
# window half-widths K with each factorisation and ordering, next to the untwisted ring
# on the same section, one process per row (peak resident memory from /usr/bin/time).
# Run on a quiet machine; every row runs twice (the figures published are those that
# reproduce). Usage: tools/bench_twisted.sh [CASE.toml] > bench.log
set -euo pipefail
cd "$(dirname "$0")/.."
CASE=${1:-examples/twisted-ribbon-ring.toml}
cargo build --release -p twistmode-pipeline --example twisted_bench >&2
BIN=target/release/examples/twisted_bench
row() {
  for rep in 1 2; do
    echo "== run $rep: $*"
    /usr/bin/time -f "   wall %e s, peak RSS %M KiB" "$BIN" "$CASE" "$@" 2>&1
  done
}
for res in 8 16; do
  row 4 untwisted mesh.resolution=$res
done
for k in 2 4 6; do
  for mode in colamd amd node symmetric; do
    row $k $mode mesh.resolution=8
  done
done
for mode in colamd symmetric; do
  row 4 $mode mesh.resolution=16
done
# BENCH_FINE=1 adds resolutions 12 and 24 (the latter needs about 19 GB with the LU).
if [ "${BENCH_FINE:-0}" = 1 ]; then
  row 4 untwisted mesh.resolution=24
  for res in 12 24; do
    for mode in colamd symmetric; do
      row 4 $mode mesh.resolution=$res
    done
  done
fi
