//! `isomerank check FORMULA --peaks TEXT [--answer SMILES]`: does an
//! exercise have exactly one answer? The ranking is the one `rank` computes
//! (same job, same library call); the answer is unique when it is the best
//! candidate and every other candidate costs more by at least the margin
//! that groups candidates the data cannot separate
//! (`indistinguishable_margin` in `fragment-library/scoring.toml`: a cost
//! difference of 1.0 is a likelihood ratio of e ≈ 2.7). When it is not,
//! the rivals are listed with the single extra observations that would
//! separate each from the answer, computed from their predictions: the 13C
//! signal count (carbon symmetry classes), the DEPT counts of CH3, CH2, CH
//! and quaternary C classes, a 1H multiplicity (only when the data give an
//! unresolved m where the two predictions differ), a J (only when the data
//! give no J), and a COSY or HMBC cross peak one predicts and the other
//! does not (`rank::evidence::two_d`).
//!
//! Exit codes: 0 unique, 3 not unique, 2 bad input, 1 internal fault.

use super::rank::{self as rank_cli, Format as RankFormat, Job};
use crate::chem::smiles::{canonical_smiles, parse_smiles};
use crate::chem::{Element, Formula, Molecule};
use crate::error::{Error, Result};
use crate::predict::{PredictedSignal, Predictor};
use crate::rank::evidence::{two_d, Member};
use crate::rank::Ranked;
use crate::report::SAFETY;
use serde::Serialize;
use std::fmt::Write;

/// Exit code when the answer is not the unique best explanation.
pub const NOT_UNIQUE: i32 = 3;
/// Candidates ranked for the check.
const TOP: usize = 20;
/// Couplings smaller than this are not resolved in a routine spectrum, and
/// predicted J closer than this do not separate candidates (common practice;
/// the same thresholds as `rank::evidence`).
const RESOLVED_J_HZ: f64 = 3.0;
const J_SEPARATION_HZ: f64 = 3.0;

#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Format {
    Text,
    Json,
}

#[derive(clap::Args)]
#[command(after_help = "Examples:
  isomerank check C5H10O2 --peaks '4.99 (sept, J = 6.3 Hz, 1H), 2.02 (s, 3H), 1.23 (d, J = 6.3 Hz, 6H)' --answer 'CC(=O)OC(C)C'
  isomerank check C8H10 --peaks '7.05 (s, 4H), 2.30 (s, 6H)' --format json

Exit codes: 0 the answer (or, without --answer, the best candidate) is the unique best
explanation; 3 it is not (rivals and separating observations are listed); 2 bad input;
1 internal fault.")]
pub struct Args {
    /// Molecular formula, e.g. C5H10O2.
    pub formula: String,
    #[command(flatten)]
    pub data: rank_cli::Observed,
    /// The intended answer (SMILES); default: the best candidate.
    #[arg(long, value_name = "SMILES")]
    pub answer: Option<String>,
    /// Rank every isomer: do not apply the plausibility rules.
    #[arg(long)]
    pub keep_all: bool,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
}

/// What one candidate would show in the extra experiments.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Observables {
    /// 13C signals expected (carbon symmetry classes).
    pub carbon_signals: usize,
    /// Carbon classes by attached H: [CH3, CH2, CH, C] (DEPT-135 and
    /// DEPT-90 tell them apart; CH4 classes count as CH3).
    pub dept: [usize; 4],
}

/// Carbon classes and their H counts from the topological symmetry classes.
pub fn observables(predictor: &Predictor, mol: &Molecule) -> Result<Observables> {
    let classes = predictor.symmetry_classes(mol)?;
    let mut seen: Vec<(usize, u8)> = (0..mol.atom_count())
        .filter(|&i| mol.atom(i).element == Element::C)
        .map(|i| (classes[i], mol.atom(i).hydrogens))
        .collect();
    seen.sort_unstable();
    seen.dedup_by_key(|x| x.0);
    let mut dept = [0usize; 4];
    for &(_, h) in &seen {
        let k = match h {
            0 => 3,
            1 => 2,
            2 => 1,
            _ => 0,
        };
        dept[k] += 1;
    }
    Ok(Observables {
        carbon_signals: seen.len(),
        dept,
    })
}

/// One rival of the answer.
#[derive(Serialize)]
pub struct Rival {
    pub position: usize,
    pub smiles: String,
    pub cost: f64,
    /// Cost minus the answer's (negative: the rival explains the data better).
    pub delta: f64,
    pub probability: f64,
    /// Extra observations that would tell it from the answer.
    pub separated_by: Vec<String>,
}

/// The check's result.
#[derive(Serialize)]
pub struct Verdict {
    pub formula: String,
    pub answer: String,
    pub answer_given: bool,
    /// 1-based position of the answer in the ranking, if among the first TOP.
    pub answer_position: Option<usize>,
    pub answer_cost: Option<f64>,
    pub margin: f64,
    pub unique: bool,
    /// Cost of the best other candidate minus the answer's.
    pub gap: Option<f64>,
    pub rivals: Vec<Rival>,
    /// Observations that separate the answer from every rival at once.
    pub separates_all: Vec<String>,
    /// Plausibility rules applied before ranking.
    pub rules: Vec<String>,
}

pub fn run(args: Args) -> Result<i32> {
    let formula = Formula::parse(&args.formula)?;
    formula.check_neutral()?;
    let (spectrum, carbon) = args.data.read(&formula)?;
    let answer = match &args.answer {
        Some(smi) => {
            let mol =
                parse_smiles(smi).map_err(|e| Error::input(format!("--answer \"{smi}\": {e}")))?;
            if mol.formula() != formula {
                return Err(Error::input(format!(
                    "--answer \"{smi}\" is {}, not {formula}",
                    mol.formula()
                )));
            }
            Some(canonical_smiles(&mol))
        }
        None => None,
    };
    // The 13C list, when given, is scored (not used to bound the search:
    // an exercise's rivals are looked for among all isomers).
    let job = Job {
        formula,
        spectrum,
        carbon,
        top: TOP,
        explain: None,
        format: RankFormat::Text,
        keep_all: args.keep_all,
        expanded_valence: false,
        charge_separated: false,
        constraints: Default::default(),
        run: Default::default(),
    };
    let done = rank_cli::rank_job(&job, None)?;
    let predictor = Predictor::embedded()?;
    let verdict = judge(&job, &done, answer, &predictor)?;
    let text = match args.format {
        Format::Json => {
            let mut t = serde_json::to_string_pretty(&verdict)
                .map_err(|e| Error::Internal(format!("JSON output: {e}")))?;
            t.push('\n');
            t
        }
        Format::Text => render(&verdict),
    };
    rank_cli::print_all(&text)?;
    Ok(if verdict.unique { 0 } else { NOT_UNIQUE })
}

/// Decide uniqueness and list rivals with separating observations.
pub fn judge(
    job: &Job,
    done: &rank_cli::Done,
    answer: Option<String>,
    predictor: &Predictor,
) -> Result<Verdict> {
    let r = &done.ranking;
    let margin = done.model.ranking.indistinguishable_margin;
    let best = r
        .candidates
        .first()
        .ok_or_else(|| Error::Internal("the ranking has no candidate".into()))?;
    let answer_given = answer.is_some();
    let answer = answer.unwrap_or_else(|| best.smiles.clone());
    let found = r.candidates.iter().find(|c| c.smiles == answer);
    let spectrum = &job.spectrum;
    let data_j = spectrum.multiplets.iter().any(|o| !o.j_hz.is_empty());
    let data_m = spectrum
        .multiplets
        .iter()
        .any(|o| o.pattern.label().contains('m'));
    let mut rivals = Vec::new();
    let (unique, gap, cost) = match found {
        Some(a) => {
            let others: Vec<&Ranked> = r.candidates.iter().filter(|c| c.smiles != answer).collect();
            let gap = others.first().map(|c| c.cost - a.cost);
            // More candidates beyond the table may tie with the last shown;
            // the table is long enough that they are far from the answer
            // unless the answer itself is near the end.
            let beyond = r
                .groups
                .iter()
                .find(|g| g.members.contains(&a.position))
                .is_some_and(|g| g.beyond_table > 0);
            let unique = a.position == 1 && gap.is_none_or(|g| g >= margin) && !beyond;
            let ao = observables(predictor, &a.molecule)?;
            for c in others.iter().filter(|c| c.cost < a.cost + margin) {
                let co = observables(predictor, &c.molecule)?;
                rivals.push(Rival {
                    position: c.position,
                    smiles: c.smiles.clone(),
                    cost: c.cost,
                    delta: c.cost - a.cost,
                    probability: c.probability,
                    separated_by: separating(
                        (&ao, &a.predicted, &a.molecule),
                        (&co, &c.predicted, &c.molecule),
                        data_j,
                        data_m,
                    ),
                });
            }
            (unique, gap, Some(a.cost))
        }
        None => {
            // Not among the first TOP: every candidate of the first group
            // explains the data better.
            for c in r.candidates.iter().filter(|c| c.cost < best.cost + margin) {
                rivals.push(Rival {
                    position: c.position,
                    smiles: c.smiles.clone(),
                    cost: c.cost,
                    delta: f64::NAN,
                    probability: c.probability,
                    separated_by: Vec::new(),
                });
            }
            (false, None, None)
        }
    };
    // Observations that separate the answer from every rival.
    let separates_all = if rivals.is_empty() || found.is_none() {
        Vec::new()
    } else {
        let kinds = [
            "13C signal count",
            "DEPT",
            "multiplicity",
            "J",
            "COSY",
            "HMBC",
        ];
        kinds
            .iter()
            .filter(|k| {
                rivals
                    .iter()
                    .all(|rv| rv.separated_by.iter().any(|s| s.starts_with(*k)))
            })
            .map(|k| k.to_string())
            .collect()
    };
    let rules = match &done.source {
        crate::report::Source::Enumeration { rules, .. } => rules.clone(),
        crate::report::Source::Shortlist => Vec::new(),
    };
    Ok(Verdict {
        formula: job.formula.to_string(),
        answer,
        answer_given,
        answer_position: found.map(|c| c.position),
        answer_cost: cost,
        margin,
        unique,
        gap,
        rivals,
        separates_all,
        rules,
    })
}

/// Extra observations that tell candidate b from a (empty: none of these).
fn separating(
    (ao, ap, am): (&Observables, &[PredictedSignal], &Molecule),
    (bo, bp, bm): (&Observables, &[PredictedSignal], &Molecule),
    data_j: bool,
    data_m: bool,
) -> Vec<String> {
    let mut out = Vec::new();
    if ao.carbon_signals != bo.carbon_signals {
        out.push(format!(
            "13C signal count: {} for the answer, {} for this one",
            ao.carbon_signals, bo.carbon_signals
        ));
    }
    let names = ["CH3", "CH2", "CH", "C"];
    let diffs: Vec<String> = (0..4)
        .filter(|&k| ao.dept[k] != bo.dept[k])
        .map(|k| format!("{} {} against {}", names[k], ao.dept[k], bo.dept[k]))
        .collect();
    if !diffs.is_empty() {
        out.push(format!(
            "DEPT (carbon classes by attached H, answer against this one): {}",
            diffs.join(", ")
        ));
    }
    if data_m {
        let sig = |p: &[PredictedSignal]| {
            let mut v: Vec<(u32, String)> = p.iter().map(|s| (s.hydrogens, s.label())).collect();
            v.sort();
            v
        };
        let (a, b) = (sig(ap), sig(bp));
        if a != b {
            let list = |x: &[(u32, String)]| -> String {
                x.iter()
                    .map(|(h, l)| format!("{h}H {l}"))
                    .collect::<Vec<_>>()
                    .join(", ")
            };
            out.push(format!(
                "multiplicity (resolve the reported m): the answer predicts {}; this one {}",
                list(&a),
                list(&b)
            ));
        }
    }
    if !data_j {
        let js = |p: &[PredictedSignal]| -> Vec<f64> {
            p.iter()
                .flat_map(|s| s.j_hz.iter().map(|j| j.abs()))
                .filter(|&j| j >= RESOLVED_J_HZ)
                .collect()
        };
        let (a, b) = (js(ap), js(bp));
        let lone = |x: &[f64], y: &[f64]| {
            x.iter()
                .find(|&&j| y.iter().all(|&k| (j - k).abs() >= J_SEPARATION_HZ))
                .copied()
        };
        if let Some(j) = lone(&a, &b) {
            out.push(format!("J: about {j:.0} Hz expected for the answer only"));
        } else if let Some(j) = lone(&b, &a) {
            out.push(format!("J: about {j:.0} Hz expected for this one only"));
        }
    }
    // 2D experiments (the report's wording, `rank::evidence::two_d`).
    let member = |label: &str, predicted, molecule| Member {
        label: label.to_string(),
        predicted,
        carbon_signals: None,
        molecule: Some(molecule),
    };
    out.extend(two_d(
        &member("the answer", ap, am),
        &member("this one", bp, bm),
    ));
    out
}

fn render(v: &Verdict) -> String {
    let mut t = String::new();
    let _ = writeln!(
        t,
        "Exercise check for {} ({}; plausibility rules: {})",
        v.formula,
        if v.answer_given {
            "answer given"
        } else {
            "answer: the best candidate"
        },
        if v.rules.is_empty() {
            "off".to_string()
        } else {
            v.rules.join(", ")
        }
    );
    match (v.answer_position, v.answer_cost) {
        (Some(p), Some(c)) => {
            let _ = writeln!(t, "answer {}: position {p}, cost {c:.2}", v.answer);
        }
        _ => {
            let _ = writeln!(
                t,
                "answer {}: not among the {TOP} best candidates (or removed by a plausibility rule; --keep-all turns them off)",
                v.answer
            );
        }
    }
    if v.unique {
        let _ = writeln!(
            t,
            "UNIQUE: the answer is the best explanation{} (margin {}).",
            match v.gap {
                Some(g) => format!(
                    ", {g:.2} cost units ahead of the next candidate (likelihood ratio {:.0})",
                    g.exp()
                ),
                None => String::new(),
            },
            v.margin
        );
    } else {
        let _ = writeln!(
            t,
            "NOT UNIQUE: {} candidate{} explain{} the data as well as the answer or better (within {}):",
            v.rivals.len(),
            if v.rivals.len() == 1 { "" } else { "s" },
            if v.rivals.len() == 1 { "s" } else { "" },
            v.margin
        );
        for rv in &v.rivals {
            let delta = if rv.delta.is_nan() {
                String::new()
            } else {
                format!(", {:+.2} against the answer", rv.delta)
            };
            let _ = writeln!(
                t,
                "  #{} {} cost {:.2}{delta}",
                rv.position, rv.smiles, rv.cost
            );
            if rv.separated_by.is_empty() && !rv.delta.is_nan() {
                let _ = writeln!(
                    t,
                    "      no 13C count, DEPT count, multiplicity, J, COSY or HMBC cross peak separates it: 13C shifts or other data are needed"
                );
            }
            for s in &rv.separated_by {
                let _ = writeln!(t, "      separated by {s}");
            }
        }
        if !v.separates_all.is_empty() {
            let _ = writeln!(
                t,
                "One extra observation separates the answer from every rival: {}.",
                v.separates_all.join(" or ")
            );
        }
    }
    let _ = writeln!(t);
    let _ = writeln!(t, "{SAFETY}");
    t
}
