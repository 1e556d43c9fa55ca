use super::*;
use crate::flags::{FlagCounts, TEMPERATURE_BELOW};

// FNV-1a 64-bit test vectors of the FNV specification (Fowler, Noll & Vo; IETF draft
// "The FNV Non-Cryptographic Hash Algorithm"): "" -> cbf29ce484222325, "a" ->
// af63dc4c8601ec8c, "foobar" -> 85944171f73967e8 (from memory).
#[test]
fn fnv1a_matches_the_published_test_vectors() {
    let hash = |text: &str| {
        let mut h = Fnv1a64::default();
        h.update(text.as_bytes());
        h.finish()
    };
    assert_eq!(hash(""), 0xcbf2_9ce4_8422_2325);
    assert_eq!(hash("a"), 0xaf63_dc4c_8601_ec8c);
    assert_eq!(hash("foobar"), 0x8594_4171_f739_67e8);
}

#[test]
fn small_files_are_read_whole_and_large_ones_sampled() {
    assert_eq!(sampled_extents(1000), vec![(0, 1000)]);
    let size = 100 * 1024 * 1024 + 17;
    let extents = sampled_extents(size);
    assert_eq!(extents.len() as u64, SAMPLED_BLOCKS + 2);
    assert_eq!(extents[0], (0, EDGE_BYTES));
    assert_eq!(*extents.last().unwrap(), (size - EDGE_BYTES, EDGE_BYTES));
    let read: u64 = extents.iter().map(|(_, n)| n).sum();
    assert!(read <= 384 * 1024);
    for pair in extents.windows(2) {
        assert!(pair[0].0 + pair[0].1 <= pair[1].0, "{pair:?}");
    }
}

fn counts(n: u64) -> FlagCounts {
    let mut c = FlagCounts::default();
    for _ in 0..n {
        c.record(TEMPERATURE_BELOW);
    }
    c
}

#[test]
fn copies_and_touched_files_keep_their_identity_and_edits_change_it() {
    let dir = tempfile::tempdir().unwrap();
    let original = dir.path().join("a.nc");
    // 1 MiB of varied bytes: sampled, not read whole.
    let bytes: Vec<u8> = (0..1u32 << 20)
        .map(|i| (i.wrapping_mul(2_654_435_761) >> 13) as u8)
        .collect();
    fs::write(&original, &bytes).unwrap();
    let identity = ContentIdentity::of(&original).unwrap();

    let copy_dir = dir.path().join("scratch");
    fs::create_dir(&copy_dir).unwrap();
    let copy = copy_dir.join("a.nc");
    fs::copy(&original, &copy).unwrap();
    let later = std::time::SystemTime::now() + std::time::Duration::from_secs(3600);
    fs::File::options()
        .write(true)
        .open(&copy)
        .unwrap()
        .set_modified(later)
        .unwrap();
    assert_eq!(ContentIdentity::of(&copy).unwrap(), identity);

    // One byte changed in the header, in a sampled block, or the size: another identity.
    let in_a_block = sampled_extents(bytes.len() as u64)[8].0 as usize + 100;
    for offset in [10usize, in_a_block, bytes.len() - 5] {
        let mut edited = bytes.clone();
        edited[offset] ^= 0x40;
        fs::write(&copy, &edited).unwrap();
        assert_ne!(
            ContentIdentity::of(&copy).unwrap(),
            identity,
            "byte {offset}"
        );
    }
    fs::write(&copy, &bytes[..bytes.len() - 1]).unwrap();
    assert_ne!(ContentIdentity::of(&copy).unwrap(), identity);
}

fn input(hash: u64, steps: Option<Range<usize>>, path: &str) -> InputRecord {
    InputRecord {
        identity: ContentIdentity { size: 100, hash },
        steps,
        path: PathBuf::from(path),
    }
}

/// Three files of four steps each and a static file; 6 steps done.
fn interrupted() -> ProgressRecord {
    let inputs = vec![
        input(1, Some(0..4), "/run/part 0.nc"),
        input(2, Some(4..8), "/run/part1.nc"),
        input(3, Some(8..12), "/run/part2.nc"),
        input(4, None, "/run/area.nc"),
    ];
    let mut record = ProgressRecord::new(vec!["acidscape 0.1.0".into()], inputs);
    record.finish_steps(0);
    for step in 1..=6 {
        record.counts += counts(10);
        record.finish_steps(step);
    }
    record
}

#[test]
fn saves_and_loads_with_checkpoints_at_file_starts() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join(".out.nc.partial.progress");
    let record = interrupted();
    assert_eq!(
        record
            .checkpoints
            .iter()
            .map(|(s, _)| *s)
            .collect::<Vec<_>>(),
        vec![0, 4]
    );
    assert_eq!(record.checkpoints[1].1, counts(40));
    record.save(&path).unwrap();
    assert!(!temporary_path(&path).exists());
    assert_eq!(ProgressRecord::load(&path).unwrap(), record);
    // The text ranks of an MPI job are given by rank 0 reads back the same.
    assert_eq!(
        ProgressRecord::parse(&record.text(), &path).unwrap(),
        record
    );
}

#[test]
fn rejects_foreign_damaged_and_older_records_with_a_way_out() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("p");
    for text in [
        "hello\n",
        "acidscape-progress 1\nsteps_done 3\nflag_counts 120 4 0 1 30\n",
        "acidscape-progress 2\nsteps_done three\n",
        "acidscape-progress 2\nsteps_done 3\n",
    ] {
        fs::write(&path, text).unwrap();
        let err = ProgressRecord::load(&path).unwrap_err().to_string();
        assert!(err.contains("--overwrite"), "{text}: {err}");
    }
}

#[test]
fn unchanged_inputs_resume_where_the_run_stopped() {
    let record = interrupted();
    // Same content at other paths (a new scratch copy) is the same input.
    let moved: Vec<InputRecord> = record
        .inputs
        .iter()
        .map(|i| InputRecord {
            path: PathBuf::from("/scratch/elsewhere").join(i.path.file_name().unwrap()),
            ..i.clone()
        })
        .collect();
    let point = record.resume_point(&moved).unwrap();
    assert_eq!((point.step, point.counts), (6, record.counts));
    assert!(point.replaced.is_empty());
}

/// The record's inputs with the content of file `index` changed.
fn changed(record: &ProgressRecord, index: usize) -> Vec<InputRecord> {
    let mut now = record.inputs.clone();
    now[index].identity.hash ^= 0xff;
    now
}

#[test]
fn a_replaced_file_not_yet_read_is_accepted() {
    let record = interrupted();
    let point = record.resume_point(&changed(&record, 2)).unwrap();
    assert_eq!(point.step, 6);
    assert_eq!(point.replaced, vec![PathBuf::from("/run/part2.nc")]);
}

#[test]
fn a_replaced_file_read_in_part_is_computed_again_from_its_first_step() {
    let record = interrupted();
    let point = record.resume_point(&changed(&record, 1)).unwrap();
    assert_eq!((point.step, point.counts), (4, counts(40)));
}

#[test]
fn a_changed_file_that_finished_steps_used_in_full_is_refused_by_name() {
    let record = interrupted();
    let err = record.resume_point(&changed(&record, 0)).unwrap_err();
    assert!(
        err.contains("/run/part 0.nc") && err.contains("--overwrite"),
        "{err}"
    );

    let mut now = record.inputs.clone();
    now[3].identity.size = 101;
    let err = record.resume_point(&now).unwrap_err();
    assert!(
        err.contains("/run/area.nc") && err.contains("every finished"),
        "{err}"
    );

    let err = record.resume_point(&record.inputs[..3]).unwrap_err();
    assert!(err.contains("4 input files"), "{err}");
}
