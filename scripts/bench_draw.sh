#!/usr/bin/env bash
# Benchmark of `acidscape draw map` end to end (open the file, read one level, render, encode
# and write the PNG) on a generated SYNTHETIC 1-degree global compute output: the century
# layout on a 360 x 180 x 50 grid, one annual step (scripts/make_sample_grids.py
# --global-century --steps 1, one pathway), computed with `acidscape compute`. Reports the
# median wall time of RUNS repeats (default 7) of a surface map at the default page (6.5 in at
# 300 dpi), a map at 1000 m (with its Ω = 1 contour) and a section along a meridian.
# Usage: scripts/bench_draw.sh [DIR]   (DIR keeps the generated run between calls; default a
# temporary folder, removed at the end; about 100 MB of disk)
set -euo pipefail
cd "$(dirname "$0")/.."
runs=${RUNS:-7}
if [[ $# -ge 1 ]]; then dir=$1; mkdir -p "$dir"; else
    dir=$(mktemp -d "${TMPDIR:-/tmp}/acidscape-bench-draw.XXXXXX"); trap 'rm -rf "$dir"' EXIT
fi
cargo build --release --quiet -p acidscape
bin=target/release/acidscape
if [[ ! -f "$dir/global.nc" ]]; then
    echo "== generating and computing the synthetic global run (a minute)"
    python3 scripts/make_sample_grids.py --global-century "$dir/grids" --steps 1 --pathways pathway-steep --quiet
    "$bin" compute "$dir/grids/century/pathway-steep/"*.nc -o "$dir/global.nc" --overwrite >/dev/null 2>&1
fi
median() { sort -g | awk '{ v[NR] = $1 } END { print (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2 }'; }
measure() { # LABEL ARGS...
    local label=$1; shift
    local times=()
    for ((i = 1; i <= runs; i++)); do
        local t0 t1
        t0=$(date +%s.%N)
        "$bin" draw "$@" -o "$dir/figure.png" --overwrite >/dev/null
        t1=$(date +%s.%N)
        times+=("$(echo "$t1 - $t0" | bc)")
    done
    printf '%-48s median %.3f s of %d runs (%s)\n' "$label" "$(printf '%s\n' "${times[@]}" | median)" "$runs" \
        "$(identify_size "$dir/figure.png")"
}
identify_size() { python3 -c "import struct,sys; d=open(sys.argv[1],'rb').read(24); print('%dx%d px' % struct.unpack('>II', d[16:24]))" "$1"; }
measure "map, surface, 6.5 in at 300 dpi" map "$dir/global.nc" omega_aragonite --level surface
measure "map, surface, 6.5 in at 150 dpi" map "$dir/global.nc" omega_aragonite --level surface --dpi 150
measure "map, 1000 m with its contour, 300 dpi" map "$dir/global.nc" omega_aragonite --depth 1000
measure "section along 150 W, 60 N to 60 S, 300 dpi" section "$dir/global.nc" omega_aragonite --path=-150,60:-150,-60
