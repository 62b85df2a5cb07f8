//! The `plumb` command: parse arguments, dispatch, map failures to exit codes.

mod cli;

use std::process::ExitCode;

fn main() -> ExitCode {
    let args = <cli::Args as clap::Parser>::parse();
    match cli::run(args) {
        Ok(code) => code,
        Err(e) => {
            eprintln!("plumb: {e}");
            cli::exit_code(&e)
        }
    }
}
