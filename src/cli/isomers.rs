//! `isomerank isomers FORMULA`: every constitutional isomer as canonical
//! SMILES, one per line, or their number.

use super::limits::{self, note, Reporter, RunArgs};
use super::output;
use crate::chem::Formula;
use crate::enumerate::{self, rules::RuleSet, Options, Part};
use std::io::Write;

#[derive(clap::Args)]
#[command(after_help = "Examples:
  isomerank isomers C5H10O               every isomer, one SMILES a line
  isomerank isomers C8H8O --count        just the number
  isomerank isomers C9H10O --part 3/16   the 3rd of 16 disjoint shards
  isomerank isomers C6H10O --plausible   apply every plausibility rule
  isomerank isomers C6H10O --plausible=enol,peroxide
  isomerank isomers C12H14O2 --count --time-limit 60   stop after a minute, marked partial

Plausibility rules (the number each flags goes to stderr):
  small-ring-triple, small-ring-cumulated, bredt, enol, peroxide")]
pub struct Args {
    /// Molecular formula, e.g. C8H10O or BrC3H7 (any element order).
    pub formula: String,
    /// Print only the number of isomers.
    #[arg(long)]
    pub count: bool,
    /// Only shard K of N (1 <= K <= N); the N shards are disjoint and together
    /// give every isomer.
    #[arg(long, value_name = "K/N")]
    pub part: Option<String>,
    /// Apply plausibility rules: all, or a comma-separated list of names
    /// given with `=` (`--plausible=enol,peroxide`).
    #[arg(long, value_name = "RULES", num_args = 0..=1, default_missing_value = "all", require_equals = true)]
    pub plausible: Option<String>,
    /// Allow the expanded valences S(IV), S(VI) and P(V).
    #[arg(long)]
    pub expanded_valence: bool,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(args: Args) -> crate::Result<()> {
    let formula = Formula::parse(&args.formula)?;
    let mut opts = Options {
        expanded_valence: args.expanded_valence,
        part: args.part.as_deref().map(Part::parse).transpose()?,
        rules: match args.plausible.as_deref() {
            Some(list) => RuleSet::parse(list)?,
            None => RuleSet::none(),
        },
        limits: args.run.limits()?,
        weights: None,
    };
    // Check the formula and the size of the search before anything is written.
    enumerate::problems(&formula, &opts)?;
    let cap = if args.count {
        limits::COUNT_CAP
    } else {
        limits::LIST_CAP
    };
    args.run.plan(&formula, &mut opts, "isomers", cap)?;
    let mut reporter = Reporter::new(&format!("{formula}"), "isomers", args.run.quiet);
    let mut out = output::stdout();
    let mut progress = |p: enumerate::Progress| reporter.update(p.isomers, p.share);
    let result = if args.count {
        enumerate::count_summary(&formula, &opts, &mut progress)
    } else {
        enumerate::write_smiles(&formula, &opts, &mut out, &mut progress)
    };
    reporter.finish();
    let summary = result?;
    if args.count {
        writeln!(out, "{}", summary.isomers)?;
    }
    let partial = summary
        .stopped
        .map(|stop| limits::partial_sentence(stop, summary.share, summary.isomers, "isomers"));
    if let Some(p) = &partial {
        // A comment line: `rank --candidates` skips it.
        writeln!(out, "# {p}")?;
    }
    out.flush()?;
    if let Some(p) = &partial {
        note(&format!("isomers {formula}: {p}"));
    }
    if !opts.rules.is_empty() {
        note(&format!(
            "plausibility rules removed {} of {} isomers:",
            summary.excluded, summary.generated
        ));
        for (rule, n) in &summary.flagged {
            note(&format!("  {:<22} flagged {n}", rule.name()));
        }
    }
    Ok(())
}
