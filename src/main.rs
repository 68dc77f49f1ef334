//! Thin entry point: parse the command line, run, map errors to exit codes.
//! The command line (`cli/`) lives in the binary, not the library: it only
//! reads options, calls the library and prints.

mod cli;

fn main() {
    std::process::exit(cli::main());
}
