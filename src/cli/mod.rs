//! Command line: one module per subcommand.
use std::process::ExitCode;

/// Entry point used by `main.rs`.
pub fn main() -> ExitCode {
    ExitCode::SUCCESS
}
