#!/usr/bin/env bash
# Make sure the netCDF-C library that acidscape links is present.
# On Debian/Ubuntu as root (or with passwordless sudo) it installs it; elsewhere it says what to load.
set -euo pipefail

if pkg-config --exists netcdf 2>/dev/null || command -v nc-config >/dev/null 2>&1; then
    exit 0
fi

packages="libnetcdf-dev netcdf-bin pkg-config"
if command -v apt-get >/dev/null 2>&1; then
    if [ "$(id -u)" = 0 ]; then
        runner=""
    elif command -v sudo >/dev/null 2>&1 && sudo -n true 2>/dev/null; then
        runner="sudo -n"
    else
        runner="none"
    fi
    if [ "$runner" != "none" ]; then
        echo "acidscape: installing the netCDF-C library ($packages) with apt-get" >&2
        export DEBIAN_FRONTEND=noninteractive
        $runner apt-get update -qq
        $runner apt-get install -y -qq $packages >/dev/null
        exit 0
    fi
fi

cat >&2 <<'MSG'
acidscape needs the netCDF-C library (with its headers and nc-config), and it is not installed.
  Debian/Ubuntu:  sudo apt-get install -y libnetcdf-dev netcdf-bin pkg-config
  Fedora/RHEL:    sudo dnf install -y netcdf-devel
  macOS:          brew install netcdf
  HPC clusters:   load the site's module first, e.g. `module load netcdf-c` (or netcdf, with
                  its HDF5), or use a Spack/conda environment that provides netcdf-c; then make
                  sure `nc-config --libs` works in the same shell.
MSG
exit 1
