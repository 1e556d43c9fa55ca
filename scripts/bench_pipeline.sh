#!/usr/bin/env bash
# Speed and memory of `acidscape compute` on a large SYNTHETIC cmip-style run.
#
# Generates (once) a 360 x 180 x 50 run with 2*STEPS monthly steps, written by
# scripts/make_sample_grids.py as two files per variable (first and second half of the
# steps), so the first-half files form a STEPS-step run and all files a 2*STEPS-step run.
# Then measures, REPEAT times each, printing every run and the median (the machine may be
# shared: quote medians or ratios):
#   1. I/O floor with nccopy (netcdf-bin):
#      a. read: nccopy -d 0 of every input file of the STEPS-step run (reads and inflates
#         every input value, writes it back uncompressed to a scratch file);
#      b. write: nccopy -d LEVEL -s of acidscape's own output (reads it, then deflates and
#         writes the same values with the same chunking: the output's write cost, plus a read);
#   2. acidscape end to end on 1 core and on 2 cores (taskset pins the whole process, reader
#      and writer threads included, with --threads matching; wall time, peak RSS via
#      /usr/bin/time -v, cells/s and the read / convert+solve / write split from its summary);
#   3. the cost of saturation horizons and volumes: on 2 cores, the default job (horizons on)
#      and the same with --no-horizons (and, with BASELINE=path/to/another/acidscape, that
#      binary, e.g. a build from before a change), run in turn REPEAT times, so that a load
#      change on a shared machine hits every variant alike; medians and their ratios;
#   4. peak RSS on the 2*STEPS-step run (memory must stay flat as steps grow);
#   5. against the same job written with xarray and vectorised numpy
#      (scripts/baseline_xarray_numpy.py, pinned to one core): acidscape on 2 cores and the
#      script run in turn REPEAT times on the same STEPS-step run, with the load seen before
#      each (and BASELINE, when given, in the same rounds, before or after this build in
#      turn; every timed run starts after `sync`); medians, the ratios, and acidscape's
#      serial netCDF time. With PY_STEPS=N the script
#      reads only the first N steps and its time is scaled per cell to STEPS steps (said so).
# PARTS chooses the parts (default "floor cores horizons memory baseline").
# Usage: scripts/bench_pipeline.sh [DIR]
#        (env: STEPS=12, BUDGET=2GiB, LEVEL=1, SIZE="360 180 50", REPEAT=3, BASELINE=,
#         PARTS=..., PY_STEPS=)
set -euo pipefail
cd "$(dirname "$0")/.."
dir=${1:-${TMPDIR:-/tmp}/acidscape-bench}
steps=${STEPS:-12}
budget=${BUDGET:-2GiB}
level=${LEVEL:-1}
size=${SIZE:-360 180 50}
repeat=${REPEAT:-3}
parts=" ${PARTS:-floor cores horizons memory baseline} "
part() { [[ $parts == *" $1 "* ]]; }
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

seconds() { /usr/bin/env python3 -c 'import time; print(f"{time.time():.3f}")'; }
# shellcheck source=scripts/bench_turns.sh
source scripts/bench_turns.sh

# label, then the command: runs it REPEAT times; prints each run and the medians of wall
# seconds and peak RSS; leaves the last run's summary in $dir/$label.out
measure() {
    local label=$1; shift
    local log="$dir/$label.time" walls=() rsss=()
    for ((i = 1; i <= repeat; i++)); do
        sync  # the previous run's output written back before this one starts
        /usr/bin/time -f '%e %M' -o "$log" "$@" >"$dir/$label.out" 2>"$dir/$label.err" \
            || { cat "$dir/$label.err"; return 1; }
        read -r wall rss <"$log"
        walls+=("$wall"); rsss+=("$rss")
        printf '  %-22s run %d: wall %7.2f s   peak RSS %7.1f MiB\n' "$label" "$i" "$wall" "$(echo "$rss / 1024" | bc -l)"
    done
    local wall_median rss_median
    wall_median=$(printf '%s\n' "${walls[@]}" | median)
    rss_median=$(printf '%s\n' "${rsss[@]}" | median)
    printf '%-24s median wall %7.2f s   median peak RSS %7.1f MiB\n' "$label" "$wall_median" "$(echo "$rss_median / 1024" | bc -l)"
    echo "$wall_median" >"$dir/$label.median"
}

if part floor; then
echo "== I/O floor (nccopy), median of $repeat"
reads=()
for ((i = 1; i <= repeat; i++)); do
    rm -rf "$dir/nccopy" && mkdir -p "$dir/nccopy"
    start=$(seconds)
    for f in "${half[@]}"; do nccopy -k nc4 -d 0 "$f" "$dir/nccopy/$(basename "$f")"; done
    reads+=("$(echo "$(seconds) - $start" | bc -l)")
done
rm -rf "$dir/nccopy"
read_s=$(printf '%s\n' "${reads[@]}" | median)
printf 'read inputs (nccopy -d 0):  %.2f s for %s of input\n' "$read_s" "$(du -ch "${half[@]}" | tail -1 | cut -f1)"

fi

if part cores; then
echo "== acidscape compute, $steps steps"
out1="$dir/out-1core.nc"; out2="$dir/out-2cores.nc"
measure "acidscape-1-core" taskset -c 0 "$bin" compute "${half[@]}" -o "$out1" --overwrite --threads 1 --memory-budget "$budget" --deflate-level "$level"
grep -E "^(cells|wall|stage|quality|peak)" "$dir/acidscape-1-core.out"
measure "acidscape-2-cores" taskset -c 0,1 "$bin" compute "${half[@]}" -o "$out2" --overwrite --threads 2 --memory-budget "$budget" --deflate-level "$level"
grep -E "^(cells|wall|stage|peak)" "$dir/acidscape-2-cores.out"
printf 'speed-up, 2 cores over 1 (medians): %.2f x\n' "$(echo "$(cat "$dir/acidscape-1-core.median") / $(cat "$dir/acidscape-2-cores.median")" | bc -l)"

writes=()
for ((i = 1; i <= repeat; i++)); do
    start=$(seconds)
    nccopy -d "$level" -s "$out2" "$dir/nccopy-output.nc"
    writes+=("$(echo "$(seconds) - $start" | bc -l)")
    rm -f "$dir/nccopy-output.nc"
done
write_s=$(printf '%s\n' "${writes[@]}" | median)
printf 'write output (nccopy -d %s -s of our output, %s): %.2f s\n' "$level" "$(du -h "$out2" | cut -f1)" "$write_s"
if part floor; then
    floor=$(echo "$read_s + $write_s" | bc -l)
    printf 'I/O floor (read + write): %.2f s; acidscape on 2 cores / floor: %.2f x\n' "$floor" "$(echo "$(cat "$dir/acidscape-2-cores.median") / $floor" | bc -l)"
fi
rm -f "$out1" "$out2"

fi

if part horizons; then
echo "== horizons and volumes: variants run in turn on 2 cores, $repeat rounds"
variants=(horizons no-horizons)
[[ -n "${BASELINE:-}" ]] && variants+=(baseline)
variant_command() {
    case $1 in
        horizons) cmd=("$bin" compute "${half[@]}");;
        no-horizons) cmd=("$bin" compute --no-horizons "${half[@]}");;
        baseline) cmd=("$BASELINE" compute "${half[@]}");;
    esac
}
run_in_turn "$dir" "$repeat" 'of which horizons and volumes [0-9.]+ s' "${variants[@]}"
printf 'horizons / no-horizons (medians): %.3f\n' "$(echo "$(cat "$dir/turn-horizons.median") / $(cat "$dir/turn-no-horizons.median")" | bc -l)"
if [[ -n "${BASELINE:-}" ]]; then
    printf 'horizons / baseline (medians): %.3f\n' "$(echo "$(cat "$dir/turn-horizons.median") / $(cat "$dir/turn-baseline.median")" | bc -l)"
fi

fi

if part memory; then
echo "== memory as steps double: $((2 * steps)) steps, 2 cores"
measure "acidscape-2x-steps" taskset -c 0,1 "$bin" compute "${all[@]}" -o "$dir/out-2x.nc" --overwrite --threads 2 --memory-budget "$budget" --deflate-level "$level"
grep -E "^(cells|wall|stage|peak)" "$dir/acidscape-2x-steps.out"
rm -f "$dir/out-2x.nc"
fi

if part baseline; then
    py_steps=${PY_STEPS:-$steps}
    echo "== acidscape (2 cores) against xarray + numpy (1 core), in turn, $repeat rounds"
    py_inputs=("${half[@]}")
    if ((py_steps < steps)); then
        # The first PY_STEPS steps of every time-split input, as the script reads whole files.
        mkdir -p "$dir/py-inputs"
        py_inputs=()
        for f in "${half[@]}"; do
            if [[ $(basename "$f") =~ _[0-9]{6}-[0-9]{6}\.nc$ ]]; then
                ncks -O -d time,0,$((py_steps - 1)) "$f" "$dir/py-inputs/$(basename "$f")"
                py_inputs+=("$dir/py-inputs/$(basename "$f")")
            fi
        done
        echo "  the script reads $py_steps of $steps steps; its time is scaled by $steps / $py_steps (per cell)"
    fi
    walls_a=(); walls_b=(); walls_p=(); serials=()
    # This build, then BASELINE (in even rounds the other way round, so neither always follows
    # the script), then the script; each timed run starts after `sync`, so the write-back of
    # the previous run's output (the script does not flush its own) does not land in it.
    this_build() {
        sync
        load=$(cut -d' ' -f1 /proc/loadavg)
        /usr/bin/time -f '%e %M' -o "$dir/turn.time" taskset -c 0,1 "$bin" compute "${half[@]}" -o "$dir/out-turn.nc" \
            --overwrite --threads 2 --memory-budget "$budget" --deflate-level "$level" >"$dir/turn.out" 2>&1 \
            || { cat "$dir/turn.out"; exit 1; }
        read -r wall rss <"$dir/turn.time"
        serial=$(grep -oE 'serial netCDF [0-9.]+' "$dir/turn.out" | grep -oE '[0-9.]+$')
        walls_a+=("$wall"); serials+=("$serial")
        printf '  round %d acidscape   wall %7.2f s  serial netCDF %6.2f s  peak RSS %6.0f MiB (load before %s)\n' \
            "$i" "$wall" "$serial" "$(echo "$rss / 1024" | bc -l)" "$load"
    }
    baseline_build() {
        [[ -n "${BASELINE:-}" ]] || return 0
        sync
        load=$(cut -d' ' -f1 /proc/loadavg)
        /usr/bin/time -f '%e' -o "$dir/turn.time" taskset -c 0,1 "$BASELINE" compute "${half[@]}" -o "$dir/out-turn.nc" \
            --overwrite --threads 2 --memory-budget "$budget" --deflate-level "$level" >"$dir/turn.out" 2>&1 \
            || { cat "$dir/turn.out"; exit 1; }
        walls_b+=("$(cat "$dir/turn.time")")
        printf '  round %d baseline    wall %7.2f s (load before %s)\n' "$i" "$(cat "$dir/turn.time")" "$load"
    }
    for ((i = 1; i <= repeat; i++)); do
        if ((i % 2)); then this_build; baseline_build; else baseline_build; this_build; fi
        sync
        load=$(cut -d' ' -f1 /proc/loadavg)
        OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 MKL_NUM_THREADS=1 \
            /usr/bin/time -f '%e %M' -o "$dir/turn.time" taskset -c 0 python3 scripts/baseline_xarray_numpy.py \
            "${py_inputs[@]}" -o "$dir/out-python.nc" >"$dir/turn.out" 2>&1 || { cat "$dir/turn.out"; exit 1; }
        read -r wall rss <"$dir/turn.time"
        walls_p+=("$(echo "$wall * $steps / $py_steps" | bc -l)")
        printf '  round %d xarray+numpy wall %7.2f s for %d steps  peak RSS %6.0f MiB (load before %s)\n' \
            "$i" "$wall" "$py_steps" "$(echo "$rss / 1024" | bc -l)" "$load"
    done
    a=$(printf '%s\n' "${walls_a[@]}" | median)
    p=$(printf '%s\n' "${walls_p[@]}" | median)
    sn=$(printf '%s\n' "${serials[@]}" | median)
    printf 'acidscape, 2 cores:    median wall %7.2f s (serial netCDF %.2f s, %.0f %%)\n' \
        "$a" "$sn" "$(echo "100 * $sn / $a" | bc -l)"
    printf 'xarray + numpy, 1 core: median wall %7.2f s for %d steps\n' "$p" "$steps"
    printf 'acidscape is %.2f x faster (medians); at most %.2f x while serial netCDF time stays\n' \
        "$(echo "$p / $a" | bc -l)" "$(echo "$p / $sn" | bc -l)"
    if [[ -n "${BASELINE:-}" ]]; then
        b=$(printf '%s\n' "${walls_b[@]}" | median)
        printf 'BASELINE acidscape:    median wall %7.2f s; this build is %.2f x faster; xarray + numpy / BASELINE %.2f x\n' \
            "$b" "$(echo "$b / $a" | bc -l)" "$(echo "$p / $b" | bc -l)"
    fi
    rm -rf "$dir/out-turn.nc" "$dir/out-turn.extent.csv" "$dir/out-python.nc" "$dir/py-inputs"
fi
