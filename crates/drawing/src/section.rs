//! `draw section`: depth against distance (or latitude) along a path or a grid row or column,
//! with the aragonite and calcite saturation horizons as lines.

mod columns;
mod line;

pub use line::LineRequest;

use crate::error::{DrawError, Result};
use crate::field::{ChosenField, FieldRequest};
use crate::Drawn;
use acidscape_comparison::HORIZON_PREFIX;
use acidscape_figures::{Figure, SectionColumn, SectionLine, SectionSpec};
use columns::StepColumns;
use line::Line;

/// A section as asked for on the command line.
#[derive(Clone, Debug)]
pub struct SectionRequest {
    /// The file, the 3-D variable, time, colours and page.
    pub field: FieldRequest,
    /// Where the section runs.
    pub line: LineRequest,
    /// Deepest depth shown \[m\] (default: the deepest water along the section).
    pub max_depth: Option<f64>,
}

/// Where a horizon line comes from.
#[derive(Clone, Debug, PartialEq)]
enum HorizonSource {
    /// A horizon-depth variable of the file (2-D).
    Written(String),
    /// Computed from this Ω variable's column profiles.
    FromOmega(String),
}

/// A section with every option checked.
pub struct SectionPlan {
    field: ChosenField,
    line: Line,
    horizons: Vec<(String, HorizonSource)>,
    spec: SectionSpec,
    notes: Vec<String>,
}

impl SectionPlan {
    /// Opens the file and checks the request before any field is read.
    pub fn new(request: &SectionRequest) -> Result<SectionPlan> {
        if let Some(d) = request.max_depth {
            if !(d.is_finite() && d > 0.0) {
                return Err(DrawError::option(
                    "--max-depth",
                    format!("{d}: expected a depth in metres above 0"),
                ));
            }
        }
        let field = ChosenField::new(&request.field, true)?;
        let (source, meaning) = (&field.source, &field.meaning);
        let line = line::line(source, &request.line)?;
        let mut notes = Vec::new();
        let mut horizons = Vec::new();
        for mineral in ["aragonite", "calcite"] {
            let written = meaning.sibling(&format!("{HORIZON_PREFIX}{mineral}"));
            let omega = meaning.sibling(&format!("omega_{mineral}"));
            let from = if source.has_field(&written) {
                HorizonSource::Written(written)
            } else if source.file.variable(&omega).is_ok_and(|f| f.has_levels) {
                HorizonSource::FromOmega(omega)
            } else {
                notes.push(format!(
                    "no {mineral} horizon: {} has neither {written} nor {omega}",
                    source.path().display()
                ));
                continue;
            };
            horizons.push((format!("{mineral} saturation horizon"), from));
        }
        let mut spec = SectionSpec::new(field.captions(|named| format!("{named} {}", line.words)));
        spec.colouring = field.colouring;
        spec.axis = line.axis;
        spec.max_depth = request.max_depth;
        spec.page = field.page.size;
        Ok(SectionPlan {
            field,
            line,
            horizons,
            spec,
            notes,
        })
    }

    /// The title the figure will carry.
    pub fn title(&self) -> &str {
        &self.spec.text.title
    }

    /// The horizon lines planned: (label, variable, whether computed from Ω here).
    pub fn horizons(&self) -> Vec<(String, String, bool)> {
        self.horizons
            .iter()
            .map(|(label, from)| match from {
                HorizonSource::Written(name) => (label.clone(), name.clone(), false),
                HorizonSource::FromOmega(name) => (label.clone(), name.clone(), true),
            })
            .collect()
    }

    /// The grid cells (row, column) the section runs through, in order.
    pub fn cells(&self) -> Vec<(usize, usize)> {
        self.line.cells.iter().map(|c| (c.j, c.i)).collect()
    }

    /// Reads the columns and the horizon lines along the line, as handed to the renderer.
    pub fn data(&self) -> Result<(Vec<SectionColumn>, Vec<SectionLine>)> {
        let (source, variable) = (&self.field.source, &self.field.info.name);
        let file = &source.file;
        let step = self.field.moment.step;
        let geometry = StepColumns::read(source, variable, step)?;
        let field = file.read_step(variable, step)?;
        let cells: Vec<_> = self
            .line
            .cells
            .iter()
            .map(|&c| (c, geometry.cell(c)))
            .collect();
        let columns = cells
            .iter()
            .map(|(c, cell)| {
                let values = cell.values(&geometry, *c, &field);
                SectionColumn {
                    x_start: c.x_start,
                    x_end: c.x_end,
                    interfaces: cell.clipped_interfaces(&values),
                    values,
                }
            })
            .collect();
        let wet = match file.has("quality_flag") {
            true => Some(file.read_step("quality_flag", step)?),
            false => None,
        };
        let mut lines = Vec::new();
        for (label, from) in &self.horizons {
            let depths = match from {
                HorizonSource::Written(name) => {
                    let depths = file.read_level(name, step, 0)?;
                    let cols = file.grid().cols;
                    cells
                        .iter()
                        .map(|(c, _)| depths[c.j * cols + c.i])
                        .collect()
                }
                HorizonSource::FromOmega(name) => {
                    let omega = if name == variable {
                        field.clone()
                    } else {
                        file.read_step(name, step)?
                    };
                    cells
                        .iter()
                        .map(|(c, cell)| {
                            let values = cell.values(&geometry, *c, &omega);
                            let wet: Vec<bool> = match &wet {
                                Some(flags) => cell
                                    .values(&geometry, *c, flags)
                                    .iter()
                                    .map(|f| f.is_finite())
                                    .collect(),
                                None => values.iter().map(|v| v.is_finite()).collect(),
                            };
                            cell.horizon(&values, &wet)
                        })
                        .collect()
                }
            };
            lines.push(SectionLine {
                label: label.clone(),
                depths,
            });
        }
        Ok((columns, lines))
    }

    /// Reads the section and draws it.
    pub fn render(&self) -> Result<(Figure, Vec<String>)> {
        let (columns, lines) = self.data()?;
        if columns
            .iter()
            .all(|c| c.values.iter().all(|v| !v.is_finite()))
        {
            return Err(DrawError::variable(
                self.field.source.path(),
                &self.field.info.name,
                format!("has no value along the section {}", self.line.words),
            ));
        }
        let mut spec = self.spec.clone();
        spec.lines = lines;
        spec.text.caption = self.field.caption(Some(self.horizon_words()));
        let figure = acidscape_figures::render_section(&columns, &spec)?;
        Ok((figure, self.notes.clone()))
    }

    /// Draws the section and writes the PNG.
    pub fn draw(&self) -> Result<Drawn> {
        let (figure, notes) = self.render()?;
        Drawn::save(&figure, &self.field.page, notes)
    }

    /// Where the horizon lines come from, for the caption.
    fn horizon_words(&self) -> String {
        let mut written = Vec::new();
        let mut computed = Vec::new();
        for (_, from) in &self.horizons {
            match from {
                HorizonSource::Written(name) => written.push(name.as_str()),
                HorizonSource::FromOmega(name) => computed.push(name.as_str()),
            }
        }
        let mut parts = Vec::new();
        if !written.is_empty() {
            parts.push(format!("{} as written in the file", written.join(" and ")));
        }
        if !computed.is_empty() {
            let profile = if self.field.source.compared.is_some() {
                " (window-mean profiles)"
            } else {
                ""
            };
            parts.push(format!(
                "where each column of {}{profile} crosses Ω = 1, linear in depth on ln Ω between level centres",
                computed.join(" and ")
            ));
        }
        if parts.is_empty() {
            String::new()
        } else {
            format!("Horizons: {}.", parts.join("; "))
        }
    }
}
