//! `draw map`: one 2-D field, or one level of a 3-D field, at one time step or window.

use crate::error::{DrawError, Result};
use crate::field::{ChosenField, FieldRequest};
use crate::grid::map_grid;
use crate::level::{choose_level, read_map_values, ChosenLevel, LevelChoice};
use crate::naming::Meaning;
use crate::options::LevelRequest;
use crate::source::Source;
use crate::Drawn;
use acidscape_figures::{Colouring, ContourLevel, Figure, MapSpec};

/// A map as asked for on the command line.
#[derive(Clone, Debug)]
pub struct MapRequest {
    /// The file, variable, time, colours and page.
    pub field: FieldRequest,
    /// The level of a 3-D field.
    pub level: LevelRequest,
}

/// A contour to draw, and the field it is drawn on when that is not the map's own.
#[derive(Clone, Debug, PartialEq)]
struct ContourPlan {
    level: ContourLevel,
    /// Another variable's values at the same step and level choice.
    other: Option<(String, LevelChoice)>,
}

/// A map with every option checked and every name resolved, nothing read yet but metadata.
pub struct MapPlan {
    field: ChosenField,
    level: ChosenLevel,
    contour: Option<ContourPlan>,
    spec: MapSpec,
    notes: Vec<String>,
}

impl MapPlan {
    /// Opens the file and checks the request: the variable, its time step and level, the
    /// colours and the output, before any field is read.
    pub fn new(request: &MapRequest) -> Result<MapPlan> {
        let field = ChosenField::new(&request.field, false)?;
        let (source, meaning) = (&field.source, &field.meaning);
        let level = choose_level(source, &field.info, &request.level)?;
        let contour = contour_plan(source, meaning, &level);
        let mut notes = Vec::new();
        if let (true, None, Some(mineral)) = (
            meaning.is_horizon_depth(),
            &contour,
            meaning.omega_mineral(),
        ) {
            notes.push(format!(
                "no Ω = 1 contour: {} has no {}",
                source.path().display(),
                meaning.sibling(&format!("omega_{mineral}"))
            ));
        }
        let text = field.captions(|named| {
            format!("{} {named}{}", level.prefix, level.suffix)
                .trim()
                .to_string()
        });
        let mut spec = MapSpec::new(text);
        spec.colouring = field.colouring;
        spec.page = field.page.size;
        if meaning.is_emergence_year() {
            spec.missing_label = format!(
                "land, no data, or not emerged by the end of the run (see {})",
                field
                    .info
                    .name
                    .replacen("emergence_year", "emergence_status", 1)
            );
        } else if meaning.is_horizon_depth() {
            spec.missing_label = "land, or no horizon above the sea floor".to_string();
        } else if meaning.is_horizon_depth_uncertainty() {
            spec.missing_label =
                "land, no horizon above the sea floor, or the horizon at the surface".to_string();
        } else if level.choice != LevelChoice::Whole && level.prefix != "surface" {
            spec.missing_label = "land, below the sea floor, or no data".to_string();
        }
        Ok(MapPlan {
            field,
            level,
            contour,
            spec,
            notes,
        })
    }

    /// The title the figure will carry.
    pub fn title(&self) -> &str {
        &self.spec.text.title
    }

    /// The palette and range chosen.
    pub fn colouring(&self) -> Colouring {
        self.spec.colouring
    }

    /// The contour value and the variable it is drawn on (if any is planned).
    pub fn contour(&self) -> Option<(f64, String)> {
        self.contour.as_ref().map(|c| {
            let on = c
                .other
                .as_ref()
                .map_or(self.field.info.name.clone(), |(name, _)| name.clone());
            (c.level.level, on)
        })
    }

    /// The time step drawn (0 for fields without time).
    pub fn step(&self) -> usize {
        self.field.moment.step
    }

    /// Reads the field and draws the map.
    pub fn render(&self) -> Result<(Figure, Vec<String>)> {
        let (source, name) = (&self.field.source, &self.field.info.name);
        let (step, when) = (self.field.moment.step, &self.field.moment.words);
        let values = read_map_values(source, name, step, &self.level.choice)?;
        if values.iter().all(|v| !v.is_finite()) {
            return Err(DrawError::variable(
                source.path(),
                name,
                format!(
                    "has no value at {} to draw (every cell is missing)",
                    if when.is_empty() { "all" } else { when }
                ),
            ));
        }
        let grid = map_grid(source)?;
        let mut spec = self.spec.clone();
        let mut notes = self.notes.clone();
        let mut extra = None;
        if let Some(contour) = &self.contour {
            let contoured = match &contour.other {
                Some((other, choice)) => Some(read_map_values(source, other, step, choice)?),
                None => None,
            };
            let on = contoured.as_deref().unwrap_or(&values);
            match crossing(on, contour.level.level) {
                Crossing::Both => {
                    spec.contour = Some(contour.level.clone());
                    spec.contour_values = contoured;
                }
                side => {
                    let what = contour.level.label.split(" = ").next().unwrap_or("Ω");
                    let mut letters = what.chars();
                    let first = letters.next().map(|c| c.to_uppercase().to_string());
                    let words = format!(
                        "{}{} is {} {} in every cell shown (no contour).",
                        first.unwrap_or_default(),
                        letters.as_str(),
                        if side == Crossing::Above {
                            "at least"
                        } else {
                            "below"
                        },
                        contour.level.level
                    );
                    notes.push(words.clone());
                    extra = Some(words);
                }
            }
        }
        spec.text.caption = self.field.caption(extra);
        let figure = acidscape_figures::render_map(&grid, &values, &spec)?;
        Ok((figure, notes))
    }

    /// Draws the map and writes the PNG.
    pub fn draw(&self) -> Result<Drawn> {
        let (figure, notes) = self.render()?;
        Drawn::save(&figure, &self.field.page, notes)
    }
}

/// The Ω = 1 contour: on an Ω map, of its own values; on a map of the Ω = 1 horizon depth,
/// of the same run's surface Ω (the line inside which the horizon reaches the surface).
fn contour_plan(source: &Source, meaning: &Meaning, level: &ChosenLevel) -> Option<ContourPlan> {
    let mineral = meaning.omega_mineral()?;
    let label = |prefix: &str| ContourLevel {
        level: 1.0,
        label: format!("{prefix}Ω {mineral} = 1"),
    };
    if meaning.is_omega() {
        let prefix = if level.prefix == "surface" {
            "surface "
        } else {
            ""
        };
        return Some(ContourPlan {
            level: label(prefix),
            other: None,
        });
    }
    if meaning.is_horizon_depth() {
        let omega = meaning.sibling(&format!("omega_{mineral}"));
        if !source.has_field(&omega) {
            return None;
        }
        let has_levels = source.file.variable(&omega).is_ok_and(|f| f.has_levels);
        let choice = if has_levels {
            LevelChoice::Level(source.file.vertical().surface_level())
        } else {
            LevelChoice::Whole
        };
        return Some(ContourPlan {
            level: label("surface "),
            other: Some((omega, choice)),
        });
    }
    None
}

#[derive(Clone, Copy, Debug, PartialEq)]
enum Crossing {
    Both,
    Above,
    Below,
}

/// Whether the valid values lie on both sides of `level`.
fn crossing(values: &[f64], level: f64) -> Crossing {
    let valid = values.iter().filter(|v| v.is_finite());
    let below = valid.clone().any(|&v| v < level);
    let above = valid.clone().any(|&v| v >= level);
    match (below, above) {
        (true, true) => Crossing::Both,
        (true, false) => Crossing::Below,
        _ => Crossing::Above,
    }
}
