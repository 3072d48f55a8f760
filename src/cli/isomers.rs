//! `isomerank isomers FORMULA`: every constitutional isomer as canonical
//! SMILES, one per line, or their number.

use super::limits::{self, note, Reporter, RunArgs};
use super::output;
use crate::chem::Formula;
use crate::enumerate::constraints::{fragment::Fragment, Constraints, Cut, STAGES};
use crate::enumerate::{self, rules::RuleSet, Options, Part};
use crate::error::{Error, Result};
use std::io::Write;

/// The constraint options `isomers` and `rank` share.
#[derive(clap::Args, Clone, Debug, Default)]
pub struct ConstraintArgs {
    /// Only structures containing this fragment (SMILES; repeatable). Atoms
    /// match by element, bonds by kind (single, double, triple, aromatic);
    /// H on fragment atoms are not compared.
    #[arg(long = "require", value_name = "SMILES")]
    pub require: Vec<String>,
    /// Only structures without this fragment (SMILES; repeatable), in the
    /// same sense as --require.
    #[arg(long = "forbid", value_name = "SMILES")]
    pub forbid: Vec<String>,
    /// Exact attached-H counts, e.g. 'CH3=2,CH2=1,CH=5,C=2' (also OH=, NH2=,
    /// NH=, N=, SH=, ...); the counts of an element must add up to its
    /// number in the formula.
    #[arg(long = "attached-h", value_name = "LIST")]
    pub attached_h: Option<String>,
}

impl ConstraintArgs {
    /// The constraints these options give (parsed; checked against the
    /// formula when the search starts).
    pub fn constraints(&self) -> Result<Constraints> {
        let mut c = Constraints::default();
        if let Some(list) = &self.attached_h {
            for h in Constraints::parse_attached_h(list)? {
                c.add_hydrogens(h);
            }
        }
        for s in &self.require {
            c.require.push(Fragment::parse(s, "--require")?);
        }
        for s in &self.forbid {
            c.forbid.push(Fragment::parse(s, "--forbid")?);
        }
        Ok(c)
    }
}

/// Print what each constraint cut to stderr.
pub fn report_cuts(cuts: &[Cut]) {
    if cuts.is_empty() {
        return;
    }
    eprintln!("constraints applied inside the search (cuts per stage):");
    for c in cuts {
        let parts: Vec<String> = STAGES
            .iter()
            .zip(c.cut)
            .map(|(s, n)| format!("{n} {s}"))
            .collect();
        eprintln!("  {}: cut {}", c.name, parts.join(", "));
    }
}

/// The error for a constraint set that leaves no structure: which
/// constraints cut anything (the one, when only one did).
pub fn emptied(formula: &Formula, cuts: &[Cut]) -> Error {
    let cutting: Vec<&Cut> = cuts
        .iter()
        .filter(|c| c.cut.iter().any(|&n| n > 0))
        .collect();
    let what = match cutting.as_slice() {
        [] => "the formula's search found nothing to cut".to_string(),
        [one] => format!("{} removed every candidate", one.name),
        many => format!(
            "together, these removed every candidate: {}",
            many.iter()
                .map(|c| c.name.as_str())
                .collect::<Vec<_>>()
                .join("; ")
        ),
    };
    Error::input(format!(
        "no structure of {formula} fits the constraints: {what}"
    ))
}

#[derive(clap::Args)]
#[command(after_help = "Examples:
  isomerank isomers C5H10O               every isomer, one SMILES a line
  isomerank isomers C8H8O --count        just the number
  isomerank isomers C9H10O --part 3/16   the 3rd of 16 disjoint shards
  isomerank isomers C6H10O --plausible   apply every plausibility rule
  isomerank isomers C6H10O --plausible=enol,peroxide
  isomerank isomers C12H16O2 --require 'c1ccccc1' --count
  isomerank isomers C8H8O --attached-h 'CH3=1,CH=5,C=2' --forbid 'C=C'
  isomerank isomers C12H14O2 --count --time-limit 60   stop after a minute, marked partial
  isomerank isomers C4H8O --format sdf > all.sdf   molfiles with 2D coordinates
  isomerank isomers C7H7NO2 --charge-separated --count   nitro compounds too

Plausibility rules (the number each flags goes to stderr):
  small-ring-triple, small-ring-cumulated, bredt, enol, peroxide, hydrate, iminol, hypohalite,
  thione, nh-imine, sulfur-ylide, sulfur-multiple, small-ring-cage, fused-small-rings,
  antiaromatic-three-ring, large-conjugated-ring, cumulene")]
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
    /// Also build charge-separated neutral groups: nitro and nitrate
    /// R-[N+](=O)[O-], azine N-oxides [n+][O-], amine oxides, nitrones and
    /// azoxy compounds.
    #[arg(long)]
    pub charge_separated: bool,
    #[command(flatten)]
    pub constraints: ConstraintArgs,
    #[command(flatten)]
    pub run: RunArgs,
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
    let mut opts = Options {
        expanded_valence: args.expanded_valence,
        charge_separated: args.charge_separated,
        part: args.part.as_deref().map(Part::parse).transpose()?,
        rules: match args.plausible.as_deref() {
            Some(list) => RuleSet::parse(list)?,
            None => RuleSet::none(),
        },
        constraints: args.constraints.constraints()?,
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
    } else if args.format == Format::Sdf {
        write_sdf(&formula, &opts, &mut out, &mut progress)
    } else {
        enumerate::write_smiles(&formula, &opts, &mut out, &mut progress)
    };
    reporter.finish();
    let summary = result?;
    report_cuts(&summary.constraints);
    // Only a search that ran to its end can say that nothing fits; a run
    // stopped by a cap says how much it covered instead (below).
    if !opts.constraints.is_empty()
        && summary.isomers == 0
        && summary.excluded == 0
        && summary.stopped.is_none()
    {
        if opts.part.is_none() {
            return Err(emptied(&formula, &summary.constraints));
        }
        eprintln!("this shard holds no structure that fits the constraints");
    }
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
    if let Some(text) = enumerate::charge_separated_note(&formula, &opts) {
        note(&text);
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

/// Every isomer as an SD record (built in parallel, written in order).
fn write_sdf(
    formula: &Formula,
    opts: &Options,
    out: &mut dyn Write,
    progress: &mut dyn FnMut(enumerate::Progress),
) -> crate::Result<enumerate::Summary> {
    enumerate::write_records(
        formula,
        opts,
        out,
        |iso| {
            let smiles = iso.smiles();
            crate::report::sdf::record(&iso.molecule(), &smiles, &[("smiles", smiles.clone())])
        },
        progress,
    )
}
