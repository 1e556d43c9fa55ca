#!/usr/bin/env bash
# Opens NetCDF files with the tools modellers use every day: CDO (`cdo sinfon`, and a field
# mean of the largest data variable, which needs CDO to understand the grid and time axis) and
# NCO (`ncks -m`, the metadata). Fails on any error or warning either tool prints.
# Usage: scripts/check_with_cdo_nco.sh FILE.nc...
set -euo pipefail
for tool in cdo ncks; do
    command -v "$tool" >/dev/null || { echo "check_with_cdo_nco: $tool not found (Debian: apt-get install -y cdo nco)"; exit 1; }
done
failed=0
for file in "$@"; do
    log=$(mktemp)
    ok=1
    cdo -s sinfon "$file" >"$log" 2>&1 || ok=0
    ncks -m "$file" >>"$log" 2>&1 || ok=0
    # The field CDO lists with the most horizontal points (coordinates and bounds are not fields).
    first=$(cdo -s sinfon "$file" 2>/dev/null | awk -F: 'NF == 3 && $1 ~ /^ *[0-9]+ *$/ {
        split($2, m, " "); if (m[7] + 0 > best) { best = m[7] + 0; name = $3 } }
        END { gsub(/ /, "", name); print name }')
    if [[ -n "$first" ]]; then
        cdo -s -outputtab,name,value -fldmean -seltimestep,1 -sellevidx,1 -selname,"$first" "$file" >>"$log" 2>&1 \
            || cdo -s -outputtab,name,value -fldmean -seltimestep,1 -selname,"$first" "$file" >>"$log" 2>&1 \
            || ok=0
    fi
    # Attribute lines of the metadata dump are the file's own text (a standard_name may end in
    # the CF modifier standard_error, a comment may speak of errors): only the tools' messages count.
    if grep -vE '^[[:space:]]+[^[:space:]]*:[^[:space:]]+ = ' "$log" | grep -qiE "warning|error|abort"; then ok=0; fi
    if [[ $ok -eq 1 ]]; then
        echo "ok   $file: cdo and ncks read it (field mean of ${first:-no field})"
    else
        echo "FAIL $file:"; sed 's/^/    /' "$log"; failed=1
    fi
    rm -f "$log"
done
exit $failed
