//! Names that common ocean models write in their own output, as data: which variable plays
//! which role, what the model's documentation says it holds, the dimension names of their
//! grids and their 2-D latitude/longitude variables. Used after the user mapping, CF
//! standard names and CMIP/OMIP names have had their say (see `discovery.rs`).
//!
//! Each row names where it was read. Rows marked `from memory` were not read in the
//! model's sources here.

use crate::axes::Axis;
use crate::mapping::SalinityKind;
use crate::roles::Role;
use crate::seawater::TemperatureKind;

/// What a model family's documentation says a variable holds, beyond its units.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Stated {
    /// Nothing beyond units (concentrations), or the kind is not fixed by the model: the
    /// file's own attributes (standard_name, long_name) or the user must say.
    Nothing,
    Temperature(TemperatureKind),
    Salinity(SalinityKind),
}

/// One variable name a model family writes.
pub(crate) struct NativeName {
    pub family: &'static str,
    pub role: Role,
    pub name: &'static str,
    pub stated: Stated,
    /// Units strings this family writes that mean something else than the same string
    /// would in general: (as written, what it means).
    pub unit_aliases: &'static [(&'static str, &'static str)],
    /// Where the row was read.
    pub source: &'static str,
}

const NEMO_OCE: &str =
    "NEMO 4 cfgs/SHARED/field_def_nemo-oce.xml (toce: sea_water_potential_temperature, degC; soce: 1e-3)";
const NEMO_IOIPSL: &str =
    "NEMO 3 OCE/DIA/diawri.F90 (histdef: votemper \"Temperature\" units \"C\", vosaline \"Salinity\" units \"PSU\")";
const PISCES: &str = "NEMO 4 cfgs/SHARED/field_def_nemo-pisces.xml (ptrc_T: DIC, Alkalini, PO4, Si in mmol/m3) and TOP/PISCES/trcwri_pisces.F90 (PO4 written in phosphorus units)";
const ROMS: &str = "ROMS/External/varinfo.yaml (myroms/roms)";
const MOM6: &str = "MOM6 src/core/MOM.F90 (var_desc of temp, contemp, salt, abssalt)";
const COBALT: &str =
    "GFDL ocean_BGC generic_tracers/generic_COBALT.F90 (dic, alk, po4, sio4 in mol/kg)";

use Stated::Nothing;
const CONSERVATIVE: Stated = Stated::Temperature(TemperatureKind::Conservative);
const PRACTICAL: Stated = Stated::Salinity(SalinityKind::Practical);
const ABSOLUTE: Stated = Stated::Salinity(SalinityKind::Absolute);

/// Native variable names of the model families.
pub(crate) const NATIVE_NAMES: &[NativeName] = &[
    // NEMO: one file per grid type (grid_T ...) and the PISCES tracer file (ptrc_T).
    // votemper/toce hold potential temperature in EOS-80 runs and Conservative Temperature
    // in TEOS-10 runs (ln_teos10): the kind must come from the file or the user.
    NativeName {
        family: "NEMO",
        role: Role::Temperature,
        name: "votemper",
        stated: Nothing,
        unit_aliases: &[("C", "degC")],
        source: NEMO_IOIPSL,
    },
    NativeName {
        family: "NEMO",
        role: Role::Temperature,
        name: "toce",
        stated: Nothing,
        unit_aliases: &[],
        source: NEMO_OCE,
    },
    NativeName {
        family: "NEMO",
        role: Role::Salinity,
        name: "vosaline",
        stated: Nothing,
        unit_aliases: &[],
        source: NEMO_IOIPSL,
    },
    NativeName {
        family: "NEMO",
        role: Role::Salinity,
        name: "soce",
        stated: Nothing,
        unit_aliases: &[],
        source: NEMO_OCE,
    },
    NativeName {
        family: "NEMO",
        role: Role::Dic,
        name: "DIC",
        stated: Nothing,
        unit_aliases: &[],
        source: PISCES,
    },
    NativeName {
        family: "NEMO",
        role: Role::Alkalinity,
        name: "Alkalini",
        stated: Nothing,
        unit_aliases: &[],
        source: PISCES,
    },
    NativeName {
        family: "NEMO",
        role: Role::Phosphate,
        name: "PO4",
        stated: Nothing,
        unit_aliases: &[],
        source: PISCES,
    },
    NativeName {
        family: "NEMO",
        role: Role::Silicate,
        name: "Si",
        stated: Nothing,
        unit_aliases: &[],
        source: PISCES,
    },
    // ROMS: terrain-following runs. `temp` is potential temperature, and says so in its
    // long_name ("potential temperature"); other models write `temp` too, so the kind is
    // taken from the file's attributes, never from the name alone.
    NativeName {
        family: "ROMS",
        role: Role::Temperature,
        name: "temp",
        stated: Nothing,
        unit_aliases: &[],
        source: ROMS,
    },
    NativeName {
        family: "ROMS",
        role: Role::Salinity,
        name: "salt",
        stated: PRACTICAL,
        unit_aliases: &[],
        source: ROMS,
    },
    NativeName {
        family: "ROMS",
        role: Role::Dic,
        name: "TIC",
        stated: Nothing,
        unit_aliases: &[],
        source: ROMS,
    },
    NativeName {
        family: "ROMS",
        role: Role::Alkalinity,
        name: "alkalinity",
        stated: Nothing,
        unit_aliases: &[],
        source: ROMS,
    },
    NativeName {
        family: "ROMS",
        role: Role::Phosphate,
        name: "PO4",
        stated: Nothing,
        unit_aliases: &[],
        source: ROMS,
    },
    NativeName {
        family: "ROMS",
        role: Role::Silicate,
        name: "SiOH4",
        stated: Nothing,
        unit_aliases: &[],
        source: ROMS,
    },
    // MOM6 (and its COBALT tracers): `temp` has long_name "Potential Temperature",
    // `contemp` is Conservative Temperature by name.
    NativeName {
        family: "MOM",
        role: Role::Temperature,
        name: "temp",
        stated: Nothing,
        unit_aliases: &[],
        source: MOM6,
    },
    NativeName {
        family: "MOM",
        role: Role::Temperature,
        name: "contemp",
        stated: CONSERVATIVE,
        unit_aliases: &[],
        source: MOM6,
    },
    NativeName {
        family: "MOM",
        role: Role::Salinity,
        name: "salt",
        stated: PRACTICAL,
        unit_aliases: &[],
        source: MOM6,
    },
    NativeName {
        family: "MOM",
        role: Role::Salinity,
        name: "abssalt",
        stated: ABSOLUTE,
        unit_aliases: &[],
        source: MOM6,
    },
    NativeName {
        family: "MOM",
        role: Role::Dic,
        name: "dic",
        stated: Nothing,
        unit_aliases: &[],
        source: COBALT,
    },
    NativeName {
        family: "MOM",
        role: Role::Alkalinity,
        name: "alk",
        stated: Nothing,
        unit_aliases: &[],
        source: COBALT,
    },
    NativeName {
        family: "MOM",
        role: Role::Silicate,
        name: "sio4",
        stated: Nothing,
        unit_aliases: &[],
        source: COBALT,
    },
];

/// Dimension names and the axis they are, by family; the last resort of axis detection,
/// after CF attributes of coordinate variables and 2-D coordinates.
pub(crate) const NATIVE_DIMENSIONS: &[(&str, Axis, &str)] = &[
    ("time_counter", Axis::T, "NEMO"),
    ("deptht", Axis::Z, "NEMO"),
    ("y", Axis::Y, "NEMO"),
    ("x", Axis::X, "NEMO"),
    ("ocean_time", Axis::T, "ROMS"),
    ("s_rho", Axis::Z, "ROMS"),
    ("eta_rho", Axis::Y, "ROMS"),
    ("xi_rho", Axis::X, "ROMS"),
    ("time", Axis::T, "MOM, CMIP/OMIP"),
    (
        "z_l",
        Axis::Z,
        "MOM (MOM6 src/framework/MOM_diag_remap.F90)",
    ),
    (
        "zl",
        Axis::Z,
        "MOM (MOM6 src/framework/MOM_diag_mediator.F90)",
    ),
    (
        "yh",
        Axis::Y,
        "MOM (MOM6 src/framework/MOM_diag_mediator.F90)",
    ),
    (
        "xh",
        Axis::X,
        "MOM (MOM6 src/framework/MOM_diag_mediator.F90)",
    ),
    ("lev", Axis::Z, "CMIP/OMIP"),
    ("olevel", Axis::Z, "CMIP/OMIP"),
    ("j", Axis::Y, "CMIP/OMIP"),
    ("i", Axis::X, "CMIP/OMIP"),
    // Common practice in other model output.
    ("t", Axis::T, "common practice"),
    ("depth", Axis::Z, "common practice"),
    ("z", Axis::Z, "common practice"),
    ("level", Axis::Z, "common practice"),
    ("levels", Axis::Z, "common practice"),
    ("nz", Axis::Z, "common practice"),
    ("zt", Axis::Z, "common practice"),
    ("sigma", Axis::Z, "common practice"),
    ("nj", Axis::Y, "common practice"),
    ("lat", Axis::Y, "common practice"),
    ("latitude", Axis::Y, "common practice"),
    ("nlat", Axis::Y, "common practice"),
    ("rlat", Axis::Y, "common practice"),
    ("ny", Axis::Y, "common practice"),
    ("ni", Axis::X, "common practice"),
    ("lon", Axis::X, "common practice"),
    ("longitude", Axis::X, "common practice"),
    ("nlon", Axis::X, "common practice"),
    ("rlon", Axis::X, "common practice"),
    ("nx", Axis::X, "common practice"),
];

/// 2-D latitude and longitude variables of curvilinear model grids, used when a data
/// variable names none in its `coordinates` attribute: (latitude, longitude, family).
pub(crate) const NATIVE_LATITUDE_LONGITUDE: &[(&str, &str, &str)] = &[
    ("nav_lat", "nav_lon", "NEMO"),
    ("lat_rho", "lon_rho", "ROMS"),
    ("geolat", "geolon", "MOM (static file)"),
    ("latitude", "longitude", "CMIP/OMIP"),
];

/// The axis a dimension name stands for, if the table knows it.
pub(crate) fn axis_of_dimension(name: &str) -> Option<Axis> {
    let lower = name.to_ascii_lowercase();
    NATIVE_DIMENSIONS
        .iter()
        .find(|(n, _, _)| *n == lower)
        .map(|(_, axis, _)| *axis)
}

/// Rows naming `name` for `role`.
pub(crate) fn rows_for(role: Role, name: &str) -> impl Iterator<Item = &'static NativeName> + '_ {
    NATIVE_NAMES
        .iter()
        .filter(move |n| n.role == role && n.name == name)
}

/// The native names of a role, deduplicated, in table order.
pub(crate) fn names_of(role: Role) -> Vec<&'static str> {
    let mut out: Vec<&'static str> = Vec::new();
    for row in NATIVE_NAMES.iter().filter(|n| n.role == role) {
        if !out.contains(&row.name) {
            out.push(row.name);
        }
    }
    out
}

/// Distinct values of one column over the rows naming `name` for `role`, joined.
fn distinct(
    role: Role,
    name: &str,
    column: fn(&NativeName) -> &'static str,
    separator: &str,
) -> String {
    let mut out: Vec<&str> = Vec::new();
    for row in rows_for(role, name) {
        if !out.contains(&column(row)) {
            out.push(column(row));
        }
    }
    out.join(separator)
}

/// Families writing `name` for `role`, e.g. "NEMO" or "NEMO, ROMS".
pub(crate) fn families(role: Role, name: &str) -> String {
    distinct(role, name, |r| r.family, ", ")
}

/// Where the rows naming `name` for `role` were read, for reports.
pub(crate) fn sources(role: Role, name: &str) -> String {
    distinct(role, name, |r| r.source, "; ")
}

/// What the families writing `name` state about it; `Nothing` unless they all agree.
pub(crate) fn stated(role: Role, name: &str) -> Stated {
    let mut rows = rows_for(role, name);
    let Some(first) = rows.next() else {
        return Stated::Nothing;
    };
    if rows.all(|r| r.stated == first.stated) {
        first.stated
    } else {
        Stated::Nothing
    }
}

/// The units a family means by `units` on its variable `name`, when it has an alias.
pub(crate) fn unit_alias(role: Role, name: &str, units: &str) -> Option<&'static str> {
    rows_for(role, name)
        .flat_map(|r| r.unit_aliases.iter())
        .find(|(seen, _)| *seen == units.trim())
        .map(|(_, meant)| *meant)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_rows_are_unique_and_dimension_names_lowercase() {
        for (i, a) in NATIVE_NAMES.iter().enumerate() {
            for b in &NATIVE_NAMES[i + 1..] {
                assert!(
                    !(a.family == b.family && a.name == b.name),
                    "{} {} twice",
                    a.family,
                    a.name
                );
            }
        }
        assert!(NATIVE_DIMENSIONS
            .iter()
            .all(|(n, _, _)| *n == n.to_ascii_lowercase()));
        assert_eq!(axis_of_dimension("Time_Counter"), Some(Axis::T));
        assert_eq!(stated(Role::Temperature, "temp"), Nothing);
        assert_eq!(stated(Role::Temperature, "contemp"), CONSERVATIVE);
        assert_eq!(stated(Role::Temperature, "votemper"), Nothing);
        assert_eq!(unit_alias(Role::Temperature, "votemper", "C"), Some("degC"));
        assert_eq!(unit_alias(Role::Temperature, "temp", "C"), None);
    }
}
