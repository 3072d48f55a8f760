//! `isomerank isomers FORMULA`: every constitutional isomer as canonical
//! SMILES, one per line, or their number.

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
  isomerank isomers C4H8O --format sdf > all.sdf   molfiles with 2D coordinates

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
    /// Apply plausibility rules: all, or a comma-separated list of names.
    #[arg(long, value_name = "RULES", num_args = 0..=1, default_missing_value = "all")]
    pub plausible: Option<String>,
    /// Allow the expanded valences S(IV), S(VI) and P(V).
    #[arg(long)]
    pub expanded_valence: bool,
    /// Output format: SMILES lines, or an SD file of V2000 molfiles with 2D
    /// coordinates (title and `smiles` field: the canonical SMILES).
    #[arg(long, value_enum, default_value_t = Format::Smiles)]
    pub format: Format,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Format {
    Smiles,
    Sdf,
}

pub fn run(args: Args) -> crate::Result<()> {
    let formula = Formula::parse(&args.formula)?;
    let opts = Options {
        expanded_valence: args.expanded_valence,
        part: args.part.as_deref().map(Part::parse).transpose()?,
        rules: match args.plausible.as_deref() {
            Some(list) => RuleSet::parse(list)?,
            None => RuleSet::none(),
        },
    };
    // Check the formula before anything is written.
    enumerate::problems(&formula, &opts)?;
    let bar = output::task_bar(&format!("{formula}"));
    let mut out = output::stdout();
    let mut progress = |p| output::update(&bar, p, "isomers");
    let result = if args.count {
        enumerate::for_each_ordered(&formula, &opts, |_| Some(()), |_| true, &mut progress)
    } else if args.format == Format::Sdf {
        write_sdf(&formula, &opts, &mut out, &mut progress)
    } else {
        enumerate::write_smiles(&formula, &opts, &mut out, &mut progress)
    };
    bar.finish_and_clear();
    let summary = result?;
    if args.count {
        writeln!(out, "{}", summary.isomers)?;
    }
    out.flush()?;
    if !opts.rules.is_empty() {
        eprintln!(
            "plausibility rules removed {} of {} isomers:",
            summary.excluded, summary.generated
        );
        for (rule, n) in &summary.flagged {
            eprintln!("  {:<22} flagged {n}", rule.name());
        }
    }
    Ok(())
}

/// Every isomer as an SD record (built in parallel, written in order).
fn write_sdf(
    formula: &Formula,
    opts: &Options,
    out: &mut dyn Write,
    progress: &mut dyn FnMut(enumerate::Progress),
) -> crate::Result<enumerate::Summary> {
    let mut write_error = None;
    let summary = enumerate::for_each_ordered(
        formula,
        opts,
        |iso| {
            let smiles = iso.smiles();
            let mol = iso.molecule();
            Some(crate::report::sdf::record(
                &mol,
                &smiles,
                &[("smiles", smiles.clone())],
            ))
        },
        |rec: String| match out.write_all(rec.as_bytes()) {
            Ok(()) => true,
            Err(e) => {
                write_error = Some(e);
                false
            }
        },
        progress,
    )?;
    match write_error {
        Some(e) => Err(e.into()),
        None => Ok(summary),
    }
}
