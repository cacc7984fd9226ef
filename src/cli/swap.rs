//! `loadfit swap PART [--parts PATH] [--stage FILE] [--format text|json|csv] [--limit N]`:
//! the parts of the library that can take PART's place, drop-in, rework or unsuitable.

use super::{CliError, Output, load_parts};
use loadfit::stage::Stage;
use loadfit::swap::{self, Bar};
use std::path::PathBuf;

/// Arguments of `swap`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The part to replace: its number, or enough of it to name one part.
    part: String,
    /// Hold substitutes to this stage's needs instead of the original's ratings.
    #[arg(long)]
    stage: Option<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    format: Format,
    /// At most this many candidates.
    #[arg(long)]
    limit: Option<usize>,
}

#[derive(Debug, Clone, Copy, clap::ValueEnum)]
enum Format {
    Text,
    Json,
    Csv,
}

/// Exit 0 when a drop-in or rework substitute exists, 1 when none, 2 when the part is not in
/// the library (or matches several) or an input cannot be read.
pub fn run(args: &Args, parts: &[PathBuf], out: &mut Output) -> Result<u8, CliError> {
    let library = load_parts(parts)?;
    let stage = args.stage.as_deref().map(Stage::read).transpose()?;
    let original =
        swap::find_original(&library, &args.part).map_err(|e| CliError::Usage(e.to_string()))?;
    let needs = stage
        .as_ref()
        .map(|s| loadfit::needs::compute(s, Some(&library)));
    let bar = match (&stage, &needs) {
        (Some(stage), Some(needs)) => Bar::Stage(stage, needs),
        _ => Bar::Original,
    };
    let result =
        swap::substitutes(&library, original, bar).map_err(|e| CliError::Usage(e.to_string()))?;
    let picked = (!library.parts[original]
        .number
        .eq_ignore_ascii_case(args.part.trim()))
    .then_some(args.part.as_str());
    match args.format {
        Format::Text => {
            let text = swap::report::to_text(&library, &result, args.limit.or(Some(20)), picked);
            for line in text.lines() {
                out.line(line)?;
            }
        }
        Format::Json => {
            let doc = swap::report::to_json(&library, &result, args.limit);
            out.line(&loadfit::text::to_json_pretty(&doc))?;
        }
        Format::Csv => {
            for line in swap::report::to_csv(&library, &result, args.limit).lines() {
                out.line(line)?;
            }
        }
    }
    Ok(u8::from(!result.has_substitute()))
}
