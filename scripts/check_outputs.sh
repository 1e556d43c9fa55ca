#!/usr/bin/env bash
# Runs `acidscape compute` on every sample run and checks each output with
#   1. an open CF checker (compliance-checker, PyPI), zero errors required, and
#   2. scripts/check_external_readers.py (netCDF4/xarray open it with the right units,
#      coordinates and decoded time).
# Sample runs: sample-grids/<run>/<pathway>/*.nc if present, else generated (small) into
# the temporary directory by scripts/make_sample_grids.py.
# Usage: scripts/check_outputs.sh [--keep]   (--keep leaves the temporary directory)
set -euo pipefail
cd "$(dirname "$0")/.."
keep=${1:-}
work=$(mktemp -d "${TMPDIR:-/tmp}/acidscape-check.XXXXXX")
if [[ "$keep" != "--keep" ]]; then trap 'rm -rf "$work"' EXIT; fi

export CARGO_TARGET_DIR=${CARGO_TARGET_DIR:-target}
cargo build --quiet -p acidscape
bin="$CARGO_TARGET_DIR/debug/acidscape"

grids=sample-grids
if ! compgen -G "sample-grids/*/*/*.nc" >/dev/null; then
    grids="$work/grids"
    python3 scripts/make_sample_grids.py --out "$grids" --size 12 10 6 --steps 3 --quiet
fi

for tool in compliance-checker python3; do
    command -v "$tool" >/dev/null || { echo "check_outputs: $tool not found (pip install compliance-checker)" >&2; exit 2; }
done
[[ -f scripts/check_external_readers.py ]] || { echo "check_outputs: scripts/check_external_readers.py is missing" >&2; exit 2; }

status=0
for run_dir in "$grids"/*/*/; do
    run=$(basename "$(dirname "$run_dir")")-$(basename "$run_dir")
    out="$work/$run.nc"
    echo "== $run"
    # Every indicator, so every variable's attributes are checked.
    "$bin" compute "$run_dir"*.nc -o "$out" --overwrite \
        --indicators ph,co3,hco3,co2,pco2,fco2,omega-aragonite,omega-calcite,revelle \
        --ph-scales total,free >"$work/$run.log" 2>&1 || { cat "$work/$run.log"; status=1; continue; }
    # compliance-checker exits non-zero when any check fails; keep its report on failure.
    if ! compliance-checker --test=cf:1.10 --criteria=strict --format=text -o "$work/$run.cf.txt" "$out" >/dev/null 2>&1; then
        if grep -qE "^High Priority|^ *[0-9]+ *High" "$work/$run.cf.txt" || ! grep -q "All tests passed" "$work/$run.cf.txt"; then
            echo "CF check failed for $out:"; cat "$work/$run.cf.txt"; status=1
        fi
    fi
    python3 scripts/check_external_readers.py "$out" || status=1
done
if [[ $status -eq 0 ]]; then echo "check_outputs: all outputs pass"; fi
exit $status
