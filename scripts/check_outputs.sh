#!/usr/bin/env bash
# Runs `acidscape compute` on every sample run and checks each output with
# scripts/check_external_readers.py: netCDF4 and xarray open it (units, coordinates,
# decoded time), the quality flag is a sound CF bit field (flag_masks with flag_meanings, a
# _FillValue that is no combination of bits, no undeclared bit set) and the compliance-checker
# CF suites cf:1.8 and cf:1.10 (the version the output declares) report no error. The checker
# first checks itself on sound and broken probe files. CDO and NCO read them (scripts/check_with_cdo_nco.sh).
# The saturation horizons and the corrosive-extent time series are recomputed from each output's
# own fields by an independent reader (scripts/check_horizons.py, numpy and xarray).
# Sample runs: sample-grids/<run>/<pathway>/ if present, else generated (small, SYNTHETIC)
# into a temporary directory by scripts/make_sample_grids.py.
# Usage: scripts/check_outputs.sh [--keep]   (--keep leaves the temporary directory)
set -euo pipefail
cd "$(dirname "$0")/.."
work=$(mktemp -d "${TMPDIR:-/tmp}/acidscape-check.XXXXXX")
if [[ "${1:-}" != "--keep" ]]; then trap 'rm -rf "$work"' EXIT; else echo "keeping $work"; fi

export CARGO_TARGET_DIR=${CARGO_TARGET_DIR:-target}
cargo build --quiet -p acidscape
bin="$CARGO_TARGET_DIR/debug/acidscape"

grids=sample-grids
if ! compgen -G "sample-grids/*/*/*.nc" >/dev/null; then
    grids="$work/grids"
    python3 scripts/make_sample_grids.py --out "$grids" --size 12 10 6 --steps 3 --quiet
fi

failed=0
echo "== the checker's own self-test"
python3 scripts/check_external_readers.py --self-test --cf-suite cf:1.10 || failed=1
outputs=()
for run_dir in "$grids"/*/*/; do
    run=$(basename "$(dirname "$run_dir")")-$(basename "$run_dir")
    out="$work/$run.nc"
    # Every indicator, two pH scales and extra horizon thresholds, so every kind of output
    # variable is checked.
    if "$bin" compute "$run_dir"*.nc -o "$out" --overwrite \
        --indicators ph,co3,hco3,co2,pco2,fco2,omega-aragonite,omega-calcite,revelle \
        --ph-scales total,free --omega-thresholds aragonite=1.5,3 >"$work/$run.log" 2>&1; then
        outputs+=("$out")
    else
        echo "compute failed on $run_dir:"; cat "$work/$run.log"; failed=1
    fi
done
if [[ ${#outputs[@]} -gt 0 ]]; then
    expect=(--expect-var ph --expect-var quality_flag --expect-units ph=1 --expect-units co3="mol m-3"
            --expect-units pco2=uatm --expect-units omega_aragonite=1
            --expect-var horizon_depth_aragonite --expect-var horizon_depth_aragonite_1p5
            --expect-var cell_area --expect-units horizon_depth_calcite=m --expect-units wet_volume=m3)
    for suite in cf:1.8 cf:1.10; do
        echo "== external readers and compliance-checker $suite"
        python3 scripts/check_external_readers.py "${outputs[@]}" --cf-suite "$suite" "${expect[@]}" || failed=1
    done
fi
if [[ ${#outputs[@]} -gt 0 ]]; then
    echo "== horizons and extent recomputed from the written fields (numpy, xarray)"
    python3 scripts/check_horizons.py "${outputs[@]}" || failed=1
fi
if [[ ${#outputs[@]} -gt 0 ]]; then
    echo "== CDO and NCO"
    scripts/check_with_cdo_nco.sh "${outputs[@]}" || failed=1
fi
if [[ $failed -eq 0 ]]; then echo "check_outputs: all outputs pass"; else echo "check_outputs: FAILED"; fi
exit $failed
