#!/usr/bin/env python3
"""Check the outputs of `acidscape compare` against an independent computation with
netCDF4/xarray/numpy (window means and differences) and pandas (the regional CSV).

From the `compute` outputs given with --run LABEL=FILE (the same as given to compare) and the
windows given with --window NAME=FIRST-LAST:
  * window means: every `FIELD_LABEL` variable of the comparison equals the mean over the
    window's years of the annual means (each step weighted by the length of its time bounds,
    the year of a step taken from the midpoint of its bounds with cftime), computed here with
    xarray, within float32 storage precision; missing cells agree; for horizon depths the
    mean of the years that have a horizon (compare's documented rule);
  * changes and differences: `FIELD_LABEL_change` (window minus reference window) and
    `FIELD_LABEL_minus_BASE` (run minus the first run) agree with the same differences of the
    means computed here, as do horizon shoaling `horizon_shoaling_X_LABEL` (reference depth
    minus window depth) and `horizon_shoaling_X_LABEL_versus_BASE` (base minus run); with --identical A,B the difference between runs A and B is exactly 0;
  * the CSV (read with pandas) has the documented columns, and its rows for the whole domain
    agree with area-weighted surface means and volume-weighted column means computed here with
    numpy (areas R^2 dlon (sin lat2 - sin lat1), R = 6371008.7714 m, the GRS80 mean radius,
    Moritz 2000, or the run's cell_area; thicknesses from the level bounds or the run's
    cell_thickness), per time step and per window, and the fraction of volume with omega
    aragonite below 1.

Prints one line per check and "N checks passed" or the failures; exits 1 on any failure.

Usage:
    python3 scripts/check_comparison.py --run moderate=out/moderate.nc --run steep=out/steep.nc \
        --window reference=2015-2034 --window late=2081-2100 --comparison out/compare.nc \
        [--table out/compare.csv] [--identical moderate,again]
"""

from __future__ import annotations

import argparse
import sys

import cftime
import netCDF4
import numpy as np
import pandas as pd
import xarray as xr

R = 6371008.7714  # m, GRS80 mean radius R1 = (2a + b)/3 (Moritz 2000)
COLUMNS = ["run", "region", "layer", "period", "window", "time", "year", "quantity", "statistic",
           "threshold", "value", "units", "note"]


def parse_pairs(items, what):
    out = []
    for item in items:
        key, _, value = item.partition("=")
        if not value:
            sys.exit(f"--{what} {item}: expected NAME=VALUE")
        out.append((key, value))
    return out


class Run:
    """A compute output: per-step years and lengths, and the annual means of a field."""

    def __init__(self, path):
        self.path = path
        self.ds = xr.open_dataset(path, decode_times=False)
        time = self.ds["time"]
        bounds = self.ds[time.attrs["bounds"]].values
        units, calendar = time.attrs["units"], time.attrs.get("calendar", "standard")
        middles = cftime.num2date(bounds.mean(axis=1), units, calendar=calendar)
        self.years = np.array([m.year for m in middles])
        scale = {"days": 1.0, "hours": 1 / 24, "minutes": 1 / 1440, "seconds": 1 / 86400}[units.split()[0]]
        self.lengths = (bounds[:, 1] - bounds[:, 0]) * scale

    def annual(self, values):
        """{year: annual mean per cell} weighted by step length; NaN where a step is missing."""
        out = {}
        for year in np.unique(self.years):
            steps = np.nonzero(self.years == year)[0]
            weights = self.lengths[steps]
            stack = values[steps].astype("f8")
            out[year] = np.tensordot(weights, stack, axes=1) / weights.sum()
        return out

    def window_mean(self, annual, first, last, skip_missing=False):
        """Mean over the window's years; with skip_missing, of the years with a value."""
        stack = [annual[y] for y in annual if first <= y <= last]
        if not skip_missing:
            return np.mean(stack, axis=0)
        stack = np.array(stack)
        count = np.sum(~np.isnan(stack), axis=0)
        return np.where(count > 0, np.nansum(stack, axis=0) / np.maximum(count, 1), np.nan)


def is_horizon(field):
    """Horizon depths: years without a horizon are left out (compare's documented rule), and
    their changes are shoaling, in metres, positive where the horizon is shallower."""
    return field.startswith("horizon_depth_")


def change_name(field, label):
    if is_horizon(field):
        return f"horizon_shoaling_{field[len('horizon_depth_'):]}_{label}"
    return f"{field}_{label}_change"


def difference_name(field, label, base):
    if is_horizon(field):
        return f"horizon_shoaling_{field[len('horizon_depth_'):]}_{label}_versus_{base}"
    return f"{field}_{label}_minus_{base}"


class Checks:
    def __init__(self):
        self.passed, self.failed = 0, []

    def close(self, what, got, expected, rtol=2e-6, atol=0.0):
        got, expected = np.asarray(got, "f8"), np.asarray(expected, "f8")
        same_missing = np.array_equal(np.isnan(got), np.isnan(expected))
        ok = same_missing and np.allclose(got, expected, rtol=rtol, atol=atol, equal_nan=True)
        self.record(what, ok, f"largest difference {np.nanmax(np.abs(got - expected)) if same_missing else 'missing cells differ'}")

    def record(self, what, ok, detail=""):
        if ok:
            self.passed += 1
            print(f"ok   {what}")
        else:
            self.failed.append(what)
            print(f"FAIL {what}: {detail}")


def operand_scale(a, b):
    """Largest magnitude of either operand of a difference: compare subtracts the stored
    float32 means, so its differences carry float32 rounding of the larger operand."""
    return np.nanmax(np.abs(np.concatenate([np.ravel(a), np.ravel(b)])))


def stored(nc, name):
    return np.ma.filled(nc[name][:].astype("f8"), np.nan)


def check_windows(checks, runs, windows, comparison, reference):
    nc = netCDF4.Dataset(comparison)
    base_label = runs[0][0]
    means = {}
    for label, run in runs:
        for field in [v for v in run.ds.data_vars if f"{v}_{label}" in nc.variables]:
            values = run.ds[field].values
            annual = run.annual(values)
            for w, (name, (first, last)) in enumerate(windows):
                expected = run.window_mean(annual, first, last, skip_missing=is_horizon(field))
                means[(label, field, w)] = expected
                scale = np.nanmax(np.abs(expected)) if np.isfinite(expected).any() else 1.0
                checks.close(f"{comparison}: {field}_{label} window {name} (mean of annual means)",
                             stored(nc, f"{field}_{label}")[w], expected, rtol=1e-6, atol=1e-6 * scale)
            change = change_name(field, label)
            sign = -1.0 if is_horizon(field) else 1.0
            if change in nc.variables:
                for w in range(len(windows)):
                    expected = sign * (means[(label, field, w)] - means[(label, field, reference)])
                    scale = operand_scale(means[(label, field, w)], means[(label, field, reference)])
                    checks.close(f"{change} window {windows[w][0]}", stored(nc, change)[w], expected,
                                 rtol=0.0, atol=2e-6 * scale)
    for label, run in runs[1:]:
        for (l, field, w), mean in list(means.items()):
            name = difference_name(field, label, base_label)
            if l != label or name not in nc.variables:
                continue
            sign = -1.0 if is_horizon(field) else 1.0
            expected = sign * (mean - means[(base_label, field, w)])
            scale = operand_scale(mean, means[(base_label, field, w)])
            checks.close(f"{name} window {windows[w][0]}", stored(nc, name)[w], expected, rtol=0.0, atol=2e-6 * scale)
    return nc


def weights(run):
    """Area per column and thickness per level (or per cell) of a compute output."""
    ds = run.ds
    if "cell_area" in ds:
        area = ds["cell_area"].values.astype("f8")  # float32 in the file; sums in double
    else:
        lat_b = ds[ds["lat"].attrs["bounds"]].values
        lon_b = ds[ds["lon"].attrs["bounds"]].values
        band = np.abs(np.sin(np.deg2rad(lat_b[:, 1])) - np.sin(np.deg2rad(lat_b[:, 0])))
        width = np.deg2rad(np.abs(lon_b[:, 1] - lon_b[:, 0]))
        area = R * R * band[:, None] * width[None, :]
    if "cell_thickness" in ds:
        # Missing on land: weight 0 there (land cells have no value either).
        thickness = np.nan_to_num(ds["cell_thickness"].values.astype("f8"), nan=0.0)
    else:
        lev_b = ds[ds["lev"].attrs["bounds"]].values
        thickness = np.abs(lev_b[:, 1] - lev_b[:, 0])[:, None, None]
    return area, thickness


def check_table(checks, table, runs, windows):
    frame = pd.read_csv(table)
    checks.record(f"{table}: columns {', '.join(COLUMNS)}", list(frame.columns) == COLUMNS, str(list(frame.columns)))
    whole = frame[(frame.region == "whole domain") & (frame.statistic.isin(["mean", "fraction_below"]))]
    if whole.empty:
        checks.record(f"{table}: rows for the whole domain", False, "none (run compare without --regions)")
        return
    for label, run in runs:
        area, thickness = weights(run)
        for field in ["ph", "omega_aragonite"]:
            if field not in run.ds:
                continue
            values = run.ds[field].values.astype("f8")  # (time, lev, lat, lon)
            surface = values[:, 0]
            wet = ~np.isnan(surface)
            surface_mean = np.nansum(surface * area, axis=(1, 2)) / np.sum(area * wet, axis=(1, 2))
            volume = area[None] * thickness
            column_mean = np.nansum(values * volume, axis=(1, 2, 3)) / np.sum(volume * ~np.isnan(values), axis=(1, 2, 3))
            series = {("surface", "mean", np.nan): surface_mean, ("whole column", "mean", np.nan): column_mean}
            if field == "omega_aragonite":
                below = np.sum(volume * (values < 1.0), axis=(1, 2, 3)) / np.sum(volume * ~np.isnan(values), axis=(1, 2, 3))
                series[("whole column", "fraction_below", 1.0)] = below
            for (layer, statistic, threshold), expected in series.items():
                rows = whole[(whole.run == label) & (whole.layer == layer) & (whole.quantity == field)
                             & (whole.statistic == statistic)]
                if not np.isnan(threshold):
                    rows = rows[rows.threshold == threshold]
                steps = rows[rows.period == "time_step"].sort_values("year")
                what = f"{table}: {label} whole domain {layer} {field} {statistic} per time step"
                checks.close(what, steps.value.values, expected, rtol=1e-9)
                annual = {y: np.average(expected[run.years == y], weights=run.lengths[run.years == y])
                          for y in np.unique(run.years)}
                for name, (first, last) in windows:
                    got = rows[(rows.period == "window") & (rows.window == name)].value.values
                    want = np.mean([annual[y] for y in annual if first <= y <= last])
                    checks.close(f"{table}: {label} whole domain {layer} {field} {statistic} window {name}",
                                 got, [want], rtol=1e-9)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--run", action="append", required=True, help="LABEL=FILE, as given to compare")
    parser.add_argument("--window", action="append", required=True, help="NAME=FIRST-LAST")
    parser.add_argument("--reference-window", help="the reference window's name (default: the first)")
    parser.add_argument("--comparison", required=True, help="the NetCDF output of compare")
    parser.add_argument("--table", help="the CSV of compare (its rows for the whole domain are checked)")
    parser.add_argument("--identical", action="append", default=[], help="A,B: two labels of the same run")
    args = parser.parse_args(argv)
    runs = [(label, Run(path)) for label, path in parse_pairs(args.run, "run")]
    windows = [(name, tuple(int(y) for y in years.split("-"))) for name, years in parse_pairs(args.window, "window")]
    windows = [(n, y if len(y) == 2 else (y[0], y[0])) for n, y in windows]
    names = [n for n, _ in windows]
    reference = names.index(args.reference_window) if args.reference_window else 0
    checks = Checks()
    nc = check_windows(checks, runs, windows, args.comparison, reference)
    for pair in args.identical:
        a, b = pair.split(",")
        for name in [v for v in nc.variables if v.endswith(f"_{b}_minus_{a}")]:
            values = np.ma.compressed(nc[name][:])
            checks.record(f"{name}: a run minus itself is exactly 0", values.size > 0 and np.all(values == 0.0))
    if args.table:
        check_table(checks, args.table, runs, windows)
    print(f"{checks.passed} checks passed" + (f", {len(checks.failed)} failed" if checks.failed else ""))
    return 1 if checks.failed else 0


if __name__ == "__main__":
    sys.exit(main())
