use super::*;
use crate::geometry::{rectilinear_cell_areas, EARTH_MEAN_RADIUS_M};
use proptest::prelude::*;
use std::f64::consts::PI;

/// A synthetic column: volumes, Ω of both minerals, horizon depths per threshold.
#[derive(Clone, Debug)]
struct Col {
    area: f64,
    volume: Vec<f64>,
    aragonite: Vec<f64>,
    calcite: Vec<f64>,
    aragonite_horizon: Vec<Option<f64>>,
    calcite_horizon: Vec<Option<f64>>,
}

impl Col {
    fn view(&self) -> ExtentColumn<'_> {
        ExtentColumn {
            area_m2: self.area,
            volume_m3: &self.volume,
            aragonite: MineralColumn {
                omega: &self.aragonite,
                horizon_m: &self.aragonite_horizon,
            },
            calcite: MineralColumn {
                omega: &self.calcite,
                horizon_m: &self.calcite_horizon,
            },
        }
    }
}

fn thresholds() -> ExtentThresholds {
    ExtentThresholds::new(vec![1.0, 1.5, 3.0], vec![1.0]).unwrap()
}

fn accumulate(columns: &[Col]) -> CorrosiveExtent {
    let mut e = CorrosiveExtent::new(thresholds());
    for c in columns {
        e.add_column(&c.view()).unwrap();
    }
    e
}

fn column_strategy() -> impl Strategy<Value = Col> {
    (0usize..12).prop_flat_map(|n| {
        (
            1e6f64..1e10,
            prop::collection::vec(1e5f64..1e12, n),
            prop::collection::vec(prop_oneof![9 => 0.3f64..4.0, 1 => Just(f64::NAN)], n),
            prop::collection::vec(0.8f64..6.0, n),
            prop::collection::vec(prop::option::of(0.0f64..5000.0), 3),
            prop::option::of(0.0f64..5000.0),
        )
            .prop_map(|(area, volume, aragonite, calcite, ah, ch)| Col {
                area,
                volume,
                aragonite,
                calcite,
                aragonite_horizon: ah,
                calcite_horizon: vec![ch],
            })
    })
}

fn bits(summary: &ExtentSummary) -> Vec<Option<u64>> {
    summary
        .rows()
        .iter()
        .map(|r| r.value.map(f64::to_bits))
        .collect()
}

proptest! {
    #[test]
    fn any_slab_split_and_merge_order_gives_the_same_bits(
        columns in prop::collection::vec(column_strategy(), 1..40),
        cuts in prop::collection::vec(0usize..40, 0..5),
    ) {
        let whole = accumulate(&columns).summary();
        let mut cuts: Vec<usize> = cuts.into_iter().map(|c| c.min(columns.len())).collect();
        cuts.sort();
        let mut parts = Vec::new();
        let mut start = 0;
        for cut in cuts.into_iter().chain([columns.len()]) {
            parts.push(accumulate(&columns[start..cut]));
            start = cut;
        }
        // Merge in reverse order, as ranks finishing in any order would.
        let mut merged = CorrosiveExtent::new(thresholds());
        for p in parts.iter().rev() {
            merged.merge(p).unwrap();
        }
        prop_assert_eq!(bits(&merged.summary()), bits(&whole));
    }

    #[test]
    fn omega_below_one_everywhere_makes_all_wet_water_corrosive(
        volumes in prop::collection::vec(prop::collection::vec(1e3f64..1e12, 1..30), 1..20),
    ) {
        // Issue 8: a synthetic field with Ω < 1 everywhere gives corrosive volume = wet volume.
        let columns: Vec<Col> = volumes
            .into_iter()
            .map(|volume| Col {
                area: 1e8,
                aragonite: vec![0.9; volume.len()],
                calcite: vec![0.99; volume.len()],
                volume,
                aragonite_horizon: vec![Some(0.0); 3],
                calcite_horizon: vec![Some(0.0)],
            })
            .collect();
        let s = accumulate(&columns).summary();
        prop_assert_eq!(s.aragonite.below[0].volume_m3.to_bits(), s.wet_volume_m3.to_bits());
        prop_assert_eq!(s.calcite.below[0].volume_m3.to_bits(), s.wet_volume_m3.to_bits());
        prop_assert_eq!(s.aragonite.below[0].surface_area_m2, s.sea_surface_area_m2);
        prop_assert_eq!(s.aragonite.below[0].mean_horizon_depth_m, Some(0.0));
    }
}

/// One-level columns of a global 1° grid with surface Ω aragonite from `omega(lat)` and
/// a horizon depth from `depth(lat)`.
fn global_surface(omega: impl Fn(f64) -> f64, depth: impl Fn(f64) -> Option<f64>) -> Vec<Col> {
    let lon: Vec<[f64; 2]> = (0..360).map(|i| [i as f64, i as f64 + 1.0]).collect();
    let lat: Vec<[f64; 2]> = (0..180)
        .map(|j| [j as f64 - 90.0, j as f64 - 89.0])
        .collect();
    let areas = rectilinear_cell_areas(&lon, &lat, EARTH_MEAN_RADIUS_M).unwrap();
    areas
        .iter()
        .enumerate()
        .map(|(c, &area)| {
            let centre = lat[c / 360][0] + 0.5;
            Col {
                area,
                volume: vec![area * 10.0],
                aragonite: vec![omega(centre)],
                calcite: vec![2.0],
                aragonite_horizon: vec![depth(centre); 3],
                calcite_horizon: vec![None],
            }
        })
        .collect()
}

#[test]
fn surface_area_of_a_polar_cap() {
    // Surface Ω aragonite < 1 north of 60°N: a spherical cap of area 2πR²(1 − sin 60°)
    // (Archimedes' hat-box theorem).
    let s = accumulate(&global_surface(
        |lat| if lat > 60.0 { 0.5 } else { 2.0 },
        |_| None,
    ))
    .summary();
    let r = EARTH_MEAN_RADIUS_M;
    let cap = 2.0 * PI * r * r * (1.0 - 60f64.to_radians().sin());
    assert!((s.aragonite.below[0].surface_area_m2 / cap - 1.0).abs() < 1e-12);
    assert!((s.sea_surface_area_m2 / (4.0 * PI * r * r) - 1.0).abs() < 1e-12);
    assert_eq!(s.aragonite.below[0].mean_horizon_depth_m, None);
    assert_eq!(s.aragonite.below[0].horizon_area_m2, 0.0);
}

#[test]
fn mean_horizon_depth_is_area_weighted() {
    // 1000 m in the northern hemisphere, 500 m in the southern: equal areas, mean 750 m. With
    // no horizon south of the equator, the mean is 1000 m over half the sphere.
    let depth_ns = |lat: f64| Some(if lat > 0.0 { 1000.0 } else { 500.0 });
    let s = accumulate(&global_surface(|_| 2.0, depth_ns)).summary();
    let mean = s.aragonite.below[0].mean_horizon_depth_m.unwrap();
    assert!((mean - 750.0).abs() < 1e-9);
    let north = |lat: f64| (lat > 0.0).then_some(1000.0);
    let s = accumulate(&global_surface(|_| 2.0, north)).summary();
    let t = &s.aragonite.below[0];
    assert!((t.mean_horizon_depth_m.unwrap() - 1000.0).abs() < 1e-9);
    assert!((t.horizon_area_m2 / s.sea_surface_area_m2 - 0.5).abs() < 1e-12);
}

#[test]
fn missing_omega_counts_as_wet_but_not_as_known() {
    let c = Col {
        area: 4.0,
        volume: vec![40.0, 80.0, 120.0],
        aragonite: vec![f64::NAN, 0.9, 2.0],
        calcite: vec![2.0, 2.0, 0.5],
        aragonite_horizon: vec![None; 3],
        calcite_horizon: vec![Some(150.0)],
    };
    let s = accumulate(&[c]).summary();
    assert_eq!(s.wet_volume_m3, 240.0);
    assert_eq!(s.aragonite.volume_with_omega_m3, 200.0);
    assert_eq!(s.aragonite.surface_area_with_omega_m2, 0.0);
    assert_eq!(s.aragonite.below[0].volume_m3, 80.0);
    assert_eq!(s.aragonite.below[1].volume_m3, 80.0);
    assert_eq!(s.aragonite.below[2].volume_m3, 200.0);
    assert_eq!(s.aragonite.below[0].surface_area_m2, 0.0);
    assert_eq!(s.calcite.below[0].volume_m3, 120.0);
    assert_eq!(s.calcite.below[0].mean_horizon_depth_m, Some(150.0));
    let rows = s.rows();
    let fraction = rows
        .iter()
        .find(|r| r.quantity == "volume_fraction_below_threshold" && r.threshold == Some(1.0))
        .unwrap();
    assert_eq!(fraction.value, Some(0.4));
    assert_eq!(fraction.mineral, Some(Mineral::Aragonite));
    // Rows: 2 totals + aragonite (1 + 3 × 5) + calcite (1 + 1 × 5).
    assert_eq!(rows.len(), 2 + 16 + 6);
}

#[test]
fn land_columns_add_nothing() {
    let land = Col {
        area: 1e9,
        volume: vec![],
        aragonite: vec![],
        calcite: vec![],
        aragonite_horizon: vec![None; 3],
        calcite_horizon: vec![None],
    };
    let e = accumulate(&[land]);
    assert_eq!(e, CorrosiveExtent::new(thresholds()));
}

#[test]
fn bad_inputs_are_errors() {
    assert!(ExtentThresholds::new(vec![1.0, 1.0], vec![]).is_err());
    assert!(ExtentThresholds::new(vec![1.0], vec![0.0]).is_err());
    assert!(ExtentThresholds::new(vec![f64::NAN], vec![]).is_err());
    let mut e = CorrosiveExtent::new(thresholds());
    let mut c = Col {
        area: 1.0,
        volume: vec![1.0, 2.0],
        aragonite: vec![1.0],
        calcite: vec![1.0, 1.0],
        aragonite_horizon: vec![None; 3],
        calcite_horizon: vec![None],
    };
    assert!(matches!(
        e.add_column(&c.view()),
        Err(ExtentError::Length { .. })
    ));
    c.aragonite = vec![1.0, 1.0];
    c.volume[1] = -2.0;
    assert!(matches!(
        e.add_column(&c.view()),
        Err(ExtentError::Measure { .. })
    ));
    let other = CorrosiveExtent::new(ExtentThresholds::new(vec![1.0], vec![1.0]).unwrap());
    assert_eq!(e.merge(&other), Err(ExtentError::DifferentThresholds));
}

#[test]
fn state_survives_a_round_trip_through_text() {
    // Accumulators travel between processes serialised; TOML stands in for any serde format.
    let columns = global_surface(|lat| if lat > 30.0 { 0.8 } else { 1.2 }, |_| Some(42.0));
    let e = accumulate(&columns[..1000]);
    let text = toml::to_string(&e).unwrap();
    let back: CorrosiveExtent = toml::from_str(&text).unwrap();
    assert_eq!(bits(&back.summary()), bits(&e.summary()));
}

#[test]
fn state_survives_a_round_trip_through_a_flat_list() {
    let columns = global_surface(|lat| if lat > 30.0 { 0.8 } else { 1.2 }, |_| Some(42.0));
    let (first, second) = (accumulate(&columns[..700]), accumulate(&columns[700..1000]));
    let mut merged = CorrosiveExtent::new(thresholds());
    merged.merge_flat(&second.to_flat()).unwrap();
    merged.merge_flat(&first.to_flat()).unwrap();
    assert_eq!(
        bits(&merged.summary()),
        bits(&accumulate(&columns[..1000]).summary())
    );
    let flat = first.to_flat();
    let mut other = CorrosiveExtent::new(thresholds());
    assert_eq!(other.merge_flat(&flat[1..]), Err(ExtentError::FlatList));
    assert_eq!(
        other.merge_flat(&flat[..flat.len() - 1]),
        Err(ExtentError::FlatList)
    );
    let mut longer = flat.clone();
    longer.push(0.0);
    assert_eq!(other.merge_flat(&longer), Err(ExtentError::FlatList));
}
