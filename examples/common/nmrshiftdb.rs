//! The NMRShiftDB2 dev split (tests/data/nmrshiftdb2-v2-dev.toml; source,
//! citation and derivation in its header): reading its cases and ranking one
//! case with its 1H and 13C lists as a user would (`isomerank rank FORMULA
//! --peaks ... --carbon ...`: every isomer, the default plausibility rules).
//! Shared by `examples/rank_nmrshiftdb.rs` (the full run) and
//! `tests/rank_nmrshiftdb.rs` (a fixed sample), which include this file by
//! path.
#![allow(dead_code)]

use isomerank::chem::smiles::{canonical_smiles, parse_smiles};
use isomerank::chem::{Element, Formula};
use isomerank::enumerate::{self, rules::RuleSet};
use isomerank::predict::Predictor;
use isomerank::rank::{self, Settings};
use isomerank::score::ScoringModel;
use isomerank::spectrum::observed;
use isomerank::spectrum::{carbon, journal, SolventTable};
use serde::Deserialize;
use std::path::PathBuf;
use std::time::Instant;

/// One case of the dev split (the fields this harness reads).
#[derive(Clone, Debug, Deserialize)]
pub struct Case {
    pub id: u64,
    pub formula: String,
    pub smiles: String,
    pub heavy_atoms: u32,
    pub solvent: String,
    /// The 1H list in journal style ("" for a 13C-only case).
    pub peaks: String,
    /// The 13C list in journal style with H counts.
    pub carbon: String,
    #[serde(default)]
    pub mhz: Option<f64>,
}

#[derive(Deserialize)]
struct File {
    case: Vec<Case>,
}

/// Every case of the dev split.
pub fn cases() -> Vec<Case> {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/nmrshiftdb2-v2-dev.toml");
    let text =
        std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("read {}: {e}", path.display()));
    let f: File = toml::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    f.case
}

/// Where a case's true structure landed.
#[derive(Clone, Debug)]
pub struct Outcome {
    pub id: u64,
    pub formula: String,
    pub heavy_atoms: u32,
    /// 1-based position of the true structure (None: beyond the table).
    pub position: Option<usize>,
    /// Candidates considered (after the plausibility rules).
    pub considered: u64,
    pub seconds: f64,
    pub first: String,
    pub first_cost: f64,
    pub true_cost: Option<f64>,
    /// Why the case could not be ranked (an input the tool refuses).
    pub refused: Option<String>,
    /// Whether the whole search was covered (false: stopped at the time
    /// limit, the position is then among the candidates covered).
    pub complete: bool,
    /// The first candidate's cost split into its 1H and 13C parts, and its
    /// stated probability.
    pub first_parts: (f64, f64),
    pub first_probability: f64,
    /// The true structure's parts and probability when it is in the table.
    pub true_parts: Option<(f64, f64)>,
    pub true_probability: Option<f64>,
    /// Observed 1H multiplets plus 13C lines (the data's size).
    pub observed_lines: usize,
    /// The true structure's cost, scored alone (whatever its position),
    /// and its 1H and 13C parts.
    pub truth_cost: f64,
    pub truth_parts: (f64, f64),
}

impl Outcome {
    pub fn line(&self, smiles: &str) -> String {
        match &self.refused {
            Some(why) => format!("{:>9} {:<12} refused: {why}", self.id, self.formula),
            None => format!(
                "{:>9} {:<12} {:>8} candidates{} {:>6.2} s  position {:<4} {}{}",
                self.id,
                self.formula,
                self.considered,
                if self.complete { "" } else { " (partial)" },
                self.seconds,
                self.position
                    .map(|p| p.to_string())
                    .unwrap_or_else(|| ">top".into()),
                smiles,
                if self.position == Some(1) {
                    String::new()
                } else if self.considered == 0 {
                    "  (no candidate scored)".into()
                } else {
                    format!(
                        "  (first {} {:.2} = 1H {:.2} + 13C {:.2}, truth {})",
                        self.first,
                        self.first_cost,
                        self.first_parts.0,
                        self.first_parts.1,
                        match (self.true_cost, self.true_parts) {
                            (Some(c), Some((h, k))) => format!("{c:.2} = 1H {h:.2} + 13C {k:.2}"),
                            _ => "-".into(),
                        }
                    )
                },
            ),
        }
    }
}

/// Rank every isomer of the case's formula that fits its 13C list (H counts
/// and carbon types bound the search, as `rank --carbon` does by default)
/// against its 1H list (when it has one) and its 13C list, keeping `top`
/// candidates.
/// With `limit`, the search stops after that long (as `--time-limit`).
pub fn rank_case(
    case: &Case,
    predictor: &Predictor,
    model: &ScoringModel,
    top: usize,
    limit: Option<std::time::Duration>,
) -> Outcome {
    let start = Instant::now();
    let formula = Formula::parse(&case.formula).expect("formula of the data file");
    let answer = parse_smiles(&case.smiles).expect("SMILES of the data file");
    let want = canonical_smiles(&answer);
    let refused = |why: String| Outcome {
        id: case.id,
        formula: case.formula.clone(),
        heavy_atoms: case.heavy_atoms,
        position: None,
        considered: 0,
        seconds: 0.0,
        first: String::new(),
        first_cost: f64::NAN,
        true_cost: None,
        refused: Some(why),
        complete: false,
        first_parts: (f64::NAN, f64::NAN),
        first_probability: f64::NAN,
        true_parts: None,
        true_probability: None,
        observed_lines: 0,
        truth_cost: f64::NAN,
        truth_parts: (f64::NAN, f64::NAN),
    };
    let hydrogen = if case.peaks.is_empty() {
        None
    } else {
        match journal::parse(&case.peaks) {
            Ok(r) => Some(r),
            Err(e) => return refused(format!("1H: {e}")),
        }
    };
    let carbon_raw = match carbon::parse(&case.carbon) {
        Ok(c) => c,
        Err(e) => return refused(format!("13C: {e}")),
    };
    let (spectrum, carbon) = match observed(
        hydrogen,
        Some(carbon_raw),
        &formula,
        &SolventTable::embedded(),
    ) {
        Ok(x) => x,
        Err(e) => return refused(e.to_string()),
    };
    let solvent = spectrum.solvent.clone().unwrap_or_else(|| "CDCl3".into());
    let mhz = spectrum.frequency_mhz.unwrap_or(400.0);
    let mut opts = predictor
        .options(&solvent, mhz)
        .or_else(|_| predictor.options("CDCl3", mhz))
        .expect("CDCl3 is in the library");
    opts.notes = false;
    opts.carbon = true;
    let settings = Settings {
        spectrum: &spectrum,
        carbon: carbon.as_ref(),
        model,
        top,
    };
    // As the command does by default: the 13C list bounds the search.
    let mut constraints = enumerate::constraints::Constraints::default();
    if let Some(c) = &carbon {
        if let Err(e) = c.constrain_search(&formula, &mut constraints) {
            return refused(e.to_string());
        }
    }
    let options = enumerate::Options {
        limits: enumerate::Limits {
            max_candidates: None,
            deadline: limit.map(|d| start + d),
            default_cap: false,
        },
        constraints,
        rules: RuleSet::all(),
        expanded_valence: formula.count(Element::S) + formula.count(Element::P) > 0,
        ..Default::default()
    };
    let r = rank::with_standard_steps(predictor, &opts, |steps| {
        // The true structure alone as well: its cost whatever its position.
        let item = rank::ShortlistItem {
            smiles: want.clone(),
            molecule: answer.clone(),
            name: None,
        };
        let mut one = std::iter::once(Ok(vec![item]));
        let mut truth = rank::rank_shortlist_chunks(&mut one, steps, &settings)?;
        let r = rank::rank_formula(&formula, &options, steps, &settings, &mut |_, _| {})?;
        Ok::<_, isomerank::error::Error>((r, truth.candidates.swap_remove(0)))
    });
    let (r, truth) = match r {
        Ok(r) => r,
        Err(e) => return refused(e.to_string()),
    };
    let position = r
        .candidates
        .iter()
        .position(|x| x.smiles == want)
        .map(|p| p + 1);
    let parts = |c: &rank::Ranked| {
        (
            c.scored.cost,
            c.carbon_scored.as_ref().map_or(0.0, |s| s.cost),
        )
    };
    let observed_lines = spectrum.multiplets.len() + carbon.as_ref().map_or(0, |c| c.lines.len());
    Outcome {
        id: case.id,
        formula: case.formula.clone(),
        heavy_atoms: case.heavy_atoms,
        position,
        considered: r.considered,
        seconds: start.elapsed().as_secs_f64(),
        // No candidate at all when the time limit came before the first
        // task was covered.
        first: r
            .candidates
            .first()
            .map_or(String::new(), |c| c.smiles.clone()),
        first_cost: r.candidates.first().map_or(f64::NAN, |c| c.cost),
        true_cost: position.map(|p| r.candidates[p - 1].cost),
        refused: None,
        complete: r.coverage.stopped.is_none(),
        first_parts: r.candidates.first().map_or((f64::NAN, f64::NAN), parts),
        first_probability: r.candidates.first().map_or(f64::NAN, |c| c.probability),
        true_parts: position.map(|p| parts(&r.candidates[p - 1])),
        true_probability: position.map(|p| r.candidates[p - 1].probability),
        observed_lines,
        truth_cost: truth.cost,
        truth_parts: parts(&truth),
    }
}

impl Outcome {
    /// One tab-separated row for offline study (header: [`Outcome::TSV_HEADER`]).
    pub fn tsv(&self, smiles: &str) -> String {
        let opt = |x: Option<f64>| x.map_or("".to_string(), |v| format!("{v:.4}"));
        format!(
            "{}\t{}\t{}\t{}\t{}\t{:.4}\t{:.4}\t{:.4}\t{:.6}\t{}\t{}\t{}\t{:.4}\t{}\t{}\t{}",
            self.id,
            self.formula,
            self.heavy_atoms,
            self.position.map_or("".to_string(), |p| p.to_string()),
            self.considered,
            self.first_cost,
            self.first_parts.0,
            self.first_parts.1,
            self.first_probability,
            opt(self.true_parts.map(|p| p.0)),
            opt(self.true_parts.map(|p| p.1)),
            opt(self.true_probability),
            self.truth_cost,
            self.observed_lines,
            smiles,
            self.first,
        )
    }

    pub const TSV_HEADER: &'static str = "id\tformula\theavy\tposition\tconsidered\tfirst_cost\tfirst_1h\tfirst_13c\tfirst_p\ttrue_1h\ttrue_13c\ttrue_p\ttruth_cost\tlines\tsmiles\tfirst";
}

/// top-1, top-3 and top-10 counts over ranked (not refused) outcomes.
pub fn summary(outcomes: &[Outcome]) -> (usize, usize, usize, usize) {
    let ranked: Vec<&Outcome> = outcomes.iter().filter(|o| o.refused.is_none()).collect();
    let within = |k: usize| {
        ranked
            .iter()
            .filter(|o| o.position.is_some_and(|p| p <= k))
            .count()
    };
    (ranked.len(), within(1), within(3), within(10))
}

/// One bin of a calibration table: the first candidates whose stated
/// probability lies in [lo, lo + 0.1).
#[derive(Clone, Copy, Debug)]
pub struct Bin {
    pub lo: f64,
    pub n: usize,
    /// Mean stated probability of the first candidate.
    pub stated: f64,
    /// Share of the bin whose first candidate is the deposited structure.
    pub observed: f64,
    /// Binomial standard error of the observed share if the stated
    /// probability were right: sqrt(p (1 - p) / n).
    pub se: f64,
}

/// The calibration table over ranked outcomes: bins of 0.1 of the first
/// candidate's stated probability (empty bins left out).
pub fn calibration_bins(outcomes: &[Outcome]) -> Vec<Bin> {
    let ranked: Vec<&Outcome> = outcomes.iter().filter(|o| o.refused.is_none()).collect();
    (0..10)
        .filter_map(|b| {
            let inside: Vec<&&Outcome> = ranked
                .iter()
                .filter(|o| ((o.first_probability * 10.0).floor() as i64).min(9) == b)
                .collect();
            if inside.is_empty() {
                return None;
            }
            let n = inside.len() as f64;
            let stated = inside.iter().map(|o| o.first_probability).sum::<f64>() / n;
            let observed = inside.iter().filter(|o| o.position == Some(1)).count() as f64 / n;
            Some(Bin {
                lo: b as f64 / 10.0,
                n: inside.len(),
                stated,
                observed,
                se: (stated * (1.0 - stated) / n).sqrt(),
            })
        })
        .collect()
}

/// The calibration table as Markdown.
pub fn calibration_markdown(outcomes: &[Outcome]) -> String {
    let mut out = String::from(
        "| stated probability | n | mean stated | observed first | standard error |\n| --- | --- | --- | --- | --- |\n",
    );
    for b in calibration_bins(outcomes) {
        out.push_str(&format!(
            "| {:.1}-{:.1} | {} | {:.3} | {:.3} | {:.3} |\n",
            b.lo,
            b.lo + 0.1,
            b.n,
            b.stated,
            b.observed,
            b.se
        ));
    }
    out
}

/// Summed log loss of the first candidate's stated probability (its
/// probability when it is the truth, one minus it when it is not).
pub fn log_loss(outcomes: &[Outcome]) -> f64 {
    outcomes
        .iter()
        .map(|o| {
            let p = o.first_probability.clamp(1e-12, 1.0 - 1e-12);
            if o.position == Some(1) {
                -p.ln()
            } else {
                -(1.0 - p).ln()
            }
        })
        .sum()
}
