//! `loadfit trace STAGE [--part PART] [--parts PATH] [--out FILE] [--format text|json|csv|svg]`:
//! the switching waveform of the stage (or of the stage with one candidate part), its figures,
//! and the waveform as JSON, CSV or an SVG plot.

use super::{CliError, Output, load_parts};
use loadfit::stage::Stage;
use loadfit::trace::{self, report, svg};
use std::path::{Path, PathBuf};

/// Arguments of `trace`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The stage file (TOML).
    stage: PathBuf,
    /// A part of the library to trace in the role it fills (switch, clamp, zener or relay).
    #[arg(long)]
    part: Option<String>,
    /// Write to this file instead of standard output (the format follows its extension
    /// .json, .csv or .svg unless --format says otherwise).
    #[arg(long)]
    out: Option<PathBuf>,
    /// Output format: text (the figures), json (figures and points), csv (every point) or svg
    /// (a plot). Default: text, or the --out file's extension.
    #[arg(long, value_enum)]
    format: Option<Format>,
    /// Replace the --out file if it exists.
    #[arg(long)]
    force: bool,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
enum Format {
    Text,
    Json,
    Csv,
    Svg,
}

/// The format an output file's extension names.
fn format_of(path: &Path) -> Option<Format> {
    let ext = path.extension()?.to_str()?.to_ascii_lowercase();
    match ext.as_str() {
        "json" => Some(Format::Json),
        "csv" => Some(Format::Csv),
        "svg" => Some(Format::Svg),
        "txt" => Some(Format::Text),
        _ => None,
    }
}

/// Whether two paths name the same file (the second need not exist).
fn same_file(existing: &Path, target: &Path) -> bool {
    let Ok(a) = existing.canonicalize() else {
        return false;
    };
    if let Ok(b) = target.canonicalize() {
        return a == b;
    }
    let parent = match target.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    match (parent.canonicalize(), target.file_name()) {
        (Ok(dir), Some(name)) => dir.join(name) == a,
        _ => false,
    }
}

/// Exit 0 with no error problem, 1 when the trace shows one (the switch breaks down, or an
/// unclamped coil rings without bound), 2 when the input cannot be read, the part cannot be
/// traced in the stage or the output cannot be written.
pub fn run(args: &Args, parts: &[PathBuf], out: &mut Output) -> Result<u8, CliError> {
    let format = match (args.format, &args.out) {
        (Some(f), _) => f,
        (None, None) => Format::Text,
        (None, Some(path)) => format_of(path).ok_or_else(|| {
            CliError::Usage(format!(
                "{}: say which format to write with --format json, csv, svg or text (the extension does not name one)",
                path.display()
            ))
        })?,
    };
    let stage = Stage::read(&args.stage)?;
    let library = load_parts(parts)?;
    let part = match &args.part {
        Some(number) => Some(library.find(number).ok_or_else(|| {
            CliError::Usage(format!(
                "part \"{}\" is not in the library; check the part number, or pass the library that holds it with --parts",
                loadfit::text::clean(number)
            ))
        })?),
        None => None,
    };
    let needs = loadfit::needs::compute(&stage, Some(&library));
    let traced = trace::simulate(&stage, &needs, &library, part)
        .map_err(|e| CliError::Usage(format!("{}: {e}", args.stage.display())))?;
    let text = match format {
        Format::Text => report::to_text(&traced),
        Format::Json => report::to_json_string(&traced),
        Format::Csv => report::to_csv(&traced),
        Format::Svg => svg::to_svg(&traced),
    };
    match &args.out {
        Some(path) => {
            let mut inputs: Vec<&Path> = vec![args.stage.as_path()];
            inputs.extend(parts.iter().map(PathBuf::as_path));
            // A CSV file written into a library folder would be read as part of the library.
            let into_library_folder = format_of(path) == Some(Format::Csv)
                && parts.iter().any(|p| {
                    p.is_dir()
                        && path
                            .parent()
                            .map(|d| {
                                if d.as_os_str().is_empty() {
                                    Path::new(".")
                                } else {
                                    d
                                }
                            })
                            .is_some_and(|d| same_file(p, d))
                });
            if into_library_folder {
                return Err(CliError::Usage(format!(
                    "{}: is inside a library folder, where it would be read as parts; choose another folder",
                    path.display()
                )));
            }
            if let Some(input) = inputs.iter().find(|p| same_file(p, path)) {
                return Err(CliError::Usage(format!(
                    "{}: is an input ({}); loadfit never writes over its inputs, choose another name",
                    path.display(),
                    input.display()
                )));
            }
            loadfit::write::write_atomic(path, text.as_bytes(), args.force)?;
            out.line(&format!(
                "wrote {} ({} points)",
                path.display(),
                traced.points.len()
            ))?;
        }
        None => {
            for line in text.lines() {
                out.line(line)?;
            }
        }
    }
    Ok(u8::from(traced.has_errors()))
}
