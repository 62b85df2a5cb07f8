//! The `plumb` command: parse arguments, dispatch, map failures to exit codes.

mod cli;

use std::process::ExitCode;

/// Exit status after Ctrl-C or a termination signal (128 + SIGINT, the shell's convention).
const EXIT_INTERRUPTED: i32 = 130;

fn main() -> ExitCode {
    // Ctrl-C must not leave partial outputs or scratch runs behind: remove them, then exit.
    // The handler runs on its own thread, so it may touch the file system.
    let _ = ctrlc::set_handler(|| {
        let removed = plumb::outfile::remove_leftovers();
        eprintln!(
            "plumb: interrupted{}",
            if removed > 0 {
                " (partial files and scratch folders removed)"
            } else {
                ""
            }
        );
        std::process::exit(EXIT_INTERRUPTED);
    });
    let args = <cli::Args as clap::Parser>::parse();
    match cli::run(args) {
        Ok(code) => code,
        Err(e) => {
            eprintln!("plumb: {e}");
            cli::exit_code(&e)
        }
    }
}
