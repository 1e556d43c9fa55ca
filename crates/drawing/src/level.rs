//! Which level of a 3-D field a map shows: the surface, a level by index, or the level whose
//! centre is nearest a depth (no interpolation between levels: the values drawn are the
//! model's own cells), and the words the title gives it.

use crate::error::{DrawError, Result};
use crate::options::LevelRequest;
use crate::source::Source;
use acidscape_gridio::{FieldInfo, VerticalCoordinate};

/// The level a map shows.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum LevelChoice {
    /// A 2-D field: the field itself.
    Whole,
    /// One level of the file.
    Level(usize),
    /// Terrain-following layers: per column, the layer whose centre is nearest this depth
    /// \[m\] (missing where the depth is below the sea floor).
    NearestPerColumn(f64),
}

/// The level and the words around the quantity in the title: a prefix ("surface") or a
/// suffix ("at 300 m (nearest level: centre 287.5 m)").
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct ChosenLevel {
    pub choice: LevelChoice,
    pub prefix: String,
    pub suffix: String,
}

impl ChosenLevel {
    fn words(choice: LevelChoice, prefix: &str, suffix: String) -> Self {
        Self {
            choice,
            prefix: prefix.to_string(),
            suffix,
        }
    }
}

/// Resolves `--level` / `--depth` for `info`.
pub(crate) fn choose_level(
    source: &Source,
    info: &FieldInfo,
    request: &LevelRequest,
) -> Result<ChosenLevel> {
    let file = &source.file;
    if !info.has_levels {
        if request.level.is_some() || request.depth.is_some() {
            return Err(DrawError::variable(
                source.path(),
                &info.name,
                "is a 2-D field (no levels); leave out --level and --depth",
            ));
        }
        return Ok(ChosenLevel::words(LevelChoice::Whole, "", String::new()));
    }
    let levels = file.levels();
    let surface = file.vertical().surface_level();
    let coordinate = &file.vertical().coordinate;
    match (&request.level, request.depth) {
        (Some(_), Some(_)) => Err(DrawError::option(
            "--level/--depth",
            "give one of them, not both",
        )),
        (None, None) => Err(DrawError::variable(
            source.path(),
            &info.name,
            format!(
                "is a 3-D field ({levels} levels); choose a level with --level surface, --level N (0 to {}) or --depth METRES",
                levels - 1
            ),
        )),
        (Some(text), None) if text.trim().eq_ignore_ascii_case("surface") => Ok(
            ChosenLevel::words(LevelChoice::Level(surface), "surface", String::new()),
        ),
        (Some(text), None) => {
            let index: usize = text.trim().parse().map_err(|_| {
                DrawError::option(
                    "--level",
                    format!("'{text}': expected surface or a level index 0 to {}", levels - 1),
                )
            })?;
            if index >= levels {
                return Err(DrawError::option(
                    "--level",
                    format!(
                        "{}: level {index} is outside its {levels} levels (0 to {})",
                        source.path().display(),
                        levels - 1
                    ),
                ));
            }
            if index == surface {
                return Ok(ChosenLevel::words(LevelChoice::Level(index), "surface", String::new()));
            }
            let suffix = match coordinate {
                VerticalCoordinate::Depths { depth_m, .. } => {
                    format!(" at {} m (level {index})", metres(depth_m[index]))
                }
                VerticalCoordinate::Pressures { dbar } => {
                    format!(" at {} dbar (level {index})", metres(dbar[index]))
                }
                _ => format!(" in layer {index} of {levels}"),
            };
            Ok(ChosenLevel::words(LevelChoice::Level(index), "", suffix))
        }
        (None, Some(depth)) => nearest_to_depth(source, info, depth),
    }
}

fn nearest_to_depth(source: &Source, info: &FieldInfo, depth: f64) -> Result<ChosenLevel> {
    if !(depth.is_finite() && depth >= 0.0) {
        return Err(DrawError::option(
            "--depth",
            format!("{depth}: expected metres below the sea surface, 0 or more"),
        ));
    }
    let surface = source.file.vertical().surface_level();
    match &source.file.vertical().coordinate {
        VerticalCoordinate::Depths { depth_m, .. } => {
            let index = (0..depth_m.len())
                .min_by(|&a, &b| {
                    (depth_m[a] - depth)
                        .abs()
                        .total_cmp(&(depth_m[b] - depth).abs())
                })
                .unwrap_or(surface);
            if index == surface {
                return Ok(ChosenLevel::words(
                    LevelChoice::Level(index),
                    "surface",
                    String::new(),
                ));
            }
            let suffix = format!(
                " at {} m (nearest level: {index}, centre {} m)",
                metres(depth),
                metres(depth_m[index])
            );
            Ok(ChosenLevel::words(LevelChoice::Level(index), "", suffix))
        }
        VerticalCoordinate::Parametric { .. } => Ok(ChosenLevel::words(
            LevelChoice::NearestPerColumn(depth),
            "",
            format!(" at {} m (nearest layer of each column)", metres(depth)),
        )),
        _ => Err(DrawError::variable(
            source.path(),
            &info.name,
            "its levels have no depths (pressure levels); choose one with --level N",
        )),
    }
}

/// A depth for a title: whole metres, or one decimal below 10 m.
pub(crate) fn metres(depth: f64) -> String {
    if depth.abs() < 10.0 && depth.fract() != 0.0 {
        format!("{depth:.1}")
    } else {
        format!("{depth:.0}")
    }
}

/// The values a map shows (rows × cols, NaN where missing).
pub(crate) fn read_map_values(
    source: &Source,
    name: &str,
    step: usize,
    choice: &LevelChoice,
) -> Result<Vec<f64>> {
    let file = &source.file;
    match *choice {
        LevelChoice::Whole => Ok(file.read_level(name, step, 0)?),
        LevelChoice::Level(index) => Ok(file.read_level(name, step, index)?),
        LevelChoice::NearestPerColumn(depth) => {
            let rows = 0..file.grid().rows;
            let values = file.read_step(name, step)?;
            let depths = file.centre_depths(step, rows.clone())?;
            let floors = file.parametric_columns(step, rows)?.map(|p| {
                p.sea_floor_m
                    .iter()
                    .zip(&p.free_surface_m)
                    .map(|(floor, eta)| floor + eta)
                    .collect::<Vec<f64>>()
            });
            let columns = file.grid().columns();
            Ok((0..columns)
                .map(|c| {
                    let below_floor = floors
                        .as_ref()
                        .is_some_and(|f| f[c].is_nan() || depth > f[c]);
                    let nearest = (0..file.levels()).min_by(|&a, &b| {
                        let da = (depths[a * columns + c] - depth).abs();
                        let db = (depths[b * columns + c] - depth).abs();
                        da.total_cmp(&db)
                    });
                    match nearest {
                        Some(k) if !below_floor => values[k * columns + c],
                        _ => f64::NAN,
                    }
                })
                .collect())
        }
    }
}
