//! `loadfit lint PATH... [--format text|json]`: what loaded, what was rejected and why.

use super::{CliError, Output};
use loadfit::library::lint;
use std::path::PathBuf;

/// Arguments of `lint`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// CSV files or folders of them.
    #[arg(required = true)]
    paths: Vec<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    format: Format,
}

#[derive(Debug, Clone, Copy, clap::ValueEnum)]
enum Format {
    Text,
    Json,
}

/// Exit 0 when no row was rejected, 1 when some were, 2 when nothing could be read.
pub fn run(args: &Args, out: &mut Output) -> Result<u8, CliError> {
    let library = super::load_parts(&args.paths)?;
    match args.format {
        Format::Text => {
            out.line(&lint::summary(&library))?;
            for line in lint::problem_lines(&library) {
                out.line(&line)?;
            }
        }
        Format::Json => {
            let doc = lint::to_json(&library);
            out.line(&loadfit::text::to_json_pretty(&doc))?;
        }
    }
    Ok(u8::from(library.rows_rejected > 0))
}
