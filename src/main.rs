//! The `loadfit` binary: a thin shell over the library. `main` calls `cli::run` and turns any
//! error into one line on stderr and an exit code.

#![forbid(unsafe_code)]

mod cli;

fn main() -> std::process::ExitCode {
    cli::main()
}
