//! The `stackwise` program: a command line over the engine, or the design window.

use std::process::ExitCode;

fn main() -> ExitCode {
    stackwise::cli::main(stackwise::gui::run)
}
