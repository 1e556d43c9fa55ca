//! Section paths through grids: the cells crossed, in order, with along-path distances.
//! Distances are checked against the haversine formula on a sphere of the same radius
//! (Sinnott 1984, Sky and Telescope 68, 159; from memory), computed here independently.

mod common;

use acidscape_figures::{great_circle_km, sample_path, EARTH_RADIUS_KM};
use common::*;

fn haversine_km((lon1, lat1): (f64, f64), (lon2, lat2): (f64, f64)) -> f64 {
    let (p1, p2) = (lat1.to_radians(), lat2.to_radians());
    let dp = p2 - p1;
    let dl = (lon2 - lon1).to_radians();
    let a = (dp / 2.0).sin().powi(2) + p1.cos() * p2.cos() * (dl / 2.0).sin().powi(2);
    2.0 * EARTH_RADIUS_KM * a.sqrt().asin()
}

#[test]
fn great_circle_distances_match_the_haversine_formula() {
    let pairs = [
        ((200.0, 30.0), (212.0, 39.0)),
        ((-170.0, 10.0), (170.0, -10.0)),
        ((0.0, 0.0), (0.0, 1.0)),
    ];
    for (a, b) in pairs {
        assert!(
            (great_circle_km(a, b) - haversine_km(a, b)).abs() < 1e-6,
            "{a:?} {b:?}"
        );
    }
}

#[test]
fn a_path_along_the_equator_visits_each_column_in_turn() {
    let lons: Vec<f64> = (0..10).map(|i| i as f64 + 0.5).collect();
    let grid = one_degree_grid(&lons, &[0.0]);
    let start = (0.2, 0.0);
    let path = sample_path(&grid, &[start, (9.7, 0.0)]).unwrap();
    let visited: Vec<(usize, usize)> = path.iter().map(|c| (c.j, c.i)).collect();
    assert_eq!(visited, (0..10).map(|i| (0, i)).collect::<Vec<_>>());
    for (k, cell) in path.iter().enumerate().take(9) {
        assert!(
            (cell.exit.0 - (k as f64 + 1.0)).abs() < 1e-6,
            "exit {:?}",
            cell.exit
        );
        let expected = haversine_km(start, (k as f64 + 1.0, 0.0));
        assert!(
            (cell.end_km - expected).abs() < 1e-3,
            "boundary {k}: {} vs {expected}",
            cell.end_km
        );
        assert_eq!(cell.end_km, path[k + 1].start_km);
    }
    let total = haversine_km(start, (9.7, 0.0));
    assert!((path.last().unwrap().end_km - total).abs() < 1e-9);
}

#[test]
fn a_path_across_the_dateline_keeps_going() {
    // Centres 175.5 … 179.5, −179.5 … −175.5 written the −180…180 way.
    let lons = dateline_lons(175.5, 10);
    let grid = one_degree_grid(&lons, &[9.5, 10.5]);
    let path = sample_path(&grid, &[(175.2, 10.2), (-175.2, 10.2)]).unwrap();
    let columns: Vec<usize> = path.iter().map(|c| c.i).collect();
    assert_eq!(columns, (0..10).collect::<Vec<_>>());
    let total = haversine_km((175.2, 10.2), (-175.2, 10.2));
    assert!((path.last().unwrap().end_km - total).abs() < 1e-9);
    assert!(total < 1100.0, "went the long way round: {total} km");
}

#[test]
fn a_path_through_a_rotated_grid_steps_between_neighbours() {
    // A 20 × 20 patch of 0.25° cells rotated by 30° about 206 °E, 34.5 °N.
    let (grid, _, _) = turned_patch(20, 0.25);
    let ends = [turned(-2.4, -1.0), turned(0.3, 0.2), turned(2.4, 2.3)];
    let path = sample_path(&grid, &ends).unwrap();
    assert!(path.len() > 20);
    for pair in path.windows(2) {
        let (a, b) = (&pair[0], &pair[1]);
        let step = (a.j as i64 - b.j as i64).abs() + (a.i as i64 - b.i as i64).abs();
        assert!(
            step == 1 || step == 2,
            "jump from {:?} to {:?}",
            (a.j, a.i),
            (b.j, b.i)
        );
        assert_eq!(a.end_km, b.start_km);
        assert!(a.end_km > a.start_km);
    }
    let total = haversine_km(ends[0], ends[1]) + haversine_km(ends[1], ends[2]);
    assert!((path.last().unwrap().end_km - total).abs() < 1e-6);
    assert!(path[0].start_km.abs() < 1e-12);
}

#[test]
fn a_path_leaving_the_grid_skips_the_outside() {
    let lons: Vec<f64> = (0..4).map(|i| i as f64 + 0.5).collect();
    let grid = one_degree_grid(&lons, &[0.5]);
    let path = sample_path(&grid, &[(-1.0, 0.5), (5.0, 0.5)]).unwrap();
    assert_eq!(path.len(), 4);
    let entry = haversine_km((-1.0, 0.5), (0.0, 0.5));
    assert!(
        (path[0].start_km - entry).abs() < 0.01,
        "{} vs {entry}",
        path[0].start_km
    );
    assert!(sample_path(&grid, &[(1.0, 0.5)]).is_err());
    assert!(sample_path(&grid, &[(1.0, 0.5), (2.0, 95.0)]).is_err());
}
