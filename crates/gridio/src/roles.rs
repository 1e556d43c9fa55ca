//! The inputs acidscape looks for, and how each is recognised: CF standard name first,
//! then CMIP/OMIP variable name; a user mapping overrides both.

/// One input of the carbonate calculation or of the grid.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Role {
    Dic,
    Alkalinity,
    Temperature,
    Salinity,
    Phosphate,
    Silicate,
    Pressure,
    CellArea,
    SeaFloorDepth,
}

pub(crate) const ALL_ROLES: [Role; 9] = [
    Role::Dic,
    Role::Alkalinity,
    Role::Temperature,
    Role::Salinity,
    Role::Phosphate,
    Role::Silicate,
    Role::Pressure,
    Role::CellArea,
    Role::SeaFloorDepth,
];

impl Role {
    /// The key used in mappings and reports (matches `mapping::ROLE_NAMES`).
    pub fn key(self) -> &'static str {
        match self {
            Role::Dic => "dic",
            Role::Alkalinity => "alkalinity",
            Role::Temperature => "temperature",
            Role::Salinity => "salinity",
            Role::Phosphate => "phosphate",
            Role::Silicate => "silicate",
            Role::Pressure => "pressure",
            Role::CellArea => "cell_area",
            Role::SeaFloorDepth => "sea_floor_depth",
        }
    }

    /// Needed for every run (the others are optional).
    pub fn required(self) -> bool {
        matches!(
            self,
            Role::Dic | Role::Alkalinity | Role::Temperature | Role::Salinity
        )
    }

    /// Has a value per cell (level, row, col) rather than per column.
    pub fn per_cell(self) -> bool {
        !matches!(self, Role::CellArea | Role::SeaFloorDepth)
    }

    /// CF standard names, in order of preference: per-volume and per-mass forms. Each
    /// name was checked against CF-labelled files in public repositories (the standard
    /// name table itself was not reachable here); per-volume forms are the CMIP/OMIP ones.
    pub fn standard_names(self) -> &'static [&'static str] {
        match self {
            Role::Dic => &[
                "mole_concentration_of_dissolved_inorganic_carbon_in_sea_water",
                "moles_of_dissolved_inorganic_carbon_per_unit_mass_in_sea_water",
            ],
            Role::Alkalinity => &[
                "sea_water_alkalinity_expressed_as_mole_equivalent",
                "sea_water_alkalinity_per_unit_mass_expressed_as_mole_equivalent",
                "sea_water_alkalinity_per_unit_mass",
            ],
            Role::Temperature => &[
                "sea_water_potential_temperature",
                "sea_water_conservative_temperature",
                "sea_water_temperature",
            ],
            Role::Salinity => &[
                "sea_water_practical_salinity",
                "sea_water_salinity",
                "sea_water_absolute_salinity",
                // Written by NEMO 4 in TEOS-10 runs (field_def_nemo-oce.xml); SR is what
                // acidscape takes for SA anyway (see seawater.rs).
                "sea_water_reference_salinity",
            ],
            Role::Phosphate => &[
                "mole_concentration_of_dissolved_inorganic_phosphorus_in_sea_water",
                "mole_concentration_of_phosphate_in_sea_water",
                "moles_of_phosphate_per_unit_mass_in_sea_water",
            ],
            Role::Silicate => &[
                "mole_concentration_of_dissolved_inorganic_silicon_in_sea_water",
                "mole_concentration_of_silicate_in_sea_water",
                "moles_of_silicate_per_unit_mass_in_sea_water",
            ],
            Role::Pressure => &["sea_water_pressure_due_to_sea_water", "sea_water_pressure"],
            Role::CellArea => &["cell_area"],
            Role::SeaFloorDepth => &["sea_floor_depth_below_geoid"],
        }
    }

    /// Fragments of variable names and long names that suggest this role, for proposing a
    /// mapping when nothing identifies the role (common practice in model output).
    pub fn hints(self) -> &'static [&'static str] {
        match self {
            Role::Dic => &["dic", "tco2", "inorganic carbon", "dissic"],
            Role::Alkalinity => &["alk", "talk"],
            Role::Temperature => &["temp", "theta", "thetao"],
            Role::Salinity => &["sal", "so"],
            Role::Phosphate => &["po4", "phosph"],
            Role::Silicate => &["silic", "sio", "si"],
            Role::Pressure => &["pres"],
            Role::CellArea => &["area"],
            Role::SeaFloorDepth => &["bathy", "deptho"],
        }
    }

    /// An example of the units a user would give for this role.
    pub fn example_units(self) -> &'static str {
        match self {
            Role::Dic | Role::Alkalinity | Role::Phosphate | Role::Silicate => "mmol m-3",
            Role::Temperature => "degC",
            Role::Salinity => "1e-3",
            Role::Pressure => "dbar",
            Role::CellArea => "m2",
            Role::SeaFloorDepth => "m",
        }
    }

    /// CMIP6/OMIP variable names (Griffies et al. 2016; Orr et al. 2017).
    pub fn cmip_names(self) -> &'static [&'static str] {
        match self {
            Role::Dic => &["dissic"],
            Role::Alkalinity => &["talk"],
            Role::Temperature => &["thetao", "bigthetao"],
            Role::Salinity => &["so"],
            Role::Phosphate => &["po4"],
            Role::Silicate => &["si"],
            Role::Pressure => &[],
            Role::CellArea => &["areacello"],
            Role::SeaFloorDepth => &["deptho"],
        }
    }
}
