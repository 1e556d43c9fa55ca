#!/usr/bin/env bash
# The output's compression trade-off: time and size of the same indicator values written with
# each deflate level, with and without the shuffle filter.
#   1. nccopy rewrites one `compute` output of the benchmark run (scripts/bench_pipeline.sh
#      makes the run; the output is computed here once, default options) with -d LEVEL, with
#      and without -s, keeping its chunks: the compression's own cost, plus a constant read;
#   2. `compute` end to end with --deflate-level 0, 1 (default) and 4, run in turn.
# REPEAT runs each, medians; sizes in MB.
# Usage: scripts/bench_output_filters.sh [DIR]   (env: REPEAT=3, LEVELS="0 1 2 4 6 9")
set -euo pipefail
cd "$(dirname "$0")/.."
dir=${1:-${TMPDIR:-/tmp}/acidscape-bench}
repeat=${REPEAT:-3}
levels=${LEVELS:-0 1 2 4 6 9}
run_dir="$dir/cmip-style/pathway-moderate"
[[ -d $run_dir ]] || { echo "no benchmark run in $run_dir: run scripts/bench_pipeline.sh first" >&2; exit 1; }
export CARGO_TARGET_DIR=${CARGO_TARGET_DIR:-target}
cargo build --release --quiet -p acidscape
bin="$CARGO_TARGET_DIR/release/acidscape"
mapfile -t inputs < <(for v in thetao so dissic talk po4 si; do ls "$run_dir"/${v}_*.nc | sort | head -1; done; ls "$run_dir"/*.nc | grep -vE '_[0-9]{6}-[0-9]{6}\.nc$')
out="$dir/filters"
mkdir -p "$out"
reference="$out/reference.nc"
[[ -f $reference ]] || "$bin" compute "${inputs[@]}" -o "$reference" --overwrite > /dev/null 2>&1
median() { sort -g | awk '{v[NR]=$1} END {print v[int((NR+1)/2)]}'; }
seconds() { local t0 t1; t0=$(date +%s.%N); "$@" > /dev/null 2>&1; t1=$(date +%s.%N); awk -v a="$t0" -v b="$t1" 'BEGIN {printf "%.2f\n", b - a}'; }
echo "nccopy of $(basename "$reference") (load $(cut -d' ' -f1 /proc/loadavg)):"
printf '%-8s %-8s %10s %10s\n' level shuffle seconds MB
for level in $levels; do
    for shuffle in yes no; do
        flag=(); [[ $shuffle == yes && $level != 0 ]] && flag=(-s)
        [[ $shuffle == no || $level != 0 ]] || continue
        times=()
        for ((r = 1; r <= repeat; r++)); do
            rm -f "$out/copy.nc"
            times+=("$(seconds nccopy -d "$level" "${flag[@]}" "$reference" "$out/copy.nc")")
        done
        size=$(stat -c %s "$out/copy.nc")
        printf '%-8s %-8s %10s %10.0f\n' "$level" "$shuffle" "$(printf '%s\n' "${times[@]}" | median)" "$(awk -v s="$size" 'BEGIN {print s / 1e6}')"
    done
done
echo "compute end to end, 2 cores:"
declare -A runs
for ((r = 1; r <= repeat; r++)); do
    for level in 0 1 4; do
        rm -f "$out/compute-$level.nc"
        runs[$level]+="$(seconds "$bin" compute "${inputs[@]}" -o "$out/compute-$level.nc" --deflate-level "$level") "
    done
done
for level in 0 1 4; do
    printf 'deflate %s: %s s (runs: %s), %.0f MB\n' "$level" "$(tr ' ' '\n' <<< "${runs[$level]}" | grep . | median)" "${runs[$level]}" "$(awk -v s="$(stat -c %s "$out/compute-$level.nc")" 'BEGIN {print s / 1e6}')"
done
