//! `loadfit fit STAGE [--parts PATH] [--role ROLE] [--format text|json|csv] [--limit N]`:
//! every part held against the stage's needs, ranked per role.

use super::{CliError, Output, load_parts};
use loadfit::fit::{self, Role, SortKey};
use loadfit::stage::Stage;
use std::path::PathBuf;

/// Arguments of `fit`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The stage file (TOML).
    stage: PathBuf,
    /// Only this role: switch, clamp, zener, relay or sensor.
    #[arg(long, value_parser = parse_role)]
    role: Option<Role>,
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    format: Format,
    /// At most this many candidates per role.
    #[arg(long)]
    limit: Option<usize>,
    /// Order within each verdict group: score, price, headroom, stock or part.
    #[arg(long, value_parser = parse_sort, default_value = "score")]
    sort: SortKey,
}

#[derive(Debug, Clone, Copy, clap::ValueEnum)]
enum Format {
    Text,
    Json,
    Csv,
}

/// Reads a role name for clap.
pub fn parse_role(text: &str) -> Result<Role, String> {
    Role::from_name(text).ok_or_else(|| {
        format!("unknown role \"{text}\"; use switch, clamp, zener, relay or sensor")
    })
}

fn parse_sort(text: &str) -> Result<SortKey, String> {
    SortKey::ALL
        .into_iter()
        .find(|k| k.name().eq_ignore_ascii_case(text))
        .ok_or_else(|| {
            format!("unknown sort key \"{text}\"; use score, price, headroom, stock or part")
        })
}

/// Exit 0 when every role has a fit, 1 when one has none, 2 on unreadable input.
pub fn run(args: &Args, parts: &[PathBuf], out: &mut Output) -> Result<u8, CliError> {
    let stage = Stage::read(&args.stage)?;
    let library = load_parts(parts)?;
    let needs = loadfit::needs::compute(&stage, Some(&library));
    let mut result = fit::evaluate(&stage, &needs, &library, args.sort);
    if let Some(role) = args.role {
        result.roles.retain(|r| r.role == role);
        if result.roles.is_empty() {
            return Err(CliError::Usage(format!(
                "{}: the stage has no `{}` role (it has: {})",
                args.stage.display(),
                role.name(),
                fit::roles(&stage)
                    .iter()
                    .map(|r| r.name())
                    .collect::<Vec<_>>()
                    .join(", ")
            )));
        }
    }
    let shown = match args.format {
        Format::Text => args.limit.or(Some(20)),
        _ => args.limit,
    };
    fit::fill_checks(&mut result, &stage, &needs, &library, shown);
    match args.format {
        Format::Text => {
            for line in
                fit::report::to_text(&needs, &library, &result, args.limit.or(Some(20))).lines()
            {
                out.line(line)?;
            }
        }
        Format::Json => {
            let doc = fit::report::to_json(&needs, &library, &result, args.limit);
            out.line(&loadfit::text::to_json_pretty(&doc))?;
        }
        Format::Csv => {
            for line in fit::report::to_csv(&library, &result, args.limit).lines() {
                out.line(line)?;
            }
        }
    }
    Ok(u8::from(!result.every_role_fits()))
}
