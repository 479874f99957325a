//! The `plumbline` binary: parse the command line, run, and map the outcome onto the
//! exit codes fixed by SPEC.md (0 pass, 1 gate failed, 2 usage or unreadable input).

use std::process::ExitCode;

fn main() -> ExitCode {
    plumbline::cli::main()
}
