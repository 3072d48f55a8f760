//! The `isomerank` command: parse the arguments once, run, map errors to exit
//! codes (2 bad input, 1 internal fault; a closed output pipe ends quietly).

fn main() {
    std::process::exit(isomerank::cli::main());
}
