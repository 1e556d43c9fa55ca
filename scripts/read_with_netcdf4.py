#!/usr/bin/env python3
"""An independent reader for scripts/bench_read.sh: reads every time step of each data
variable (thetao, so, dissic, talk, po4, si) of the given files with the Python netCDF4
module, one step at a time, raw values (no masking), and prints the seconds taken."""
import sys
import time

import netCDF4

VARIABLES = ("thetao", "so", "dissic", "talk", "po4", "si")

start = time.perf_counter()
for path in sys.argv[1:]:
    with netCDF4.Dataset(path) as ds:
        for name in VARIABLES:
            if name not in ds.variables:
                continue
            var = ds.variables[name]
            var.set_auto_maskandscale(False)
            for step in range(var.shape[0]):
                var[step]
print(f"{time.perf_counter() - start:.3f}")
