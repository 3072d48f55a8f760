//! The NMRShiftDB2 dev lists (tests/data/nmrshiftdb2-dev.toml and
//! nmrshiftdb2-v2-dev.toml; Steinbeck, Krause & Kuhn, J. Chem. Inf. Comput.
//! Sci. 2003, 43, 1733) against the 1H predictor: per compound, the sorted
//! per-H comparison (observed C-bound H sorted by shift against the predicted
//! non-exchangeable H sorted by shift, pair by pair) and, where the depositor
//! gave a multiplicity, the label of the predicted group that takes most of
//! the entry's H. Shared by tests/predict_nmrshiftdb_1h.rs and the fitting
//! example examples/fit_1h_tables.rs (included there by path).
#![allow(dead_code)]

use isomerank::chem::aromaticity;
use isomerank::chem::smiles::parse_smiles;
use isomerank::chem::Molecule;
use isomerank::predict::{PredictedSignal, Predictor};
use isomerank::score::halves::Halves;
use isomerank::spectrum::journal;
use serde::Deserialize;
use std::path::PathBuf;

/// One case of either file (the fields both share).
#[derive(Clone, Debug, Deserialize)]
pub struct Case {
    pub id: u64,
    pub smiles: String,
    pub solvent: String,
    #[serde(default)]
    pub mhz: Option<f64>,
    /// v2 only: "all", "none" or "some"; absent in v1 (every label given).
    #[serde(default)]
    pub h_multiplicity: Option<String>,
    pub peaks: String,
}

#[derive(Deserialize)]
struct File {
    case: Vec<Case>,
}

/// Every case of both dev files with a 1H list (v1 first), each id once.
pub fn cases() -> Vec<Case> {
    let mut out: Vec<Case> = Vec::new();
    for file in ["nmrshiftdb2-dev.toml", "nmrshiftdb2-v2-dev.toml"] {
        let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
            .join("tests/data")
            .join(file);
        let text = std::fs::read_to_string(&path)
            .unwrap_or_else(|e| panic!("read {}: {e}", path.display()));
        let f: File = toml::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        for c in f.case {
            if !c.peaks.is_empty() && !out.iter().any(|o| o.id == c.id) {
                out.push(c);
            }
        }
    }
    out
}

/// One observed H paired with one predicted H.
#[derive(Clone, Debug)]
pub struct Pair {
    pub id: u64,
    pub observed: f64,
    pub predicted: f64,
    pub sigma: f64,
    /// Index of the predicted signal in [`Compared::signals`].
    pub signal: usize,
    /// The H sits on an aromatic atom.
    pub aromatic: bool,
    pub dmso: bool,
}

/// One observed entry with a multiplicity label and the predicted label of
/// the group that takes most of its H.
#[derive(Clone, Debug)]
pub struct Label {
    pub id: u64,
    pub observed: String,
    pub predicted: String,
    /// The predicted group's notes (why it is m, ...).
    pub notes: Vec<String>,
    /// Index of the predicted signal in [`Compared::signals`].
    pub signal: usize,
    /// The observed entry's shift, ppm.
    pub shift: f64,
    /// The observed entry's H count.
    pub entry_h: usize,
    /// The observed entry's J values, Hz, largest first.
    pub observed_j: Vec<f64>,
    /// The group's label is that of one half of a diastereotopic pair
    /// (its H were put in two entries).
    pub apart: bool,
}

/// One compound compared.
pub struct Compared {
    pub case: Case,
    pub molecule: Molecule,
    pub signals: Vec<PredictedSignal>,
    pub pairs: Vec<Pair>,
    pub labels: Vec<Label>,
}

/// Why a case could not be compared.
pub struct Skipped {
    pub id: u64,
    pub why: String,
}

/// The label without the modifiers br and app (they say how the lines
/// look, not how many there are).
pub fn bare_label(label: &str) -> String {
    label
        .trim_start_matches("br ")
        .trim_start_matches("app ")
        .to_string()
}

/// Compare every case: predicted in the case's solvent (CDCl3 when
/// unreported) at its frequency (400 MHz when unreported).
pub fn compare_all(predictor: &Predictor, cases: &[Case]) -> (Vec<Compared>, Vec<Skipped>) {
    let mut done = Vec::new();
    let mut skipped = Vec::new();
    for c in cases {
        match compare(predictor, c) {
            Ok(x) => done.push(x),
            Err(why) => skipped.push(Skipped { id: c.id, why }),
        }
    }
    (done, skipped)
}

pub fn compare(predictor: &Predictor, c: &Case) -> Result<Compared, String> {
    let dmso = c.solvent == "DMSO-d6";
    let solvent = if dmso { "DMSO-d6" } else { "CDCl3" };
    let opts = predictor
        .options(solvent, c.mhz.unwrap_or(400.0))
        .map_err(|e| e.to_string())?;
    let mol = parse_smiles(&c.smiles).map_err(|e| e.to_string())?;
    let signals = predictor
        .try_predict(&mol, &opts)
        .map_err(|e| e.to_string())?;
    let raw = journal::parse(&c.peaks).map_err(|e| e.to_string())?;
    let arom = aromaticity::perceive(&mol);
    // Observed H, one per H, with their entry.
    let mut obs: Vec<(f64, usize)> = Vec::new();
    for (k, e) in raw.entries.iter().enumerate() {
        let n = match e.integral {
            Some((v, true)) if v >= 0.5 => v.round() as usize,
            _ => return Err(format!("entry {} has no H count", e.entry)),
        };
        obs.extend(std::iter::repeat_n((e.shift, k), n));
    }
    let mut pred: Vec<(f64, usize)> = Vec::new();
    for (i, s) in signals.iter().enumerate() {
        if !s.exchangeable {
            pred.extend(std::iter::repeat_n((s.shift, i), s.hydrogens as usize));
        }
    }
    if obs.len() != pred.len() {
        return Err(format!(
            "{} observed C-bound H against {} predicted",
            obs.len(),
            pred.len()
        ));
    }
    obs.sort_by(|a, b| b.0.total_cmp(&a.0));
    pred.sort_by(|a, b| b.0.total_cmp(&a.0));
    let mut pairs = Vec::new();
    // H per (entry, signal) for the labels.
    let mut share = vec![vec![0usize; signals.len()]; raw.entries.len()];
    for (o, p) in obs.iter().zip(&pred) {
        let s = &signals[p.1];
        share[o.1][p.1] += 1;
        pairs.push(Pair {
            id: c.id,
            observed: o.0,
            predicted: p.0,
            sigma: s.sigma,
            signal: p.1,
            aromatic: s.atoms.iter().any(|&a| arom.atom[a]),
            dmso,
        });
    }
    let mut labels = Vec::new();
    for (k, e) in raw.entries.iter().enumerate() {
        if !e.pattern.reported {
            continue;
        }
        // The group with most H in this entry (the first on a tie).
        let best = (0..signals.len())
            .filter(|&i| share[k][i] > 0)
            .max_by(|&a, &b| share[k][a].cmp(&share[k][b]).then(b.cmp(&a)));
        if let Some(i) = best {
            // A diastereotopic pair whose H the sorted pairing put in two
            // entries is read as two signals, each with the label of one
            // half (the scorer reads it that way too, src/score/halves.rs).
            let s = &signals[i];
            let apart = s.halves
                && s.hydrogens % 2 == 0
                && share[k][i] == s.hydrogens as usize / 2
                && (0..raw.entries.len()).any(|x| x != k && share[x][i] > 0);
            let predicted = if apart {
                s.split().0.label()
            } else {
                s.label()
            };
            labels.push(Label {
                id: c.id,
                observed: bare_label(&e.pattern.label()),
                predicted: bare_label(&predicted),
                notes: signals[i].notes.clone(),
                signal: i,
                shift: e.shift,
                entry_h: e.integral.map_or(0, |(v, _)| v.round() as usize),
                observed_j: e.j_hz.clone(),
                apart,
            });
        }
    }
    Ok(Compared {
        case: c.clone(),
        molecule: mol,
        signals,
        pairs,
        labels,
    })
}

/// A reported label agrees with ours when it is the same label, or when it
/// is m and ours is not first order (m): an m reported where we predict a
/// first-order pattern is a disagreement.
pub fn labels_agree(l: &Label) -> bool {
    l.observed == l.predicted
}

/// Mean absolute error of the pairs that pass `keep`, and their number.
pub fn mae(pairs: &[&Pair], keep: impl Fn(&Pair) -> bool) -> (f64, usize) {
    let v: Vec<f64> = pairs
        .iter()
        .filter(|p| keep(p))
        .map(|p| (p.observed - p.predicted).abs())
        .collect();
    (v.iter().sum::<f64>() / v.len().max(1) as f64, v.len())
}
