use super::*;
use acidscape_analysis::regions::{
    FieldSpec, Layer, LayerKind, RegionColumn, RegionRow, RegionSet,
};

#[test]
fn every_row_belongs_to_one_rank_in_whole_units() {
    for rows in [1, 7, 22, 100, 2331] {
        for unit in [1, 3, 22, 2330] {
            for size in 1..6 {
                let bands: Vec<_> = (0..size).map(|r| rows_of(rows, unit, r, size)).collect();
                // Contiguous, in rank order, covering every row once.
                assert_eq!(bands[0].start, 0);
                assert_eq!(bands[size - 1].end, rows);
                for pair in bands.windows(2) {
                    assert_eq!(pair[0].end, pair[1].start);
                }
                // Whole units: a band starts on a unit boundary (so no chunk has two ranks).
                for band in &bands {
                    assert!(band.start % unit == 0 || band.start == rows);
                }
                // Balanced: unit counts differ by at most one, earlier ranks take the extra.
                let units: Vec<usize> = bands.iter().map(|b| b.len().div_ceil(unit)).collect();
                let (most, least) = (units.iter().max().unwrap(), units.iter().min().unwrap());
                assert!(
                    most - least <= 1,
                    "{rows} rows, unit {unit}, {size} ranks: {units:?}"
                );
                assert!(units.windows(2).all(|u| u[0] >= u[1]), "{units:?}");
            }
        }
    }
}

#[test]
fn one_chunk_goes_to_rank_zero() {
    assert_eq!(rows_of(22, 22, 0, 3), 0..22);
    assert_eq!(rows_of(22, 22, 1, 3), 22..22);
    assert_eq!(rows_of(22, 22, 2, 3), 22..22);
}

#[test]
fn every_rank_takes_as_many_turns_and_covers_its_band() {
    // 10 rows in units of 2 over 3 ranks: bands of 4, 4 and 2 rows; blocks of at most 3 rows.
    let all: Vec<_> = (0..3).map(|r| turns(10, 2, 3, r, 3)).collect();
    assert_eq!(all[0], vec![0..3, 3..4]);
    assert_eq!(all[1], vec![4..7, 7..8]);
    assert_eq!(all[2], vec![8..10, 10..10]);
    // One process: the blocks of the whole grid, as a single-process comparison reads them.
    assert_eq!(turns(10, 2, 3, 0, 1), blocks(10, 3).collect::<Vec<_>>());
}

/// A team seen from one rank: its exchange returns what every rank would have sent.
struct Heard {
    rank: usize,
    sent: Vec<Vec<u8>>,
}

impl Team for Heard {
    fn rank(&self) -> usize {
        self.rank
    }
    fn size(&self) -> usize {
        self.sent.len()
    }
    fn create(&self, _: &Path) -> std::result::Result<netcdf::FileMut, String> {
        Err("not in this test".into())
    }
    fn write_together(&self, _: &netcdf::FileMut, _: &Path) -> std::result::Result<(), String> {
        Ok(())
    }
    fn exchange(&self, bytes: &[u8]) -> Vec<Vec<u8>> {
        assert_eq!(
            bytes,
            self.sent[self.rank].as_slice(),
            "a rank sent something else"
        );
        self.sent.clone()
    }
}

/// Regional statistics of `steps` steps over columns `columns` of a synthetic 12-column grid
/// (values chosen so that plain f64 sums depend on the order of adding).
fn statistics(steps: usize, columns: Range<usize>) -> Vec<RegionStatistics> {
    let set = RegionSet::whole_domain("all").unwrap();
    let lon: Vec<f64> = (0..12).map(|c| c as f64).collect();
    let membership = set.membership(&lon, &[0.0; 12], None).unwrap();
    let layers = [Layer::new("surface", LayerKind::SurfaceCell).unwrap()];
    let spec = FieldSpec {
        name: "x".into(),
        units: "1".into(),
        thresholds: vec![1.0],
    };
    (0..steps)
        .map(|step| {
            let mut stats = RegionStatistics::new(&set, &layers, vec![spec.clone()], vec![]);
            for c in columns.clone() {
                let value = [0.1 * (c + step) as f64];
                let column = RegionColumn {
                    area_m2: 1e16f64.powi((c % 3) as i32 - 1) / 3.0,
                    depth_m: &[5.0],
                    volume_m3: &[1.0],
                    cell_values: &[&value],
                    column_values: &[],
                };
                stats.add_column(&membership, c, &column).unwrap();
            }
            stats
        })
        .collect()
}

fn bits(steps: &[RegionStatistics]) -> Vec<u64> {
    let row_bits = |r: &RegionRow| [r.weight, r.missing_weight, r.mean.unwrap_or(-1.0)];
    steps
        .iter()
        .flat_map(|s| s.rows())
        .flat_map(|r| row_bits(&r).map(f64::to_bits))
        .collect()
}

#[test]
fn merged_regional_sums_are_those_of_the_whole_grid_on_every_rank() {
    let whole = statistics(3, 0..12);
    let bands = [0..5, 5..5, 5..12];
    let own: Vec<_> = bands.iter().map(|b| statistics(3, b.clone())).collect();
    let all: Vec<Vec<u8>> = own.iter().map(|s| regional_bytes(s)).collect();
    for (rank, stats) in own.iter().enumerate() {
        let mut mine = stats.clone();
        let team = Heard {
            rank,
            sent: all.clone(),
        };
        merge_regional(&team, &mut mine).unwrap();
        assert_eq!(bits(&mine), bits(&whole), "rank {rank}");
    }
}

#[test]
fn sums_that_do_not_fit_are_an_error_not_a_wrong_table() {
    let mut mine = statistics(3, 0..6);
    let mut theirs = regional_bytes(&statistics(2, 6..12));
    let team = Heard {
        rank: 0,
        sent: vec![regional_bytes(&mine), theirs.clone()],
    };
    assert!(merge_regional(&team, &mut mine).is_err());
    theirs.truncate(theirs.len() - 8);
    let mut mine = statistics(2, 0..6);
    let team = Heard {
        rank: 0,
        sent: vec![regional_bytes(&mine), theirs],
    };
    assert!(merge_regional(&team, &mut mine).is_err());
}

#[test]
fn one_failing_rank_fails_every_rank_with_its_message() {
    let failed = ComparisonError::option("--output", "cannot write here");
    let said = failed.to_string().into_bytes();
    for rank in 0..3 {
        let team = Heard {
            rank,
            sent: vec![Vec::new(), said.clone(), Vec::new()],
        };
        let outcome = if rank == 1 {
            Err(ComparisonError::option("--output", "cannot write here"))
        } else {
            Ok(())
        };
        let message = agree(&team, outcome).unwrap_err().to_string();
        assert_eq!(message, "--output: cannot write here (on rank 1 of 3)");
    }
    let team = Heard {
        rank: 0,
        sent: vec![Vec::new(), Vec::new()],
    };
    assert_eq!(agree(&team, Ok(7)).unwrap(), 7);
}
