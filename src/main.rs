//! The `causeway` binary: parses flags, runs a command, maps errors to exit
//! codes (0 done, 2 bad input, 3 not identified, 1 anything else).

mod cli;

fn main() {
    std::process::exit(cli::main());
}
