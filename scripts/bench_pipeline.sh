#!/usr/bin/env bash
# Speed and memory of `acidscape compute` on a large SYNTHETIC cmip-style run.
#
# Generates (once) a 360 x 180 x 50 run with 2*STEPS monthly steps, written by
# scripts/make_sample_grids.py as two files per variable (first and second half of the
# steps), so the first-half files form a STEPS-step run and all files a 2*STEPS-step run.
# Then measures, each once (the machine may be shared: treat figures as indicative):
#   1. I/O floor with nccopy (netcdf-bin):
#      a. read: nccopy -d 0 of every input file of the STEPS-step run (reads and inflates
#         every input value, writes it back uncompressed to a scratch file);
#      b. write: nccopy -d LEVEL -s of acidscape's own output (reads it, then deflates and
#         writes the same values with the same chunking: the output's write cost, plus a read);
#   2. acidscape end to end on 1 and 2 threads (wall time, peak RSS via /usr/bin/time -v,
#      cells/s and the read/solve/write split from its summary);
#   3. peak RSS on the 2*STEPS-step run (memory must stay flat as steps grow).
# Usage: scripts/bench_pipeline.sh [DIR]   (env: STEPS=12, BUDGET=2GiB, LEVEL=1, SIZE="360 180 50")
set -euo pipefail
cd "$(dirname "$0")/.."
dir=${1:-${TMPDIR:-/tmp}/acidscape-bench}
steps=${STEPS:-12}
budget=${BUDGET:-2GiB}
level=${LEVEL:-1}
size=${SIZE:-360 180 50}
export CARGO_TARGET_DIR=${CARGO_TARGET_DIR:-target}
cargo build --release --quiet -p acidscape
bin="$CARGO_TARGET_DIR/release/acidscape"
mkdir -p "$dir"

run_dir="$dir/cmip-style/pathway-moderate"
if [[ ! -f "$dir/.complete-$steps" ]]; then
    echo "generating $size (x y z), $((2 * steps)) steps into $dir ..."
    rm -rf "$dir/cmip-style"
    # shellcheck disable=SC2086
    python3 scripts/make_sample_grids.py --out "$dir" --runs cmip-style --size $size \
        --steps $((2 * steps)) --quiet
    touch "$dir/.complete-$steps"
fi
# First half of every time-split variable, plus the fixed fields (no date in the name).
mapfile -t half < <(for v in thetao so dissic talk po4 si; do ls "$run_dir"/${v}_*.nc | sort | head -1; done; ls "$run_dir"/*.nc | grep -vE '_[0-9]{6}-[0-9]{6}\.nc$')
mapfile -t all < <(ls "$run_dir"/*.nc)
echo "inputs: ${#half[@]} files for $steps steps ($(du -ch "${half[@]}" | tail -1 | cut -f1)), ${#all[@]} files for $((2 * steps)) steps"

seconds() { /usr/bin/env python3 -c 'import sys,time; print(f"{time.time():.3f}")'; }
measure() { # label, then the command; prints wall seconds and peak RSS
    local label=$1; shift
    local log="$dir/$label.time"
    /usr/bin/time -v "$@" >"$dir/$label.out" 2>"$log" || { cat "$log"; return 1; }
    local wall rss
    wall=$(grep "Elapsed (wall clock)" "$log" | awk '{print $NF}')
    rss=$(grep "Maximum resident set size" "$log" | awk '{print $NF}')
    printf '%-26s wall %8s   peak RSS %8.1f MiB\n' "$label" "$wall" "$(echo "$rss / 1024" | bc -l)"
}

echo "== I/O floor (nccopy)"
rm -rf "$dir/nccopy" && mkdir -p "$dir/nccopy"
start=$(seconds)
for f in "${half[@]}"; do nccopy -k nc4 -d 0 "$f" "$dir/nccopy/$(basename "$f")"; done
read_s=$(echo "$(seconds) - $start" | bc -l)
printf 'read inputs (nccopy -d 0):  %.2f s for %s of input\n' "$read_s" "$(du -ch "${half[@]}" | tail -1 | cut -f1)"
rm -rf "$dir/nccopy"

echo "== acidscape compute, $steps steps"
out1="$dir/out-1thread.nc"; out2="$dir/out-2threads.nc"
measure "acidscape-1-thread" "$bin" compute "${half[@]}" -o "$out1" --overwrite --threads 1 --memory-budget "$budget" --deflate-level "$level"
grep -E "^(cells|wall|stage|quality|peak)" "$dir/acidscape-1-thread.out"
measure "acidscape-2-threads" "$bin" compute "${half[@]}" -o "$out2" --overwrite --threads 2 --memory-budget "$budget" --deflate-level "$level"
grep -E "^(cells|wall|stage|peak)" "$dir/acidscape-2-threads.out"

start=$(seconds)
nccopy -d "$level" -s "$out2" "$dir/nccopy-output.nc"
write_s=$(echo "$(seconds) - $start" | bc -l)
printf 'write output (nccopy -d %s -s of our output, %s): %.2f s\n' "$level" "$(du -h "$out2" | cut -f1)" "$write_s"
printf 'I/O floor (read + write): %.2f s\n' "$(echo "$read_s + $write_s" | bc -l)"
rm -f "$dir/nccopy-output.nc"

echo "== memory as steps double: $((2 * steps)) steps, 2 threads"
measure "acidscape-2x-steps" "$bin" compute "${all[@]}" -o "$dir/out-2x.nc" --overwrite --threads 2 --memory-budget "$budget" --deflate-level "$level"
grep -E "^(cells|wall|stage|peak)" "$dir/acidscape-2x-steps.out"
rm -f "$out1" "$out2" "$dir/out-2x.nc"
