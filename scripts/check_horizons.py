#!/usr/bin/env python3
"""Recompute an acidscape output's saturation horizons and corrosive-water time series from its
own written fields, independently of acidscape (numpy and xarray only).

For every file given:
  * horizons: for every time step, column and `horizon_depth_*` variable, the depth and status
    are found again by brute force from the written omega field, the wet cells (quality_flag
    not _FillValue) and the cell-centre depths below the sea surface (z-levels from the
    vertical coordinate; parametric coordinates from their formula_terms, CF Conventions 1.10
    Appendix D, minus the free-surface height), following the rules of the analysis crate's
    README (Methods): the shallowest depth, going down, where omega falls below the threshold,
    interpolated linearly in depth on ln(omega) between the two bracketing centres; 0 m when
    the top wet cell is already below; the bottom cell extrapolated from the two deepest centres
    down to the sea floor (`sea_floor_depth`, plus the free surface on parametric levels);
    only the levels above a missing omega used. The status must match exactly and the depth
    within what float32 storage of omega and depth allows (columns with an omega within 1e-6
    of the threshold, where float32 rounding may flip a comparison, are counted and skipped);
  * time series: every extent variable equals the sum over the written fields: cell_area x
    cell_thickness over wet cells, over cells with omega, over cells with omega below the
    threshold; cell_area over wet columns, over columns whose top wet cell is below the
    threshold, over columns with a horizon depth; the area-weighted mean horizon depth;
    relative tolerance 1e-6 (float32 thickness and depth), plus the volume of cells whose
    omega lies within float32 rounding of the threshold;
  * the table NAME.extent.csv beside NAME.nc holds exactly the time-series values;
  * horizon-depth uncertainties (`horizon_depth_*_uncertainty`, when written): where the depth
    was interpolated or extrapolated between two centres, the first-order change of the same
    ln(omega) line for a change of both omega values by their written standard uncertainties
    (`omega_*_uncertainty`, fully correlated), by central differences (GUM, JCGM 100:2008,
    5.1.3 and 5.2.2 with r = 1); missing everywhere else.

Prints one line per file; exits 1 if any check failed.
Usage: python3 scripts/check_horizons.py OUTPUT.nc...
"""

from __future__ import annotations

import csv
import math
import sys
from pathlib import Path

import numpy as np
import xarray as xr

NEAR = 1e-6  # relative distance from a threshold below which float32 rounding may flip a test
STATUS = [
    "single_crossing",
    "several_crossings",
    "undersaturated_at_surface",
    "undersaturated_at_surface_saturated_below",
    "crossing_in_bottom_cell",
    "deeper_than_sea_floor",
    "crossing_above_missing_omega",
    "omega_missing",
    "land",
]


def raw(ds, name):
    """Values as stored, and the variable's _FillValue (None if it has none)."""
    var = ds[name]
    return np.asarray(var.values), var.attrs.get("_FillValue", var.encoding.get("_FillValue"))


def valid(values, fill):
    out = np.isfinite(values)
    if fill is not None:
        out &= values != fill
    return out


def with_time(values, ds, dims):
    """Adds a leading time axis of length 1 to a field without one."""
    return values if dims and dims[0] == time_dim(ds) else values[np.newaxis]


def time_dim(ds):
    flag = ds["quality_flag"]
    first = flag.dims[0]
    return first if first in ds and "units" in ds[first].attrs and "since" in str(ds[first].attrs["units"]) else None


# --- depths of the cell centres below the sea surface ----------------------------------------

def parametric_height(ds, coordinate, step):
    """Height z (positive up) of every level and column at one step, CF Appendix D, and eta."""
    terms = str(ds[coordinate].attrs["formula_terms"]).split()
    term = {terms[i].rstrip(":"): terms[i + 1] for i in range(0, len(terms), 2)}
    name = ds[coordinate].attrs["standard_name"]
    eta = np.asarray(ds[term["eta"]].values, dtype=float)
    if eta.ndim == 3:
        eta = eta[step]
    depth = np.asarray(ds[term["depth"]].values, dtype=float)
    eta = eta[np.newaxis]
    depth = depth[np.newaxis]
    if name == "ocean_sigma_coordinate":
        sigma = np.asarray(ds[term["sigma"]].values, dtype=float)[:, None, None]
        return eta + sigma * (depth + eta), eta
    s = np.asarray(ds[term["s"]].values, dtype=float)[:, None, None]
    c = np.asarray(ds[term["C"]].values, dtype=float)[:, None, None]
    depth_c = float(np.asarray(ds[term["depth_c"]].values))
    if name == "ocean_s_coordinate_g1":
        stretched = depth_c * s + (depth - depth_c) * c
        return stretched + eta * (1.0 + stretched / depth), eta
    if name == "ocean_s_coordinate_g2":
        stretched = (depth_c * s + depth * c) / (depth_c + depth)
        return eta + (eta + depth) * stretched, eta
    raise ValueError(f"parametric coordinate {name} not handled by this check")


def centre_depths(ds, step, shape):
    """Depth below the sea surface [m] of every cell (level, y, x), and eta per column."""
    levels = shape[0]
    vertical = ds["quality_flag"].dims[-3]
    coord = ds[vertical]
    if "formula_terms" in coord.attrs:
        z, eta = parametric_height(ds, vertical, step)
        return eta - z, eta[0]
    units = str(coord.attrs.get("units", "m")).strip()
    factor = {"m": 1.0, "meter": 1.0, "meters": 1.0, "metre": 1.0, "metres": 1.0, "cm": 0.01}[units]
    sign = -1.0 if str(coord.attrs.get("positive", "down")).lower() == "up" else 1.0
    depth = sign * factor * np.asarray(coord.values, dtype=float)
    return np.broadcast_to(depth.reshape(levels, 1, 1), shape), np.zeros(shape[1:])


# --- one column's horizon, from the definitions -------------------------------------------------

def horizon(depth, omega, floor, threshold):
    """(status word, depth or None, the two levels it comes from or None) of one column:
    depth, omega from the surface down."""
    n = len(depth)
    if n == 0:
        return "land", None, None
    ok = [w > 0 and math.isfinite(w) for w in omega]
    if not ok[0]:
        return "omega_missing", None, None

    def resaturates(start):
        for k in range(start, n):
            if not ok[k]:
                return False, True
            if omega[k] >= threshold:
                return True, False
        return False, False

    if omega[0] < threshold:
        again, _ = resaturates(1)
        word = "undersaturated_at_surface_saturated_below" if again else "undersaturated_at_surface"
        return word, 0.0, None
    for k in range(1, n):
        if not ok[k]:
            return "omega_missing", None, None
        if omega[k] < threshold:
            z = ln_line(depth[k - 1], depth[k], omega[k - 1], omega[k], threshold)
            again, gap = resaturates(k + 1)
            word = "several_crossings" if again else ("crossing_above_missing_omega" if gap else "single_crossing")
            return word, min(max(z, depth[k - 1]), depth[k]), (k - 1, k)
    floor = max(floor, depth[-1])
    if n >= 2 and omega[-1] < omega[-2]:
        z = max(ln_line(depth[-2], depth[-1], omega[-2], omega[-1], threshold), depth[-1])
        if z <= floor:
            return "crossing_in_bottom_cell", z, (n - 2, n - 1)
    return "deeper_than_sea_floor", None, None


def depth_uncertainty(depth, omega, u, pair, threshold):
    """First-order change of the line's depth for both omega values moved by their standard
    uncertainties together (central differences, step 1e-3 of the uncertainty)."""
    a, b = pair
    step = 1e-3

    def z(sign):
        return ln_line(depth[a], depth[b], omega[a] + sign * step * u[a], omega[b] + sign * step * u[b], threshold)

    return abs(z(1.0) - z(-1.0)) / (2.0 * step)


def ln_line(z0, z1, w0, w1, threshold):
    return z0 + (z1 - z0) * (math.log(threshold) - math.log(w0)) / (math.log(w1) - math.log(w0))


def tolerance(depth, omega, z):
    """What float32 omega (relative 6e-8 each) and float32 depth can move a depth by."""
    slack = 1e-4 + 2e-7 * abs(z)
    for k in range(1, len(depth)):
        d = abs(math.log(omega[k]) - math.log(omega[k - 1])) if omega[k] > 0 and omega[k - 1] > 0 else 0
        if d > 0:
            slack = max(slack, 1e-4 + 2e-7 * abs(z) + 3e-7 * abs(depth[k] - depth[k - 1]) / d)
    return slack


def parse_suffix(name, prefix):
    """(mineral, threshold) of e.g. horizon_depth_aragonite_1p5."""
    rest = name[len(prefix):].split("_", 1)
    threshold = float(rest[1].replace("p", ".")) if len(rest) > 1 else 1.0
    return rest[0], threshold


# --- the checks ---------------------------------------------------------------------------

class Field:
    """The written fields of one output, with a leading time axis."""

    def __init__(self, ds):
        flag, self.flag_fill = raw(ds, "quality_flag")
        self.has_time = time_dim(ds) is not None
        self.flag = flag if self.has_time else flag[np.newaxis]
        self.steps, *self.shape = self.flag.shape
        self.shape = tuple(self.shape)
        self.wet = self.flag != self.flag_fill
        self.area = np.asarray(ds["cell_area"].values, dtype=float)
        thickness, t_fill = raw(ds, "cell_thickness")
        thickness = np.where(valid(thickness, t_fill), thickness.astype(float), 0.0)
        if thickness.ndim == len(self.shape):
            thickness = np.broadcast_to(thickness, (self.steps,) + self.shape)
        self.volume = thickness * self.area[np.newaxis, np.newaxis]
        floor, f_fill = raw(ds, "sea_floor_depth")
        self.floor = np.where(valid(floor, f_fill), floor.astype(float), np.nan)

    def omega(self, ds, mineral, suffix=""):
        values, fill = raw(ds, f"omega_{mineral}{suffix}")
        values = values if self.has_time else values[np.newaxis]
        return np.where(valid(values, fill), values.astype(float), np.nan)


def check_horizons(ds, field, problems):
    checked, skipped, uncertainties_checked = 0, 0, 0
    names = [n for n in ds.data_vars if n.startswith("horizon_depth_") and not n.endswith("_uncertainty")]
    for name in names:
        mineral, threshold = parse_suffix(name, "horizon_depth_")
        omega = field.omega(ds, mineral)
        depth_field, d_fill = raw(ds, name)
        status_name = name.replace("horizon_depth_", "horizon_status_")
        status_field, _ = raw(ds, status_name)
        meanings = str(ds[status_name].attrs["flag_meanings"]).split()
        if meanings != STATUS:
            problems.append(f"{status_name}: flag_meanings {meanings}")
        if not field.has_time:
            depth_field, status_field = depth_field[np.newaxis], status_field[np.newaxis]
        uncertain = f"{name}_uncertainty" in ds
        if uncertain:
            u_depth, u_fill = raw(ds, f"{name}_uncertainty")
            u_depth = u_depth if field.has_time else u_depth[np.newaxis]
            u_omega = field.omega(ds, mineral, "_uncertainty")
        for step in range(field.steps):
            depths, eta = centre_depths(ds, step, field.shape)
            for j in range(field.shape[1]):
                for i in range(field.shape[2]):
                    wet = np.nonzero(field.wet[step, :, j, i])[0]
                    order = wet[np.argsort(depths[wet, j, i])]
                    z = [float(depths[k, j, i]) for k in order]
                    w = [float(omega[step, k, j, i]) for k in order]
                    floor = field.floor[j, i] + eta[j, i] if np.isfinite(field.floor[j, i]) else (z[-1] if z else 0.0)
                    if any(abs(x / threshold - 1.0) < NEAR for x in w if np.isfinite(x)):
                        skipped += 1
                        continue
                    word, want, pair = horizon(z, w, floor, threshold)
                    got_word = meanings[int(status_field[step, j, i])]
                    got = depth_field[step, j, i]
                    got = None if got == d_fill else float(got)
                    checked += 1
                    where = f"{name} step {step + 1} column ({j}, {i})"
                    if got_word != word:
                        problems.append(f"{where}: status {got_word}, recomputed {word}")
                    elif (got is None) != (want is None):
                        problems.append(f"{where}: depth {got}, recomputed {want}")
                    elif want is not None and abs(got - want) > tolerance(z, w, want):
                        problems.append(f"{where}: depth {got}, recomputed {want}")
                    if uncertain:
                        u = [float(u_omega[step, k, j, i]) for k in order]
                        got_u = u_depth[step, j, i]
                        got_u = None if got_u == u_fill else float(got_u)
                        want_u = None if pair is None else depth_uncertainty(z, w, u, pair, threshold)
                        if (got_u is None) != (want_u is None) or (
                            want_u is not None and abs(got_u - want_u) > 1e-3 * want_u + 1e-3
                        ):
                            problems.append(f"{where}: depth uncertainty {got_u}, recomputed {want_u}")
                        uncertainties_checked += want_u is not None
    return checked, skipped, uncertainties_checked


def series(ds, name):
    values = np.atleast_1d(np.asarray(ds[name].values, dtype=float))
    fill = ds[name].attrs.get("_FillValue", ds[name].encoding.get("_FillValue"))
    return [None if (fill is not None and v == fill) else float(v) for v in values]


def close(got, want, slack=0.0):
    if got is None or want is None:
        return got is None and want is None
    return abs(got - want) <= 1e-6 * max(abs(want), abs(got)) + slack


def top_wet_omega(omega, wet, depths):
    """Omega of the shallowest wet cell of every column (NaN where none)."""
    masked = np.where(wet, depths, np.inf)
    top = np.argmin(masked, axis=0)
    value = np.take_along_axis(omega, top[np.newaxis], axis=0)[0]
    return np.where(wet.any(axis=0), value, np.nan)


def check_series(ds, field, problems):
    expected = {}
    for step in range(field.steps):
        wet, volume = field.wet[step], field.volume[step]
        depths, _ = centre_depths(ds, step, field.shape)
        wet_columns = wet.any(axis=0)
        expected.setdefault("wet_volume", []).append((volume[wet].sum(), 0.0))
        expected.setdefault("sea_surface_area", []).append((field.area[wet_columns].sum(), 0.0))
        for name in [n for n in ds.data_vars if n.startswith("volume_with_omega_")]:
            mineral = name[len("volume_with_omega_"):]
            omega = field.omega(ds, mineral)[step]
            known = wet & np.isfinite(omega) & (omega > 0)
            expected.setdefault(name, []).append((volume[known].sum(), 0.0))
            top = top_wet_omega(omega, wet, depths)
            depths_of_mineral = [n for n in ds.data_vars if n.startswith(f"horizon_depth_{mineral}") and not n.endswith("_uncertainty")]
            for depth_name in depths_of_mineral:
                _, threshold = parse_suffix(depth_name, "horizon_depth_")
                suffix = depth_name[len("horizon_depth_"):]
                near = known & (np.abs(omega / threshold - 1.0) < NEAR)
                below = known & (omega < threshold)
                v_below = volume[below].sum()
                expected.setdefault(f"volume_below_threshold_{suffix}", []).append((v_below, volume[near].sum()))
                fraction = v_below / volume[known].sum() if volume[known].sum() > 0 else None
                expected.setdefault(f"volume_fraction_below_threshold_{suffix}", []).append((fraction, 0.0 if not near.any() else 1.0))
                top_below = np.isfinite(top) & (top < threshold)
                top_near = np.isfinite(top) & (np.abs(top / threshold - 1.0) < NEAR)
                expected.setdefault(f"surface_area_below_threshold_{suffix}", []).append((field.area[top_below].sum(), field.area[top_near].sum()))
                depth, d_fill = raw(ds, depth_name)
                depth = depth if field.has_time else depth[np.newaxis]
                has = valid(depth[step], d_fill)
                area = field.area[has].sum()
                expected.setdefault(f"area_with_horizon_{suffix}", []).append((area, 0.0))
                mean = (field.area[has] * depth[step][has].astype(float)).sum() / area if area > 0 else None
                expected.setdefault(f"mean_horizon_depth_{suffix}", []).append((mean, 0.0))
    for name, wanted in expected.items():
        if name not in ds:
            problems.append(f"time series {name} missing")
            continue
        got = series(ds, name)
        for step, ((want, slack), value) in enumerate(zip(wanted, got)):
            want = None if want is None else float(want)
            if not close(value, want, slack):
                problems.append(f"{name} step {step + 1}: {value}, sum over the fields {want}")
    return expected


def check_table(path, ds, names, problems):
    table = path.with_suffix(".extent.csv")
    if not table.exists():
        problems.append(f"{table} missing")
        return
    with open(table, newline="") as handle:
        rows = list(csv.DictReader(handle))
    if not rows or list(rows[0].keys()) != ["time", "step", "quantity", "mineral", "threshold", "value", "units"]:
        problems.append(f"{table}: unexpected header")
        return
    seen = 0
    for row in rows:
        name = row["quantity"]
        if row["mineral"]:
            name += "_" + row["mineral"]
        if row["threshold"] and float(row["threshold"]) != 1.0:
            name += "_" + format(float(row["threshold"]), "g").replace(".", "p")
        if name not in ds:
            problems.append(f"{table}: row for {name}, which the file lacks")
            continue
        value = series(ds, name)[int(row["step"]) - 1]
        text = row["value"]
        if (value is None) != (text == "") or (value is not None and float(text) != value):
            problems.append(f"{table}: {name} step {row['step']} is {text!r}, the file holds {value}")
        if row["units"] != ds[name].attrs.get("units"):
            problems.append(f"{table}: {name} units {row['units']}")
        seen += 1
    if seen != len(names) * ds["quality_flag"].shape[0] and time_dim(ds) is not None:
        problems.append(f"{table}: {seen} rows, expected one per quantity and step")


def check(path):
    problems = []
    with xr.open_dataset(path, mask_and_scale=False, decode_times=False) as ds:
        if "cell_area" not in ds:
            return f"skip {path}: no horizons in this output"
        field = Field(ds)
        checked, skipped, uncertainties = check_horizons(ds, field, problems)
        names = check_series(ds, field, problems)
        check_table(path, ds, names, problems)
    if problems:
        shown = "\n    ".join(problems[:20])
        more = f"\n    ... and {len(problems) - 20} more" if len(problems) > 20 else ""
        return f"FAIL {path}:\n    {shown}{more}"
    return (f"ok   {path}: {checked} column horizons recomputed ({skipped} with omega within float32 of a threshold skipped), "
            f"{uncertainties} depth uncertainties recomputed, "
            f"{len(names)} time series equal the sums over the fields, table matches")


def main(argv):
    if not argv:
        print(__doc__)
        return 2
    failed = 0
    for arg in argv:
        line = check(Path(arg))
        print(line)
        failed += line.startswith("FAIL")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
