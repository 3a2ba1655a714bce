//! The `sunward` command: a thin shell over the library. It parses arguments, calls the
//! core, renders results and maps errors to exit codes:
//! 0 success, 1 infeasible verdict (with --fail-on-infeasible), 2 bad input, 3 internal.

mod cli;

use clap::Parser;

fn main() {
    let args = cli::Cli::parse();
    let code = match std::panic::catch_unwind(|| cli::run(args)) {
        Ok(Ok(())) => 0,
        Ok(Err(e)) => {
            eprintln!("error: {e}");
            e.exit_code()
        }
        Err(_) => {
            eprintln!(
                "error: internal error (a bug in sunward). Please report it with the command \
                 line and input files."
            );
            3
        }
    };
    std::process::exit(code);
}
