//! The command line: raw arguments are turned into validated ones here, once, and each
//! subcommand's `run` works on those. Output goes through [`Output`], which treats a closed
//! pipe (`loadfit lint x.csv | head`) as a normal end.

mod fit;
mod init;
mod lint;
mod needs;
mod shortlist;
mod swap;
mod synthetic;
mod trace;

use clap::{Parser, Subcommand};
use loadfit::library::{Library, LoadError};
use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;
use thiserror::Error;

/// loadfit: compute what every part of a transistor switching stage needs, and rank the parts
/// of your own CSV library against it.
#[derive(Debug, Parser)]
#[command(name = "loadfit", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Option<Command>,
    /// Parts library: a CSV file or a folder of them (repeatable). Default: the built-in demo.
    #[arg(long, global = true)]
    parts: Vec<PathBuf>,
    /// Stage file to open in the workbench. Default: the built-in demo stage.
    #[arg(long)]
    stage: Option<PathBuf>,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Check library files: rows loaded, rows rejected and why, values that look wrong.
    Lint(lint::Args),
    /// Write a starter library and an example stage file into a folder.
    Init(init::Args),
    /// Compute what every role of a stage needs, with the working behind each number.
    Needs(needs::Args),
    /// Hold every part of the library against the stage's needs and rank them per role.
    Fit(fit::Args),
    /// Write the best fit of each role and its alternates (CSV, Markdown or JSON).
    Shortlist(shortlist::Args),
    /// Write a synthetic library (every kind, a few bad rows) for benchmarks and tests.
    #[command(name = "gen")]
    Gen(synthetic::Args),
    /// Find the parts that can take a given part's place, with the pin-order traps named.
    Swap(swap::Args),
    /// Simulate the switching edge: the voltage across the switch and the load current, the
    /// peak, the clamp energy and the release time, as text, JSON, CSV or an SVG plot.
    Trace(trace::Args),
}

/// An error that ends the run: printed as one line, exit code 2.
#[derive(Debug, Error)]
pub enum CliError {
    /// A library could not be read.
    #[error(transparent)]
    Load(#[from] LoadError),
    /// A file could not be written.
    #[error(transparent)]
    Write(#[from] loadfit::write::WriteError),
    /// A stage file could not be read.
    #[error(transparent)]
    Stage(#[from] loadfit::stage::StageError),
    /// An export was refused or failed.
    #[error(transparent)]
    Export(#[from] loadfit::export::ExportError),
    /// Arguments that parse but do not fit the input.
    #[error("{0}")]
    Usage(String),
    /// Writing to standard output failed (other than a closed pipe).
    #[error("cannot write the output: {0}")]
    Output(std::io::Error),
}

/// Standard output, buffered, with a closed pipe remembered rather than reported.
pub struct Output {
    out: std::io::BufWriter<std::io::StdoutLock<'static>>,
    closed: bool,
}

impl Output {
    fn new() -> Output {
        Output {
            out: std::io::BufWriter::new(std::io::stdout().lock()),
            closed: false,
        }
    }

    /// Writes one line (or several, for JSON). Every writer cleans the text it takes from files;
    /// as a last guard, a control or bidi character that still reaches here is made visible
    /// (`text::clean_lines`) rather than sent to the terminal.
    ///
    /// # Errors
    /// [`CliError::Output`] on a write error other than a closed pipe.
    pub fn line(&mut self, text: &str) -> Result<(), CliError> {
        if self.closed {
            return Ok(());
        }
        let text = loadfit::text::clean_lines(text);
        match writeln!(self.out, "{text}") {
            Ok(()) => Ok(()),
            Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => {
                self.closed = true;
                Ok(())
            }
            Err(e) => Err(CliError::Output(e)),
        }
    }

    fn finish(mut self) -> Result<(), CliError> {
        match self.out.flush() {
            Err(e) if e.kind() != std::io::ErrorKind::BrokenPipe && !self.closed => {
                Err(CliError::Output(e))
            }
            _ => Ok(()),
        }
    }
}

/// Parses the arguments, runs, and maps the outcome to an exit code.
pub fn main() -> ExitCode {
    let cli = Cli::parse();
    let mut out = Output::new();
    let result = run(cli, &mut out).and_then(|code| out.finish().map(|()| code));
    match result {
        Ok(code) => ExitCode::from(code),
        Err(error) => {
            eprintln!("loadfit: {}", loadfit::text::clean(&error.to_string()));
            ExitCode::from(2)
        }
    }
}

fn run(cli: Cli, out: &mut Output) -> Result<u8, CliError> {
    match cli.command {
        Some(Command::Lint(args)) => lint::run(&args, out),
        Some(Command::Init(args)) => init::run(&args, out),
        Some(Command::Needs(args)) => needs::run(&args, &cli.parts, out),
        Some(Command::Fit(args)) => fit::run(&args, &cli.parts, out),
        Some(Command::Shortlist(args)) => shortlist::run(&args, &cli.parts, out),
        Some(Command::Gen(args)) => synthetic::run(&args, out),
        Some(Command::Swap(args)) => swap::run(&args, &cli.parts, out),
        Some(Command::Trace(args)) => trace::run(&args, &cli.parts, out),
        None => workbench(&cli.parts, cli.stage.as_deref(), out),
    }
}

/// The library named by `--parts`, or the built-in demo when none is given.
///
/// # Errors
/// [`CliError::Load`] when a file cannot be read.
pub fn load_parts(paths: &[PathBuf]) -> Result<Library, CliError> {
    use std::io::IsTerminal;
    if paths.is_empty() {
        return Ok(Library::demo());
    }
    if !std::io::stderr().is_terminal() {
        return Ok(Library::load(paths)?);
    }
    // On a terminal, a large library shows how far its load has come, on stderr so the
    // output stays clean for pipes.
    let progress = loadfit::library::LoadProgress::shared();
    let watched = std::sync::Arc::clone(&progress);
    let (done, finished) = std::sync::mpsc::channel::<()>();
    let start = std::time::Instant::now();
    let shown = std::thread::spawn(move || {
        let mut drawn = false;
        while finished
            .recv_timeout(std::time::Duration::from_millis(150))
            .is_err()
        {
            let line = load_line(&watched, start.elapsed().as_secs_f64());
            eprint!("\r{line}\x1b[K");
            drawn = true;
        }
        if drawn {
            eprint!("\r\x1b[K");
        }
    });
    let library = Library::load_with_progress(paths, progress);
    // The watcher stops on this message or when the sender is dropped; either way it ends.
    let _ = done.send(());
    let _ = shown.join();
    Ok(library?)
}

/// The progress line of a load: rows, megabytes of the total, and the rate.
fn load_line(progress: &loadfit::library::LoadProgress, seconds: f64) -> String {
    format!(
        "loading parts: {} rows, {:.0} of {:.0} MB ({:.0} %), {:.0} MB/s",
        progress.rows(),
        progress.bytes() as f64 / 1e6,
        progress.total_bytes() as f64 / 1e6,
        progress.fraction() * 100.0,
        progress.rate(seconds)
    )
}

/// With no subcommand: the workbench in a terminal, a summary of the library otherwise.
fn workbench(
    parts: &[PathBuf],
    stage: Option<&std::path::Path>,
    out: &mut Output,
) -> Result<u8, CliError> {
    use std::io::IsTerminal;
    if !std::io::stdout().is_terminal() || !std::io::stdin().is_terminal() {
        return summary(parts, out);
    }
    // A large library is read in the background with a gauge, the demo library in use
    // meanwhile; a small one is read at once (no flash of the demo).
    let large = parts
        .iter()
        .any(|p| std::fs::metadata(p).is_ok_and(|m| m.is_dir() || m.len() > 4_000_000));
    let library = if large {
        Library::demo()
    } else {
        load_parts(parts)?
    };
    let (text, name) = match stage {
        Some(path) => {
            // Read through the stage module first, for its checks and messages.
            loadfit::stage::Stage::read(path)?;
            let text = std::fs::read_to_string(path).map_err(|source| {
                CliError::Usage(format!("{}: cannot read: {source}", path.display()))
            })?;
            (text, path.display().to_string())
        }
        None => (
            loadfit::tui::DEMO_STAGE.to_string(),
            "demo stage".to_string(),
        ),
    };
    let doc = loadfit::tui::fields::StageDoc::parse(&text, &name).map_err(CliError::Usage)?;
    let mut app = loadfit::tui::app::App::new(
        library,
        if large { Vec::new() } else { parts.to_vec() },
        doc,
        stage.map(std::path::Path::to_path_buf),
    );
    if large {
        app.start_load(parts.to_vec());
    }
    loadfit::tui::run(app).map_err(CliError::Output)?;
    Ok(0)
}

/// Without a terminal: a summary of the library and what to run next.
fn summary(parts: &[PathBuf], out: &mut Output) -> Result<u8, CliError> {
    let library = load_parts(parts)?;
    out.line(&loadfit::library::lint::summary(&library))?;
    out.line("run `loadfit --help` for the commands; `loadfit lint PATH` checks a library")?;
    Ok(0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_progress_line_names_rows_megabytes_and_rate() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("p.csv");
        let mut text = Vec::new();
        loadfit::synthetic::write_library(&mut text, 2000, 5).unwrap();
        std::fs::write(&path, &text).unwrap();
        let progress = loadfit::library::LoadProgress::shared();
        Library::load_with_progress(&[&path], std::sync::Arc::clone(&progress)).unwrap();
        let line = load_line(&progress, 0.5);
        let mb = text.len() as f64 / 1e6;
        assert_eq!(
            line,
            format!(
                "loading parts: 2000 rows, {mb:.0} of {mb:.0} MB (100 %), {:.0} MB/s",
                mb / 0.5
            )
        );
        assert!(load_line(&loadfit::library::LoadProgress::default(), 0.0).contains("0 rows"));
    }
}
