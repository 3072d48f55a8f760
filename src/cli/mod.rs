//! Command-line layer: argument definitions (clap) and one function per
//! subcommand. Everything here converts flags into typed library values once,
//! calls the library, and maps the result to an exit code.

use clap::{Parser, Subcommand};

#[derive(Parser)]
#[command(
    name = "isomerank",
    version,
    about = "Rank constitutional isomers of a molecular formula against an observed 1H NMR multiplet list"
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand)]
pub enum Command {}

/// Run the program; returns the process exit code.
pub fn main() -> i32 {
    let _cli = Cli::parse();
    0
}
