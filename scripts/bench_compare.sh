#!/usr/bin/env bash
# Benchmark of `acidscape compare` on a generated SYNTHETIC run: the century layout on a
# 1-degree global grid (360 x 180 x 50 levels, 50 annual steps 2015-2064, both invented
# pathways; scripts/make_sample_grids.py --global-century), computed with `acidscape compute`,
# then compared over two 20-year windows with a threshold emergence rule, against the I/O floor
# (nccopy -d 0 of both compute outputs: inflating every byte compare has to read, and writing it
# out again). Reports medians of RUNS repeats (default 3) and peak RSS, and the peak RSS when the
# same comparison runs on the first 25 steps only (memory must not grow with the run's length).
# Usage: scripts/bench_compare.sh [DIR]   (DIR keeps the generated run and outputs between calls;
# default a temporary folder, removed at the end; about 15 GB of disk while it runs)
set -euo pipefail
cd "$(dirname "$0")/.."
runs=${RUNS:-3}
if [[ $# -ge 1 ]]; then dir=$1; mkdir -p "$dir"; else
    dir=$(mktemp -d "${TMPDIR:-/tmp}/acidscape-bench-compare.XXXXXX"); trap 'rm -rf "$dir"' EXIT
fi
for tool in nccopy ncks /usr/bin/time; do
    command -v "$tool" >/dev/null || { echo "bench_compare: $tool not found (Debian: netcdf-bin, nco, time)"; exit 1; }
done
cargo build --release --quiet -p acidscape
bin=target/release/acidscape

if ! compgen -G "$dir/grids/century/pathway-steep/*.nc" >/dev/null; then
    echo "== generating the synthetic global run (a few minutes)"
    python3 scripts/make_sample_grids.py --global-century "$dir/grids" --quiet
fi
for pathway in pathway-moderate pathway-steep; do
    if [[ ! -f "$dir/$pathway.nc" ]]; then
        echo "== compute $pathway"
        "$bin" compute "$dir/grids/century/$pathway/"*.nc -o "$dir/$pathway.nc" --overwrite >/dev/null 2>&1
    fi
done
if [[ ! -f "$dir/short-pathway-steep.nc" ]]; then
    for pathway in pathway-moderate pathway-steep; do ncks -O -d time,0,24 "$dir/$pathway.nc" "$dir/short-$pathway.nc"; done
fi
ls -l "$dir"/pathway-*.nc

median() { sort -g | awk '{ v[NR] = $1 } END { print (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2 }'; }
# Wall seconds and peak RSS (KiB) of a command, from GNU time.
timed() {
    /usr/bin/time -f "%e %M" -o "$dir/time.txt" "$@" >/dev/null 2>"$dir/stderr.txt" || { cat "$dir/stderr.txt"; exit 1; }
    cat "$dir/time.txt"
}
compare_args() { # PREFIX WINDOW2
    echo "compare moderate=$dir/${1}pathway-moderate.nc steep=$dir/${1}pathway-steep.nc --window reference=2015-2034 --window late=$2 --emergence omega_aragonite<1 -o $dir/compare.nc --overwrite"
}

floor=(); wall=(); rss=()
for ((i = 1; i <= runs; i++)); do
    sync
    t0=$(date +%s.%N)
    for pathway in pathway-moderate pathway-steep; do
        nccopy -d 0 "$dir/$pathway.nc" "$dir/floor.nc"; rm -f "$dir/floor.nc"
    done
    floor+=("$(echo "$(date +%s.%N) - $t0" | bc)")
    read -r w m < <(timed $bin $(compare_args "" 2045-2064))
    wall+=("$w"); rss+=("$m")
    echo "run $i: I/O floor ${floor[-1]} s, compare $w s, peak RSS $((m / 1024)) MiB"
done
read -r _ short_rss < <(timed $bin $(compare_args short- 2030-2039))
f=$(printf '%s\n' "${floor[@]}" | median); c=$(printf '%s\n' "${wall[@]}" | median); r=$(printf '%s\n' "${rss[@]}" | median)
echo
echo "medians of $runs runs (2 pathways x 50 annual steps x 360 x 180 x 50 cells, 5 indicators):"
echo "  I/O floor (nccopy -d 0 of both compute outputs): $f s"
echo "  acidscape compare:                               $c s  ($(echo "scale=2; $c / $f" | bc) x the floor)"
echo "  peak RSS: $((r / 1024)) MiB with 50 steps, $((short_rss / 1024)) MiB with the first 25 steps"
