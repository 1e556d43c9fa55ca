//! One variable of the run, possibly spread over several files along time, and the
//! reading of its hyperslabs in canonical (level, row, col) order.

use crate::axes::{classify_dims, position, Axis};
use crate::catalog::{dim_lens, InputFile, MaskRule};
use crate::error::{GridError, Result};
use crate::timeline::TimeSpan;
use netcdf::Extent;
use std::ops::Range;

/// One file's part of a variable.
#[derive(Clone, Debug)]
pub(crate) struct Piece {
    pub file: usize,
    pub first_step: usize,
    pub steps: usize,
    pub mask: MaskRule,
}

/// A variable located in the run's files.
#[derive(Clone, Debug)]
pub(crate) struct VarSource {
    pub name: String,
    /// Axes in file order.
    pub axes: Vec<Axis>,
    /// Dimension lengths in file order (time length of the first piece).
    pub lens: Vec<usize>,
    pub pieces: Vec<Piece>,
}

impl VarSource {
    /// Locates `name` in the files of `spans` (time-dependent) or in `file` (static),
    /// checking every file gives it the same axes and non-time lengths.
    pub fn new(name: &str, spans: &[TimeSpan], files: &[InputFile]) -> Result<VarSource> {
        let mut pieces = Vec::with_capacity(spans.len());
        let mut first: Option<(Vec<Axis>, Vec<usize>, usize)> = None;
        for span in spans {
            let file = &files[span.file];
            let var = crate::catalog::require_var(file, name, "the run")?;
            let axes = classify_dims(file, &var)?;
            let lens = dim_lens(&var);
            match &first {
                None => first = Some((axes, lens, span.file)),
                Some((axes0, lens0, file0)) => {
                    let strip = |a: &[Axis], l: &[usize]| -> Vec<(Axis, usize)> {
                        a.iter()
                            .zip(l)
                            .filter(|(a, _)| **a != Axis::T)
                            .map(|(a, l)| (*a, *l))
                            .collect()
                    };
                    let mut want = strip(axes0, lens0);
                    let mut have = strip(&axes, &lens);
                    want.sort_by_key(|(a, _)| *a as u8);
                    have.sort_by_key(|(a, _)| *a as u8);
                    if want != have {
                        return Err(GridError::Mismatch {
                            file: file.path.clone(),
                            variable: name.to_string(),
                            message: format!(
                                "grid shape {} differs from {} in {}",
                                describe_shape(&have),
                                describe_shape(&want),
                                files[*file0].path.display()
                            ),
                        });
                    }
                }
            }
            pieces.push(Piece {
                file: span.file,
                first_step: span.first_step,
                steps: span.steps,
                mask: MaskRule::of(&var),
            });
        }
        let (axes, lens, _) = first.ok_or_else(|| GridError::OutOfRange {
            message: format!("variable {name} located in no file"),
        })?;
        Ok(VarSource {
            name: name.to_string(),
            axes,
            lens,
            pieces,
        })
    }

    /// Length along an axis (None when the variable lacks that axis).
    pub fn len_of(&self, axis: Axis) -> Option<usize> {
        position(&self.axes, axis).map(|i| self.lens[i])
    }

    pub fn has_time(&self) -> bool {
        self.axes.contains(&Axis::T)
    }

    /// Reads one time step (ignored for static variables), all levels, rows `rows`, all
    /// columns; result in canonical order over the axes the variable has (Z, Y, X),
    /// masked to NaN and unpacked.
    pub fn read(&self, files: &[InputFile], step: usize, rows: &Range<usize>) -> Result<Vec<f64>> {
        let piece = if self.has_time() {
            let i = self.pieces.partition_point(|p| p.first_step <= step);
            let piece = i.checked_sub(1).map(|i| &self.pieces[i]);
            match piece {
                Some(p) if step < p.first_step + p.steps => p,
                _ => {
                    return Err(GridError::OutOfRange {
                        message: format!(
                            "time step {step} not in any file of variable {}",
                            self.name
                        ),
                    })
                }
            }
        } else {
            &self.pieces[0]
        };
        let file = &files[piece.file];
        let var = crate::catalog::require_var(file, &self.name, "the run")?;
        let lens = dim_lens(&var);
        let mut extents = Vec::with_capacity(self.axes.len());
        let mut sizes = Vec::with_capacity(self.axes.len());
        for (axis, len) in self.axes.iter().zip(&lens) {
            let (extent, size) = match axis {
                Axis::T => (
                    Extent::SliceCount {
                        start: step - piece.first_step,
                        count: 1,
                        stride: 1,
                    },
                    1,
                ),
                Axis::Y => (
                    Extent::SliceCount {
                        start: rows.start,
                        count: rows.len(),
                        stride: 1,
                    },
                    rows.len(),
                ),
                Axis::Z | Axis::X => (
                    Extent::SliceCount {
                        start: 0,
                        count: *len,
                        stride: 1,
                    },
                    *len,
                ),
            };
            extents.push(extent);
            sizes.push(size);
        }
        let mut raw: Vec<f64> = var.get_values(extents).map_err(|e| GridError::Read {
            file: file.path.clone(),
            variable: self.name.clone(),
            message: e.to_string(),
        })?;
        piece.mask.apply(&mut raw);
        Ok(to_canonical(raw, &self.axes, &sizes))
    }
}

fn describe_shape(dims: &[(Axis, usize)]) -> String {
    let parts: Vec<String> = dims.iter().map(|(a, l)| format!("{a:?}={l}")).collect();
    format!("({})", parts.join(", "))
}

/// Reorders a block read in file order into (Z, Y, X) order (absent axes skipped).
pub(crate) fn to_canonical(raw: Vec<f64>, axes: &[Axis], sizes: &[usize]) -> Vec<f64> {
    let order: Vec<Axis> = axes.iter().copied().filter(|a| *a != Axis::T).collect();
    let canonical: Vec<Axis> = [Axis::Z, Axis::Y, Axis::X]
        .into_iter()
        .filter(|a| order.contains(a))
        .collect();
    if order == canonical {
        return raw;
    }
    let mut strides = vec![0usize; axes.len()];
    let mut acc = 1;
    for i in (0..axes.len()).rev() {
        strides[i] = acc;
        acc *= sizes[i];
    }
    let along = |axis: Axis| -> (usize, usize) {
        position(axes, axis).map_or((1, 0), |i| (sizes[i], strides[i]))
    };
    let (nz, sz) = along(Axis::Z);
    let (ny, sy) = along(Axis::Y);
    let (nx, sx) = along(Axis::X);
    let mut out = Vec::with_capacity(nz * ny * nx);
    for k in 0..nz {
        for j in 0..ny {
            let base = k * sz + j * sy;
            out.extend((0..nx).map(|i| raw[base + i * sx]));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reorders_lon_lat_lev_to_lev_lat_lon() {
        // file order (X=2, Y=3, Z=2): value = 100*z + 10*y + x
        let axes = [Axis::T, Axis::X, Axis::Y, Axis::Z];
        let sizes = [1, 2, 3, 2];
        let mut raw = Vec::new();
        for x in 0..2 {
            for y in 0..3 {
                for z in 0..2 {
                    raw.push((100 * z + 10 * y + x) as f64);
                }
            }
        }
        let out = to_canonical(raw, &axes, &sizes);
        let mut want = Vec::new();
        for z in 0..2 {
            for y in 0..3 {
                for x in 0..2 {
                    want.push((100 * z + 10 * y + x) as f64);
                }
            }
        }
        assert_eq!(out, want);
    }
}
