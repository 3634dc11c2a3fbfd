//! Regenerates the synthetic demo data set in `examples/data/` (or in the folder given as the
//! first argument): four trials, three subject files, the squat's load configuration, a batch
//! manifest and a README. The data are invented; see `gravline::synth::demo`.
//!
//! ```text
//! cargo run --example make_demo_data [OUT_DIR]
//! ```

use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

fn main() -> std::io::Result<()> {
    let dir = std::env::args_os()
        .nth(1)
        .map(PathBuf::from)
        .unwrap_or_else(|| Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/data"));
    fs::create_dir_all(&dir)?;
    for file in gravline::synth::demo::demo_files() {
        let path = dir.join(&file.name);
        // Write to a temporary name and rename, so an interrupted run leaves no truncated file.
        let tmp = dir.join(format!(".{}.tmp", file.name));
        let mut out = fs::File::create(&tmp)?;
        out.write_all(&file.bytes)?;
        out.sync_all()?;
        fs::rename(&tmp, &path)?;
        println!("{} ({} bytes)", path.display(), file.bytes.len());
    }
    Ok(())
}
