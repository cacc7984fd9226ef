//! `loadfit needs STAGE [--parts PATH] [--format text|json|md]`: what every role of the stage
//! needs, with the working behind each number.

use super::{CliError, Output, load_parts};
use loadfit::needs::{self, report};
use loadfit::stage::Stage;
use std::path::PathBuf;

/// Arguments of `needs`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The stage file (TOML).
    stage: PathBuf,
    /// Output format: text (one line a need), json (the binding document) or md (a review report).
    #[arg(long, value_enum, default_value = "text")]
    format: Format,
}

#[derive(Debug, Clone, Copy, clap::ValueEnum)]
enum Format {
    Text,
    Json,
    Md,
}

/// Exit 0 with no error problem, 1 with one, 2 when the stage or the library cannot be read.
pub fn run(args: &Args, parts: &[PathBuf], out: &mut Output) -> Result<u8, CliError> {
    let stage = Stage::read(&args.stage)?;
    let library = load_parts(parts)?;
    let needs = needs::compute(&stage, Some(&library));
    let text = match args.format {
        Format::Text => report::to_text(&needs),
        Format::Json => report::to_json_string(&needs),
        Format::Md => report::to_markdown(&needs),
    };
    for line in text.lines() {
        out.line(line)?;
    }
    Ok(u8::from(needs.has_errors()))
}
