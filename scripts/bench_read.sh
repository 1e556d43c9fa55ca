#!/usr/bin/env bash
# Reading speed: acidscape's reading stage alone (crates/gridio/examples/read_slabs.rs --raw:
# every slab of every step read as stored: widening, masking and conversions run on the
# pool in compute, not on its reading thread) against an independent
# reader (the Python netCDF4 module reading the same six variables a time step at a time,
# scripts/read_with_netcdf4.py), run in turn REPEAT times; medians.
#
# Two storage layouts of the same SYNTHETIC benchmark run (scripts/bench_pipeline.sh makes it,
# in DIR/cmip-style/pathway-moderate, first STEPS steps):
#   step:   as generated, one chunk per time step and variable (1 x 50 x 180 x 360);
#   series: rechunked with nccopy to one chunk per variable holding every step
#           (STEPS x 50 x 180 x 360, deflate 1 + shuffle), as some model archives store it.
# acidscape reads slabs of ROWS rows (default 90, two slabs per step) with its chunk cache
# sized for them, and again with the library's default cache (--default-cache).
# Usage: scripts/bench_read.sh [DIR]   (env: REPEAT=3, ROWS=90, STEPS=12)
set -euo pipefail
cd "$(dirname "$0")/.."
dir=${1:-${TMPDIR:-/tmp}/acidscape-bench}
repeat=${REPEAT:-3}
rows=${ROWS:-90}
steps=${STEPS:-12}
run_dir="$dir/cmip-style/pathway-moderate"
if [[ ! -d $run_dir ]]; then
    echo "no benchmark run in $run_dir: run scripts/bench_pipeline.sh first (PARTS=floor is enough)" >&2
    exit 1
fi
export CARGO_TARGET_DIR=${CARGO_TARGET_DIR:-target}
cargo build --release --quiet -p acidscape-gridio --example read_slabs
reader="$CARGO_TARGET_DIR/release/examples/read_slabs"
series="$dir/series-chunks"
if [[ ! -f $series/.complete-$steps ]]; then
    rm -rf "$series" && mkdir -p "$series"
    for v in thetao so dissic talk po4 si; do
        f=$(ls "$run_dir"/${v}_*.nc | sort | head -1)
        nccopy -d 1 -s -c "time/$steps,lev/50,lat/180,lon/360" "$f" "$series/$(basename "$f")"
    done
    cp "$run_dir"/areacello_*.nc "$run_dir"/deptho_*.nc "$series/"
    touch "$series/.complete-$steps"
fi
median() { sort -g | awk '{v[NR]=$1} END {print v[int((NR+1)/2)]}'; }
for layout in step series; do
    if [[ $layout == step ]]; then
        files=($(for v in thetao so dissic talk po4 si; do ls "$run_dir"/${v}_*.nc | sort | head -1; done) "$run_dir"/areacello_*.nc "$run_dir"/deptho_*.nc)
    else
        files=("$series"/*.nc)
    fi
    : > /tmp/bench-read-$layout.sized; : > /tmp/bench-read-$layout.default; : > /tmp/bench-read-$layout.python
    for ((r = 1; r <= repeat; r++)); do
        echo "round $r ($layout), load $(cut -d' ' -f1 /proc/loadavg)"
        "$reader" --raw --rows "$rows" "${files[@]}" 2>/dev/null | awk '{print $6}' | tee -a /tmp/bench-read-$layout.sized
        "$reader" --raw --rows "$rows" --default-cache "${files[@]}" 2>/dev/null | awk '{print $6}' | tee -a /tmp/bench-read-$layout.default
        python3 scripts/read_with_netcdf4.py "${files[@]}" | tee -a /tmp/bench-read-$layout.python
    done
    s=$(median < /tmp/bench-read-$layout.sized); d=$(median < /tmp/bench-read-$layout.default); p=$(median < /tmp/bench-read-$layout.python)
    echo "$layout chunks: acidscape ${s} s (default cache ${d} s), Python netCDF4 ${p} s; ratio to Python $(awk -v a="$s" -v b="$p" 'BEGIN {printf "%.2f", a / b}')"
done
