#!/usr/bin/env python3
"""The indicator job as a modeller would write it in a notebook: xarray + vectorised numpy.

A speed baseline for scripts/bench_pipeline.sh, not a reference for values. It computes pH
(total scale), CO3-- (mol m-3), pCO2 (uatm), and the aragonite and calcite saturation states for
every wet cell of a cmip-style run (dissic, talk, thetao, so, po4, si), one time step at a time,
and writes them as NetCDF-4 (deflate level 1, like acidscape's default). It takes the shortcuts
such a script usually takes, all of which favour its speed:

- a constant density of 1025 kg m-3 for mol m-3 -> mol kg-1 (no equation of state);
- potential temperature used as in-situ temperature, pressure taken as depth in dbar
  (no TEOS-10 conversions);
- every constant evaluated on the total scale, pressure corrections applied to the
  total-scale constants directly;
- a fixed number of Newton iterations on the alkalinity-pH equation (no bracket, no check).

Constants, from the published formulas: K0 Weiss 1974; K1, K2 Lueker, Dickson & Keeling 2000;
KB Dickson 1990; KW, K1P, K2P, K3P, KSi Millero 1995; KS Dickson 1990; KF Perez & Fraga 1987;
Ksp Mucci 1983; pressure corrections Millero 1995; totals: boron Uppstrom 1974, sulfate
Morris & Riley 1966, fluoride Riley 1965, calcium Riley & Tongudai 1967.

Usage: python3 scripts/baseline_xarray_numpy.py RUN_FILE... -o OUT.nc
"""

from __future__ import annotations

import argparse
import sys

import numpy as np
import xarray as xr

DENSITY = 1025.0  # kg m-3
NEWTON_ITERATIONS = 8
R_GAS = 83.14472  # cm3 bar mol-1 K-1

# Millero 1995 pressure coefficients: a0, a1, a2, b0, b1 (b in 1e-3 cm3 mol-1 bar-1)
PRESSURE = {
    "k1": (-25.50, 0.1271, 0.0, -3.08, 0.0877),
    "k2": (-15.82, -0.0219, 0.0, 1.13, -0.1475),
    "kb": (-29.48, 0.1622, -2.608e-3, -2.84, 0.0),
    "kw": (-20.02, 0.1119, -1.409e-3, -5.13, 0.0794),
    "ks": (-18.03, 0.0466, 0.316e-3, -4.53, 0.0900),
    "kf": (-9.78, -0.0090, -0.942e-3, -3.91, 0.054),
    "k1p": (-14.51, 0.1211, -0.321e-3, -2.67, 0.0427),
    "k2p": (-23.12, 0.1758, -2.647e-3, -5.15, 0.09),
    "k3p": (-26.57, 0.2020, -3.042e-3, -4.08, 0.0714),
    "ksi": (-29.48, 0.1622, -2.608e-3, -2.84, 0.0),
    "kspc": (-48.76, 0.5304, 0.0, -11.76, 0.3692),
    "kspa": (-45.96, 0.5304, 0.0, -11.76, 0.3692),
}


def pressure_factor(name, t, tk, bar):
    a0, a1, a2, b0, b1 = PRESSURE[name]
    dv = a0 + a1 * t + a2 * t * t
    dk = (b0 + b1 * t) * 1e-3
    return np.exp((-dv * bar + 0.5 * dk * bar * bar) / (R_GAS * tk))


def constants(t, s, dbar):
    tk = t + 273.15
    ln_tk = np.log(tk)
    sqrt_s = np.sqrt(s)
    bar = dbar / 10.0
    k = {}
    tk100 = tk / 100.0
    k["k0"] = np.exp(-60.2409 + 93.4517 / tk100 + 23.3585 * np.log(tk100)
                     + s * (0.023517 - 0.023656 * tk100 + 0.0047036 * tk100 * tk100))
    k["k1"] = 10.0 ** -(3633.86 / tk - 61.2172 + 9.67770 * ln_tk - 0.011555 * s + 0.0001152 * s * s)
    k["k2"] = 10.0 ** -(471.78 / tk + 25.9290 - 3.16967 * ln_tk - 0.01781 * s + 0.0001122 * s * s)
    k["kb"] = np.exp((-8966.90 - 2890.53 * sqrt_s - 77.942 * s + 1.728 * s * sqrt_s - 0.0996 * s * s) / tk
                     + 148.0248 + 137.1942 * sqrt_s + 1.62142 * s
                     - (24.4344 + 25.085 * sqrt_s + 0.2474 * s) * ln_tk + 0.053105 * sqrt_s * tk)
    k["kw"] = np.exp(148.9652 - 13847.26 / tk - 23.6521 * ln_tk
                     + (118.67 / tk - 5.977 + 1.0495 * ln_tk) * sqrt_s - 0.01615 * s)
    ionic = 19.924 * s / (1000.0 - 1.005 * s)
    k["ks"] = np.exp(-4276.1 / tk + 141.328 - 23.093 * ln_tk
                     + (-13856.0 / tk + 324.57 - 47.986 * ln_tk) * np.sqrt(ionic)
                     + (35474.0 / tk - 771.54 + 114.723 * ln_tk) * ionic
                     - 2698.0 / tk * ionic ** 1.5 + 1776.0 / tk * ionic * ionic
                     + np.log(1.0 - 0.001005 * s))
    k["kf"] = np.exp(874.0 / tk - 9.68 + 0.111 * sqrt_s)
    k["k1p"] = np.exp(-4576.752 / tk + 115.525 - 18.453 * ln_tk + (-106.736 / tk + 0.69171) * sqrt_s
                      + (-0.65643 / tk - 0.01844) * s)
    k["k2p"] = np.exp(-8814.715 / tk + 172.0883 - 27.927 * ln_tk + (-160.340 / tk + 1.3566) * sqrt_s
                      + (0.37335 / tk - 0.05778) * s)
    k["k3p"] = np.exp(-3070.75 / tk - 18.141 + (17.27039 / tk + 2.81197) * sqrt_s
                      + (-44.99486 / tk - 0.09984) * s)
    k["ksi"] = np.exp(-8904.2 / tk + 117.385 - 19.334 * ln_tk + (-458.79 / tk + 3.5913) * np.sqrt(ionic)
                      + (188.74 / tk - 1.5998) * ionic + (-12.1652 / tk + 0.07871) * ionic * ionic
                      + np.log(1.0 - 0.001005 * s))
    log10_tk = ln_tk / np.log(10.0)
    k["kspc"] = 10.0 ** (-171.9065 - 0.077993 * tk + 2839.319 / tk + 71.595 * log10_tk
                         + (-0.77712 + 0.0028426 * tk + 178.34 / tk) * sqrt_s - 0.07711 * s
                         + 0.0041249 * s * sqrt_s)
    k["kspa"] = 10.0 ** (-171.945 - 0.077993 * tk + 2903.293 / tk + 71.595 * log10_tk
                         + (-0.068393 + 0.0017276 * tk + 88.135 / tk) * sqrt_s - 0.10018 * s
                         + 0.0059415 * s * sqrt_s)
    for name in PRESSURE:
        k[name] = k[name] * pressure_factor(name, t, tk, bar)
    return k


def solve(alk, dic, po4, sil, t, s, dbar):
    """pH (total), CO3--, pCO2 and both saturation states; concentrations in mol kg-1."""
    k = constants(t, s, dbar)
    bt = 0.0004157 * s / 35.0
    st = 0.14 / 96.062 * s / 1.80655
    ft = 0.000067 / 18.998 * s / 1.80655
    ca = 0.02128 / 40.087 * s / 1.80655
    free_per_total = 1.0 / (1.0 + st / k["ks"])
    h = np.full_like(alk, 10.0 ** -8.0)
    for _ in range(NEWTON_ITERATIONS):
        d = h * h + k["k1"] * h + k["k1"] * k["k2"]
        hco3 = dic * k["k1"] * h / d
        co3 = dic * k["k1"] * k["k2"] / d
        boh4 = bt * k["kb"] / (k["kb"] + h)
        oh = k["kw"] / h
        dp = h ** 3 + k["k1p"] * h * h + k["k1p"] * k["k2p"] * h + k["k1p"] * k["k2p"] * k["k3p"]
        palk = po4 * (k["k1p"] * k["k2p"] * h + 2 * k["k1p"] * k["k2p"] * k["k3p"] - h ** 3) / dp
        sialk = sil * k["ksi"] / (k["ksi"] + h)
        hfree = h * free_per_total
        hso4 = st / (1.0 + k["ks"] / hfree)
        hf = ft / (1.0 + k["kf"] / h)
        residual = hco3 + 2 * co3 + boh4 + oh + palk + sialk - hfree - hso4 - hf - alk
        # the carbonate, borate and water terms dominate the slope
        slope = (-dic * k["k1"] * (h * h + 4 * k["k2"] * h + k["k1"] * k["k2"]) / (d * d)
                 - bt * k["kb"] / (k["kb"] + h) ** 2 - k["kw"] / (h * h) - free_per_total)
        h = np.clip(h - residual / slope, 1e-12, 1e-3)
    d = h * h + k["k1"] * h + k["k1"] * k["k2"]
    co3 = dic * k["k1"] * k["k2"] / d
    co2 = dic * h * h / d
    return {
        "ph": -np.log10(h),
        "co3": co3,
        "pco2": co2 / k["k0"] * 1e6,
        "omega_aragonite": ca * co3 / k["kspa"],
        "omega_calcite": ca * co3 / k["kspc"],
    }


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("files", nargs="+")
    parser.add_argument("-o", "--output", required=True)
    args = parser.parse_args(argv)
    # One lazily opened dataset per file; a step is read from the file that holds it.
    by_variable = {}
    for path in args.files:
        ds = xr.open_dataset(path, decode_times=False)
        for name in ("dissic", "talk", "thetao", "so", "po4", "si"):
            if name in ds:
                by_variable.setdefault(name, []).append(ds)
    for parts in by_variable.values():
        parts.sort(key=lambda ds: float(ds["time"][0]))
    first = by_variable["dissic"][0]
    dbar = first["lev"].values[:, None, None]  # pressure taken as depth
    times = np.concatenate([ds["time"].values for ds in by_variable["dissic"]])

    def step_values(name, step):
        for ds in by_variable[name]:
            if step < ds.sizes["time"]:
                return ds[name].isel(time=step).values.astype("f8")
            step -= ds.sizes["time"]
        raise IndexError(step)

    steps = []
    per_kg = 1.0 / DENSITY
    for step in range(times.size):
        values = {name: step_values(name, step) for name in by_variable}
        out = solve(values["talk"] * per_kg, values["dissic"] * per_kg, values["po4"] * per_kg,
                    values["si"] * per_kg, values["thetao"], values["so"], dbar)
        out["co3"] = out["co3"] * DENSITY
        dims = first["dissic"].dims[1:]
        steps.append(xr.Dataset({name: (dims, v.astype("f4")) for name, v in out.items()},
                                coords={"lev": first["lev"], "lat": first["lat"], "lon": first["lon"]}))
    result = xr.concat(steps, dim="time").assign_coords(time=("time", times, first["time"].attrs))
    units = {"ph": "1", "co3": "mol m-3", "pco2": "uatm", "omega_aragonite": "1", "omega_calcite": "1"}
    for name, unit in units.items():
        result[name].attrs["units"] = unit
    encoding = {name: {"zlib": True, "complevel": 1, "_FillValue": np.float32(1e20)} for name in units}
    result.to_netcdf(args.output, encoding=encoding)
    return 0


if __name__ == "__main__":
    sys.exit(main())
