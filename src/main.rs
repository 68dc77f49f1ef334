//! Thin entry point: parse the command line, run, map errors to exit codes.
fn main() {
    std::process::exit(priorsmith::cli::main());
}
