//! `isomerank rank FORMULA --peaks TEXT | --spectrum FILE`: rank every
//! isomer of the formula (or a shortlist) against an observed 1H multiplet
//! list and print the table, the groups the data cannot separate, an
//! optional signal-by-signal assignment, and the safety wording.

use super::limits::{self, Reporter, RunArgs};
use crate::chem::smiles::{canonical_smiles, parse_smiles};
use crate::chem::Formula;
use crate::enumerate::{self, rules::RuleSet};
use crate::error::{Error, Result};
use crate::predict::{PredictOptions, Predictor};
use crate::rank::{self, Ranking, Settings, ShortlistItem};
use crate::report::{self, Context, Source};
use crate::score::ScoringModel;
use crate::spectrum::{self, carbon, file, journal, CarbonSpectrum, SolventTable, Spectrum};
use rayon::prelude::*;
use serde_json::{json, Map, Value};
use std::collections::HashSet;
use std::io::{Read, Write};
use std::path::PathBuf;

#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Format {
    Text,
    Json,
    /// V2000 molfiles with 2D coordinates, one record per candidate.
    Sdf,
}

#[derive(clap::Args)]
#[command(after_help = "Examples:
  isomerank rank C4H8O2 --peaks '1H NMR (400 MHz, CDCl3) δ 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)'
  isomerank rank C4H8O2 --spectrum batch.toml --top 5 --explain 1
  isomerank rank C4H8O2 --peaks '...' --carbon '13C NMR (101 MHz, CDCl3) δ 171.1 (C), 60.4 (CH2), 21.0 (CH3), 14.2 (CH3)'
  isomerank rank C4H8O2 --peaks '...' --format json
  isomerank rank C4H8O2 --peaks '...' --report ester.html   also a self-contained HTML report
  isomerank rank C4H8O2 --peaks '...' --format sdf > top.sdf  molfiles with position, cost, probability
  isomerank isomers C5H10O2 --plausible | isomerank rank C5H10O2 --candidates - --peaks '...'

The peak list is journal style: optional header `1H NMR (MHz, solvent) δ`, then entries
`shift (multiplicity, J = .. Hz, nH)` separated by commas; a shift may be a range (7.32-7.15).
Integrals written as `2H` are H counts; bare numbers are relative and scaled to the formula.
The 13C list (--carbon) is journal style too: shifts, each optionally followed by
parentheses with the attached-H count (C, CH, CH2, CH3 from DEPT/APT/edited HSQC, or the
off-resonance letters s, d, t, q) and a carbon count (2C).")]
pub struct Args {
    /// Molecular formula, e.g. C4H8O2.
    pub formula: String,
    #[command(flatten)]
    pub data: Observed,
    /// Rank only these structures: one SMILES a line, optional name after
    /// whitespace; `-` reads standard input.
    #[arg(long, value_name = "FILE")]
    pub candidates: Option<String>,
    /// Rank every isomer: do not apply the plausibility rules.
    #[arg(long)]
    pub keep_all: bool,
    /// Allow the expanded valences S(IV), S(VI) and P(V) (sulfoxides,
    /// sulfones, phosphine oxides).
    #[arg(long)]
    pub expanded_valence: bool,
    /// Also build charge-separated neutral groups: nitro and nitrate
    /// R-[N+](=O)[O-], azine N-oxides [n+][O-], amine oxides, nitrones and
    /// azoxy compounds (off by default; a note says when the formula could
    /// hold one).
    #[arg(long)]
    pub charge_separated: bool,
    /// Number of candidates in the table.
    #[arg(long, default_value_t = 10, value_name = "N")]
    pub top: usize,
    /// Print candidate N's signal-by-signal assignment.
    #[arg(long, value_name = "N")]
    pub explain: Option<usize>,
    /// Use the 13C list only in the score, not to bound the search (by
    /// default its H counts and shift regions constrain the enumeration,
    /// which assumes every line belongs to the compound and its H count is
    /// right; the structures whose carbons fit the typical shift regions
    /// are searched first, then the rest).
    #[arg(long)]
    pub carbon_score_only: bool,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
    #[command(flatten)]
    pub constraints: super::isomers::ConstraintArgs,
    #[command(flatten)]
    pub run: RunArgs,
    /// Also write a self-contained HTML report (drawings, spectra,
    /// assignments) of the same ranking to FILE.
    #[arg(long, value_name = "FILE")]
    pub report: Option<PathBuf>,
    /// Rank only the K-th of N disjoint shards of the search and write a
    /// shard file (with --format json) for `isomerank merge`.
    #[arg(long, value_name = "K/N")]
    pub part: Option<String>,
}

/// The observed data options, shared by `rank` and `check`.
#[derive(clap::Args)]
pub struct Observed {
    /// Observed multiplets in journal style (see below).
    #[arg(long, value_name = "TEXT", conflicts_with = "spectrum")]
    pub peaks: Option<String>,
    /// Observed 13C lines in journal style, e.g. '13C NMR (CDCl3) δ 171.1 (C),
    /// 60.4 (CH2), 128.5 (CH, 2C)': scored beside the 1H list.
    #[arg(long, value_name = "TEXT")]
    pub carbon: Option<String>,
    /// Observed data from a TOML or JSON file (keys: formula, solvent,
    /// frequency, integrals, multiplets = [{shift or range, multiplicity, j,
    /// integral}], carbon = [{shift or range, hydrogens, count}]).
    #[arg(long, value_name = "FILE")]
    pub spectrum: Option<PathBuf>,
}

impl Observed {
    /// Parse and check the observed data against the formula: the 1H
    /// multiplets (an empty list when only 13C was given) and the 13C lines.
    pub fn read(&self, formula: &Formula) -> Result<(Spectrum, Option<CarbonSpectrum>)> {
        self.texts()?.read(formula)
    }

    /// The observed data as given (a spectrum file read into memory).
    pub fn texts(&self) -> Result<ObservedText> {
        let spectrum = match (&self.peaks, &self.spectrum) {
            (None, Some(path)) => {
                let name = path.display().to_string();
                let text = std::fs::read_to_string(path)
                    .map_err(|e| Error::input(format!("cannot read spectrum file {name}: {e}")))?;
                Some((name, text))
            }
            _ => None,
        };
        Ok(ObservedText {
            peaks: self.peaks.clone(),
            spectrum,
            carbon: self.carbon.clone(),
        })
    }
}

/// The observed data as given: the texts of --peaks and --carbon, or a
/// spectrum file's name and text.
#[derive(Clone, Debug, Default)]
pub struct ObservedText {
    pub peaks: Option<String>,
    pub spectrum: Option<(String, String)>,
    pub carbon: Option<String>,
}

impl ObservedText {
    /// Parse and check the observed data against the formula.
    pub fn read(&self, formula: &Formula) -> Result<(Spectrum, Option<CarbonSpectrum>)> {
        let solvents = SolventTable::embedded();
        let (raw, file_carbon) = match (&self.peaks, &self.spectrum) {
            (Some(text), _) => (Some(journal::parse(text)?), None),
            (None, Some((name, text))) => {
                let f = file::parse(name, text)?;
                if let Some(ff) = &f.formula {
                    let theirs = Formula::parse(ff)
                        .map_err(|e| Error::input(format!("{name}: formula \"{ff}\": {e}")))?;
                    if theirs != *formula {
                        return Err(Error::input(format!(
                            "{name} is for {theirs} but the command line asks for {formula}"
                        )));
                    }
                }
                let raw = (!f.spectrum.entries.is_empty()).then_some(f.spectrum);
                (raw, f.carbon.map(|c| (name.clone(), c)))
            }
            (None, None) => (None, None),
        };
        let carbon_raw = match (&self.carbon, file_carbon) {
            (Some(_), Some((name, _))) => {
                return Err(Error::input(format!(
                    "13C data given twice: in {name} ([[carbon]]) and with --carbon; give one"
                )))
            }
            (Some(text), None) => Some(carbon::parse(text)?),
            (None, Some((_, c))) => Some(c),
            (None, None) => None,
        };
        spectrum::observed(raw, carbon_raw, formula, &solvents)
    }
}

/// A ranking's inputs as given: what `rank` reads from its options, and
/// what a shard file stores (as its settings) so that `merge` rebuilds the
/// same job.
#[derive(Clone, Debug, Default)]
pub struct Inputs {
    pub formula: String,
    pub observed: ObservedText,
    pub carbon_score_only: bool,
    pub keep_all: bool,
    pub expanded_valence: bool,
    /// `--charge-separated`.
    pub charge_separated: bool,
    /// A shortlist (`--candidates`) is ranked: the search's notes do not apply.
    pub shortlist: bool,
    pub top: usize,
    pub constraints: super::isomers::ConstraintArgs,
    pub max_candidates: Option<u64>,
    pub time_limit: Option<f64>,
}

impl Inputs {
    fn of(args: &Args) -> Result<Inputs> {
        Ok(Inputs {
            formula: args.formula.clone(),
            observed: args.data.texts()?,
            carbon_score_only: args.carbon_score_only,
            keep_all: args.keep_all,
            expanded_valence: args.expanded_valence,
            charge_separated: args.charge_separated,
            shortlist: args.candidates.is_some(),
            top: args.top,
            constraints: args.constraints.clone(),
            max_candidates: args.run.max_candidates,
            time_limit: args.run.time_limit,
        })
    }

    /// Check the inputs and build the job (the 13C list bounding the search
    /// unless `carbon_score_only`).
    pub fn job(&self, format: Format, explain: Option<usize>, run: RunArgs) -> Result<Job> {
        let formula = Formula::parse(&self.formula)?;
        formula.check_neutral()?;
        let (mut spectrum, carbon) = self.observed.read(&formula)?;
        let mut constraints = self.constraints.constraints()?;
        if let (Some(c), false) = (&carbon, self.carbon_score_only) {
            if let Some(note) = c.constrain_search(&formula, &mut constraints)? {
                spectrum.notes.push(note);
            }
        }
        if !self.shortlist {
            let probe = enumerate::Options {
                charge_separated: self.charge_separated,
                ..Default::default()
            };
            if let Some(note) = enumerate::charge_separated_note(&formula, &probe) {
                spectrum.notes.push(note);
            }
        }
        Ok(Job {
            formula,
            spectrum,
            carbon,
            top: self.top,
            explain,
            format,
            keep_all: self.keep_all,
            expanded_valence: self.expanded_valence,
            charge_separated: self.charge_separated,
            constraints,
            run,
        })
    }

    /// The settings a shard file records: every input that shapes the
    /// ranking, by option name, with the program and a fingerprint of its
    /// tables. Shards merge only when these are equal.
    pub fn settings(&self, formula: &Formula) -> Map<String, Value> {
        let c = &self.constraints;
        let mut m = Map::new();
        m.insert("formula".into(), json!(formula.to_string()));
        m.insert("--peaks".into(), json!(self.observed.peaks));
        m.insert(
            "--spectrum".into(),
            match &self.observed.spectrum {
                Some((name, text)) => json!({"file": name, "text": text}),
                None => Value::Null,
            },
        );
        m.insert("--carbon".into(), json!(self.observed.carbon));
        m.insert("--carbon-score-only".into(), json!(self.carbon_score_only));
        m.insert("--keep-all".into(), json!(self.keep_all));
        m.insert("--expanded-valence".into(), json!(self.expanded_valence));
        m.insert("--charge-separated".into(), json!(self.charge_separated));
        m.insert("--top".into(), json!(self.top));
        m.insert("--require".into(), json!(c.require));
        m.insert("--forbid".into(), json!(c.forbid));
        m.insert("--attached-h".into(), json!(c.attached_h));
        m.insert("--max-candidates".into(), json!(self.max_candidates));
        m.insert("--time-limit".into(), json!(self.time_limit));
        m.insert("program".into(), json!(report::shard::program()));
        m.insert("tables".into(), json!(tables_fingerprint()));
        m
    }

    /// The inputs a shard file's settings record (`name`: the file, for
    /// messages).
    pub fn from_settings(name: &str, m: &Map<String, Value>) -> Result<Inputs> {
        let bad = |key: &str| {
            Error::input(format!(
                "{name}: shard file setting \"{key}\" is missing or not what rank --part writes"
            ))
        };
        let text = |key: &str| -> Result<Option<String>> {
            match m.get(key) {
                Some(Value::Null) => Ok(None),
                Some(Value::String(s)) => Ok(Some(s.clone())),
                _ => Err(bad(key)),
            }
        };
        let flag = |key: &str| m.get(key).and_then(Value::as_bool).ok_or_else(|| bad(key));
        let list = |key: &str| -> Result<Vec<String>> {
            m.get(key)
                .and_then(Value::as_array)
                .and_then(|a| a.iter().map(|x| x.as_str().map(str::to_string)).collect())
                .ok_or_else(|| bad(key))
        };
        let spectrum = match m.get("--spectrum") {
            Some(Value::Null) => None,
            Some(v) => match (
                v.get("file").and_then(Value::as_str),
                v.get("text").and_then(Value::as_str),
            ) {
                (Some(f), Some(t)) => Some((f.to_string(), t.to_string())),
                _ => return Err(bad("--spectrum")),
            },
            None => return Err(bad("--spectrum")),
        };
        Ok(Inputs {
            formula: text("formula")?.ok_or_else(|| bad("formula"))?,
            observed: ObservedText {
                peaks: text("--peaks")?,
                spectrum,
                carbon: text("--carbon")?,
            },
            carbon_score_only: flag("--carbon-score-only")?,
            keep_all: flag("--keep-all")?,
            expanded_valence: flag("--expanded-valence")?,
            charge_separated: flag("--charge-separated")?,
            shortlist: false,
            top: m
                .get("--top")
                .and_then(Value::as_u64)
                .ok_or_else(|| bad("--top"))? as usize,
            constraints: super::isomers::ConstraintArgs {
                require: list("--require")?,
                forbid: list("--forbid")?,
                attached_h: text("--attached-h")?,
            },
            max_candidates: match m.get("--max-candidates") {
                Some(Value::Null) => None,
                Some(v) => Some(v.as_u64().ok_or_else(|| bad("--max-candidates"))?),
                None => return Err(bad("--max-candidates")),
            },
            time_limit: match m.get("--time-limit") {
                Some(Value::Null) => None,
                Some(v) => Some(v.as_f64().ok_or_else(|| bad("--time-limit"))?),
                None => return Err(bad("--time-limit")),
            },
        })
    }
}

/// A fingerprint (64-bit FNV-1a, hex) of the tables a ranking reads: the
/// fragment library and the scoring table embedded in this binary.
fn tables_fingerprint() -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    let mut eat = |bytes: &[u8]| {
        for &b in bytes {
            h ^= b as u64;
            h = h.wrapping_mul(0x0100_0000_01b3);
        }
    };
    for (name, text) in crate::predict::library::FILES {
        eat(name.as_bytes());
        eat(text.as_bytes());
    }
    eat(crate::score::model::SCORING_TOML.as_bytes());
    format!("{h:016x}")
}

/// Everything a ranking run needs, validated.
pub struct Job {
    pub formula: Formula,
    /// The 1H multiplets (none when only 13C data were given).
    pub spectrum: Spectrum,
    /// The 13C lines, when given.
    pub carbon: Option<CarbonSpectrum>,
    pub top: usize,
    pub explain: Option<usize>,
    pub format: Format,
    pub keep_all: bool,
    pub expanded_valence: bool,
    /// Build charge-separated N-oxide groups too (`--charge-separated`).
    pub charge_separated: bool,
    /// Constraints on the enumerated candidates (`--require`, `--forbid`,
    /// `--attached-h`).
    pub constraints: enumerate::constraints::Constraints,
    /// Caps, estimate and progress (`--max-candidates`, `--time-limit`, `--quiet`).
    pub run: RunArgs,
}

pub fn run(args: Args) -> Result<()> {
    let inputs = Inputs::of(&args)?;
    let job = inputs.job(args.format, args.explain, args.run.clone())?;
    if let Some(part) = &args.part {
        return run_shard(&args, &inputs, &job, enumerate::Part::parse(part)?);
    }
    let shortlist = match &args.candidates {
        Some(src) => Some(read_shortlist(src)?),
        None => None,
    };
    let done = rank_job(&job, shortlist)?;
    let text = render(&job, &done);
    if let Some(path) = &args.report {
        report::files::write_whole(path, &report::html::render(&done.context(&job)))?;
    }
    print_all(&text)?;
    if let Some(p) = done.partial() {
        limits::note(&format!("rank {}: {p}", job.formula));
    }
    Ok(())
}

/// A finished ranking with what its reports need.
pub struct Done {
    pub ranking: Ranking,
    pub source: Source,
    pub model: ScoringModel,
}

impl Done {
    /// The reports' view of this ranking.
    pub fn context<'a>(&'a self, job: &'a Job) -> Context<'a> {
        Context {
            formula: &job.formula,
            spectrum: &job.spectrum,
            carbon: job.carbon.as_ref(),
            ranking: &self.ranking,
            model: &self.model,
            source: self.source.clone(),
            explain: job.explain,
        }
    }

    /// The sentence on a partial run (for stderr), when the run was cut short.
    pub fn partial(&self) -> Option<String> {
        let c = self.ranking.coverage;
        c.stopped.map(|stop| {
            limits::partial_sentence(stop, c.share, self.ranking.considered, "candidates")
                + &crate::report::text::first_stage_words(c.first_stage)
        })
    }
}

/// Check the options, rank, and render the report (nothing is printed here);
/// with it, the sentence on a partial run for stderr.
pub fn execute(job: &Job, shortlist: Option<ShortlistText>) -> Result<(String, Option<String>)> {
    let done = rank_job(job, shortlist)?;
    Ok((render(job, &done), done.partial()))
}

/// The report of a finished ranking in the job's format.
pub fn render(job: &Job, done: &Done) -> String {
    let cx = done.context(job);
    match job.format {
        Format::Text => report::text::render(&cx),
        Format::Json => report::json::render(&cx),
        Format::Sdf => report::sdf::ranking(&cx),
    }
}

/// Check the table options (`--top`, `--explain`).
fn check_table(job: &Job) -> Result<()> {
    if job.top == 0 {
        return Err(Error::input("--top must be at least 1"));
    }
    if let Some(n) = job.explain {
        if n == 0 || n > job.top {
            return Err(Error::input(format!(
                "--explain {n}: give a position from 1 to {} (the length of the table, --top)",
                job.top
            )));
        }
    }
    Ok(())
}

/// `--explain N` within the candidates ranked.
fn check_explain(job: &Job, ranking: &Ranking) -> Result<()> {
    match job.explain {
        Some(n) if n > ranking.candidates.len() => Err(Error::input(format!(
            "--explain {n}: only {} candidates were ranked",
            ranking.candidates.len()
        ))),
        _ => Ok(()),
    }
}

/// Run `f` with the job's ranking steps and settings (the embedded
/// predictor, options for the spectrum's solvent and frequency, `model`).
fn with_scoring<R>(
    job: &Job,
    model: &ScoringModel,
    f: impl FnOnce(&rank::Steps, &Settings) -> Result<R>,
) -> Result<R> {
    let predictor = Predictor::embedded()?;
    let mut opts = predict_options(&predictor, &job.spectrum);
    opts.carbon = job.carbon.is_some();
    let settings = Settings {
        spectrum: &job.spectrum,
        carbon: job.carbon.as_ref(),
        model,
        top: job.top,
    };
    rank::with_standard_steps(&predictor, &opts, |steps| f(steps, &settings))
}

/// The generator's options for the job (caps, rules, constraints) and the
/// names of the plausibility rules applied.
fn enumeration_options(job: &Job) -> Result<(enumerate::Options, Vec<String>)> {
    let mut options = enumerate::Options {
        expanded_valence: job.expanded_valence,
        charge_separated: job.charge_separated,
        constraints: job.constraints.clone(),
        limits: job.run.limits()?,
        ..Default::default()
    };
    let rules = plausibility(&mut options, job.keep_all);
    Ok((options, rules))
}

/// Check the options and rank (nothing is printed here).
pub fn rank_job(job: &Job, shortlist: Option<ShortlistText>) -> Result<Done> {
    check_table(job)?;
    let model = ScoringModel::embedded();
    let (ranking, source): (Ranking, Source) =
        with_scoring(job, &model, |steps, settings| -> Result<_> {
            Ok(match shortlist {
                Some(list) => {
                    let mut reporter = Reporter::new(
                        &format!("ranking {} shortlist", job.formula),
                        "structures read",
                        job.run.quiet,
                    );
                    let mut chunks = WithProgress {
                        chunks: ShortlistChunks::new(&list.source, &list.text, &job.formula),
                        reporter: &mut reporter,
                    };
                    let r = rank::rank_shortlist_chunks(&mut chunks, steps, settings);
                    reporter.finish();
                    (r?, Source::Shortlist)
                }
                None => {
                    let (mut options, rules) = enumeration_options(job)?;
                    job.run
                        .plan(&job.formula, &mut options, "rank", limits::RANK_CAP)?;
                    let mut reporter = Reporter::new(
                        &format!("ranking {}", job.formula),
                        "candidates",
                        job.run.quiet,
                    );
                    let r = rank::rank_formula(
                        &job.formula,
                        &options,
                        steps,
                        settings,
                        &mut |n, share| reporter.update(n, share),
                    );
                    reporter.finish();
                    (
                        r?,
                        Source::Enumeration {
                            rules,
                            constraints: job.constraints.names(),
                        },
                    )
                }
            })
        })?;
    check_explain(job, &ranking)?;
    Ok(Done {
        ranking,
        source,
        model,
    })
}

/// `rank --part K/N`: rank one shard and print its shard file.
fn run_shard(args: &Args, inputs: &Inputs, job: &Job, part: enumerate::Part) -> Result<()> {
    let refuse = |what: &str| {
        Err(Error::input(format!(
            "--part {}/{} writes a shard file for `isomerank merge`; {what}",
            part.index, part.of
        )))
    };
    if args.candidates.is_some() {
        return refuse("a shortlist (--candidates) is ranked in one run, without --part");
    }
    if args.report.is_some() || args.explain.is_some() {
        return refuse("give --report and --explain to `isomerank merge` instead");
    }
    if args.format != Format::Json {
        return refuse("add --format json");
    }
    check_table(job)?;
    let model = ScoringModel::embedded();
    let shard = with_scoring(job, &model, |steps, settings| {
        let (mut options, _) = enumeration_options(job)?;
        options.part = Some(part);
        job.run
            .plan(&job.formula, &mut options, "rank", limits::RANK_CAP)?;
        let mut reporter = Reporter::new(
            &format!("ranking {} part {}/{}", job.formula, part.index, part.of),
            "candidates",
            job.run.quiet,
        );
        let r =
            rank::shard::rank_shard(&job.formula, &options, steps, settings, &mut |n, share| {
                reporter.update(n, share)
            });
        reporter.finish();
        r
    })?;
    let text = report::shard::write(
        &job.formula.to_string(),
        &shard,
        &inputs.settings(&job.formula),
    );
    print_all(&text)?;
    if let Some(stop) = shard.coverage.stopped {
        limits::note(&format!(
            "rank {} part {}/{}: {}",
            job.formula,
            part.index,
            part.of,
            limits::partial_sentence(
                stop,
                shard.coverage.share,
                shard.totals.considered,
                "candidates"
            ) + &crate::report::text::first_stage_words(shard.coverage.first_stage)
        ));
    }
    Ok(())
}

/// `isomerank merge`: the ranking of a complete set of shard files, as one
/// run over all of them gives it.
pub fn merge(
    files: &[(String, report::shard::ShardFile)],
    format: Format,
    explain: Option<usize>,
) -> Result<(Job, Done)> {
    let (first_name, first) = files
        .first()
        .ok_or_else(|| Error::input("merge: give the shard files"))?;
    let inputs = Inputs::from_settings(first_name, &first.settings)?;
    let run = RunArgs {
        quiet: true,
        ..RunArgs::default()
    };
    let job = inputs.job(format, explain, run)?;
    check_table(&job)?;
    let (_, rules) = enumeration_options(&job)?;
    let lines = job.spectrum.multiplets.len();
    let carbon_lines = job.carbon.as_ref().map_or(0, |c| c.lines.len());
    for (name, f) in files {
        for it in &f.shard.items {
            let fits =
                |s: &crate::score::Scored, n: usize| s.assigned.iter().flatten().all(|&j| j < n);
            if !fits(&it.scored, lines)
                || !it
                    .carbon_scored
                    .as_ref()
                    .is_none_or(|s| fits(s, carbon_lines))
                || (it.carbon_scored.is_some() != job.carbon.is_some())
            {
                return Err(Error::input(format!(
                    "{name}: candidate {} is assigned to observed entries the data do not have (was the file edited?)",
                    it.smiles
                )));
            }
        }
    }
    let facts = rank::shard::SearchFacts {
        constraints: job.constraints.names(),
        expanded_valence: job.expanded_valence,
    };
    let shards = files.iter().map(|(_, f)| f.shard.clone()).collect();
    let model = ScoringModel::embedded();
    let ranking = with_scoring(&job, &model, |steps, settings| {
        rank::shard::merge(&job.formula, shards, &facts, steps, settings)
    })?;
    check_explain(&job, &ranking)?;
    let done = Done {
        ranking,
        source: Source::Enumeration {
            rules,
            constraints: job.constraints.names(),
        },
        model,
    };
    Ok((job, done))
}

/// Switch the generator's plausibility rules on (unless `keep_all`); returns
/// their names for the report.
fn plausibility(options: &mut enumerate::Options, keep_all: bool) -> Vec<String> {
    options.rules = if keep_all {
        RuleSet::none()
    } else {
        RuleSet::all()
    };
    options
        .rules
        .rules
        .iter()
        .map(|r| r.name().to_string())
        .collect()
}

/// The predictor's options for the spectrum's solvent and frequency
/// (CDCl3 and 400 MHz when not given or not known to the predictor).
fn predict_options(predictor: &Predictor, spectrum: &Spectrum) -> PredictOptions {
    let mhz = spectrum.frequency_mhz.unwrap_or(400.0);
    let solvent = spectrum.solvent.as_deref().unwrap_or("CDCl3");
    let mut o = predictor
        .options(solvent, mhz)
        .or_else(|_| predictor.options("CDCl3", mhz))
        .unwrap_or_default();
    // Notes are strings per signal: not needed for scoring.
    o.notes = false;
    o
}

/// A shortlist as read, before parsing: where it came from (for messages)
/// and its text.
pub struct ShortlistText {
    pub source: String,
    pub text: String,
}

/// Read a shortlist file (`-`: standard input).
pub fn read_shortlist(src: &str) -> Result<ShortlistText> {
    let (source, text) = if src == "-" {
        let mut s = String::new();
        std::io::stdin().read_to_string(&mut s).map_err(|e| {
            Error::input(format!("cannot read candidates from standard input: {e}"))
        })?;
        ("standard input".to_string(), s)
    } else {
        let t = std::fs::read_to_string(src)
            .map_err(|e| Error::input(format!("cannot read candidates file {src}: {e}")))?;
        (src.to_string(), t)
    };
    // A UTF-8 byte-order mark (some editors write one) is not content.
    let text = match text.strip_prefix('\u{feff}') {
        Some(rest) => rest.to_string(),
        None => text,
    };
    Ok(ShortlistText { source, text })
}

/// Lines per parsed chunk: the first chunks are small so that the ranking's
/// cutoff is known early, later ones large enough to keep both cores busy.
const FIRST_CHUNK_LINES: usize = 64;
const MAX_CHUNK_LINES: usize = 4096;

/// A shortlist's candidates in input order, parsed a chunk of lines at a
/// time (in parallel within a chunk). One SMILES a line with an optional
/// name after whitespace; blank lines and lines starting with `#` are
/// skipped. Every structure must have the formula; a structure seen before
/// (same canonical SMILES) is kept once, with its first name. The first bad
/// line (in line order) ends the stream with an error naming it; a list
/// with no structure at all ends with an error too.
pub struct ShortlistChunks<'a> {
    source: &'a str,
    text: &'a str,
    formula: &'a Formula,
    /// Byte offset of the next unread line and its 1-based number.
    at: usize,
    line: usize,
    chunk_lines: usize,
    seen: HashSet<String>,
    finished: bool,
}

impl<'a> ShortlistChunks<'a> {
    pub fn new(source: &'a str, text: &'a str, formula: &'a Formula) -> ShortlistChunks<'a> {
        ShortlistChunks {
            source,
            text,
            formula,
            at: 0,
            line: 1,
            chunk_lines: FIRST_CHUNK_LINES,
            seen: HashSet::new(),
            finished: false,
        }
    }

    /// Share of the text read so far (0 to 1), for a progress bar.
    pub fn fraction_read(&self) -> f64 {
        if self.text.is_empty() {
            1.0
        } else {
            self.at as f64 / self.text.len() as f64
        }
    }

    /// Structures kept so far.
    pub fn kept(&self) -> usize {
        self.seen.len()
    }

    /// One line: `Ok(None)` for a blank or comment line.
    fn parse_line(&self, n: usize, line: &str) -> Result<Option<ShortlistItem>> {
        let line = line.trim();
        if line.is_empty() || line.starts_with('#') {
            return Ok(None);
        }
        let (smi, rest) = match line.find(char::is_whitespace) {
            Some(k) => (&line[..k], line[k..].trim()),
            None => (line, ""),
        };
        let source = self.source;
        let mol = parse_smiles(smi)
            .map_err(|e| Error::input(format!("{source}, line {n}: \"{smi}\": {e}")))?;
        let f = mol.formula();
        if f != *self.formula {
            return Err(Error::input(format!(
                "{source}, line {n}: \"{smi}\" is {f}, not {}",
                self.formula
            )));
        }
        Ok(Some(ShortlistItem {
            smiles: canonical_smiles(&mol),
            molecule: mol,
            name: (!rest.is_empty()).then(|| rest.to_string()),
        }))
    }
}

impl Iterator for ShortlistChunks<'_> {
    type Item = Result<Vec<ShortlistItem>>;

    fn next(&mut self) -> Option<Self::Item> {
        if self.finished {
            return None;
        }
        if self.at >= self.text.len() {
            self.finished = true;
            return self.seen.is_empty().then(|| {
                Err(Error::input(format!(
                    "{}: no candidate structures (one SMILES a line)",
                    self.source
                )))
            });
        }
        // The next lines, numbered (a line ends at \n; a \r before it is
        // trimmed with the other white space).
        let mut lines = Vec::with_capacity(self.chunk_lines);
        while lines.len() < self.chunk_lines && self.at < self.text.len() {
            let rest = &self.text[self.at..];
            let len = rest.find('\n').map_or(rest.len(), |k| k + 1);
            lines.push((self.line, &rest[..len]));
            self.at += len;
            self.line += 1;
        }
        self.chunk_lines = (self.chunk_lines * 2).min(MAX_CHUNK_LINES);
        let parsed: Vec<Result<Option<ShortlistItem>>> = lines
            .par_iter()
            .map(|&(n, line)| self.parse_line(n, line))
            .collect();
        let mut items = Vec::with_capacity(parsed.len());
        for p in parsed {
            match p {
                Err(e) => {
                    self.finished = true;
                    return Some(Err(e));
                }
                Ok(Some(item)) => {
                    if self.seen.insert(item.smiles.clone()) {
                        items.push(item);
                    }
                }
                Ok(None) => {}
            }
        }
        Some(Ok(items))
    }
}

/// A shortlist's chunks, reporting the share of the text read.
struct WithProgress<'a, 'b> {
    chunks: ShortlistChunks<'a>,
    reporter: &'b mut Reporter,
}

impl Iterator for WithProgress<'_, '_> {
    type Item = Result<Vec<ShortlistItem>>;

    fn next(&mut self) -> Option<Self::Item> {
        let chunk = self.chunks.next();
        self.reporter
            .update(self.chunks.kept() as u64, self.chunks.fraction_read());
        chunk
    }
}

/// Write the whole report at once.
pub fn print_all(text: &str) -> Result<()> {
    let mut out = std::io::stdout().lock();
    out.write_all(text.as_bytes())?;
    out.flush()?;
    Ok(())
}
