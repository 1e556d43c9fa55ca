#!/usr/bin/env bash
# Runs `acidscape compute` on every sample run and checks each output with
# scripts/check_external_readers.py: netCDF4 and xarray open it (units, coordinates,
# decoded time), the quality flag is a sound CF bit field (flag_masks with flag_meanings, a
# _FillValue that is no combination of bits, no undeclared bit set) and the compliance-checker
# CF suites cf:1.8 and cf:1.10 (the version the output declares) report no error. The checker
# first checks itself on sound and broken probe files. CDO and NCO read them (scripts/check_with_cdo_nco.sh).
# The saturation horizons and the corrosive-extent time series are recomputed from each output's
# own fields by an independent reader (scripts/check_horizons.py, numpy and xarray).
#
# Then `acidscape compare` on the two pathways of the century run (and on two-year
# terrain-following and curvilinear runs generated here): its window means, changes,
# differences and regional CSV against an independent computation
# (scripts/check_comparison.py: xarray, numpy, pandas), a run compared with itself giving 0,
# and the same CF, CDO and NCO checks on its NetCDF output.
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
# With standard uncertainties (inputs and the constants' defaults): a companion field per
# indicator and per horizon depth, CF-linked through ancillary_variables.
first_run=$(ls -d "$grids"/*/*/ | head -n 1)
out="$work/with-uncertainty.nc"
if "$bin" compute "$first_run"*.nc -o "$out" --overwrite \
    --indicators ph,co3,hco3,co2,pco2,fco2,omega-aragonite,omega-calcite,revelle \
    --ph-scales total,free --omega-thresholds aragonite=1.5 \
    --uncertainty dic=2 --uncertainty alkalinity=2 --uncertainty temperature=0.1 \
    --uncertainty salinity=0.01 --uncertainty nutrients=5% >"$work/with-uncertainty.log" 2>&1; then
    outputs+=("$out")
else
    echo "compute with uncertainties failed on $first_run:"; cat "$work/with-uncertainty.log"; failed=1
fi
# Each source's contribution, on fewer indicators (a field per indicator and source).
out="$work/uncertainty-breakdown.nc"
if "$bin" compute "$first_run"*.nc -o "$out" --overwrite --indicators ph,omega-aragonite \
    --uncertainty dic=2 --uncertainty temperature=0.1 --uncertainty-breakdown \
    >"$work/uncertainty-breakdown.log" 2>&1; then
    echo "== the breakdown output: external readers and compliance-checker cf:1.10"
    python3 scripts/check_external_readers.py "$out" --cf-suite cf:1.10 \
        --expect-var ph_uncertainty_from_dic --expect-units omega_aragonite_uncertainty_from_pk2=1 || failed=1
else
    echo "compute with --uncertainty-breakdown failed on $first_run:"; cat "$work/uncertainty-breakdown.log"; failed=1
fi
# An input's uncertainty read from a NetCDF field on the run's grid (a misfit map, written
# here with xarray from the run's own DIC file: 3 umol kg-1 everywhere) gives the same fields
# as the same number given as an option.
misfit="$work/dic-misfit.nc"
python3 - "$first_run" "$misfit" <<'PY' || failed=1
import glob, sys
import xarray as xr
dic = xr.open_dataset(sorted(glob.glob(sys.argv[1] + "dissic_*.nc"))[0])
field = (dic["dissic"].isel(time=0, drop=True) * 0 + 3.0).astype("float32").rename("dic_misfit")
field.attrs = {"units": "umol kg-1", "long_name": "DIC model-minus-observation misfit (SYNTHETIC)"}
field.to_dataset().to_netcdf(sys.argv[2])
PY
if "$bin" compute "$first_run"*.nc -o "$work/field-uncertainty.nc" --overwrite \
        --uncertainty-field dic="$misfit":dic_misfit --no-constant-uncertainty >"$work/field-uncertainty.log" 2>&1 &&
    "$bin" compute "$first_run"*.nc -o "$work/number-uncertainty.nc" --overwrite \
        --uncertainty dic=3 --no-constant-uncertainty >"$work/number-uncertainty.log" 2>&1; then
    echo "== uncertainty from a field: external readers, compliance-checker cf:1.10, same as the number"
    python3 scripts/check_external_readers.py "$work/field-uncertainty.nc" --cf-suite cf:1.10 \
        --expect-var ph_uncertainty --expect-units omega_aragonite_uncertainty=1 || failed=1
    python3 - "$work/field-uncertainty.nc" "$work/number-uncertainty.nc" <<'PY' || failed=1
import sys
import numpy as np
import xarray as xr
a, b = xr.open_dataset(sys.argv[1]), xr.open_dataset(sys.argv[2])
names = [v for v in a.data_vars if v.endswith("_uncertainty")]
bad = [v for v in names if not np.array_equal(a[v].values, b[v].values, equal_nan=True)]
print(f"differ from the number: {bad}" if bad else f"ok   {len(names)} uncertainty fields from the field equal those from the number")
sys.exit(1 if bad or not names else 0)
PY
else
    echo "compute with --uncertainty-field failed on $first_run:"; cat "$work/field-uncertainty.log" "$work/number-uncertainty.log"; failed=1
fi
if [[ -f "$work/with-uncertainty.nc" && -f "$work/uncertainty-breakdown.nc" ]]; then
    echo "== uncertainty fields: names, units and CF links"
    python3 - "$work/with-uncertainty.nc" "$work/uncertainty-breakdown.nc" <<'PY' || failed=1
import sys
import xarray as xr
ds = xr.open_dataset(sys.argv[1])
bad = []
for name in ["ph", "ph_free_scale", "co3", "hco3", "co2_star", "pco2", "fco2", "omega_aragonite",
             "omega_calcite", "revelle_factor", "horizon_depth_aragonite", "horizon_depth_calcite",
             "horizon_depth_aragonite_1p5"]:
    companion = name + "_uncertainty"
    if companion not in ds:
        bad.append(f"{companion} missing")
        continue
    if companion not in ds[name].attrs.get("ancillary_variables", "").split():
        bad.append(f"{name}: ancillary_variables does not name {companion}")
    if ds[name].attrs.get("units") != ds[companion].attrs.get("units"):
        bad.append(f"{companion}: units differ from {name}'s")
    standard = ds[name].attrs.get("standard_name")
    if standard and ds[companion].attrs.get("standard_name") != standard + " standard_error":
        bad.append(f"{companion}: standard_name is not '{standard} standard_error'")
    if not (ds[companion] >= 0).any():
        bad.append(f"{companion}: no value")
parts = xr.open_dataset(sys.argv[2])
for name in ["ph", "omega_aragonite"]:
    combined = parts[name + "_uncertainty"]
    sources = [f"{name}_uncertainty_from_{s}" for s in ["dic", "temperature", "pk0", "pk1", "pk2",
               "pkb", "pkw", "pksp_aragonite", "pksp_calcite", "total_boron"]]
    if combined.attrs.get("ancillary_variables", "").split() != ["quality_flag"] + sources:
        bad.append(f"{name}_uncertainty: ancillary_variables {combined.attrs.get('ancillary_variables')}")
        continue
    if any(parts[s].attrs.get("units") != combined.attrs.get("units") for s in sources):
        bad.append(f"{name}: a contribution's units differ")
    # The root sum of squares of the contributions is the combined uncertainty (float32 storage).
    rss = sum(parts[s].astype("float64") ** 2 for s in sources) ** 0.5
    worst = float(abs(rss / combined.astype("float64") - 1).max())
    if not worst < 1e-5:
        bad.append(f"{name}: contributions' root sum of squares differs from the combined uncertainty by {worst:.2e}")
print("\n".join(bad) if bad else f"ok   {sys.argv[1]}, {sys.argv[2]}: every indicator and horizon depth has its linked standard uncertainty; the contributions' root sum of squares is the combined uncertainty")
sys.exit(1 if bad else 0)
PY
fi
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

# Pathway comparison: whole years are needed. The bundled century run spans 2015-2100; the
# small generated one (no sample-grids/) 2015-2017.
if [[ "$grids" == sample-grids ]]; then windows=(reference=2015-2034 late=2081-2100); else windows=(reference=2015 late=2017); fi
window_options=(); for w in "${windows[@]}"; do window_options+=(--window "$w"); done
compared=()
run_compare() { # NAME, then compare's arguments
    local name=$1; shift
    if "$bin" compare "$@" -o "$work/$name.nc" --overwrite >"$work/$name.log" 2>&1; then
        compared+=("$work/$name.nc")
    else
        echo "compare failed ($name):"; cat "$work/$name.log"; failed=1
    fi
}
moderate="$work/century-pathway-moderate.nc"; steep="$work/century-pathway-steep.nc"
if [[ -f $moderate && -f $steep ]]; then
    run_compare compare-century moderate="$moderate" steep="$steep" again="$moderate" "${window_options[@]}" \
        --statistics mean,min,max,p90 --emergence 'omega_aragonite:2sd:below'
    echo "== compare checked by an independent computation (xarray, numpy, pandas)"
    python3 scripts/check_comparison.py --run moderate="$moderate" --run steep="$steep" --run again="$moderate" \
        "${window_options[@]}" --comparison "$work/compare-century.nc" --table "$work/compare-century.csv" \
        --identical moderate,again | grep -v "^ok " || failed=1
    run_compare compare-century-regions moderate="$moderate" steep="$steep" "${window_options[@]}" \
        --regions sample-grids/varnholm-regions.toml --emergence 'omega_aragonite<2.5'
fi
# Two whole years of the terrain-following (360_day) and curvilinear (standard) layouts.
python3 scripts/make_sample_grids.py --out "$work/years" --size 12 10 6 --steps 24 \
    --runs terrain-following,curvilinear --quiet
for run in terrain-following curvilinear; do
    for pathway in pathway-moderate pathway-steep; do
        "$bin" compute "$work/years/$run/$pathway/"*.nc -o "$work/years-$run-$pathway.nc" --overwrite \
            >"$work/years-$run-$pathway.log" 2>&1 || { cat "$work/years-$run-$pathway.log"; failed=1; }
    done
done
run_compare compare-terrain-following moderate="$work/years-terrain-following-pathway-moderate.nc" \
    steep="$work/years-terrain-following-pathway-steep.nc" --window first=2050 --window second=2051 --statistics mean,p50
run_compare compare-curvilinear moderate="$work/years-curvilinear-pathway-moderate.nc" \
    steep="$work/years-curvilinear-pathway-steep.nc" --window first=2095 --window second=2096 --emergence 'ph<8'
if [[ ${#compared[@]} -gt 0 ]]; then
    for suite in cf:1.8 cf:1.10; do
        echo "== compare outputs: external readers and compliance-checker $suite"
        python3 scripts/check_external_readers.py "${compared[@]}" --cf-suite "$suite" | sed 's/data \[[^]]*\]/data [...]/' || failed=1
    done
    echo "== compare outputs: CDO and NCO"
    scripts/check_with_cdo_nco.sh "${compared[@]}" || failed=1
fi
if [[ $failed -eq 0 ]]; then echo "check_outputs: all outputs pass"; else echo "check_outputs: FAILED"; fi
exit $failed
