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
        echo "== indicators for $run, $pathway"
        "$bin" compute "sample-grids/$run/$pathway/*.nc" -o "$out/$run-$pathway.nc" --overwrite \
            --indicators ph,co3,pco2,omega-aragonite,omega-calcite,revelle
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
The sample table's results:    $out/bottle-samples-results.csv
MSG
