//! `loadfit gen --rows N --seed S --out FILE`: a synthetic library for benchmarks and tests.

use super::{CliError, Output};
use loadfit::write::write_atomic_with;
use std::path::PathBuf;

/// Arguments of `gen`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// How many parts.
    #[arg(long, default_value_t = 100_000)]
    rows: u64,
    /// The seed: the same seed gives the same file.
    #[arg(long, default_value_t = 1)]
    seed: u64,
    /// Where to write the CSV file.
    #[arg(long)]
    out: PathBuf,
    /// Replace the file if it exists.
    #[arg(long)]
    force: bool,
}

/// Writes the file atomically; exit 0.
pub fn run(args: &Args, out: &mut Output) -> Result<u8, CliError> {
    write_atomic_with(&args.out, args.force, |file| {
        loadfit::synthetic::write_library(file, args.rows, args.seed)
    })?;
    out.line(&format!(
        "wrote {} synthetic parts to {}",
        args.rows,
        args.out.display()
    ))?;
    Ok(0)
}
