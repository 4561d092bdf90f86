//! The `tether-risk` binary: parse the command line, run, map errors to exit codes.
//! Exit codes: 0 success, 1 run-time failure, 2 bad input (scenario or options), 130 interrupted.

mod cli;

fn main() {
    let code = match cli::run() {
        Ok(()) => 0,
        Err(e) => cli::report_error(&e),
    };
    std::process::exit(code);
}
