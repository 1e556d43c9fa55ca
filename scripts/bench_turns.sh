# Shared by the benchmark scripts (source it): medians, and variants of `acidscape compute` run
# in turn on 2 cores so that a load change on a shared machine hits every variant alike.

median() { sort -g | awk '{v[NR] = $1} END {print (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2}'; }

# run_in_turn DIR REPEAT STAGE_PATTERN VARIANT...: runs every variant REPEAT times in turn. The
# caller defines `variant_command VARIANT`, which sets the array `cmd` to the command without
# its output (the output goes to DIR/out-VARIANT.nc), and sets `budget` and `level`. Prints
# every run (wall, load before it, what STAGE_PATTERN finds in its summary) and writes each
# variant's median wall to DIR/turn-VARIANT.median.
run_in_turn() {
    local dir=$1 repeat=$2 pattern=$3 i variant load wall
    shift 3
    declare -A walls=()
    for ((i = 1; i <= repeat; i++)); do
        for variant in "$@"; do
            variant_command "$variant"
            sync  # the previous run's output written back before this one starts
            load=$(cut -d' ' -f1 /proc/loadavg)
            /usr/bin/time -f '%e' -o "$dir/turn.time" taskset -c 0,1 "${cmd[@]}" -o "$dir/out-$variant.nc" \
                --overwrite --threads 2 --memory-budget "$budget" --deflate-level "$level" >"$dir/turn.out" 2>&1 \
                || { cat "$dir/turn.out"; return 1; }
            wall=$(cat "$dir/turn.time")
            walls[$variant]+="$wall "
            printf '  round %d %-12s wall %7.2f s (load before %s) %s\n' "$i" "$variant" "$wall" "$load" \
                "$(grep -oE "$pattern" "$dir/turn.out" || true)"
        done
    done
    for variant in "$@"; do
        # shellcheck disable=SC2086
        printf '%s\n' ${walls[$variant]} | median >"$dir/turn-$variant.median"
        printf '%-12s median wall %7.2f s\n' "$variant" "$(cat "$dir/turn-$variant.median")"
    done
    rm -f "$dir"/out-*.extent.csv
    for variant in "$@"; do rm -f "$dir/out-$variant.nc"; done
}
