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
    /// right).
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
        let solvents = SolventTable::embedded();
        let (raw, file_carbon) = match (&self.peaks, &self.spectrum) {
            (Some(text), _) => (Some(journal::parse(text)?), None),
            (None, Some(path)) => {
                let name = path.display().to_string();
                let text = std::fs::read_to_string(path)
                    .map_err(|e| Error::input(format!("cannot read spectrum file {name}: {e}")))?;
                let f = file::parse(&name, &text)?;
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
                (raw, f.carbon.map(|c| (name, c)))
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
    let formula = Formula::parse(&args.formula)?;
    formula.check_neutral()?;
    let (mut spectrum, carbon) = args.data.read(&formula)?;
    let mut constraints = args.constraints.constraints()?;
    if let (Some(c), false) = (&carbon, args.carbon_score_only) {
        if let Some(note) = c.constrain_search(&formula, &mut constraints)? {
            spectrum.notes.push(note);
        }
    }
    if args.candidates.is_none() {
        let probe = enumerate::Options {
            charge_separated: args.charge_separated,
            ..Default::default()
        };
        if let Some(note) = enumerate::charge_separated_note(&formula, &probe) {
            spectrum.notes.push(note);
        }
    }
    let job = Job {
        formula,
        spectrum,
        carbon,
        top: args.top,
        explain: args.explain,
        format: args.format,
        keep_all: args.keep_all,
        expanded_valence: args.expanded_valence,
        charge_separated: args.charge_separated,
        constraints,
        run: args.run.clone(),
    };
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

/// Check the options and rank (nothing is printed here).
pub fn rank_job(job: &Job, shortlist: Option<ShortlistText>) -> Result<Done> {
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
    let model = ScoringModel::embedded();
    let predictor = Predictor::embedded()?;
    let mut opts = predict_options(&predictor, &job.spectrum);
    opts.carbon = job.carbon.is_some();
    let settings = Settings {
        spectrum: &job.spectrum,
        carbon: job.carbon.as_ref(),
        model: &model,
        top: job.top,
    };
    let (ranking, source): (Ranking, Source) =
        rank::with_standard_steps(&predictor, &opts, |steps| -> Result<_> {
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
                    let r = rank::rank_shortlist_chunks(&mut chunks, steps, &settings);
                    reporter.finish();
                    (r?, Source::Shortlist)
                }
                None => {
                    let mut options = enumerate::Options {
                        expanded_valence: job.expanded_valence,
                        charge_separated: job.charge_separated,
                        constraints: job.constraints.clone(),
                        limits: job.run.limits()?,
                        ..Default::default()
                    };
                    let rules = plausibility(&mut options, job.keep_all);
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
                        &settings,
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
    if let Some(n) = job.explain {
        if n > ranking.candidates.len() {
            return Err(Error::input(format!(
                "--explain {n}: only {} candidates were ranked",
                ranking.candidates.len()
            )));
        }
    }
    Ok(Done {
        ranking,
        source,
        model,
    })
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
