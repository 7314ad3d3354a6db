//! The `canonode` binary: parses arguments, runs the library through
//! `command::main_with_args`, prints any error once and maps the outcome to an exit status
//! (0 success, 2 bad input, 1 internal failure).

use std::process::ExitCode;

fn main() -> ExitCode {
    canonode::command::main_with_args(std::env::args_os().collect())
}
