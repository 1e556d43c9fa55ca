#!/usr/bin/env python3
"""Check that NetCDF files open cleanly in downstream readers and pass a CF checker.

For every file given (directories are searched recursively for *.nc):
  * netCDF4 opens it; every data variable has a `units` attribute (flag
    variables with flag_values/flag_masks and grid-mapping variables excepted)
    and at least one non-missing value in its first time step;
  * every name in `coordinates`, `bounds`, `formula_terms`, `ancillary_variables`
    and `grid_mapping` exists in the file, and every `cell_measures` variable is
    in the file or listed in the global `external_variables`;
  * xarray opens it with cftime decoding, each time coordinate decodes, is
    strictly increasing and lies inside its bounds, and every variable named in
    a `coordinates` attribute resolves to a coordinate of its data variable;
  * every bit-field flag variable (CF 1.10 section 3.5, `flag_masks`) has one
    meaning per mask, masks that are distinct single bits, a `_FillValue` that is
    no combination of them, and values (first time step) that set no other bit;
  * the IOOS compliance-checker (`compliance-checker --test=cf:1.8 FILE`) reports
    no error-level finding (warnings are counted, not fatal); --skip-cf turns it off;
  * optional expectations: --expect-var NAME (present in every file) and
    --expect-units NAME=UNITS (units of NAME, where present).

Prints one line per file, then "N passed, M failed"; exits 1 if any failed.

Usage:
    python3 scripts/check_external_readers.py sample-grids
    python3 scripts/check_external_readers.py out/ --expect-var ph --expect-units ph=1
    python3 scripts/check_external_readers.py FILE.nc --cf-suite cf:1.10
    python3 scripts/check_external_readers.py sample-grids --skip-cf
    python3 scripts/check_external_readers.py --self-test   # the checker checks itself

Requirements: pip install -r scripts/requirements-check.txt
"""

from __future__ import annotations

import argparse
import json
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

import cftime
import netCDF4
import numpy as np
import xarray as xr

DEFAULT_CF_SUITE = "cf:1.8"


def find_files(paths):
    files, problems = [], []
    for raw in paths:
        path = Path(raw)
        if path.is_dir():
            files += sorted(p for p in path.rglob("*.nc") if p.is_file())
        elif path.is_file():
            files.append(path)
        else:
            problems.append(f"{raw}: no such file or directory")
    return files, problems


def attribute_names(value):
    """Variable names in a whitespace-separated attribute such as `coordinates`."""
    return str(value).split() if value is not None else []


def formula_term_names(value):
    """Variable names in `formula_terms` ('term: var term: var ...')."""
    words = str(value).split()
    return [w for w in words if not w.endswith(":")]


def cell_measure_names(value):
    """Variable names in `cell_measures` ('area: name volume: name')."""
    return formula_term_names(value)


def referenced_names(nc):
    """Names used as auxiliaries by other variables (not data variables themselves)."""
    used = set()
    for var in nc.variables.values():
        attrs = var.ncattrs()
        for key in ("coordinates", "bounds", "grid_mapping", "climatology"):
            if key in attrs:
                used.update(attribute_names(var.getncattr(key)))
        if "formula_terms" in attrs:
            used.update(formula_term_names(var.getncattr("formula_terms")))
        if "cell_measures" in attrs:
            used.update(cell_measure_names(var.getncattr("cell_measures")))
    return used


def data_variable_names(nc):
    auxiliaries = referenced_names(nc)
    names = []
    for name, var in nc.variables.items():
        is_dimension_coordinate = var.dimensions == (name,)
        if is_dimension_coordinate or name in auxiliaries:
            continue
        names.append(name)
    return names


def needs_units(var):
    attrs = var.ncattrs()
    if "flag_values" in attrs or "flag_masks" in attrs or "grid_mapping_name" in attrs:
        return False
    return var.dtype is not str and np.dtype(var.dtype).kind in "fiu"


def may_be_all_missing(name):
    """Horizon depths and their changes: missing wherever water is saturated to the floor."""
    return name.startswith(("horizon_depth_", "horizon_shoaling_"))


def first_step_has_values(var):
    """True when the first time step (or the whole variable if small) holds a valid value."""
    if var.ndim == 0:
        data = var[...]
    elif var.dimensions[:1] == ("time",) or var.ndim >= 3:
        data = var[0]
    else:
        data = var[:]
    return np.ma.count(np.ma.masked_invalid(data)) > 0


def check_references(nc, problems):
    external = set(attribute_names(getattr(nc, "external_variables", None)))
    for name, var in nc.variables.items():
        attrs = var.ncattrs()
        for key in ("coordinates", "ancillary_variables", "grid_mapping"):
            if key in attrs:
                for ref in attribute_names(var.getncattr(key)):
                    if ref not in nc.variables:
                        problems.append(f"variable '{name}': {key} names '{ref}', which is not in the file")
        if "bounds" in attrs:
            ref = var.getncattr("bounds")
            if ref not in nc.variables:
                problems.append(f"variable '{name}': bounds variable '{ref}' is not in the file")
            elif nc.variables[ref].dimensions[: var.ndim] != var.dimensions:
                problems.append(f"variable '{name}': bounds '{ref}' dimensions {nc.variables[ref].dimensions} "
                                f"do not start with {var.dimensions}")
        if "formula_terms" in attrs:
            for ref in formula_term_names(var.getncattr("formula_terms")):
                if ref not in nc.variables:
                    problems.append(f"variable '{name}': formula_terms names '{ref}', which is not in the file")
        if "cell_measures" in attrs:
            for ref in cell_measure_names(var.getncattr("cell_measures")):
                if ref not in nc.variables and ref not in external:
                    problems.append(f"variable '{name}': cell_measures names '{ref}', which is neither in the "
                                    "file nor in the global attribute external_variables")


def check_flag_variables(nc, problems):
    """Bit-field flags (`flag_masks`): sound masks, a fill that reads as no flag combination."""
    for name, var in nc.variables.items():
        if "flag_masks" not in var.ncattrs():
            continue
        masks = [int(m) for m in np.atleast_1d(var.getncattr("flag_masks"))]
        meanings = str(var.getncattr("flag_meanings")).split() if "flag_meanings" in var.ncattrs() else []
        if len(meanings) != len(masks):
            problems.append(f"variable '{name}': {len(masks)} flag_masks but {len(meanings)} flag_meanings")
        if any(m <= 0 or m & (m - 1) for m in masks) or len(set(masks)) != len(masks):
            problems.append(f"variable '{name}': flag_masks {masks} are not distinct single bits")
        declared = 0
        for m in masks:
            declared |= m
        fill = var.getncattr("_FillValue") if "_FillValue" in var.ncattrs() else None
        if fill is not None and 0 <= int(fill) <= declared:
            problems.append(f"variable '{name}': _FillValue {int(fill)} reads as a combination of its flag bits")
        data = var[0] if var.ndim >= 3 else var[...]
        values = np.ma.compressed(np.ma.masked_invalid(data)).astype(np.int64)
        if np.any(values & ~declared):
            problems.append(f"variable '{name}': values set bits that flag_masks do not declare")


def check_with_netcdf4(path, expect_vars, expect_units, problems):
    summary = {}
    with netCDF4.Dataset(path) as nc:
        nc.set_auto_mask(True)
        data_names = data_variable_names(nc)
        if not data_names:
            problems.append("no data variables found")
        for name in data_names:
            var = nc.variables[name]
            if needs_units(var) and "units" not in var.ncattrs():
                problems.append(f"data variable '{name}' has no units attribute")
            # A horizon may lie below the sea floor in every column of a small run (its depth
            # then missing everywhere, with a status saying why); every other field has values.
            if not first_step_has_values(var) and not may_be_all_missing(name):
                problems.append(f"data variable '{name}' has no valid (non-missing) value in its first time step")
        check_references(nc, problems)
        check_flag_variables(nc, problems)
        for name in expect_vars:
            if name not in nc.variables:
                problems.append(f"expected variable '{name}' is missing")
        for name, units in expect_units.items():
            if name in nc.variables:
                found = getattr(nc.variables[name], "units", None)
                if found != units:
                    problems.append(f"variable '{name}' has units {found!r}, expected {units!r}")
        for name, var in nc.variables.items():
            units = getattr(var, "units", "")
            if isinstance(units, str) and " since " in units and var.dimensions == (name,):
                calendar = getattr(var, "calendar", "standard")
                try:
                    cftime.num2date(var[:], units, calendar=calendar)
                except (ValueError, TypeError) as err:
                    problems.append(f"time variable '{name}' does not decode with cftime ({units!r}, "
                                    f"calendar {calendar!r}): {err}")
        summary["data"] = data_names
    return summary


def open_with_xarray(path):
    coder_type = getattr(getattr(xr, "coders", None), "CFDatetimeCoder", None)
    if coder_type is not None:
        return xr.open_dataset(path, decode_times=coder_type(use_cftime=True))
    return xr.open_dataset(path, decode_times=True, use_cftime=True)


def check_with_xarray(path, data_names, problems):
    description = ""
    try:
        ds = open_with_xarray(path)
    except Exception as err:  # any reader failure is the finding we report
        problems.append(f"xarray cannot open it: {type(err).__name__}: {err}")
        return description
    with ds:
        for name in data_names:
            if name not in ds.variables:
                problems.append(f"xarray does not show variable '{name}'")
                continue
            wanted = attribute_names(ds[name].encoding.get("coordinates") or ds[name].attrs.get("coordinates"))
            missing = [c for c in wanted if c not in ds[name].coords]
            if missing:
                problems.append(f"xarray: coordinates {missing} of '{name}' do not resolve")
        for name in ds.coords:
            coord = ds[name]
            if coord.ndim != 1 or coord.dtype.kind not in "OM":
                continue
            values = coord.values
            if values.size > 1 and not all(a < b for a, b in zip(values[:-1], values[1:])):
                problems.append(f"time coordinate '{name}' is not strictly increasing")
            bounds_name = coord.attrs.get("bounds") or coord.encoding.get("bounds")
            if bounds_name and bounds_name in ds.variables:
                bounds = ds[bounds_name].values
                if bounds.dtype.kind not in "OM":
                    problems.append(f"time bounds '{bounds_name}' did not decode to dates")
                elif not all(lo <= v <= hi for v, (lo, hi) in zip(values, bounds)):
                    problems.append(f"time coordinate '{name}' lies outside its bounds '{bounds_name}'")
            calendar = coord.encoding.get("calendar", "standard")
            if values.size:
                description = f"time {values.size} step(s) {values[0]}..{values[-1]} ({calendar})"
    return description


def compliance_findings(path, suite):
    """(error messages, warning count) from the IOOS compliance-checker's JSON report."""
    exe = shutil.which("compliance-checker")
    if exe is None:
        return ["compliance-checker is not installed (pip install compliance-checker) or use --skip-cf"], 0
    run = subprocess.run([exe, f"--test={suite}", "-f", "json", "-o", "-", str(path)],
                         capture_output=True, text=True, check=False)
    try:
        report = json.loads(run.stdout)[suite]
    except (json.JSONDecodeError, KeyError) as err:
        tail = (run.stderr or run.stdout).strip().splitlines()[-1:] or ["no output"]
        return [f"compliance-checker {suite} gave no readable report ({err}): {tail[0]}"], 0

    def failed(results):
        return [r for r in results if r["value"][0] < r["value"][1]]

    def messages(result):
        found = list(result.get("msgs", []))
        for child in result.get("children", []):
            found += messages(child)
        return found

    errors = []
    for result in failed(report.get("high_priorities", [])):
        errors += [f"{suite} error: {result['name']}: {m}" for m in messages(result)] or [
            f"{suite} error: {result['name']}"]
    warnings = sum(len(messages(r)) or 1 for r in failed(report.get("medium_priorities", [])))
    return errors, warnings


def check_file(path, args, expect_units):
    problems = []
    try:
        summary = check_with_netcdf4(path, args.expect_var, expect_units, problems)
    except OSError as err:
        return False, f"FAIL {path}: netCDF4 cannot open it: {err}"
    description = check_with_xarray(path, summary["data"], problems)
    cf_note = ""
    if not args.skip_cf:
        errors, warnings = compliance_findings(path, args.cf_suite)
        problems += errors
        cf_note = f"; {args.cf_suite}: {len(errors)} errors, {warnings} warnings"
    names = ", ".join(summary["data"])
    if problems:
        return False, f"FAIL {path}: " + "; ".join(problems)
    time_note = f"; {description}" if description else ""
    return True, f"ok   {path}: data [{names}]{time_note}{cf_note}"


def write_probe(path, units="mol m-3", coordinates=None, time_units="days since 2000-01-01",
                standard_name="sea_water_alkalinity_expressed_as_mole_equivalent", flag_fill=None):
    """A small CF file; the keyword arguments let the self-test break one thing at a time."""
    with netCDF4.Dataset(path, "w") as nc:
        nc.Conventions = "CF-1.8"
        nc.title = "check_external_readers self-test probe (synthetic)"
        nc.createDimension("time", 2)
        nc.createDimension("lat", 3)
        time = nc.createVariable("time", "f8", ("time",))
        time.setncatts({"standard_name": "time", "units": time_units, "calendar": "noleap", "axis": "T"})
        time[:] = [15.5, 45.0]
        lat = nc.createVariable("lat", "f8", ("lat",))
        lat.setncatts({"standard_name": "latitude", "units": "degrees_north", "axis": "Y"})
        lat[:] = [10.0, 11.0, 12.0]
        var = nc.createVariable("talk", "f4", ("time", "lat"), fill_value=np.float32(1e20))
        var.setncatts({"standard_name": standard_name, "long_name": "total alkalinity"})
        if units is not None:
            var.units = units
        if coordinates is not None:
            var.coordinates = coordinates
        var[:] = np.full((2, 3), 2.3, dtype="f4")
        if flag_fill is not None:
            flag = nc.createVariable("talk_flag", "i2", ("time", "lat"), fill_value=np.int16(flag_fill))
            flag.setncatts({"standard_name": "status_flag", "flag_masks": np.array([1, 2, 4], dtype="i2"),
                            "flag_meanings": "too_low too_high unchecked"})
            flag[:] = np.array([[0, 1, 5], [2, 0, 4]], dtype="i2")
            var.ancillary_variables = "talk_flag"


def self_test(skip_cf, cf_suite):
    """Run the checks on probes that are fine and on probes each broken one way; True if all behave."""
    cases = [  # (label, probe keywords, expected variable, should pass, needs the CF checker)
        ("a sound file passes", {}, [], True, False),
        ("missing units fail", {"units": None}, [], False, False),
        ("an unresolved coordinates entry fails", {"coordinates": "nowhere"}, [], False, False),
        ("undecodable time units fail", {"time_units": "days since the flood"}, [], False, False),
        ("a missing expected variable fails", {}, ["ph"], False, False),
        ("a bit-field flag with a fill outside its bits passes", {"flag_fill": -1}, [], True, False),
        ("a flag fill that reads as a bit combination fails", {"flag_fill": 3}, [], False, False),
        ("an invalid standard_name fails the CF checker", {"standard_name": "alkalinity_of_the_gulf"}, [], False,
         True),
    ]
    all_good = True
    with tempfile.TemporaryDirectory() as tmp:
        for index, (label, probe, expect_vars, should_pass, needs_cf) in enumerate(cases):
            if needs_cf and skip_cf:
                continue
            path = Path(tmp) / f"probe{index}.nc"
            write_probe(path, **probe)
            # the CF checker runs on the sound probe and on the case it must catch
            run_cf = not skip_cf and (needs_cf or should_pass)
            args = argparse.Namespace(expect_var=expect_vars, skip_cf=not run_cf, cf_suite=cf_suite)
            passed, line = check_file(path, args, {})
            behaved = passed == should_pass
            all_good &= behaved
            print(f"{'ok  ' if behaved else 'BAD '} self-test: {label}: {line}")
    return all_good


def parse_args(argv):
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0],
                                     formatter_class=argparse.RawDescriptionHelpFormatter, epilog=__doc__)
    parser.add_argument("paths", nargs="*", help="NetCDF files or directories (searched for *.nc)")
    parser.add_argument("--expect-var", action="append", default=[], metavar="NAME",
                        help="fail a file that lacks this variable (repeatable)")
    parser.add_argument("--expect-units", action="append", default=[], metavar="NAME=UNITS",
                        help="fail a file whose variable NAME has other units (repeatable)")
    parser.add_argument("--cf-suite", default=DEFAULT_CF_SUITE,
                        help=f"compliance-checker suite (default {DEFAULT_CF_SUITE})")
    parser.add_argument("--skip-cf", action="store_true", help="do not run compliance-checker")
    parser.add_argument("--self-test", action="store_true",
                        help="check sound and deliberately broken probe files, then exit")
    args = parser.parse_args(argv)
    if not args.paths and not args.self_test:
        parser.error("give NetCDF files or directories (or --self-test)")
    expect_units = {}
    for item in args.expect_units:
        name, sep, units = item.partition("=")
        if not sep or not name:
            parser.error(f"--expect-units takes NAME=UNITS, got {item!r}")
        expect_units[name] = units
    return args, expect_units


def main(argv=None):
    args, expect_units = parse_args(sys.argv[1:] if argv is None else argv)
    if args.self_test:
        return 0 if self_test(args.skip_cf, args.cf_suite) else 1
    files, missing = find_files(args.paths)
    passed = failed = 0
    for line in missing:
        print(f"FAIL {line}")
        failed += 1
    if not files and not missing:
        print(f"FAIL no *.nc files under {' '.join(args.paths)}")
        failed += 1
    for path in files:
        ok, line = check_file(path, args, expect_units)
        print(line, flush=True)
        passed += ok
        failed += not ok
    print(f"{passed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
