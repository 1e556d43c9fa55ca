#!/usr/bin/env bash
# Quick start: build acidscape, then compute acidification indicators for the bundled
# SYNTHETIC sample runs (an invented coastal sea under two made-up pathways) and the bundled
# synthetic sample table. Outputs go to ./quickstart-output/ (replaced on each run).
set -euo pipefail
cd "$(dirname "$0")/.."
scripts/ensure-deps.sh
echo "building acidscape (release; the first build takes a minute or two) ..."
cargo build --release --quiet -p acidscape
bin=target/release/acidscape
out=quickstart-output
mkdir -p "$out"

echo
echo "== what acidscape understands of one sample run"
"$bin" describe 'sample-grids/cmip-style/pathway-moderate/*.nc'

for run in cmip-style terrain-following curvilinear; do
    for pathway in pathway-moderate pathway-steep; do
        echo
        echo "== indicators, saturation horizons and corrosive water for $run, $pathway"
        "$bin" compute "sample-grids/$run/$pathway/*.nc" -o "$out/$run-$pathway.nc" --overwrite \
            --indicators ph,co3,pco2,omega-aragonite,omega-calcite,revelle \
            --omega-thresholds aragonite=1.5,3
    done
done

echo
echo "== a table of water samples"
"$bin" samples sample-grids/bottle-samples.csv -o "$out/bottle-samples-results.csv" --overwrite

cat <<MSG

Done. Outputs (synthetic demonstration data, not model results or measurements):
  $(ls "$out" | sed "s|^|$out/|" | tr '\n' ' ')
Look inside a NetCDF output:   ncdump -h $out/cmip-style-pathway-steep.nc
Open it in Python:             xarray.open_dataset("$out/cmip-style-pathway-steep.nc")
Saturation horizons:           horizon_depth_aragonite, horizon_depth_calcite (m below the sea
                               surface, per time step; how each column's was found in
                               horizon_status_*), horizon_depth_aragonite_1p5 and _3 for
                               omega aragonite 1.5 and 3
Corrosive water per step:      $out/cmip-style-pathway-steep.extent.csv (also in the NetCDF
                               files as wet_volume, volume_below_threshold_aragonite, ...)
The sample table's results:    $out/bottle-samples-results.csv
MSG

echo
echo "== the first values of horizon_depth_aragonite, cmip-style, pathway-steep (m; _ is land)"
ncdump -v horizon_depth_aragonite "$out/cmip-style-pathway-steep.nc" \
    | sed -n '/^ horizon_depth_aragonite =/,+4p'
echo "== its corrosive-water table (first rows)"
head -6 "$out/cmip-style-pathway-steep.extent.csv"
