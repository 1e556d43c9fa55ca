#!/usr/bin/env bash
# The MPI build (cargo feature `mpi`) against the single-process build, on this machine:
# - every sample run computed by 1, 2 and 3 ranks: the output holds the same values, types,
#   chunking, compression and attributes (history aside) as the single-process output, read
#   with netCDF4 (scripts/compare_nc_outputs.py), and the extent CSV is the same byte for byte;
# - several slabs per time step (a small --memory-budget) on 2 and 3 ranks, the same;
# - fewer time steps than ranks (the first 2 steps of a sample run on 3 ranks): with one output
#   chunk per step (dealt whole, rank 2 repeats step 1) and with 6 (each step split into blocks
#   of rows), the same; stopped after 1 step and resumed on 2 ranks, the same;
# - a job stopped on every rank of 2 after some steps: no complete-looking output is left, and
#   `--resume` on 1, 2 and 3 ranks finishes an output identical to the uninterrupted one; a
#   `--resume` that rank 0 refuses (other options; a partial output that lost its last
#   finished step) gives one message and keeps the partial output;
# - a job with one of 2 ranks killed (SIGKILL) mid-run, then `--resume` on 2 ranks: identical,
#   or a clean failure that says to start over, and `--overwrite` identical;
# - in every case the summary's flag counts (all steps) are those of the single process (after
#   a resume, they come from the progress record the ranks kept);
# - a 3-rank output passes the external readers and the CF checker (check_external_readers.py);
# - the comparison itself fails on outputs that differ (a different deflate level).
# Needs OpenMPI and the MPI builds of netCDF-C and HDF5 (Debian: openmpi-bin libopenmpi-dev
# libnetcdf-mpi-dev libhdf5-openmpi-dev libclang-dev), Python's netCDF4 and NCO (ncks).
# Usage: scripts/check_mpi.sh [--keep]   (--keep leaves the temporary directory)
set -euo pipefail
cd "$(dirname "$0")/.."
work=$(mktemp -d "${TMPDIR:-/tmp}/acidscape-mpi.XXXXXX")
if [[ "${1:-}" != "--keep" ]]; then trap 'rm -rf "$work"' EXIT; else echo "keeping $work"; fi

serial_target=${CARGO_TARGET_DIR:-target}
mpi_target=${MPI_TARGET_DIR:-target-mpi}
# The MPI netCDF and HDF5 (Debian's paths by default); only for the MPI build, so that the
# single-process build keeps the serial libraries.
netcdf_dir=${MPI_NETCDF_DIR:-/usr/lib/x86_64-linux-gnu/netcdf/mpi}
hdf5_dir=${MPI_HDF5_DIR:-/usr/lib/x86_64-linux-gnu/hdf5/openmpi}
echo "== building the single-process ($serial_target) and the MPI ($mpi_target) binaries"
CARGO_TARGET_DIR=$serial_target cargo build --quiet -p acidscape
NETCDF_DIR=$netcdf_dir HDF5_DIR=$hdf5_dir CARGO_TARGET_DIR=$mpi_target \
    cargo build --quiet -p acidscape --features mpi
serial="$serial_target/debug/acidscape"
parallel="$mpi_target/debug/acidscape"

# Two cores here: more ranks than cores. As root, OpenMPI wants to be told twice.
if [[ $(id -u) == 0 ]]; then
    export OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1
fi
mpi_exec() { # ranks, then acidscape's arguments
    local ranks=$1; shift
    timeout 600 mpirun --oversubscribe --bind-to none --mca mpi_yield_when_idle 1 -np "$ranks" "$parallel" "$@"
}
mpi_run() { # ranks, then the compute arguments
    local ranks=$1; shift
    mpi_exec "$ranks" compute --threads 1 "$@"
}

failed=0
fail() { echo "FAILED: $*"; failed=$((failed + 1)); }
passed=0
flag_counts() { grep -A8 'quality_flag (cells, all steps)' "$1"; }
same() { # reference output, output, what, reference summary, summary
    if python3 scripts/compare_nc_outputs.py "$1" "$2" >"$work/compare.log" 2>&1 \
        && cmp -s "${1%.nc}.extent.csv" "${2%.nc}.extent.csv" \
        && [[ -n "$(flag_counts "$4")" && "$(flag_counts "$4")" == "$(flag_counts "$5")" ]]; then
        passed=$((passed + 1))
    else
        cat "$work/compare.log"; cmp "${1%.nc}.extent.csv" "${2%.nc}.extent.csv" || true
        diff <(flag_counts "$4") <(flag_counts "$5") || true
        fail "$3"
    fi
}

echo "== every sample run on 1, 2 and 3 ranks against one process"
for run_dir in sample-grids/*/*/; do
    name=$(basename "$(dirname "$run_dir")")-$(basename "$run_dir")
    if ! "$serial" compute "$run_dir"*.nc -o "$work/$name.nc" >"$work/$name.log" 2>&1; then
        cat "$work/$name.log"; fail "$name: single process"; continue
    fi
    for ranks in 1 2 3; do
        out="$work/$name-$ranks.nc"
        if mpi_run "$ranks" "$run_dir"*.nc -o "$out" >"$out.log" 2>&1; then
            same "$work/$name.nc" "$out" "$name on $ranks ranks" "$work/$name.log" "$out.log"
        else
            cat "$out.log"; fail "$name on $ranks ranks: exit status"
        fi
    done
    echo "$name: $(grep -o 'over [0-9]* time step(s)' "$work/$name.log")"
done

echo "== a 3-rank output read by netCDF4 and xarray, and the CF checker (cf:1.10)"
if python3 scripts/check_external_readers.py "$work/century-pathway-moderate-3.nc" --cf-suite cf:1.10; then
    passed=$((passed + 1))
else
    fail "the 3-rank output: external readers or CF checker"
fi

century=(sample-grids/century/pathway-moderate/*.nc)
budget=(--memory-budget 129M)
echo "== several slabs per step (${budget[*]}) on 2 and 3 ranks"
"$serial" compute "${century[@]}" -o "$work/slabs.nc" "${budget[@]}" >"$work/slabs.log" 2>&1 \
    || { cat "$work/slabs.log"; fail "several slabs: single process"; }
grep -o '[0-9]* slab(s) per step' "$work/slabs.log"
grep -q ' 1 slab(s) per step' "$work/slabs.log" && fail "the budget gives one slab per step"
for ranks in 2 3; do
    out="$work/slabs-$ranks.nc"
    if mpi_run "$ranks" "${century[@]}" -o "$out" "${budget[@]}" >"$out.log" 2>&1; then
        same "$work/slabs.nc" "$out" "several slabs per step on $ranks ranks" "$work/slabs.log" "$out.log"
    else
        cat "$out.log"; fail "several slabs per step on $ranks ranks: exit status"
    fi
done

echo "== fewer steps than ranks: the first 2 steps of a sample run on 3 ranks, whole and split in blocks of rows"
ncks -O -d time,0,1 sample-grids/curvilinear/pathway-moderate/*.nc "$work/two-steps-input.nc"
two=("$work/two-steps-input.nc")
# One output chunk per step by default (steps dealt whole); 6-row chunks and slabs under this
# budget (each step split into blocks of rows).
for budget_two in "" 131M; do
    name="two-steps${budget_two:+-$budget_two}"
    more=(${budget_two:+--memory-budget "$budget_two"})
    "$serial" compute "${two[@]}" -o "$work/$name.nc" "${more[@]}" >"$work/$name.log" 2>&1 \
        || { cat "$work/$name.log"; fail "$name: single process"; continue; }
    grep -o '[0-9]* slab(s) per step' "$work/$name.log"
    out="$work/$name-3.nc"
    if mpi_run 3 "${two[@]}" -o "$out" "${more[@]}" >"$out.log" 2>&1; then
        same "$work/$name.nc" "$out" "2 steps on 3 ranks${budget_two:+ ($budget_two)}" "$work/$name.log" "$out.log"
    else
        cat "$out.log"; fail "2 steps on 3 ranks${budget_two:+ ($budget_two)}: exit status"
    fi
done
grep -q ' 1 slab(s) per step' "$work/two-steps-131M.log" && fail "131M gives one slab per step"
out="$work/two-steps-stopped.nc"
more=(--memory-budget 131M)
if ACIDSCAPE_STOP_AFTER_STEPS=1 mpi_run 3 "${two[@]}" -o "$out" "${more[@]}" >"$out.log" 2>&1; then
    fail "2 steps on 3 ranks stopped after 1: exited 0"
fi
if mpi_run 2 "${two[@]}" -o "$out" "${more[@]}" --resume >"$out.log.resume" 2>&1; then
    grep -o 'resumed at time step [0-9]*' "$out.log.resume" || fail "2 steps on 3 ranks stopped after 1: not resumed"
    same "$work/two-steps-131M.nc" "$out" "2 steps on 3 ranks stopped after 1, then --resume on 2 ranks" \
        "$work/two-steps-131M.log" "$out.log.resume"
else
    cat "$out.log.resume"; fail "2 steps on 3 ranks stopped after 1, then --resume on 2 ranks: exit status"
fi

# Ends without a complete-looking output, and keeps the partial one and its progress record.
check_kept() { # output, what
    local out=$1 what=$2
    if [[ -e "$out" || -e "${out%.nc}.extent.csv" ]]; then fail "$what: a complete-looking output is left"; fi
    local partial
    partial="$(dirname "$out")/.$(basename "$out").partial"
    [[ -e "$partial" && -e "$partial.progress" ]] || fail "$what: no partial output and progress record kept"
}
# `--resume` on some ranks (1: one process, without mpirun) into `output`, with more options
# if given; its log is output.log.resume. Returns the command's status.
resume_on() { # ranks, output, options...
    local ranks=$1 out=$2
    shift 2
    if [[ $ranks == 1 ]]; then
        "$parallel" compute "${century[@]}" -o "$out" "${budget[@]}" --resume "$@" >"$out.log.resume" 2>&1
    else
        mpi_run "$ranks" "${century[@]}" -o "$out" "${budget[@]}" --resume "$@" >"$out.log.resume" 2>&1
    fi
}
# `--resume` finishes the same output as the uninterrupted run.
check_resumed() { # ranks, output, what
    local ranks=$1 out=$2 what="$3, then --resume on $1 rank(s)"
    if resume_on "$ranks" "$out"; then
        grep -o 'resumed at time step [0-9]*' "$out.log.resume" || fail "$what: not resumed"
        same "$work/slabs.nc" "$out" "$what" "$work/slabs.log" "$out.log.resume"
    else
        cat "$out.log.resume"; fail "$what: exit status"
    fi
}
# `--resume` on 2 ranks refused by rank 0 alone: one message matching `pattern`, and the
# partial output kept.
check_refused() { # output, pattern, what, options...
    local out=$1 pattern=$2 what=$3
    shift 3
    if resume_on 2 "$out" "$@"; then
        fail "$what: exited 0"
    elif [[ $(grep -c "$pattern" "$out.log.resume") == 1 ]] && ! grep -q 'error on rank' "$out.log.resume"; then
        passed=$((passed + 1))
    else
        cat "$out.log.resume"; fail "$what: not one message from rank 0"
    fi
    check_kept "$out" "$what"
}
# A copy of the stopped job's partial output and record, for the output `name`.
copy_stopped() { # name
    cp "$work/.stopped.nc.partial" "$work/.$1.partial"
    cp "$work/.stopped.nc.partial.progress" "$work/.$1.partial.progress"
}

echo "== every rank of 2 stopped after 6 of 86 steps, then --resume on 1, 2 and 3 ranks"
out="$work/stopped.nc"
if ACIDSCAPE_STOP_AFTER_STEPS=6 mpi_run 2 "${century[@]}" -o "$out" "${budget[@]}" >"$out.log" 2>&1; then
    fail "a stopped MPI job exited 0"
fi
grep -m1 'error on rank' "$out.log" || fail "no message naming the failing rank"
check_kept "$out" "stopped after 6 steps"
grep '^steps_done' "$work/.stopped.nc.partial.progress" || true
for ranks in 1 2 3; do
    copy_stopped "stopped-$ranks.nc"
    check_resumed "$ranks" "$work/stopped-$ranks.nc" "stopped after 6 steps"
done

echo "== --resume on 2 ranks refused by rank 0: other options; a partial output that lost its last finished step"
copy_stopped stopped-refused.nc
check_refused "$work/stopped-refused.nc" 'the options or the run differ' "--resume with other options" --no-horizons
# Cut to 60 %: rank 0 mends the tail (zeros), then cannot open the file or read step 6 back
# (which of the two depends on where HDF5 happened to place its metadata): start over.
copy_stopped stopped-cut.nc
truncate -s $(($(stat -c %s "$work/.stopped.nc.partial") * 6 / 10)) "$work/.stopped-cut.nc.partial"
check_refused "$work/stopped-cut.nc" 'cannot be \(opened\|read back\).*start over with --overwrite' "--resume into a partial output cut short"

echo "== one of 2 ranks killed (SIGKILL) mid-run, then --resume on 2 ranks"
out="$work/killed.nc"
partial="$work/.killed.nc.partial"
mpi_run 2 "${century[@]}" -o "$out" "${budget[@]}" >"$out.log" 2>&1 &
launcher=$!
# Kill one rank (the last process of the MPI binary under the launcher) once 4 to 59 of the
# 86 steps are durable (well before the end, so the job cannot have finished).
descendants() { local child; for child in $(pgrep -P "$1" || true); do echo "$child"; descendants "$child"; done; }
victim=""
for _ in $(seq 1 600); do
    if grep -Eq '^steps_done ([4-9]|[1-5][0-9])$' "$partial.progress" 2>/dev/null; then
        for pid in $(descendants "$launcher"); do
            [[ "$(readlink -f "/proc/$pid/exe" 2>/dev/null)" == "$(readlink -f "$parallel")" ]] && victim=$pid
        done
        [[ -n "$victim" ]] && kill -KILL "$victim" && break
    fi
    sleep 0.05
done
if wait "$launcher"; then
    fail "a job with a killed rank exited 0 (killed: ${victim:-none})"
fi
[[ -n "$victim" ]] || fail "no rank could be killed mid-run"
tail -n 3 "$out.log"
check_kept "$out" "one of 2 ranks killed"
# A rank killed inside a collective write can leave the parallel HDF5 file's metadata
# half-updated (it keeps no journal); then --resume must stop with a clear error that says to
# start over (not to resume again) and no complete-looking output, and --overwrite must give
# the uninterrupted output. Either way no wrong number may come out.
if resume_on 2 "$out"; then
    grep -o 'resumed at time step [0-9]*' "$out.log.resume" || fail "one of 2 ranks killed: not resumed"
    same "$work/slabs.nc" "$out" "one of 2 ranks killed, then --resume on 2 ranks" "$work/slabs.log" "$out.log.resume"
elif [[ ! -e "$out" ]] && grep -q "start over with --overwrite" "$out.log.resume" \
    && ! grep -q "with --resume to continue" "$out.log.resume"; then
    echo "--resume stopped on the damaged partial output (as documented):"; grep -m2 'acidscape: error' "$out.log.resume"
    if mpi_run 2 "${century[@]}" -o "$out" "${budget[@]}" --overwrite >"$out.log.over" 2>&1; then
        same "$work/slabs.nc" "$out" "one of 2 ranks killed, then --overwrite" "$work/slabs.log" "$out.log.over"
    else
        cat "$out.log.over"; fail "one of 2 ranks killed: --overwrite"
    fi
else
    cat "$out.log.resume"; fail "one of 2 ranks killed: --resume neither continued nor stopped cleanly"
fi

echo "== compare of the century pathways on 2 and 3 ranks against one process (NetCDF and CSV)"
pathways=(moderate="$work/century-pathway-moderate.nc" steep="$work/century-pathway-steep.nc"
    --window reference=2015-2034 --window late=2081-2100
    --regions sample-grids/varnholm-regions.toml --emergence 'omega_aragonite:2sd:below')
summary() { # output: its summary on stdout, the output's name replaced
    grep -v '^acidscape:' "$1.log" | sed "s#${1%.nc}#OUTPUT#g"
}
same_comparison() { # reference output, output, what
    local problems=""
    python3 scripts/compare_nc_outputs.py "$1" "$2" >"$work/compare.log" 2>&1 \
        || problems+="$(cat "$work/compare.log")"$'\n'
    cmp -s "${1%.nc}.csv" "${2%.nc}.csv" || problems+="the regional CSVs differ"$'\n'
    [[ -n "$(summary "$1")" && "$(summary "$1")" == "$(summary "$2")" ]] \
        || problems+="the summaries differ: $(diff <(summary "$1") <(summary "$2"))"
    if [[ -z "$problems" ]]; then passed=$((passed + 1)); else echo "$problems"; fail "$3"; fi
}
# The sample grid is one output chunk (rank 0 takes it all, the others take part in every
# write with nothing); ACIDSCAPE_COMPARE_CHUNK_BYTES=600 cuts it into chunks of 5 rows (2-D)
# and 1 row (3-D) so that every rank has rows, and a small budget gives each rank several
# blocks of rows (as many turns on every rank: some write nothing in their last ones).
for case in whole:: chunked:600: chunked-blocks:600:300K; do
    IFS=: read -r name chunk_bytes budget_compare <<<"$case"
    more=(${budget_compare:+--memory-budget "$budget_compare"})
    export ACIDSCAPE_COMPARE_CHUNK_BYTES=${chunk_bytes:-4194304}
    ref="$work/pathways-$name.nc"
    if ! "$serial" compare "${pathways[@]}" "${more[@]}" -o "$ref" >"$ref.log" 2>&1; then
        cat "$ref.log"; fail "compare ($name): single process"; continue
    fi
    for ranks in 2 3; do
        out="$work/pathways-$name-$ranks.nc"
        if mpi_exec "$ranks" compare "${pathways[@]}" "${more[@]}" -o "$out" >"$out.log" 2>&1; then
            same_comparison "$ref" "$out" "compare ($name) on $ranks ranks"
        else
            cat "$out.log"; fail "compare ($name) on $ranks ranks: exit status"
        fi
    done
done
unset ACIDSCAPE_COMPARE_CHUNK_BYTES
grep -q 'rows 0\.\.' "$work/pathways-chunked-blocks-3.nc.log" || fail "compare: no blocks of rows on 3 ranks"
if python3 scripts/check_external_readers.py "$work/pathways-chunked-3.nc" --cf-suite cf:1.10; then
    passed=$((passed + 1))
else
    fail "compare on 3 ranks: external readers or CF checker"
fi
echo "== compare on 3 ranks into a folder that cannot be written: one message from rank 0"
out=/proc/acidscape-compare.nc
if mpi_exec 3 compare "${pathways[@]}" -o "$out" >"$work/unwritable.log" 2>&1; then
    fail "compare into /proc: exited 0"
elif [[ $(grep -c 'acidscape: error' "$work/unwritable.log") == 1 ]] \
    && grep -q 'cannot create.*(on rank 0 of 3)' "$work/unwritable.log"; then
    passed=$((passed + 1))
else
    cat "$work/unwritable.log"; fail "compare into /proc: not one message from rank 0"
fi

echo "== the comparison fails on outputs that differ"
"$serial" compute sample-grids/cmip-style/pathway-moderate/*.nc -o "$work/other.nc" --deflate-level 4 >/dev/null 2>&1
if python3 scripts/compare_nc_outputs.py "$work/cmip-style-pathway-moderate.nc" "$work/other.nc" >/dev/null; then
    fail "outputs with another deflate level compared equal"
else
    passed=$((passed + 1))
fi

echo "mpi: $passed passed, $failed failed"
[[ $failed == 0 ]]
