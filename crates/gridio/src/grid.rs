//! The run's horizontal grid: rectilinear (1-D latitude/longitude coordinate variables) or
//! curvilinear (2-D latitude/longitude named in `coordinates`, or the 2-D latitude and
//! longitude variables model families write, `native.rs`), and the checks that every input
//! lies on it.

use crate::axes::{auxiliary_coordinates, axis_of_coordinate, is_degrees, Axis};
use crate::catalog::{attr_text, dim_names, read_all, require_var, InputFile};
use crate::error::{GridError, Result};
use crate::native::NATIVE_LATITUDE_LONGITUDE;
use crate::run::{Horizontal, Input};
use crate::source::{Piece, VarSource};

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-6 * a.abs().max(b.abs()).max(1.0)
}

/// Latitude (`north`) or longitude by CF `standard_name` or by units degrees_north/east
/// (CF section 4.1), whatever else a model writes as standard name (ROMS:
/// grid_latitude_at_cell_center).
fn is_geographic(v: &netcdf::Variable, north: bool) -> bool {
    let (name, axis, word) = if north {
        ("latitude", Axis::Y, "north")
    } else {
        ("longitude", Axis::X, "east")
    };
    let sn = attr_text(v, "standard_name").unwrap_or_default();
    let units = attr_text(v, "units").unwrap_or_default();
    sn == name
        || is_degrees(&units, north)
        || (sn.is_empty()
            && axis_of_coordinate(v) == Some(axis)
            && units.to_ascii_lowercase().contains(word))
}

fn is_latitude(v: &netcdf::Variable) -> bool {
    is_geographic(v, true)
}

fn is_longitude(v: &netcdf::Variable) -> bool {
    is_geographic(v, false)
}

/// Horizontal grid of the reference variable `ref_name` in `files[grid_file]`.
pub(crate) fn horizontal_grid(
    files: &[InputFile],
    grid_file: usize,
    ref_name: &str,
    y_dim: &str,
    x_dim: &str,
) -> Result<Horizontal> {
    let file = &files[grid_file];
    let var = require_var(file, ref_name, "the run")?;
    let mut horizontal = Horizontal {
        curvilinear: false,
        y_dim: y_dim.to_string(),
        x_dim: x_dim.to_string(),
        lat_name: None,
        lon_name: None,
        latitude: None,
        grid_mapping: attr_text(&var, "grid_mapping").filter(|g| file.nc.variable(g).is_some()),
    };
    let on_grid = |v: &netcdf::Variable| {
        let dims = dim_names(v);
        dims.len() == 2 && dims.contains(&y_dim.to_string()) && dims.contains(&x_dim.to_string())
    };
    let one_d_lat = file.nc.variable(y_dim).filter(|v| is_latitude(v));
    let one_d_lon = file.nc.variable(x_dim).filter(|v| is_longitude(v));
    // Where the latitude lives (the grid file, or another input such as a static file).
    let mut lat_file = grid_file;
    if one_d_lat.is_some() {
        horizontal.lat_name = Some(y_dim.to_string());
        horizontal.lon_name = one_d_lon.map(|_| x_dim.to_string());
    } else {
        for aux in auxiliary_coordinates(file, &var) {
            let Some(v) = file.nc.variable(&aux) else {
                continue;
            };
            if on_grid(&v) && is_latitude(&v) {
                horizontal.lat_name = Some(aux.clone());
                horizontal.curvilinear = true;
            } else if on_grid(&v) && is_longitude(&v) {
                horizontal.lon_name = Some(aux.clone());
            }
        }
        // No `coordinates` attribute: the 2-D latitude/longitude a model family writes.
        if horizontal.lat_name.is_none() {
            let search =
                std::iter::once(grid_file).chain((0..files.len()).filter(|f| *f != grid_file));
            'files: for f in search {
                for (lat, lon, _) in NATIVE_LATITUDE_LONGITUDE {
                    if let Some(v) = files[f]
                        .nc
                        .variable(lat)
                        .filter(|v| on_grid(v) && is_latitude(v))
                    {
                        drop(v);
                        horizontal.lat_name = Some(lat.to_string());
                        horizontal.lon_name = files[f]
                            .nc
                            .variable(lon)
                            .filter(|v| on_grid(v))
                            .map(|_| lon.to_string());
                        horizontal.curvilinear = true;
                        lat_file = f;
                        break 'files;
                    }
                }
            }
        }
    }
    if let Some(lat) = &horizontal.lat_name {
        let holder = &files[lat_file];
        let lat_var = require_var(holder, lat, "the grid")?;
        // Latitude's dimensions are the run's Y (and X) dimensions.
        let axes = dim_names(&lat_var)
            .iter()
            .map(|d| if d == y_dim { Axis::Y } else { Axis::X })
            .collect::<Vec<_>>();
        let piece = Piece::whole(holder, lat_file, &lat_var, axes.clone());
        horizontal.latitude = Some(VarSource {
            name: lat.clone(),
            axes,
            lens: crate::catalog::dim_lens(&lat_var),
            pieces: vec![piece],
            data: Default::default(),
        });
    }
    Ok(horizontal)
}

/// Every file holding an input must carry the same latitude/longitude values as the grid file.
pub(crate) fn check_same_horizontal(
    files: &[InputFile],
    inputs: &[Input],
    grid_file: usize,
    horizontal: &Horizontal,
) -> Result<()> {
    let names: Vec<&String> = horizontal
        .lat_name
        .iter()
        .chain(horizontal.lon_name.iter())
        .collect();
    let mut reference = Vec::new();
    let mut reference_file = grid_file;
    for name in &names {
        let holder = (0..files.len())
            .find(|f| *f == grid_file && files[*f].nc.variable(name).is_some())
            .or_else(|| (0..files.len()).find(|f| files[*f].nc.variable(name).is_some()));
        let Some(f) = holder else {
            continue;
        };
        reference_file = f;
        let var = require_var(&files[f], name, "the grid")?;
        reference.push((name, read_all(&files[f].path, &var)?));
    }
    let mut checked = vec![false; files.len()];
    checked[reference_file] = true;
    for input in inputs {
        for piece in &input.source.pieces {
            if std::mem::replace(&mut checked[piece.file], true) {
                continue;
            }
            let file = &files[piece.file];
            for (name, want) in &reference {
                let Some(var) = file.nc.variable(name) else {
                    continue;
                };
                let have = read_all(&file.path, &var)?;
                let same = have.len() == want.len()
                    && have
                        .iter()
                        .zip(want)
                        .all(|(a, b)| close(*a, *b) || (a.is_nan() && b.is_nan()));
                if !same {
                    return Err(GridError::Mismatch {
                        file: file.path.clone(),
                        variable: name.to_string(),
                        message: format!(
                            "coordinate values differ from those in {}; expected all files on one grid",
                            files[reference_file].path.display()
                        ),
                    });
                }
            }
        }
    }
    Ok(())
}

/// Lengths of the reference variable's axes, which every input must share.
pub(crate) struct GridLengths<'a> {
    pub rows: usize,
    pub cols: usize,
    pub levels: Option<usize>,
    pub ref_name: &'a str,
    pub ref_file: &'a std::path::Path,
}

/// Every input on the reference grid (rows, columns, and levels for per-cell inputs).
pub(crate) fn check_on_grid(
    files: &[InputFile],
    inputs: &[Input],
    grid: &GridLengths,
) -> Result<()> {
    for input in inputs {
        let file = &files[input.source.pieces[0].file];
        let expect = |axis: Axis, want: Option<usize>, label: &str| -> Result<()> {
            let have = input.source.len_of(axis);
            let ok = match (have, want) {
                (Some(h), Some(w)) => h == w,
                (None, _) => {
                    axis != Axis::Y
                        && axis != Axis::X
                        && !(input.role.per_cell() && want.is_some_and(|w| w > 1))
                }
                (Some(h), None) => h == 1,
            };
            if ok {
                Ok(())
            } else {
                Err(GridError::Mismatch {
                    file: file.path.clone(),
                    variable: input.name.clone(),
                    message: format!(
                        "{label} length is {} but DIC '{}' in {} has {}; expected all inputs on one grid",
                        have.map_or("absent".to_string(), |h| h.to_string()),
                        grid.ref_name,
                        grid.ref_file.display(),
                        want.map_or("none".to_string(), |w| w.to_string())
                    ),
                })
            }
        };
        expect(Axis::Y, Some(grid.rows), "Y (rows)")?;
        expect(Axis::X, Some(grid.cols), "X (columns)")?;
        if input.role.per_cell() {
            expect(Axis::Z, grid.levels, "vertical")?;
        }
    }
    Ok(())
}
