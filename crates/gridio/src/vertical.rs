//! Vertical coordinates: z-levels (positive up or down, length or pressure units) and
//! CF parametric ocean coordinates (CF Conventions 1.10, Appendix D).

use crate::catalog::{attr_text, read_all, require_var, InputFile};
use crate::error::{GridError, Result};
use crate::source::VarSource;
use crate::units;
use std::ops::Range;

/// How level depths are found.
#[derive(Clone, Debug)]
pub(crate) enum Vertical {
    /// No vertical dimension: one level at the surface.
    Surface,
    /// Fixed depths per level [m, positive down].
    Depths {
        name: String,
        depth_m: Vec<f64>,
        positive_up: bool,
    },
    /// Fixed sea pressure per level [dbar].
    Pressures { name: String, dbar: Vec<f64> },
    /// Parametric ocean coordinate: depth per cell and time step.
    Parametric(Box<Parametric>),
}

#[derive(Clone, Debug)]
pub(crate) enum Formula {
    /// `ocean_sigma_coordinate`: sigma(k).
    Sigma { sigma: Vec<f64> },
    /// `ocean_s_coordinate_g1`: s(k), C(k), depth_c.
    SG1 {
        s: Vec<f64>,
        c: Vec<f64>,
        depth_c: f64,
    },
    /// `ocean_s_coordinate_g2`: s(k), C(k), depth_c.
    SG2 {
        s: Vec<f64>,
        c: Vec<f64>,
        depth_c: f64,
    },
}

#[derive(Clone, Debug)]
pub(crate) struct Parametric {
    pub name: String,
    pub standard_name: String,
    pub formula: Formula,
    /// Free surface height eta(n,j,i) and its factor to metres.
    pub eta: VarSource,
    pub eta_to_m: f64,
    /// Sea-floor depth depth(j,i) (positive down) and its factor to metres.
    pub depth: VarSource,
    pub depth_to_m: f64,
    /// Every variable named in `formula_terms` (for copying into outputs).
    pub term_vars: Vec<String>,
}

/// `ocean_sigma_coordinate`: z = eta + sigma (depth + eta) (CF Conventions Appendix D).
pub(crate) fn sigma_height(sigma: f64, eta: f64, depth: f64) -> f64 {
    eta + sigma * (depth + eta)
}

/// `ocean_s_coordinate_g1`: z = S + eta (1 + S / depth), S = depth_c s + (depth - depth_c) C (CF Conventions Appendix D).
pub(crate) fn s_g1_height(s: f64, c: f64, depth_c: f64, eta: f64, depth: f64) -> f64 {
    let stretched = depth_c * s + (depth - depth_c) * c;
    stretched + eta * (1.0 + stretched / depth)
}

/// `ocean_s_coordinate_g2`: z = eta + (eta + depth) S, S = (depth_c s + depth C) / (depth_c + depth) (CF Conventions Appendix D).
pub(crate) fn s_g2_height(s: f64, c: f64, depth_c: f64, eta: f64, depth: f64) -> f64 {
    let stretched = (depth_c * s + depth * c) / (depth_c + depth);
    eta + (eta + depth) * stretched
}

impl Vertical {
    pub fn levels(&self) -> usize {
        match self {
            Vertical::Surface => 1,
            Vertical::Depths { depth_m, .. } => depth_m.len(),
            Vertical::Pressures { dbar, .. } => dbar.len(),
            Vertical::Parametric(p) => p.formula.level_values().len(),
        }
    }

    /// Name of the vertical coordinate variable, if any.
    pub fn name(&self) -> Option<&str> {
        match self {
            Vertical::Surface => None,
            Vertical::Depths { name, .. } | Vertical::Pressures { name, .. } => Some(name),
            Vertical::Parametric(p) => Some(&p.name),
        }
    }

    /// Plain description for reports.
    pub fn describe(&self) -> String {
        match self {
            Vertical::Surface => "none (surface values only, depth 0 m)".to_string(),
            Vertical::Depths {
                name,
                depth_m,
                positive_up,
            } => format!(
                "z-levels '{name}' ({} levels, {:.2} to {:.2} m, positive {} in the file)",
                depth_m.len(),
                depth_m.first().copied().unwrap_or(0.0),
                depth_m.last().copied().unwrap_or(0.0),
                if *positive_up { "up" } else { "down" }
            ),
            Vertical::Pressures { name, dbar } => format!(
                "pressure levels '{name}' ({} levels, {:.2} to {:.2} dbar)",
                dbar.len(),
                dbar.first().copied().unwrap_or(0.0),
                dbar.last().copied().unwrap_or(0.0)
            ),
            Vertical::Parametric(p) => format!(
                "parametric {} '{}' ({} levels; free surface '{}', sea-floor depth '{}'; depth per cell and time step from CF Appendix D)",
                p.standard_name,
                p.name,
                self.levels(),
                p.eta.name,
                p.depth.name
            ),
        }
    }

    /// Height z [m, positive up, relative to the datum] and the free surface height eta
    /// per cell of a slab, in canonical order (eta per column: rows*cols).
    pub fn heights(
        &self,
        paths: &[std::path::PathBuf],
        step: usize,
        rows: &Range<usize>,
        cols: usize,
    ) -> Result<(Vec<f64>, Vec<f64>)> {
        let columns = rows.len() * cols;
        let per_level = |level_height: &dyn Fn(usize) -> f64, levels: usize| -> Vec<f64> {
            let mut z = Vec::with_capacity(levels * columns);
            for k in 0..levels {
                z.extend(std::iter::repeat_n(level_height(k), columns));
            }
            z
        };
        match self {
            Vertical::Surface => Ok((vec![0.0; columns], vec![0.0; columns])),
            Vertical::Depths { depth_m, .. } => Ok((
                per_level(&|k| -depth_m[k], depth_m.len()),
                vec![0.0; columns],
            )),
            Vertical::Pressures { .. } => Ok((Vec::new(), vec![0.0; columns])),
            Vertical::Parametric(p) => {
                let eta: Vec<f64> = p
                    .eta
                    .read(paths, step, rows)?
                    .into_iter()
                    .map(|v| v * p.eta_to_m)
                    .collect();
                let depth: Vec<f64> = p
                    .depth
                    .read(paths, step, rows)?
                    .into_iter()
                    .map(|v| v * p.depth_to_m)
                    .collect();
                let levels = self.levels();
                let mut z = Vec::with_capacity(levels * columns);
                for k in 0..levels {
                    z.extend((0..columns).map(|c| p.formula.height(k, eta[c], depth[c])));
                }
                Ok((z, eta))
            }
        }
    }
}

/// A coordinate's `formula_terms`, parsed, with what an error about it must name.
struct FormulaTerms<'a> {
    pairs: Vec<(String, String)>,
    text: &'a str,
    standard_name: &'a str,
    file: &'a std::path::Path,
    variable: &'a str,
}

impl<'a> FormulaTerms<'a> {
    fn parse(
        text: &'a str,
        standard_name: &'a str,
        file: &'a std::path::Path,
        variable: &'a str,
    ) -> Result<Self> {
        let mut terms = FormulaTerms {
            pairs: Vec::new(),
            text,
            standard_name,
            file,
            variable,
        };
        terms.pairs = parse_formula_terms(text).ok_or_else(|| {
            terms.fail(format!(
                "formula_terms \"{text}\" is not of the form \"term: variable term: variable ...\""
            ))
        })?;
        Ok(terms)
    }

    fn fail(&self, message: String) -> GridError {
        GridError::Metadata {
            file: self.file.to_path_buf(),
            variable: self.variable.to_string(),
            message,
        }
    }

    /// The variable named for `key`, or an error saying the term is missing.
    fn get(&self, key: &str) -> Result<String> {
        self.pairs
            .iter()
            .find(|(k, _)| k == key)
            .map(|(_, v)| v.clone())
            .ok_or_else(|| {
                self.fail(format!(
                    "formula_terms \"{}\" lacks the term '{key}:' needed by {}",
                    self.text, self.standard_name
                ))
            })
    }
}

/// The formula of the parametric coordinate `name` in `file` (its `standard_name` and
/// `formula_terms` text given), with its per-level terms and `depth_c` read from the file.
pub(crate) fn formula_from(
    file: &InputFile,
    name: &str,
    standard_name: &str,
    terms_text: &str,
) -> Result<Formula> {
    let fail = |message: String| GridError::Metadata {
        file: file.path.clone(),
        variable: name.to_string(),
        message,
    };
    let terms = FormulaTerms::parse(terms_text, standard_name, &file.path, name)?;
    let term = |key: &str| terms.get(key);
    let values_of = |key: &str| -> Result<Vec<f64>> {
        let v = term(key)?;
        let var = require_var(file, &v, "formula_terms")?;
        read_all(&file.path, &var)
    };
    let formula = match standard_name {
        "ocean_sigma_coordinate" => Formula::Sigma {
            sigma: values_of("sigma")?,
        },
        "ocean_s_coordinate_g1" | "ocean_s_coordinate_g2" => {
            let s = values_of("s")?;
            let c = values_of("C")?;
            let dc_name = term("depth_c")?;
            let dc_var = require_var(file, &dc_name, "formula_terms")?;
            let depth_c_raw = read_all(&file.path, &dc_var)?;
            let dc_units = attr_text(&dc_var, "units").unwrap_or_else(|| "m".to_string());
            let dc_factor = units::parse_length(&dc_units).map(|u| u.to_m).map_err(|e| GridError::Units {
                file: file.path.clone(),
                variable: dc_name.clone(),
                message: e.to_string(),
            })?;
            let depth_c = depth_c_raw
                .first()
                .copied()
                .filter(|v| v.is_finite() && *v >= 0.0)
                .ok_or_else(|| fail(format!("depth_c variable '{dc_name}' must hold one finite, non-negative value")))?
                * dc_factor;
            if c.len() != s.len() {
                return Err(fail(format!("formula term C has {} values but s has {}", c.len(), s.len())));
            }
            if standard_name == "ocean_s_coordinate_g1" {
                Formula::SG1 { s, c, depth_c }
            } else {
                Formula::SG2 { s, c, depth_c }
            }
        }
        other => {
            return Err(fail(format!(
                "parametric vertical coordinate '{other}' is not supported; expected ocean_sigma_coordinate, ocean_s_coordinate_g1 or ocean_s_coordinate_g2"
            )))
        }
    };
    let levels_values = formula.level_values();
    if !strictly_monotonic(levels_values) {
        return Err(fail(format!(
            "vertical coordinate values are not strictly monotonic ({levels_values:?})"
        )));
    }
    Ok(formula)
}

impl Formula {
    /// The nondimensional coordinate of each level (sigma or s).
    pub fn level_values(&self) -> &[f64] {
        match self {
            Formula::Sigma { sigma } => sigma,
            Formula::SG1 { s, .. } | Formula::SG2 { s, .. } => s,
        }
    }

    /// Height of level `k` [m, positive up, relative to the datum] for free-surface height
    /// `eta` and sea-floor depth `depth` [m] (CF Conventions Appendix D).
    pub fn height(&self, k: usize, eta: f64, depth: f64) -> f64 {
        match self {
            Formula::Sigma { sigma } => sigma_height(sigma[k], eta, depth),
            Formula::SG1 { s, c, depth_c } => s_g1_height(s[k], c[k], *depth_c, eta, depth),
            Formula::SG2 { s, c, depth_c } => s_g2_height(s[k], c[k], *depth_c, eta, depth),
        }
    }
}

fn strictly_monotonic(values: &[f64]) -> bool {
    values.windows(2).all(|w| w[1] > w[0]) || values.windows(2).all(|w| w[1] < w[0])
}

/// Parses `formula_terms` ("key: var key: var ...") into pairs.
pub(crate) fn parse_formula_terms(text: &str) -> Option<Vec<(String, String)>> {
    let words: Vec<&str> = text.split_whitespace().collect();
    if words.is_empty() || words.len() % 2 != 0 {
        return None;
    }
    words
        .chunks(2)
        .map(|pair| {
            pair[0]
                .strip_suffix(':')
                .map(|key| (key.to_string(), pair[1].to_string()))
        })
        .collect()
}

/// Builds the vertical description from the coordinate variable `name` in `file`.
/// `locate` finds a variable of the run by name (for eta and depth, which may live in other files).
pub(crate) fn vertical_from(
    files: &[InputFile],
    file_index: usize,
    name: &str,
    locate: &dyn Fn(&str) -> Result<VarSource>,
) -> Result<Vertical> {
    let file = &files[file_index];
    let var = require_var(file, name, "the vertical dimension")?;
    let fail = |message: String| GridError::Metadata {
        file: file.path.clone(),
        variable: name.to_string(),
        message,
    };
    let standard_name = attr_text(&var, "standard_name").unwrap_or_default();
    if let Some(terms_text) = attr_text(&var, "formula_terms") {
        let terms = FormulaTerms::parse(&terms_text, &standard_name, &file.path, name)?;
        let term = |key: &str| terms.get(key);
        let length_factor = |var_name: &str, source: &VarSource| -> Result<f64> {
            let holder = &files[source.pieces[0].file];
            let v = require_var(holder, var_name, "formula_terms")?;
            let text = attr_text(&v, "units").unwrap_or_else(|| "m".to_string());
            units::parse_length(&text)
                .map(|u| u.to_m)
                .map_err(|e| GridError::Units {
                    file: holder.path.clone(),
                    variable: var_name.to_string(),
                    message: e.to_string(),
                })
        };
        let formula = formula_from(file, name, &standard_name, &terms_text)?;
        let eta_name = term("eta")?;
        let depth_name = term("depth")?;
        let eta = locate(&eta_name)?;
        let depth = locate(&depth_name)?;
        let eta_to_m = length_factor(&eta_name, &eta)?;
        let depth_to_m = length_factor(&depth_name, &depth)?;
        let term_vars = terms.pairs.iter().map(|(_, v)| v.clone()).collect();
        return Ok(Vertical::Parametric(Box::new(Parametric {
            name: name.to_string(),
            standard_name,
            formula,
            eta,
            eta_to_m,
            depth,
            depth_to_m,
            term_vars,
        })));
    }
    let values = read_all(&file.path, &var)?;
    if values.iter().any(|v| !v.is_finite()) || !strictly_monotonic(&values) {
        return Err(fail(format!(
            "vertical coordinate values must be finite and strictly monotonic (increasing or decreasing); found {values:?}"
        )));
    }
    let units_text = attr_text(&var, "units").unwrap_or_default();
    if let Ok(pressure) = units::parse_pressure(&units_text) {
        if !units_text.is_empty() {
            // `sea_water_pressure` includes the atmosphere: subtract one standard atmosphere, 10.1325 dbar (common practice).
            let atmosphere = if standard_name == "sea_water_pressure" {
                10.1325
            } else {
                0.0
            };
            return Ok(Vertical::Pressures {
                name: name.to_string(),
                dbar: values
                    .iter()
                    .map(|v| v * pressure.to_dbar - atmosphere)
                    .collect(),
            });
        }
    }
    let length = units::parse_length(&units_text).map_err(|e| GridError::Units {
        file: file.path.clone(),
        variable: name.to_string(),
        message: format!("vertical coordinate: {e}"),
    })?;
    let positive = attr_text(&var, "positive").map(|p| p.to_ascii_lowercase());
    let positive_up = match positive.as_deref() {
        Some("up") => true,
        Some("down") => false,
        Some(other) => return Err(fail(format!("`positive` is \"{other}\"; expected \"up\" or \"down\""))),
        None => match standard_name.as_str() {
            "depth" => false,
            "altitude" | "height" | "height_above_geoid" => true,
            _ => {
                return Err(fail(
                    "vertical coordinate has no `positive` attribute; expected positive = \"down\" (depths) or \"up\" (heights)".to_string(),
                ))
            }
        },
    };
    let sign = if positive_up { -1.0 } else { 1.0 };
    Ok(Vertical::Depths {
        name: name.to_string(),
        depth_m: values.iter().map(|v| sign * v * length.to_m).collect(),
        positive_up,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formula_terms_parse() {
        let t = parse_formula_terms("s: s_rho C: Cs_r eta: zeta depth: h depth_c: hc").unwrap();
        assert_eq!(t[1], ("C".to_string(), "Cs_r".to_string()));
        assert!(parse_formula_terms("s s_rho").is_none());
    }

    #[test]
    fn parametric_formulas_at_surface_and_bottom() {
        // At s = 0, C = 0 every formula gives the free surface; at s = -1, C = -1 the bottom.
        assert_eq!(sigma_height(0.0, 0.5, 100.0), 0.5);
        assert!((sigma_height(-1.0, 0.5, 100.0) + 100.0).abs() < 1e-12);
        assert!((s_g1_height(0.0, 0.0, 10.0, 0.5, 100.0) - 0.5).abs() < 1e-12);
        assert!((s_g1_height(-1.0, -1.0, 10.0, 0.5, 100.0) + 100.0).abs() < 1e-12);
        assert!((s_g2_height(0.0, 0.0, 10.0, 0.5, 100.0) - 0.5).abs() < 1e-12);
        assert!((s_g2_height(-1.0, -1.0, 10.0, 0.5, 100.0) + 100.0).abs() < 1e-12);
    }
}
