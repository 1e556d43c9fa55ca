#!/usr/bin/env python3
"""Write acidscape's synthetic sample model runs (invented data, not model output).

The scenario: the Varnholm Gulf, an invented coastal sea (a western and a
northern coastline, Skerra Island, the Aske river plume, a 50-200 m shelf and a
~4000 m basin), under two invented emission pathways, `pathway-moderate`
(surface DIC +1.0 umol kg-1 per year) and `pathway-steep` (+2.5 umol kg-1 per
year), both counted from 2015 and attenuating with depth.  See
sample-grids/README.md for what each run contains.

Usage (from the repository root):

    # the committed samples (all three runs, both pathways)
    python3 scripts/make_sample_grids.py --out sample-grids

    # choose runs, size (NX NY NZ) and number of time steps
    python3 scripts/make_sample_grids.py --out /tmp/grids \\
        --runs cmip-style,curvilinear --size 40 30 15 --steps 4

    # benchmark preset: 360 x 180 x 50 levels, 12 monthly steps, cmip-style
    # only, lossless, written to the directory given (~200 MB per pathway;
    # never commit it)
    python3 scripts/make_sample_grids.py --large /scratch/acidscape-bench

    # pathway-comparison benchmark preset: the century layout on a 1-degree
    # global grid (the gulf's invented geography stretched over the globe),
    # 360 x 180 x 50 levels, 50 annual steps 2015-2064, lossless; ~4 GB per
    # pathway, never commit it
    python3 scripts/make_sample_grids.py --global-century /scratch/acidscape-compare

Runs:
    cmip-style         rectilinear, z-levels positive down, one variable per
                       file split in time, CMIP/OMIP names and units, noleap
    terrain-following  CF ocean_s_coordinate_g2 with a time-varying free
                       surface, several variables per file, in-situ
                       temperature, concentrations in mmol m-3, 360_day
    curvilinear        rotated patch with 2-D lat/lon, z-levels positive up,
                       conservative temperature, concentrations in umol kg-1,
                       standard calendar

Needs numpy, netCDF4, cftime and gsw (TEOS-10; terrain-following and
curvilinear runs only): pip install -r scripts/requirements-check.txt.
Output is deterministic: the only randomness is a fixed-seed mesoscale
displacement field, identical for both pathways of a run, so the pathways
differ by their DIC trend alone.
"""

from __future__ import annotations

import argparse
import contextlib
import sys
from dataclasses import dataclass
from pathlib import Path

import cftime
import netCDF4
import numpy as np

SYNTHETIC_COMMENT = (
    "SYNTHETIC: invented data for demonstrating and testing acidscape; "
    "not model output, not observations"
)
SCENARIO = "Varnholm Gulf (an invented coastal sea)"
FILL = np.float32(1.0e20)  # CMIP missing value
# Boussinesq-style constant density used to turn umol kg-1 into per-volume
# concentrations, as many models do (common practice; value of our choosing).
REFERENCE_DENSITY = 1026.0  # kg m-3
SEED = 20261202

# Invented domain (degrees): the gulf sits in open water, all land is made up.
LON_WEST, LON_EAST = 200.0, 212.0
LAT_SOUTH, LAT_NORTH = 30.0, 39.0
KM_PER_DEG_LAT = 111.2

PATHWAYS = {
    # name: (surface DIC trend in umol kg-1 per year, description)
    "pathway-moderate": (1.0, "invented moderate emission pathway: surface DIC +1.0 umol kg-1 per year from 2015"),
    "pathway-steep": (2.5, "invented steep emission pathway: surface DIC +2.5 umol kg-1 per year from 2015"),
}
TREND_START_YEAR = 2015.0
TREND_EFOLD_DEPTH = 500.0  # m; anthropogenic DIC attenuates with depth

RUN_NAMES = ("cmip-style", "terrain-following", "curvilinear", "century")
DEFAULT_SIZE = (44, 32, 18)
# the multi-decade run is coarser so that 86 annual steps stay small enough to commit
DEFAULT_SIZES = {"century": (30, 22, 15)}
DEFAULT_STEPS = {"cmip-style": 12, "terrain-following": 6, "curvilinear": 4, "century": 86}
LARGE_SIZE = (360, 180, 50)
LARGE_STEPS = 12
GLOBAL_CENTURY_STEPS = 50
# Months averaged into each annual mean (the global preset keeps two to stay quick to write).
ALL_MONTHS = tuple(range(1, 13))
GLOBAL_MONTHS = (2, 8)


# ----------------------------------------------------------------------------
# Geography of the invented gulf (all in non-dimensional domain coordinates)
# ----------------------------------------------------------------------------


def use_global_domain():
    """Stretches the invented gulf over the whole globe (1-degree benchmark grids)."""
    global LON_WEST, LON_EAST, LAT_SOUTH, LAT_NORTH
    LON_WEST, LON_EAST, LAT_SOUTH, LAT_NORTH = 0.0, 360.0, -90.0, 90.0


def domain_fraction(lon, lat):
    """Position inside the invented domain, 0..1 west-east and south-north."""
    return (lon - LON_WEST) / (LON_EAST - LON_WEST), (lat - LAT_SOUTH) / (LAT_NORTH - LAT_SOUTH)


def km_per_unit(lat):
    """Kilometres per unit of domain fraction (x, y) at a latitude."""
    kx = KM_PER_DEG_LAT * np.cos(np.deg2rad(lat)) * (LON_EAST - LON_WEST)
    ky = KM_PER_DEG_LAT * (LAT_NORTH - LAT_SOUTH)
    return kx, ky


def west_coast_x(yn):
    return 0.13 + 0.06 * np.sin(2.0 * np.pi * 1.3 * yn) + 0.10 * np.clip(yn - 0.7, 0.0, None)


def north_coast_y(xn):
    return 0.90 - 0.06 * np.sin(2.0 * np.pi * 0.9 * xn) + 0.12 * np.clip(xn - 0.6, 0.0, None) ** 1.5


ISLAND_CENTRE = (0.45, 0.52)
ISLAND_RADII = (0.06, 0.05)
RIVER_MOUTH_YN = 0.35


@dataclass
class Geography:
    land: np.ndarray  # bool, (ny, nx)
    bottom_depth: np.ndarray  # m, positive down, NaN on land
    river_distance_km: np.ndarray
    coast_distance_km: np.ndarray


def geography(lon, lat):
    """Land mask, bathymetry and distances for 2-D lon/lat arrays (analytic, O(n))."""
    xn, yn = domain_fraction(lon, lat)
    kx, ky = km_per_unit(lat)
    to_west = (xn - west_coast_x(yn)) * kx
    to_north = (north_coast_y(xn) - yn) * ky
    ix = (xn - ISLAND_CENTRE[0]) / ISLAND_RADII[0]
    iy = (yn - ISLAND_CENTRE[1]) / ISLAND_RADII[1]
    island_r = np.sqrt(ix**2 + iy**2)
    to_island = (island_r - 1.0) * np.minimum(ISLAND_RADII[0] * kx, ISLAND_RADII[1] * ky)
    coast = np.minimum(np.minimum(to_west, to_north), to_island)
    land = coast <= 0.0

    shelf_width_km = 70.0
    shelf = 50.0 + 150.0 * np.clip(coast, 0.0, shelf_width_km) / shelf_width_km
    slope = 3800.0 * np.tanh(np.clip(coast - shelf_width_km, 0.0, None) / 130.0)
    ripple = 60.0 * np.sin(7.0 * xn + 2.0) * np.sin(5.0 * yn + 1.0) * np.tanh(np.clip(coast, 0, None) / 200.0)
    depth = np.clip(shelf + slope + ripple, 50.0, 4000.0)
    depth = np.where(land, np.nan, depth)

    mouth_x = west_coast_x(RIVER_MOUTH_YN)
    river = np.hypot((xn - mouth_x) * kx, (yn - RIVER_MOUTH_YN) * ky)
    return Geography(land, depth, river, np.clip(coast, 0.0, None))


# ----------------------------------------------------------------------------
# Invented water-column properties
# ----------------------------------------------------------------------------


@dataclass
class Water:
    """Properties in the units the chemistry uses: degC (potential), practical salinity, umol kg-1."""

    theta: np.ndarray
    salinity: np.ndarray
    dic: np.ndarray
    alkalinity: np.ndarray
    phosphate: np.ndarray
    silicate: np.ndarray


def mesoscale_field(rng, shape, smoothing_cells):
    """Smooth random field with unit standard deviation (FFT Gaussian filter)."""
    white = rng.standard_normal(shape)
    ky = np.fft.fftfreq(shape[0])[:, None]
    kx = np.fft.fftfreq(shape[1])[None, :]
    kernel = np.exp(-2.0 * (np.pi * smoothing_cells) ** 2 * (kx**2 + ky**2))
    smooth = np.real(np.fft.ifft2(np.fft.fft2(white) * kernel))
    return smooth / max(float(smooth.std()), 1e-12)


class Eddies:
    """Deterministic eddy field: vertical displacement (m) of the water column, oscillating in time."""

    def __init__(self, shape, seed):
        rng = np.random.default_rng(seed)
        cells = max(2.0, min(shape) / 12.0)
        self.a = mesoscale_field(rng, shape, cells)
        self.b = mesoscale_field(rng, shape, cells)
        self.surface_a = mesoscale_field(rng, shape, cells)

    def displacement(self, step):
        phase = 2.0 * np.pi * step / 7.0
        return 25.0 * (np.cos(phase) * self.a + np.sin(phase) * self.b)

    def surface_anomaly(self, step):
        phase = 2.0 * np.pi * step / 5.0
        return np.cos(phase) * self.surface_a + np.sin(phase) * self.b


def water_properties(depth, geo, lat, month, year, dic_trend, eddy_dz, eddy_surface):
    """Invented but realistic properties at depth (m, positive down; broadcast against (ny, nx))."""
    season = np.sin(2.0 * np.pi * (month - 5.0) / 12.0)  # +1 in August, -1 in February
    _, yn = domain_fraction(0.0, lat)

    # eddies heave the thermocline; all tracers move with the water
    heave = eddy_dz * np.exp(-(((depth - 300.0) / 400.0) ** 2))
    z = np.clip(depth + heave, 0.0, None)

    mixed_layer = 60.0 - 40.0 * season
    in_mixed_layer = 0.5 * (1.0 - np.tanh((depth - mixed_layer) / 15.0))

    # winter mixing carries the mixed-layer-base temperature to the surface;
    # summer heating adds a shallow warm cap (surface ~18 degC in February, ~24 in August)
    annual_sst = 21.0 - 1.5 * (yn - 0.5) * 2.0
    deep_t = 2.0
    mixed = np.maximum(z, mixed_layer)
    shape = 0.4 * np.exp(-mixed / 900.0) + 0.3 * (1.0 - np.tanh((mixed - 150.0) / 70.0))
    theta = deep_t + (annual_sst - deep_t) * shape
    theta = theta + 3.0 * np.maximum(season, 0.0) * np.exp(-depth / 25.0) + 0.25 * eddy_surface * in_mixed_layer

    plume_season = 1.0 + 0.4 * np.cos(2.0 * np.pi * (month - 4.5) / 12.0)
    plume = np.exp(-geo.river_distance_km / 110.0) * plume_season  # 0..1.4
    surface_fresh = 2.2 * plume + 0.3 * np.exp(-geo.coast_distance_km / 80.0)
    surface_s = 35.2 - surface_fresh * np.exp(-depth / 20.0)
    salinity = 34.68 + (surface_s - 34.68) * np.exp(-z / 400.0)

    # a river end member of 900 umol kg-1 keeps plume alkalinity realistic
    alkalinity = 900.0 + 1405.0 * salinity / 35.2 + 90.0 * (1.0 - np.exp(-z / 1200.0))
    # TA - DIC: ~285 at the surface; at depth ~85 (north) to ~105 (south), and
    # coastal upwelling lifts low-excess water near the coasts (shallower horizons)
    deep_excess = 95.0 - 20.0 * (yn - 0.5)
    excess_scale = 300.0 - 120.0 * np.exp(-geo.coast_distance_km / 100.0)
    excess = deep_excess + (285.0 - deep_excess) * np.exp(-z / excess_scale)
    bloom = -12.0 * np.sin(2.0 * np.pi * (month - 4.0) / 12.0) * in_mixed_layer
    added = dic_trend * (year - TREND_START_YEAR) * np.exp(-depth / TREND_EFOLD_DEPTH)
    dic = alkalinity - excess + bloom + added

    phosphate = 0.2 + 2.3 * (1.0 - np.exp(-z / 700.0)) + 0.25 * plume * np.exp(-depth / 20.0)
    silicate = 1.5 + 115.0 * (1.0 - np.exp(-z / 1500.0)) + 8.0 * plume * np.exp(-depth / 20.0)
    return Water(theta, salinity, dic, alkalinity, phosphate, silicate)


# ----------------------------------------------------------------------------
# Time axes
# ----------------------------------------------------------------------------


@dataclass
class MonthlyAxis:
    units: str
    calendar: str
    months: list  # (year, month)
    values: np.ndarray
    bounds: np.ndarray

    def fractional_year(self, step):
        year, month = self.months[step]
        return year + (month - 0.5) / 12.0

    def part(self, first, stop):
        """The steps first..stop-1 as an axis of their own (one file of a run split in time)."""
        return MonthlyAxis(self.units, self.calendar, self.months[first:stop], self.values[first:stop],
                           self.bounds[first:stop])


def monthly_axis(first_year, first_month, steps, calendar):
    units = f"days since {first_year:04d}-01-01 00:00:00"
    months, starts, ends = [], [], []
    year, month = first_year, first_month
    for _ in range(steps):
        nxt = (year + month // 12, month % 12 + 1)
        months.append((year, month))
        starts.append(cftime.datetime(year, month, 1, calendar=calendar))
        ends.append(cftime.datetime(nxt[0], nxt[1], 1, calendar=calendar))
        year, month = nxt
    start_num = np.asarray(cftime.date2num(starts, units, calendar=calendar), dtype="f8")
    end_num = np.asarray(cftime.date2num(ends, units, calendar=calendar), dtype="f8")
    bounds = np.stack([start_num, end_num], axis=1)
    return MonthlyAxis(units, calendar, months, 0.5 * (start_num + end_num), bounds)


# ----------------------------------------------------------------------------
# NetCDF helpers
# ----------------------------------------------------------------------------


def open_dataset(path, title, pathway, run, history, extra=None):
    path.parent.mkdir(parents=True, exist_ok=True)
    ds = netCDF4.Dataset(path, "w", format="NETCDF4")
    attrs = {
        "Conventions": "CF-1.10",
        "title": title,
        "comment": SYNTHETIC_COMMENT,
        "institution": "acidscape sample data (synthetic)",
        "source": "scripts/make_sample_grids.py",
        "history": history,
        "scenario": SCENARIO,
        "pathway": pathway,
        "pathway_description": PATHWAYS[pathway][1],
        "sample_run": run,
    }
    attrs.update(extra or {})
    ds.setncatts(attrs)
    return ds


def add_var(ds, name, dims, attrs, data, dtype="f4", digits=None, fill=True, chunks=None):
    """Create a deflated variable, set its attributes and write data (NaN becomes _FillValue)."""
    kwargs = {"zlib": True, "complevel": 6, "shuffle": True}
    kwargs["fill_value"] = FILL if fill else False
    if digits is not None:
        kwargs["least_significant_digit"] = digits
    if chunks is not None:
        kwargs["chunksizes"] = chunks
    var = ds.createVariable(name, dtype, dims, **kwargs)
    if fill:
        attrs = {"missing_value": FILL, **attrs}
    var.setncatts(attrs)
    if data is not None:
        write(var, data)
    return var


def write(var, data, index=slice(None)):
    arr = np.asarray(data)
    if np.issubdtype(arr.dtype, np.floating) and np.isnan(arr).any():
        arr = np.ma.masked_invalid(arr)
    var[index] = arr


def add_time(ds, axis):
    ds.createDimension("time", None)
    if "bnds" not in ds.dimensions:
        ds.createDimension("bnds", 2)
    attrs = {
        "standard_name": "time",
        "long_name": "time",
        "axis": "T",
        "units": axis.units,
        "calendar": axis.calendar,
        "bounds": "time_bnds",
    }
    add_var(ds, "time", ("time",), attrs, axis.values, dtype="f8", fill=False)
    add_var(ds, "time_bnds", ("time", "bnds"), {}, axis.bounds, dtype="f8", fill=False)


def add_rectilinear_horizontal(ds, lon, lat):
    ds.createDimension("lat", lat.size)
    ds.createDimension("lon", lon.size)
    if "bnds" not in ds.dimensions:
        ds.createDimension("bnds", 2)
    dlat, dlon = lat[1] - lat[0], lon[1] - lon[0]
    add_var(ds, "lat", ("lat",), {"standard_name": "latitude", "long_name": "latitude", "units": "degrees_north",
                                  "axis": "Y", "bounds": "lat_bnds"}, lat, dtype="f8", fill=False)
    add_var(ds, "lat_bnds", ("lat", "bnds"), {}, np.stack([lat - dlat / 2, lat + dlat / 2], 1), dtype="f8", fill=False)
    add_var(ds, "lon", ("lon",), {"standard_name": "longitude", "long_name": "longitude", "units": "degrees_east",
                                  "axis": "X", "bounds": "lon_bnds"}, lon, dtype="f8", fill=False)
    add_var(ds, "lon_bnds", ("lon", "bnds"), {}, np.stack([lon - dlon / 2, lon + dlon / 2], 1), dtype="f8", fill=False)


def add_depth_levels(ds, name, centres, interfaces, positive):
    """z-levels in metres; positive 'down' writes depths, 'up' writes negative heights."""
    sign = 1.0 if positive == "down" else -1.0
    ds.createDimension(name, centres.size)
    if "bnds" not in ds.dimensions:
        ds.createDimension("bnds", 2)
    attrs = {
        "standard_name": "depth" if positive == "down" else "altitude",
        "long_name": "depth of layer centre" if positive == "down" else "height of layer centre",
        "units": "m",
        "positive": positive,
        "axis": "Z",
        "bounds": f"{name}_bnds",
    }
    add_var(ds, name, (name,), attrs, sign * centres, dtype="f8", fill=False)
    bnds = sign * np.stack([interfaces[:-1], interfaces[1:]], axis=1)
    add_var(ds, f"{name}_bnds", (name, "bnds"), {}, bnds, dtype="f8", fill=False)


def level_interfaces(nz, bottom=4200.0):
    """z-level interfaces (m), thin near the surface and thick at depth."""
    stretch = 4.0
    k = np.arange(nz + 1) / nz
    return bottom * (np.exp(stretch * k) - 1.0) / (np.exp(stretch) - 1.0)


def rectilinear_grid(nx, ny):
    lon = LON_WEST + (np.arange(nx) + 0.5) * (LON_EAST - LON_WEST) / nx
    lat = LAT_SOUTH + (np.arange(ny) + 0.5) * (LAT_NORTH - LAT_SOUTH) / ny
    return lon, lat


def cell_area_rectilinear(lon, lat):
    """Spherical cell area (m2) for a regular lon/lat grid, Earth radius 6371 km (common practice)."""
    radius = 6.371e6
    dlon = np.deg2rad(lon[1] - lon[0])
    half = (lat[1] - lat[0]) / 2.0
    band = np.sin(np.deg2rad(lat + half)) - np.sin(np.deg2rad(lat - half))
    return np.broadcast_to((radius**2 * dlon * band)[:, None], (lat.size, lon.size)).copy()


def month_tag(axis, first, last):
    (y0, m0), (y1, m1) = axis.months[first], axis.months[last]
    return f"{y0:04d}{m0:02d}-{y1:04d}{m1:02d}"


def split_in_two(steps):
    half = (steps + 1) // 2
    parts = [(0, half)]
    if steps > half:
        parts.append((half, steps))
    return parts


def umol_per_kg_to_mol_per_m3(values):
    return values * 1.0e-6 * REFERENCE_DENSITY


def density_note(unit):
    return (f"umol kg-1 fields converted to {unit} with a constant reference density of "
            f"{REFERENCE_DENSITY:g} kg m-3 (divide by it to recover per-mass values)")


# ----------------------------------------------------------------------------
# Run 1: cmip-style
# ----------------------------------------------------------------------------

CMIP_VARIABLES = {
    # name: (attributes, least significant digit)
    "thetao": ({"standard_name": "sea_water_potential_temperature", "long_name": "Sea Water Potential Temperature",
                "units": "degC"}, 2),
    "so": ({"standard_name": "sea_water_salinity", "long_name": "Sea Water Salinity", "units": "0.001"}, 3),
    "dissic": ({"standard_name": "mole_concentration_of_dissolved_inorganic_carbon_in_sea_water",
                "long_name": "Dissolved Inorganic Carbon Concentration", "units": "mol m-3"}, 4),
    "talk": ({"standard_name": "sea_water_alkalinity_expressed_as_mole_equivalent", "long_name": "Total Alkalinity",
              "units": "mol m-3"}, 4),
    "po4": ({"standard_name": "mole_concentration_of_dissolved_inorganic_phosphorus_in_sea_water",
             "long_name": "Total Dissolved Inorganic Phosphorus Concentration", "units": "mol m-3"}, 5),
    "si": ({"standard_name": "mole_concentration_of_dissolved_inorganic_silicon_in_sea_water",
            "long_name": "Total Dissolved Inorganic Silicon Concentration", "units": "mol m-3"}, 4),
}


def cmip_values(name, water):
    return {
        "thetao": water.theta,
        "so": water.salinity,
        "dissic": umol_per_kg_to_mol_per_m3(water.dic),
        "talk": umol_per_kg_to_mol_per_m3(water.alkalinity),
        "po4": umol_per_kg_to_mol_per_m3(water.phosphate),
        "si": umol_per_kg_to_mol_per_m3(water.silicate),
    }[name]


@dataclass
class Job:
    out: Path
    size: tuple
    steps: int
    history: str
    pathways: list
    quiet: bool
    lossless: bool
    months: tuple = ALL_MONTHS

    def digits(self, digits):
        """Decimal places kept by quantisation, or None (keep every bit) for lossless output."""
        return None if self.lossless else digits

    def report(self, run, pathway, count):
        if not self.quiet:
            print(f"{run} {pathway}: {count} variables, {self.steps} steps", file=sys.stderr)


def write_cmip_style(job):
    nx, ny, nz = job.size
    lon, lat = rectilinear_grid(nx, ny)
    lon2, lat2 = np.meshgrid(lon, lat)
    geo = geography(lon2, lat2)
    interfaces = level_interfaces(nz)
    centres = 0.5 * (interfaces[:-1] + interfaces[1:])
    # a z-level cell is ocean when its centre lies above the sea floor
    wet = centres[:, None, None] < geo.bottom_depth[None, :, :]
    axis = monthly_axis(2015, 1, job.steps, "noleap")
    eddies = Eddies((ny, nx), SEED + 1)
    written = []
    for pathway in job.pathways:
        trend = PATHWAYS[pathway][0]
        folder = job.out / "cmip-style" / pathway
        extra = {"frequency": "mon", "concentration_conversion": density_note("mol m-3"),
                 "external_variables": "areacello"}
        for first, stop in split_in_two(job.steps):
            part = axis.part(first, stop)
            with contextlib.ExitStack() as files:
                variables = {}
                for name, (attrs, digits) in CMIP_VARIABLES.items():
                    path = folder / f"{name}_{pathway}_{month_tag(axis, first, stop - 1)}.nc"
                    title = f"Varnholm Gulf synthetic run, {pathway}, {attrs['long_name']}"
                    ds = files.enter_context(open_dataset(path, title, pathway, "cmip-style", job.history, extra))
                    add_time(ds, part)
                    add_depth_levels(ds, "lev", centres, interfaces, "down")
                    add_rectilinear_horizontal(ds, lon, lat)
                    full = {**attrs, "cell_methods": "area: mean where sea time: mean",
                            "cell_measures": "area: areacello"}
                    variables[name] = add_var(ds, name, ("time", "lev", "lat", "lon"), full, None,
                                              digits=job.digits(digits), chunks=(1, nz, ny, nx))
                    written.append(path)
                for local, step in enumerate(range(first, stop)):
                    water = water_properties(centres[:, None, None], geo, lat2, axis.months[step][1],
                                             axis.fractional_year(step), trend, eddies.displacement(step),
                                             eddies.surface_anomaly(step))
                    for name, var in variables.items():
                        write(var, np.where(wet, cmip_values(name, water), np.nan).astype("f4"), local)
        written += write_cmip_fixed(folder, pathway, lon, lat, geo, job.history)
        job.report("cmip-style", pathway, len(CMIP_VARIABLES))
    return written


def write_cmip_fixed(folder, pathway, lon, lat, geo, history, run="cmip-style"):
    area_path = folder / f"areacello_{pathway}.nc"
    with open_dataset(area_path, "Varnholm Gulf synthetic run, grid-cell area", pathway, run,
                      history, {"frequency": "fx"}) as ds:
        add_rectilinear_horizontal(ds, lon, lat)
        add_var(ds, "areacello", ("lat", "lon"),
                {"standard_name": "cell_area", "long_name": "Grid-Cell Area for Ocean Variables", "units": "m2",
                 "cell_methods": "area: sum"}, cell_area_rectilinear(lon, lat))
    depth_path = folder / f"deptho_{pathway}.nc"
    with open_dataset(depth_path, "Varnholm Gulf synthetic run, sea floor depth", pathway, run,
                      history, {"frequency": "fx", "external_variables": "areacello"}) as ds:
        add_rectilinear_horizontal(ds, lon, lat)
        add_var(ds, "deptho", ("lat", "lon"),
                {"standard_name": "sea_floor_depth_below_geoid", "long_name": "Sea Floor Depth Below Geoid",
                 "units": "m", "cell_methods": "area: mean where sea", "cell_measures": "area: areacello"},
                geo.bottom_depth, digits=1)
    return [area_path, depth_path]


# ----------------------------------------------------------------------------
# Run 2: terrain-following (CF ocean_s_coordinate_g2)
# ----------------------------------------------------------------------------

CRITICAL_DEPTH = 50.0  # m, depth_c of the s-coordinate
STRETCH_SURFACE = 4.0
STRETCH_LINEAR_SHARE = 0.25  # keeps the top layer ~30 m thick over the basin


def s_coordinate(nz):
    """Layer-centre s (-1 bottom .. 0 surface) and our own stretching C(s) (surface refined)."""
    s = (np.arange(nz) + 0.5) / nz - 1.0
    surface_refined = (1.0 - np.cosh(STRETCH_SURFACE * s)) / (np.cosh(STRETCH_SURFACE) - 1.0)
    c = STRETCH_LINEAR_SHARE * s + (1.0 - STRETCH_LINEAR_SHARE) * surface_refined
    return s, c


def s_coordinate_height(s, c, eta, depth):
    """Height (m, positive up) of s-levels: CF Appendix D, ocean s-coordinate generic form 2."""
    stretched = (CRITICAL_DEPTH * s[:, None, None] + depth[None] * c[:, None, None]) / (CRITICAL_DEPTH + depth[None])
    return eta[None] + (eta[None] + depth[None]) * stretched


def free_surface(step, lon2, lat2, land):
    """Invented sea-surface height (m): a seasonal tilt plus a standing oscillation."""
    xn, yn = domain_fraction(lon2, lat2)
    eta = 0.15 * np.sin(2.0 * np.pi * step / 6.0) * (xn - 0.5) + 0.1 * np.cos(2.0 * np.pi * step / 3.0) * (yn - 0.5)
    return np.where(land, np.nan, eta)


def teos10_conversions(depth, lon2, lat2, water):
    """Absolute salinity, conservative and in-situ temperature at depth (m, down), via TEOS-10 (gsw)."""
    import gsw

    pressure = gsw.p_from_z(-depth, lat2)
    absolute = gsw.SA_from_SP(water.salinity, pressure, lon2, lat2)
    conservative = gsw.CT_from_pt(absolute, water.theta)
    in_situ = gsw.t_from_CT(absolute, conservative, pressure)
    return conservative, in_situ


TERRAIN_VARIABLES = {
    "temperature": ({"standard_name": "sea_water_temperature", "long_name": "in-situ sea water temperature",
                     "units": "degree_Celsius"}, 2),
    "salinity": ({"standard_name": "sea_water_salinity", "long_name": "sea water salinity (practical)",
                  "units": "1e-3"}, 3),
    "dic": ({"standard_name": "mole_concentration_of_dissolved_inorganic_carbon_in_sea_water",
             "long_name": "dissolved inorganic carbon", "units": "mmol m-3"}, 1),
    "alkalinity": ({"standard_name": "sea_water_alkalinity_expressed_as_mole_equivalent",
                    "long_name": "total alkalinity", "units": "mmol m-3"}, 1),
    "phosphate": ({"standard_name": "mole_concentration_of_phosphate_in_sea_water", "long_name": "phosphate",
                   "units": "mmol m-3"}, 2),
    "silicate": ({"standard_name": "mole_concentration_of_silicate_in_sea_water", "long_name": "silicate",
                  "units": "mmol m-3"}, 1),
}


def write_terrain_following(job):
    nx, ny, nz = job.size
    lon, lat = rectilinear_grid(nx, ny)
    lon2, lat2 = np.meshgrid(lon, lat)
    geo = geography(lon2, lat2)
    s, c = s_coordinate(nz)
    axis = monthly_axis(2050, 1, job.steps, "360_day")
    eddies = Eddies((ny, nx), SEED + 2)
    written = []
    for pathway in job.pathways:
        trend = PATHWAYS[pathway][0]
        folder = job.out / "terrain-following" / pathway
        for first, stop in split_in_two(job.steps):
            path = folder / f"terrain_{pathway}_{month_tag(axis, first, stop - 1)}.nc"
            part = axis.part(first, stop)
            title = f"Varnholm Gulf synthetic run on a terrain-following grid, {pathway}"
            extra = {"concentration_conversion": density_note("mmol m-3")}
            with open_dataset(path, title, pathway, "terrain-following", job.history, extra) as ds:
                add_time(ds, part)
                ds.createDimension("s_rho", nz)
                add_var(ds, "s_rho", ("s_rho",),
                        {"standard_name": "ocean_s_coordinate_g2", "long_name": "s-coordinate at layer centres",
                         "units": "1", "positive": "up", "axis": "Z",
                         "formula_terms": "s: s_rho C: Cs_r eta: zeta depth: h depth_c: hc",
                         "computed_standard_name": "altitude"}, s, dtype="f8", fill=False)
                add_var(ds, "Cs_r", ("s_rho",), {"long_name": "s-coordinate stretching function at layer centres",
                                                 "units": "1"}, c, dtype="f8", fill=False)
                add_var(ds, "hc", (), {"long_name": "critical depth of the s-coordinate", "units": "m"},
                        CRITICAL_DEPTH, dtype="f8", fill=False)
                add_rectilinear_horizontal(ds, lon, lat)
                add_var(ds, "h", ("lat", "lon"), {"standard_name": "sea_floor_depth_below_geoid",
                                                  "long_name": "bathymetry at cell centres", "units": "m"},
                        geo.bottom_depth, digits=1)
                zeta = add_var(ds, "zeta", ("time", "lat", "lon"),
                               {"standard_name": "sea_surface_height_above_geoid", "long_name": "free surface",
                                "units": "m", "cell_methods": "time: mean"}, None, digits=4)
                variables = {}
                for name, (attrs, digits) in TERRAIN_VARIABLES.items():
                    variables[name] = add_var(ds, name, ("time", "s_rho", "lat", "lon"),
                                              {**attrs, "cell_methods": "time: mean"}, None,
                                              digits=job.digits(digits), chunks=(1, nz, ny, nx))
                depth_filled = np.nan_to_num(geo.bottom_depth, nan=50.0)
                for local, step in enumerate(range(first, stop)):
                    eta = free_surface(step, lon2, lat2, geo.land)
                    write(zeta, eta, local)
                    height = s_coordinate_height(s, c, np.nan_to_num(eta), depth_filled)
                    depth = np.clip(-height, 0.0, None)
                    water = water_properties(depth, geo, lat2, axis.months[step][1], axis.fractional_year(step),
                                             trend, eddies.displacement(step), eddies.surface_anomaly(step))
                    _, in_situ = teos10_conversions(depth, lon2, lat2, water)
                    per_volume = REFERENCE_DENSITY * 1.0e-3  # umol kg-1 -> mmol m-3
                    values = {
                        "temperature": in_situ,
                        "salinity": water.salinity,
                        "dic": water.dic * per_volume,
                        "alkalinity": water.alkalinity * per_volume,
                        "phosphate": water.phosphate * per_volume,
                        "silicate": water.silicate * per_volume,
                    }
                    for name, var in variables.items():
                        write(var, np.where(geo.land[None], np.nan, values[name]).astype("f4"), local)
            written.append(path)
        job.report("terrain-following", pathway, len(TERRAIN_VARIABLES))
    return written


# ----------------------------------------------------------------------------
# Run 3: curvilinear (rotated patch, 2-D lat/lon)
# ----------------------------------------------------------------------------

PATCH_CENTRE = (206.0, 34.5)
PATCH_ROTATION_DEG = 30.0
PATCH_SPACING_DEG = 0.15


def patch_position(i, j, nx, ny):
    """lon/lat of (fractional) cell indices on the rotated patch."""
    x = (i - (nx - 1) / 2.0) * PATCH_SPACING_DEG
    y = (j - (ny - 1) / 2.0) * PATCH_SPACING_DEG
    angle = np.deg2rad(PATCH_ROTATION_DEG)
    lat = PATCH_CENTRE[1] + x * np.sin(angle) + y * np.cos(angle)
    lon = PATCH_CENTRE[0] + (x * np.cos(angle) - y * np.sin(angle)) / np.cos(np.deg2rad(lat))
    return lon, lat


def spherical_quad_area(lon_corners, lat_corners):
    """Approximate area (m2) of small quadrilaterals: shoelace on a local tangent plane."""
    radius = 6.371e6
    lat0 = np.deg2rad(lat_corners.mean(axis=-1, keepdims=True))
    x = np.deg2rad(lon_corners) * np.cos(lat0) * radius
    y = np.deg2rad(lat_corners) * radius
    return 0.5 * np.abs(np.sum(x * np.roll(y, -1, axis=-1) - np.roll(x, -1, axis=-1) * y, axis=-1))


CURVILINEAR_VARIABLES = {
    "bigthetao": ({"standard_name": "sea_water_conservative_temperature",
                   "long_name": "Sea Water Conservative Temperature", "units": "degC"}, 2),
    "so": ({"standard_name": "sea_water_practical_salinity", "long_name": "Sea Water Practical Salinity",
            "units": "1"}, 3),
    "DIC": ({"standard_name": "moles_of_dissolved_inorganic_carbon_per_unit_mass_in_sea_water",
             "long_name": "dissolved inorganic carbon", "units": "umol kg-1"}, 1),
    "ALK": ({"standard_name": "sea_water_alkalinity_per_unit_mass_expressed_as_mole_equivalent",
             "long_name": "total alkalinity", "units": "umol kg-1"}, 1),
    "PO4": ({"standard_name": "moles_of_phosphate_per_unit_mass_in_sea_water", "long_name": "phosphate",
             "units": "umol kg-1"}, 2),
    "SIL": ({"standard_name": "moles_of_silicate_per_unit_mass_in_sea_water", "long_name": "silicate",
             "units": "umol kg-1"}, 1),
}


def write_curvilinear(job):
    nx, ny, nz = job.size
    steps = job.steps
    jj, ii = np.meshgrid(np.arange(ny, dtype="f8"), np.arange(nx, dtype="f8"), indexing="ij")
    lon2, lat2 = patch_position(ii, jj, nx, ny)
    offsets = [(-0.5, -0.5), (0.5, -0.5), (0.5, 0.5), (-0.5, 0.5)]  # counter-clockwise corners
    corners = [patch_position(ii + di, jj + dj, nx, ny) for di, dj in offsets]
    lon_corners = np.stack([cl for cl, _ in corners], axis=-1)
    lat_corners = np.stack([ct for _, ct in corners], axis=-1)
    geo = geography(lon2, lat2)
    interfaces = level_interfaces(nz)
    centres = 0.5 * (interfaces[:-1] + interfaces[1:])
    wet = centres[:, None, None] < geo.bottom_depth[None, :, :]
    axis = monthly_axis(2095, 1, steps, "standard")
    eddies = Eddies((ny, nx), SEED + 3)
    written = []
    for pathway in job.pathways:
        trend = PATHWAYS[pathway][0]
        path = job.out / "curvilinear" / pathway / f"curvilinear_{pathway}_{month_tag(axis, 0, steps - 1)}.nc"
        title = f"Varnholm Gulf synthetic run on a rotated curvilinear patch, {pathway}"
        with open_dataset(path, title, pathway, "curvilinear", job.history) as ds:
            add_time(ds, axis)
            add_depth_levels(ds, "lev", centres, interfaces, "up")
            ds.createDimension("j", ny)
            ds.createDimension("i", nx)
            ds.createDimension("vertices", 4)
            add_var(ds, "lat", ("j", "i"), {"standard_name": "latitude", "long_name": "latitude",
                                            "units": "degrees_north", "bounds": "lat_vertices"},
                    lat2, dtype="f8", fill=False)
            add_var(ds, "lon", ("j", "i"), {"standard_name": "longitude", "long_name": "longitude",
                                            "units": "degrees_east", "bounds": "lon_vertices"},
                    lon2, dtype="f8", fill=False)
            add_var(ds, "lat_vertices", ("j", "i", "vertices"), {}, lat_corners, dtype="f8", fill=False)
            add_var(ds, "lon_vertices", ("j", "i", "vertices"), {}, lon_corners, dtype="f8", fill=False)
            add_var(ds, "areacello", ("j", "i"),
                    {"standard_name": "cell_area", "long_name": "Grid-Cell Area for Ocean Variables", "units": "m2",
                     "cell_methods": "area: sum", "coordinates": "lat lon"},
                    spherical_quad_area(lon_corners, lat_corners))
            add_var(ds, "deptho", ("j", "i"),
                    {"standard_name": "sea_floor_depth_below_geoid", "long_name": "Sea Floor Depth Below Geoid",
                     "units": "m", "cell_methods": "area: mean where sea", "cell_measures": "area: areacello",
                     "coordinates": "lat lon"}, geo.bottom_depth, digits=1)
            variables = {}
            for name, (attrs, digits) in CURVILINEAR_VARIABLES.items():
                full = {**attrs, "coordinates": "lat lon", "cell_methods": "area: mean where sea time: mean",
                        "cell_measures": "area: areacello"}
                variables[name] = add_var(ds, name, ("time", "lev", "j", "i"), full, None,
                                          digits=job.digits(digits), chunks=(1, nz, ny, nx))
            depth3 = np.broadcast_to(centres[:, None, None], (nz, ny, nx))
            for step in range(steps):
                water = water_properties(depth3, geo, lat2, axis.months[step][1], axis.fractional_year(step), trend,
                                         eddies.displacement(step), eddies.surface_anomaly(step))
                conservative, _ = teos10_conversions(depth3, lon2, lat2, water)
                values = {"bigthetao": conservative, "so": water.salinity, "DIC": water.dic,
                          "ALK": water.alkalinity, "PO4": water.phosphate, "SIL": water.silicate}
                for name, var in variables.items():
                    write(var, np.where(wet, values[name], np.nan).astype("f4"), step)
        written.append(path)
        job.report("curvilinear", pathway, len(CURVILINEAR_VARIABLES))
    return written


# ----------------------------------------------------------------------------
# Run 4: century (cmip-style layout, annual means 2015-2100)
# ----------------------------------------------------------------------------

CENTURY_FIRST_YEAR = 2015
CENTURY_SPLIT_YEAR = 2050  # files 2015-2049 and 2050-2100, as CMIP splits long runs


@dataclass
class YearlyAxis:
    units: str
    calendar: str
    years: list
    values: np.ndarray
    bounds: np.ndarray

    def part(self, first, stop):
        return YearlyAxis(self.units, self.calendar, self.years[first:stop], self.values[first:stop],
                          self.bounds[first:stop])


def yearly_axis(first_year, steps, calendar):
    units = f"days since {first_year:04d}-01-01 00:00:00"
    years = list(range(first_year, first_year + steps))
    starts = [cftime.datetime(y, 1, 1, calendar=calendar) for y in years]
    ends = [cftime.datetime(y + 1, 1, 1, calendar=calendar) for y in years]
    start_num = np.asarray(cftime.date2num(starts, units, calendar=calendar), dtype="f8")
    end_num = np.asarray(cftime.date2num(ends, units, calendar=calendar), dtype="f8")
    return YearlyAxis(units, calendar, years, 0.5 * (start_num + end_num), np.stack([start_num, end_num], axis=1))


class YearToYear:
    """Invented year-to-year variability: smooth AR(1) anomalies (lag-1 correlation 0.5), fixed seed."""

    def __init__(self, shape, years, seed):
        rng = np.random.default_rng(seed)
        cells = max(2.0, min(shape) / 6.0)
        self.temperature, self.dic = [], []
        t = np.zeros(shape)
        d = np.zeros(shape)
        for _ in range(years):
            t = 0.5 * t + np.sqrt(0.75) * mesoscale_field(rng, shape, cells)
            d = 0.5 * d + np.sqrt(0.75) * mesoscale_field(rng, shape, cells)
            self.temperature.append(0.35 * t)  # degC at the surface
            self.dic.append(4.0 * d)  # umol kg-1 at the surface


def annual_mean_water(depth, geo, lat2, year, trend, eddies, year_index, variability, months_used=ALL_MONTHS):
    """Mean of the monthly states of a year (all twelve unless told), plus that year's invented anomalies."""
    months = []
    for month in months_used:
        step = 12 * year_index + month - 1
        months.append(water_properties(depth, geo, lat2, month, year + (month - 0.5) / 12.0, trend,
                                       eddies.displacement(step), eddies.surface_anomaly(step)))
    mean = Water(*(np.mean([getattr(w, f) for w in months], axis=0) for f in Water.__dataclass_fields__))
    mean.theta = mean.theta + variability.temperature[year_index] * np.exp(-depth / 80.0)
    mean.dic = mean.dic + variability.dic[year_index] * np.exp(-depth / 150.0)
    return mean


def write_century(job):
    nx, ny, nz = job.size
    lon, lat = rectilinear_grid(nx, ny)
    lon2, lat2 = np.meshgrid(lon, lat)
    geo = geography(lon2, lat2)
    interfaces = level_interfaces(nz)
    centres = 0.5 * (interfaces[:-1] + interfaces[1:])
    wet = centres[:, None, None] < geo.bottom_depth[None, :, :]
    axis = yearly_axis(CENTURY_FIRST_YEAR, job.steps, "noleap")
    eddies = Eddies((ny, nx), SEED + 4)
    variability = YearToYear((ny, nx), job.steps, SEED + 5)
    split = min(max(CENTURY_SPLIT_YEAR - CENTURY_FIRST_YEAR, 1), job.steps)
    parts = [(0, split)] + ([(split, job.steps)] if job.steps > split else [])
    written = []
    for pathway in job.pathways:
        trend = PATHWAYS[pathway][0]
        folder = job.out / "century" / pathway
        extra = {"frequency": "yr", "concentration_conversion": density_note("mol m-3"),
                 "external_variables": "areacello"}
        for first, stop in parts:
            part = axis.part(first, stop)
            tag = f"{axis.years[first]:04d}-{axis.years[stop - 1]:04d}"
            with contextlib.ExitStack() as files:
                variables = {}
                for name, (attrs, digits) in CMIP_VARIABLES.items():
                    path = folder / f"{name}_{pathway}_{tag}.nc"
                    title = f"Varnholm Gulf synthetic run, annual means, {pathway}, {attrs['long_name']}"
                    ds = files.enter_context(open_dataset(path, title, pathway, "century", job.history, extra))
                    add_time(ds, part)
                    add_depth_levels(ds, "lev", centres, interfaces, "down")
                    add_rectilinear_horizontal(ds, lon, lat)
                    full = {**attrs, "cell_methods": "area: mean where sea time: mean",
                            "cell_measures": "area: areacello"}
                    variables[name] = add_var(ds, name, ("time", "lev", "lat", "lon"), full, None,
                                              digits=job.digits(digits), chunks=(1, nz, ny, nx))
                    written.append(path)
                for local, step in enumerate(range(first, stop)):
                    water = annual_mean_water(centres[:, None, None], geo, lat2, axis.years[step], trend, eddies,
                                              step, variability, job.months)
                    for name, var in variables.items():
                        write(var, np.where(wet, cmip_values(name, water), np.nan).astype("f4"), local)
        written += write_cmip_fixed(folder, pathway, lon, lat, geo, job.history, "century")
        job.report("century", pathway, len(CMIP_VARIABLES))
    written += write_region_mask(job.out / "century", lon, lat, geo, job.history)
    return written


REGION_CLASSES = ("northern_shelf", "aske_river_plume_coast", "skerra_island_shelf", "open_basin")


def region_classes(lon2, lat2, geo):
    """Region of each column from the invented bathymetry and geography, flag values 1 to 4 in
    this order: the shelf (<= 200 m) of the northern coast, the water within 220 km of the
    Aske River mouth shallower than 1000 m, the shelf around Skerra Island, the basin deeper
    than 1000 m; the first rule that holds decides; columns no rule holds are in no region."""
    xn, yn = domain_fraction(lon2, lat2)
    island_r = np.hypot((xn - ISLAND_CENTRE[0]) / ISLAND_RADII[0], (yn - ISLAND_CENTRE[1]) / ISLAND_RADII[1])
    depth = np.where(geo.land, np.inf, geo.bottom_depth)
    classes = np.zeros(lon2.shape, dtype="i1")
    rules = [
        (depth <= 200.0) & (yn >= 0.65),
        (geo.river_distance_km <= 220.0) & (depth <= 1000.0),
        (depth <= 200.0) & (island_r <= 3.0),
        np.isfinite(depth) & (depth > 1000.0),
    ]
    for value, rule in reversed(list(enumerate(rules, start=1))):
        classes = np.where(rule & ~geo.land, value, classes)
    return classes


def write_region_mask(folder, lon, lat, geo, history):
    """An integer region mask on the run's grid (CF flag_values/flag_meanings), for
    `acidscape compare --regions FILE`."""
    path = folder / "varnholm-regions-mask.nc"
    path.parent.mkdir(parents=True, exist_ok=True)
    lon2, lat2 = np.meshgrid(lon, lat)
    with netCDF4.Dataset(path, "w", format="NETCDF4") as ds:
        ds.setncatts({
            "Conventions": "CF-1.10",
            "title": "Varnholm Gulf synthetic regions (integer mask)",
            "comment": SYNTHETIC_COMMENT,
            "institution": "acidscape sample data (synthetic)",
            "source": "scripts/make_sample_grids.py",
            "history": history,
            "scenario": SCENARIO,
        })
        add_rectilinear_horizontal(ds, lon, lat)
        var = ds.createVariable("region", "i1", ("lat", "lon"), zlib=True, complevel=6, fill_value=np.int8(-1))
        var.setncatts({
            "long_name": "region of the Varnholm Gulf (synthetic)",
            "flag_values": np.arange(1, len(REGION_CLASSES) + 1, dtype="i1"),
            "flag_meanings": " ".join(REGION_CLASSES),
            "comment": " ".join(region_classes.__doc__.split()),
        })
        classes = region_classes(lon2, lat2, geo)
        var[:] = np.ma.masked_equal(classes, 0)
    return [path]


WRITERS = {
    "cmip-style": write_cmip_style,
    "terrain-following": write_terrain_following,
    "curvilinear": write_curvilinear,
    "century": write_century,
}


def parse_args(argv):
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0],
                                     formatter_class=argparse.RawDescriptionHelpFormatter, epilog=__doc__)
    parser.add_argument("--out", type=Path, help="output directory (runs go in <out>/<run>/<pathway>/)")
    parser.add_argument("--size", type=int, nargs=3, metavar=("NX", "NY", "NZ"), default=None,
                        help=f"columns west-east, south-north, and levels (default {' '.join(map(str, DEFAULT_SIZE))}; "
                             f"century {' '.join(map(str, DEFAULT_SIZES['century']))})")
    parser.add_argument("--steps", type=int, default=None,
                        help="steps per run: months, or years for century (default: cmip-style 12, terrain-following 6, "
                             "curvilinear 4, century 86 = 2015-2100)")
    parser.add_argument("--runs", default=",".join(RUN_NAMES), help=f"comma-separated subset of {', '.join(RUN_NAMES)}")
    parser.add_argument("--large", type=Path, metavar="DIR",
                        help=f"benchmark preset: {LARGE_SIZE[0]}x{LARGE_SIZE[1]}x{LARGE_SIZE[2]}, {LARGE_STEPS} steps, "
                             "cmip-style only, written to DIR (do not commit)")
    parser.add_argument("--global-century", type=Path, metavar="DIR",
                        help="benchmark preset for pathway comparisons: century run on a 1-degree global grid, "
                             "360x180x50, 50 annual steps (or --steps N), lossless (~4 GB per pathway; do not commit)")
    parser.add_argument("--pathways", default=",".join(PATHWAYS),
                        help=f"comma-separated subset of {', '.join(PATHWAYS)} (default both)")
    parser.add_argument("--lossless", action="store_true",
                        help="keep full float32 precision (no least_significant_digit quantisation; --large implies it)")
    parser.add_argument("--quiet", action="store_true", help="no progress lines on stderr")
    args = parser.parse_args(argv)
    if args.large is not None:
        if args.out is not None or args.size is not None or args.steps is not None:
            parser.error("--large sets its own output, size and steps; do not combine it with --out/--size/--steps")
        args.out, args.size, args.steps, args.runs = args.large, list(LARGE_SIZE), LARGE_STEPS, "cmip-style"
        args.lossless = True
    args.months = ALL_MONTHS
    if args.global_century is not None:
        if args.out is not None or args.size is not None or args.large is not None:
            parser.error("--global-century sets its own output and size; do not combine it with --out/--size/--large")
        args.out, args.size, args.runs = args.global_century, list(LARGE_SIZE), "century"
        args.steps = args.steps or GLOBAL_CENTURY_STEPS
        args.lossless, args.months = True, GLOBAL_MONTHS
        use_global_domain()
    if args.out is None:
        parser.error("give --out DIR (or --large DIR, or --global-century DIR)")
    runs = [r.strip() for r in args.runs.split(",") if r.strip()]
    unknown = [r for r in runs if r not in WRITERS]
    if unknown or not runs:
        parser.error(f"unknown run(s) {unknown}; choose from {', '.join(RUN_NAMES)}")
    args.runs = runs
    pathways = [p.strip() for p in args.pathways.split(",") if p.strip()]
    if not pathways or any(p not in PATHWAYS for p in pathways):
        parser.error(f"unknown pathway in {args.pathways!r}; choose from {', '.join(PATHWAYS)}")
    args.pathways = pathways
    if args.size is not None and (min(args.size[:2]) < 4 or args.size[2] < 2):
        parser.error("--size needs NX, NY >= 4 and NZ >= 2")
    if args.steps is not None and args.steps < 1:
        parser.error("--steps must be at least 1")
    return args


def main(argv=None):
    args = parse_args(sys.argv[1:] if argv is None else argv)
    # history is deterministic (no timestamp) so repeated runs give the same bytes
    options = ["--size", *map(str, args.size)] if args.size else []
    options += ["--steps", str(args.steps)] if args.steps else []
    options += ["--runs", ",".join(args.runs), "--pathways", ",".join(args.pathways)]
    options += ["--lossless"] if args.lossless else []
    options += ["--global-century"] if args.global_century is not None else []
    history = "scripts/make_sample_grids.py " + " ".join(options)
    written = []
    for run in args.runs:
        size = tuple(args.size or DEFAULT_SIZES.get(run, DEFAULT_SIZE))
        job = Job(args.out, size, args.steps or DEFAULT_STEPS[run], history, args.pathways, args.quiet,
                  args.lossless, args.months)
        written += WRITERS[run](job)
    total = sum(p.stat().st_size for p in written)
    print(f"wrote {len(written)} files, {total / 1e6:.2f} MB, under {args.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
