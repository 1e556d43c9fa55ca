#!/usr/bin/env python3
"""Checks that two NetCDF outputs hold the same thing, read with netCDF4 (a reference reader
from PyPI): the same dimensions, the same variables with the same dimensions, type, chunking,
compression (deflate level, shuffle) and attributes, every value identical (bit for bit, fill
and mask included), and the same global attributes except `history`.

Usage: compare_nc_outputs.py EXPECTED.nc ACTUAL.nc
Exit status 0 when they match; otherwise every difference found is printed and it exits 1.
"""
import sys

import netCDF4
import numpy as np


def attributes(item, skip=()):
    return {k: item.getncattr(k) for k in item.ncattrs() if k not in skip}


def same_attribute(a, b):
    if isinstance(a, str) or isinstance(b, str):
        return a == b
    a, b = np.asarray(a), np.asarray(b)
    return a.dtype == b.dtype and a.shape == b.shape and a.tobytes() == b.tobytes()


def compare_attributes(where, expected, actual, problems):
    if sorted(expected) != sorted(actual):
        problems.append(f"{where}: attributes {sorted(expected)} != {sorted(actual)}")
        return
    for key, value in expected.items():
        if not same_attribute(value, actual[key]):
            problems.append(f"{where}: attribute {key}: {value!r} != {actual[key]!r}")


def compare_variable(name, e, a, problems):
    for what, get in [
        ("dimensions", lambda v: v.dimensions),
        ("type", lambda v: v.dtype),
        ("chunking", lambda v: v.chunking()),
        ("filters", lambda v: {k: v.filters().get(k) for k in ("zlib", "complevel", "shuffle")}),
    ]:
        if get(e) != get(a):
            problems.append(f"{name}: {what} {get(e)} != {get(a)}")
    compare_attributes(name, attributes(e), attributes(a), problems)
    e.set_auto_maskandscale(False)
    a.set_auto_maskandscale(False)
    ev, av = np.asarray(e[...]), np.asarray(a[...])
    if ev.shape != av.shape or ev.tobytes() != av.tobytes():
        differ = np.count_nonzero(ev != av) if ev.shape == av.shape else "all"
        problems.append(f"{name}: values differ ({differ} of {ev.size})")


def main():
    if len(sys.argv) != 3:
        sys.exit(__doc__)
    problems = []
    with netCDF4.Dataset(sys.argv[1]) as expected, netCDF4.Dataset(sys.argv[2]) as actual:
        e_dims = {k: (len(d), d.isunlimited()) for k, d in expected.dimensions.items()}
        a_dims = {k: (len(d), d.isunlimited()) for k, d in actual.dimensions.items()}
        if e_dims != a_dims:
            problems.append(f"dimensions {e_dims} != {a_dims}")
        if expected.data_model != actual.data_model:
            problems.append(f"format {expected.data_model} != {actual.data_model}")
        compare_attributes(
            "global", attributes(expected, {"history"}), attributes(actual, {"history"}), problems
        )
        if sorted(expected.variables) != sorted(actual.variables):
            problems.append(f"variables {sorted(expected.variables)} != {sorted(actual.variables)}")
        for name in sorted(set(expected.variables) & set(actual.variables)):
            compare_variable(name, expected.variables[name], actual.variables[name], problems)
        checked = len(expected.variables)
    for line in problems:
        print(f"{sys.argv[2]}: {line}")
    if problems:
        sys.exit(1)
    print(f"{sys.argv[2]}: same as {sys.argv[1]} ({checked} variables; history aside)")


if __name__ == "__main__":
    main()
