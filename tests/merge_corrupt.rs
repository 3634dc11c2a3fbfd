//! `gravline merge` on corrupted Parquet shards: one-bit flips all over a real shard written by
//! `gravline batch --shard` (synthetic standing trials, invented data). A flipped shard is
//! either refused with a located error or, when the flip hits bytes that carry nothing (page
//! padding, statistics), read back into exactly the same rows; the reader never panics, and
//! the binary never exits with a panic's code.

mod batch_common;

use batch_common::*;
use gravline::batch::table::read_parquet;
use std::path::{Path, PathBuf};

/// Runs a 6-trial batch as two shards and returns the Parquet summary of shard 1.
fn shard(dir: &Path) -> PathBuf {
    let (manifest, _) = standing_batch(dir, 6, 60);
    let out = dir.join("out");
    for k in ["1/2", "2/2"] {
        gravline()
            .args(["batch", "--no-plots", "-q", "--shard", k, "--out"])
            .arg(&out)
            .arg(&manifest)
            .assert()
            .success();
    }
    out.join("summary-1-of-2.parquet")
}

/// A small deterministic generator (xorshift64), for the flip positions.
fn xorshift(state: &mut u64) -> u64 {
    *state ^= *state << 13;
    *state ^= *state >> 7;
    *state ^= *state << 17;
    *state
}

#[test]
fn bit_flipped_shards_are_refused_or_read_unchanged_never_a_panic() {
    let dir = tempfile::tempdir().unwrap();
    let path = shard(dir.path());
    let original = std::fs::read(&path).unwrap();
    let rows = read_parquet(&path).unwrap();
    assert_eq!(rows.len(), 3);
    let flipped = dir.path().join("flipped.parquet");
    let mut state = 0x9e37_79b9_7f4a_7c15u64;
    let (mut refused, mut same) = (0, 0);
    // 1000 flips spread over the whole file, then 1000 at random in the footer (the part read
    // before the page checksum can be checked), each of a random bit.
    let n = original.len();
    let pages = gravline::batch::table::parquet_data_region(&original)
        .unwrap()
        .len();
    let footer: Vec<usize> = (0..1000)
        .map(|_| pages + (xorshift(&mut state) % (n - pages) as u64) as usize)
        .collect();
    let positions: Vec<usize> = (0..1000).map(|k| k * n / 1000).chain(footer).collect();
    for &byte in &positions {
        let bit = xorshift(&mut state) % 8;
        let mut bytes = original.clone();
        bytes[byte] ^= 1 << bit;
        std::fs::write(&flipped, &bytes).unwrap();
        match read_parquet(&flipped) {
            Ok(back) => {
                assert_eq!(
                    back, rows,
                    "byte {byte} bit {bit}: read into a different table"
                );
                same += 1;
            }
            Err(e) => {
                let e = e.to_string();
                assert!(
                    e.contains("flipped.parquet") && !e.contains('\n') && e.len() < 600,
                    "byte {byte} bit {bit}: {e}"
                );
                refused += 1;
            }
        }
    }
    eprintln!(
        "{n} bytes ({} of footer); {} one-bit flips: {refused} refused, {same} read unchanged",
        n - pages,
        positions.len()
    );
    assert!(
        refused > positions.len() / 2,
        "{refused} refused, {same} read unchanged"
    );
}

#[test]
fn merge_of_a_corrupted_shard_is_a_located_one_line_error() {
    let dir = tempfile::tempdir().unwrap();
    let path = shard(dir.path());
    let mut bytes = std::fs::read(&path).unwrap();
    // A flip in the middle of the pages.
    let pages = gravline::batch::table::parquet_data_region(&bytes)
        .unwrap()
        .len();
    bytes[pages / 2] ^= 0x10;
    std::fs::write(&path, &bytes).unwrap();
    let output = gravline()
        .arg("merge")
        .arg(&path)
        .arg(path.with_file_name("summary-2-of-2.parquet"))
        .arg("--out")
        .arg(dir.path().join("merged"))
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(2), "{output:?}");
    let err = String::from_utf8_lossy(&output.stderr);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.contains("summary-1-of-2.parquet"), "{err}");
    assert!(!dir.path().join("merged").exists());
}

#[test]
fn a_shard_without_its_checksum_is_refused() {
    use polars::prelude::*;
    let dir = tempfile::tempdir().unwrap();
    let path = shard(dir.path());
    // The same table written again without the row count and checksum metadata.
    let file = std::fs::File::open(&path).unwrap();
    let mut df = ParquetReader::new(file).finish().unwrap();
    let bare = dir.path().join("bare.parquet");
    ParquetWriter::new(std::fs::File::create(&bare).unwrap())
        .finish(&mut df)
        .unwrap();
    let e = read_parquet(&bare).unwrap_err().to_string();
    assert!(
        e.contains("bare.parquet") && e.contains("gravline.rows"),
        "{e}"
    );
}
