//! Command-line layer: argument definitions (clap) and one file per
//! subcommand. Each converts flags into typed library values once, calls the
//! library, and returns a `Result` that [`main`] maps to an exit code
//! (0 success, 2 bad input, 1 internal fault; `check` adds 3: not unique). A closed output pipe
//! (`isomerank isomers ... | head`) is a normal end.

mod check;
mod demo;
mod isomers;
pub mod limits;
mod merge;
pub mod output;
mod predict;
mod rank;

use clap::{Parser, Subcommand};

#[derive(Parser)]
#[command(
    name = "isomerank",
    version,
    about = "Rank the constitutional isomers of a molecular formula against an observed 1H NMR multiplet list",
    long_about = None
)]
pub struct Cli {
    /// Worker threads (default: all cores). Output does not depend on it.
    #[arg(long, global = true, value_name = "N")]
    pub threads: Option<usize>,

    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand)]
pub enum Command {
    Isomers(isomers::Args),
    /// Predict the 1H multiplet list of one structure (SMILES).
    Predict(predict::Args),
    /// Rank the isomers of a formula (or a shortlist) against an observed 1H multiplet list.
    Rank(rank::Args),
    /// Merge the shard files of `rank --part K/N --format json` into the final ranking.
    Merge(merge::Args),
    /// Check that an exercise's answer is the unique best explanation of its data.
    Check(check::Args),
    /// Run the ranking on an embedded, invented scenario.
    Demo(demo::Args),
}

/// Run the program; returns the process exit code.
pub fn main() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            // Usage errors, --help and --version; a failed write to the
            // terminal must not panic.
            let _ = e.print();
            return e.exit_code();
        }
    };
    if let Some(n) = cli.threads {
        if n == 0 {
            limits::note("error: --threads must be at least 1");
            return 2;
        }
        if let Err(e) = rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global()
        {
            limits::note(&format!("error: cannot start {n} threads: {e}"));
            return 1;
        }
    }
    let result = match cli.command {
        Command::Isomers(args) => isomers::run(args).map(|()| 0),
        Command::Predict(args) => predict::run(args).map(|()| 0),
        Command::Rank(args) => rank::run(args).map(|()| 0),
        Command::Merge(args) => merge::run(args).map(|()| 0),
        Command::Check(args) => check::run(args),
        Command::Demo(args) => demo::run(args).map(|()| 0),
    };
    match result {
        Ok(code) => code,
        Err(crate::Error::Io(e)) if e.kind() == std::io::ErrorKind::BrokenPipe => 0,
        Err(e) => {
            limits::note(&format!("error: {}", printable(&e.to_string())));
            e.exit_code()
        }
    }
}

/// A message with its control characters (from the user's input: escape
/// sequences, tabs, NUL) written as `\u{..}`, so that echoing input
/// cannot move the cursor or recolour the terminal.
pub fn printable(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        if c.is_control() {
            out.push_str(&format!("\\u{{{:x}}}", c as u32));
        } else {
            out.push(c);
        }
    }
    out
}
