//! `loadfit shortlist STAGE [--parts PATH] --out FILE [--alternates N]`: the best fit of each
//! role and its alternates, written as CSV, a Markdown review document or JSON.

use super::{CliError, Output, load_parts};
use loadfit::export::{Context, Shortlist, write_shortlist};
use loadfit::fit::{self, SortKey};
use loadfit::stage::Stage;
use std::path::PathBuf;

/// Arguments of `shortlist`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The stage file (TOML).
    stage: PathBuf,
    /// Where to write: .csv, .md or .json.
    #[arg(long)]
    out: PathBuf,
    /// Alternates per role besides the pick.
    #[arg(long, default_value_t = 2)]
    alternates: usize,
    /// Replace the file if it exists.
    #[arg(long)]
    force: bool,
}

/// Exit 0 when every role has a pick, 1 when one has none, 2 on unreadable input or a refused
/// write.
pub fn run(args: &Args, parts: &[PathBuf], out: &mut Output) -> Result<u8, CliError> {
    let stage = Stage::read(&args.stage)?;
    let library = load_parts(parts)?;
    let needs = loadfit::needs::compute(&stage, Some(&library));
    let result = fit::evaluate(&stage, &needs, &library, SortKey::Score);
    let shortlist = Shortlist::from_fit(&result, args.alternates);
    let context = Context {
        stage: &stage,
        needs: &needs,
        library: &library,
        fit: &result,
    };
    let mut protected: Vec<PathBuf> = parts.to_vec();
    protected.push(args.stage.clone());
    write_shortlist(
        &args.out,
        &context,
        &shortlist,
        &loadfit::export::library_files(&protected),
        args.force,
    )?;
    out.line(&format!(
        "wrote {} ({} parts over {} roles)",
        args.out.display(),
        shortlist.len(),
        shortlist.roles.len()
    ))?;
    for (role, picks) in &shortlist.roles {
        if picks.is_empty() {
            out.line(&format!("no fitting part for {}", role.name()))?;
        }
    }
    Ok(u8::from(shortlist.roles.iter().any(|(_, p)| p.is_empty())))
}
