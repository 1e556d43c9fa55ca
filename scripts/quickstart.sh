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
echo "== a century of annual means under both pathways: indicators and horizons, then compared"
for pathway in moderate steep; do
    "$bin" compute "sample-grids/century/pathway-$pathway/*.nc" -o "$out/century-$pathway.nc" --overwrite \
        --indicators ph,co3,pco2,omega-aragonite,omega-calcite
done
"$bin" compare moderate="$out/century-moderate.nc" steep="$out/century-steep.nc" \
    --window reference=2015-2034 --window late=2081-2100 \
    --regions sample-grids/varnholm-regions.toml --emergence 'omega_aragonite:2sd:below' \
    -o "$out/century-pathways.nc" --overwrite

echo
echo "== figures of the comparison"
note="SYNTHETIC: the invented Varnholm Gulf under two made-up pathways, not model output."
draw() { "$bin" draw "$@" --note "$note" --dpi 150 --overwrite; }
for pathway in moderate steep; do
    draw map "$out/century-pathways.nc" "omega_aragonite_$pathway" --window late --level surface \
        --range 1,3 -o "$out/map-surface-omega-aragonite-$pathway-late.png"
done
draw map "$out/century-pathways.nc" omega_aragonite_steep_minus_moderate --window late --level surface \
    -o "$out/map-surface-omega-aragonite-steep-minus-moderate-late.png"
draw section "$out/century-pathways.nc" omega_aragonite_steep --window late --path 209,38.7:209,30.2 \
    -o "$out/section-omega-aragonite-steep-late.png"
for region in "whole gulf" "Aske river plume coast"; do
    draw series "$out/century-pathways.csv" omega_aragonite --region "$region" \
        -o "$out/series-surface-omega-aragonite-${region// /-}.png"
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
Pathways compared:             $out/century-pathways.nc (window means, changes, differences,
                               horizon shoaling, years of emergence) and
                               $out/century-pathways.csv (regional means and fractions)
Figures:                       $out/*.png (maps, a section with the horizons, regional series)
The sample table's results:    $out/bottle-samples-results.csv
MSG

echo
echo "== the first values of horizon_depth_aragonite, cmip-style, pathway-steep (m; _ is land)"
ncdump -v horizon_depth_aragonite "$out/cmip-style-pathway-steep.nc" \
    | sed -n '/^ horizon_depth_aragonite =/,+4p'
echo "== its corrosive-water table (first rows)"
head -6 "$out/cmip-style-pathway-steep.extent.csv"
