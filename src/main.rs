//! `lobemap`: parse the command line, run it, map the outcome to an exit code (0 success,
//! 2 bad input, 3 a `links --strict` failure, 1 an internal fault).

use clap::Parser;
use lobemap::error::Error;
use std::process::ExitCode;

mod cli;

fn main() -> ExitCode {
    // On SIGINT or SIGTERM, remove this run's temporaries before leaving (130: interrupted).
    let _ = ctrlc::set_handler(|| {
        lobemap::run::remove_temporaries();
        std::process::exit(130);
    });
    match cli::run(cli::Cli::parse()) {
        Ok(code) => code,
        Err(e) => match e.downcast_ref::<Error>() {
            Some(_) => {
                eprintln!("error: {e}");
                ExitCode::from(2)
            }
            None => {
                eprintln!("error: {e:#}");
                ExitCode::from(1)
            }
        },
    }
}
