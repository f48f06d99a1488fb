//! The `nivalis` command-line tool. It reads a disk file, runs the physics core
//! and writes tables through `nivalis-exports`, the same code the page uses.
//! Exit codes: 0 success, 2 bad input (one line per problem on stderr),
//! 1 a file could not be written.

mod cli;
mod sweep_cmd;
mod uncertainty;

use std::process::ExitCode;

fn main() -> ExitCode {
    cli::run()
}
