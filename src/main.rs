//! The `slant` binary: parse the arguments, run the subcommand, map the outcome to an exit code.

fn main() {
    std::process::exit(slant::cli::main());
}
