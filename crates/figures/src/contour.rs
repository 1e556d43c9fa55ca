//! One contour level of a 2-D field by marching squares on the cell centres, in index space
//! (so curvilinear grids need nothing special); squares touching a missing value are skipped.

use std::collections::HashMap;

/// A point where the level crosses the line between two neighbouring centres, identified by
/// that line: 2·(j·nx + i) for the line to (j, i+1), +1 for the line to (j+1, i).
type Crossing = usize;

/// Polylines of `values` (ny × nx, row-major) at `level`, in fractional (j, i) index
/// coordinates; a cell centre sits at integer indices.
pub(crate) fn contour_lines(
    values: &[f64],
    (ny, nx): (usize, usize),
    level: f64,
) -> Vec<Vec<(f64, f64)>> {
    let crossing_point = |id: Crossing| -> (f64, f64) {
        let k = id / 2;
        let (j, i) = ((k / nx) as f64, (k % nx) as f64);
        let (a, b) = if id % 2 == 0 {
            (values[k], values[k + 1])
        } else {
            (values[k], values[k + nx])
        };
        let t = ((level - a) / (b - a)).clamp(0.0, 1.0);
        if id % 2 == 0 {
            (j, i + t)
        } else {
            (j + t, i)
        }
    };
    let segments = square_segments(values, (ny, nx), level);
    chain(&segments)
        .into_iter()
        .map(|line| line.into_iter().map(crossing_point).collect())
        .collect()
}

/// The crossing pairs of every square whose four corners are valid.
fn square_segments(
    values: &[f64],
    (ny, nx): (usize, usize),
    level: f64,
) -> Vec<(Crossing, Crossing)> {
    let mut segments = Vec::new();
    for j in 0..ny.saturating_sub(1) {
        for i in 0..nx.saturating_sub(1) {
            let k = j * nx + i;
            // Corners in cyclic order: (j,i), (j,i+1), (j+1,i+1), (j+1,i).
            let v = [values[k], values[k + 1], values[k + nx + 1], values[k + nx]];
            if v.iter().any(|x| !x.is_finite()) {
                continue;
            }
            // Sides in the same order: bottom, right, top, left.
            let sides = [2 * k, 2 * (k + 1) + 1, 2 * (k + nx), 2 * k + 1];
            let above = v.map(|x| x >= level);
            let crossed: Vec<usize> = (0..4).filter(|&s| above[s] != above[(s + 1) % 4]).collect();
            match crossed.len() {
                2 => segments.push((sides[crossed[0]], sides[crossed[1]])),
                4 => {
                    // Saddle: the mean of the corners decides which corners connect.
                    let centre_above = v.iter().sum::<f64>() / 4.0 >= level;
                    if centre_above == above[0] {
                        // Corners 1 and 3 are cut off on their own.
                        segments.push((sides[0], sides[1]));
                        segments.push((sides[2], sides[3]));
                    } else {
                        segments.push((sides[3], sides[0]));
                        segments.push((sides[1], sides[2]));
                    }
                }
                _ => {}
            }
        }
    }
    segments
}

/// Joins segments that share a crossing into polylines (open ones first, then loops).
fn chain(segments: &[(Crossing, Crossing)]) -> Vec<Vec<Crossing>> {
    let mut touching: HashMap<Crossing, Vec<usize>> = HashMap::new();
    for (s, &(a, b)) in segments.iter().enumerate() {
        touching.entry(a).or_default().push(s);
        touching.entry(b).or_default().push(s);
    }
    let mut used = vec![false; segments.len()];
    let mut lines = Vec::new();
    let ends: Vec<Crossing> = touching
        .iter()
        .filter(|(_, s)| s.len() == 1)
        .map(|(&c, _)| c)
        .collect();
    let loops = segments.iter().map(|&(a, _)| a);
    for start in ends.into_iter().chain(loops) {
        let mut line = vec![start];
        let mut at = start;
        while let Some(&s) = touching[&at].iter().find(|&&s| !used[s]) {
            used[s] = true;
            let (a, b) = segments[s];
            at = if a == at { b } else { a };
            line.push(at);
        }
        if line.len() > 1 {
            lines.push(line);
        }
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_straight_front_gives_one_line_at_the_interpolated_place() {
        // v = i on a 3 × 4 grid; the level 1.25 lies a quarter of the way from i=1 to i=2.
        let values: Vec<f64> = (0..12).map(|k| (k % 4) as f64).collect();
        let lines = contour_lines(&values, (3, 4), 1.25);
        assert_eq!(lines.len(), 1);
        assert_eq!(lines[0].len(), 3);
        assert!(lines[0].iter().all(|&(_, i)| (i - 1.25).abs() < 1e-12));
    }

    #[test]
    fn a_peak_gives_a_closed_loop() {
        let mut values = vec![0.0; 25];
        values[12] = 1.0;
        let lines = contour_lines(&values, (5, 5), 0.5);
        assert_eq!(lines.len(), 1);
        let line = &lines[0];
        assert_eq!(line.first(), line.last());
        assert_eq!(line.len(), 5);
    }

    #[test]
    fn missing_values_break_the_line() {
        let mut values: Vec<f64> = (0..20).map(|k| (k % 4) as f64).collect();
        values[2 * 4 + 1] = f64::NAN;
        let lines = contour_lines(&values, (5, 4), 1.5);
        assert_eq!(lines.len(), 2);
    }

    #[test]
    fn saddles_split_by_the_centre_mean() {
        // 1 0 / 0 1 with a mean of 0.5 ≥ 0.4: the high corners connect through the middle.
        let lines = contour_lines(&[1.0, 0.0, 0.0, 1.0], (2, 2), 0.4);
        assert_eq!(lines.len(), 2);
        let low_corners = [(0.0, 1.0), (1.0, 0.0)];
        for line in &lines {
            let near = |c: &(f64, f64)| {
                line.iter()
                    .all(|&(j, i)| ((j - c.0).powi(2) + (i - c.1).powi(2)).sqrt() < 0.45)
            };
            assert!(low_corners.iter().any(near), "{line:?}");
        }
    }
}
