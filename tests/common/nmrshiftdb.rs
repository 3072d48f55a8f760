//! The NMRShiftDB2 dev lists (tests/data/nmrshiftdb2-dev.toml and
//! nmrshiftdb2-v2-dev.toml; Steinbeck, Krause & Kuhn, J. Chem. Inf. Comput.
//! Sci. 2003, 43, 1733) against the 1H predictor: per compound, the sorted
//! per-H comparison (observed C-bound H sorted by shift against the predicted
//! non-exchangeable H sorted by shift, pair by pair) and, where the depositor
//! gave a multiplicity, the label of the predicted group that takes most of
//! the entry's H, under two pairings of entries with groups: the sorted
//! per-H pairing of the shift figures, and an assignment that uses only
//! shifts and H counts ([`assign`]). Shared by tests/predict_nmrshiftdb_1h.rs
//! and the fitting example examples/fit_1h_tables.rs (included there by
//! path).
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
    /// Labels under the assignment pairing ([`assign`]): each entry's label
    /// against the group the assignment gives most of its H.
    pub labels: Vec<Label>,
    /// Labels under the sorted per-H pairing of the shift figures.
    pub labels_sorted: Vec<Label>,
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
    // H per (entry, signal) under the sorted pairing.
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
    let entries: Vec<(f64, usize)> = raw
        .entries
        .iter()
        .map(|e| (e.shift, e.integral.map_or(0, |(v, _)| v.round() as usize)))
        .collect();
    let groups: Vec<(f64, usize, bool)> = signals
        .iter()
        .map(|s| {
            let h = if s.exchangeable {
                0
            } else {
                s.hydrogens as usize
            };
            (s.shift, h, s.halves)
        })
        .collect();
    let assigned = assign(&entries, &groups);
    let labels = entry_labels(c.id, &raw, &signals, &assigned);
    let labels_sorted = entry_labels(c.id, &raw, &signals, &share);
    Ok(Compared {
        case: c.clone(),
        molecule: mol,
        signals,
        pairs,
        labels,
        labels_sorted,
    })
}

/// The label of every entry with a reported multiplicity against the
/// predicted group that takes most of its H in `share` (H per entry and
/// signal; the first group on a tie).
fn entry_labels(
    id: u64,
    raw: &journal::RawSpectrum,
    signals: &[PredictedSignal],
    share: &[Vec<usize>],
) -> Vec<Label> {
    let mut labels = Vec::new();
    for (k, e) in raw.entries.iter().enumerate() {
        if !e.pattern.reported {
            continue;
        }
        let best = (0..signals.len())
            .filter(|&i| share[k][i] > 0)
            .max_by(|&a, &b| share[k][a].cmp(&share[k][b]).then(b.cmp(&a)));
        if let Some(i) = best {
            // A diastereotopic pair whose H the pairing put in two entries
            // is read as two signals, each with the label of one half (the
            // scorer reads it that way too, src/score/halves.rs).
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
                id,
                observed: bare_label(&e.pattern.label()),
                predicted: bare_label(&predicted),
                notes: s.notes.clone(),
                signal: i,
                shift: e.shift,
                entry_h: e.integral.map_or(0, |(v, _)| v.round() as usize),
                observed_j: e.j_hz.clone(),
                apart,
            });
        }
    }
    labels
}

/// Cost, in ppm per H, of pairing an H of an entry with a group whose H
/// count it does not match (see [`assign`]): the tolerance for a
/// shift (0.3 ppm), so an entry is paired with a group of another H count
/// before one of its own count only when that one is more than 0.3 ppm
/// further off. Chosen from the shift tolerance, not fitted on the labels.
pub const COUNT_MISMATCH_PPM: f64 = 0.3;

/// Pair observed entries with predicted groups using only shifts and H
/// counts, never the labels: a transportation problem (every entry gives
/// its H, every group takes its H) solved at minimum total cost, one H
/// costing |shift difference| in ppm plus [`COUNT_MISMATCH_PPM`] when the
/// entry's H count differs from the group's (a diastereotopic pair,
/// `halves`, also matches an entry of half its H: its two H may be
/// written apart). `entries` are (shift, H count), `groups` (shift, H
/// count, halves) with exchangeable groups given 0 H; the two H totals
/// must be equal. Returns H per (entry, group).
///
/// Why not the sorted pairing: with a cost of |shift difference| alone,
/// the sorted (monotone) pairing is already optimal in one dimension, so
/// the only information an assignment adds is the H count. Two groups
/// predicted close together in the wrong order then still meet the entries
/// of their own H count. Solved by successive shortest paths
/// (Bellman-Ford on the residual graph; integer costs in 0.001 ppm so that
/// ties break the same way on every machine).
pub fn assign(entries: &[(f64, usize)], groups: &[(f64, usize, bool)]) -> Vec<Vec<usize>> {
    let (ne, ng) = (entries.len(), groups.len());
    let mut out = vec![vec![0usize; ng]; ne];
    // Nodes: 0 source, 1..=ne entries, ne+1..=ne+ng groups, ne+ng+1 sink.
    let n = ne + ng + 2;
    let sink = n - 1;
    struct Edge {
        to: usize,
        cap: i64,
        cost: i64,
    }
    let mut edges: Vec<Edge> = Vec::new();
    let mut adj: Vec<Vec<usize>> = vec![Vec::new(); n];
    let add = |edges: &mut Vec<Edge>,
               adj: &mut Vec<Vec<usize>>,
               a: usize,
               b: usize,
               cap: i64,
               cost: i64| {
        adj[a].push(edges.len());
        edges.push(Edge { to: b, cap, cost });
        adj[b].push(edges.len());
        edges.push(Edge {
            to: a,
            cap: 0,
            cost: -cost,
        });
    };
    let scale = 1000.0;
    for (k, e) in entries.iter().enumerate() {
        add(&mut edges, &mut adj, 0, 1 + k, e.1 as i64, 0);
    }
    let mut middle = vec![vec![usize::MAX; ng]; ne];
    for (k, e) in entries.iter().enumerate() {
        for (i, g) in groups.iter().enumerate() {
            if g.1 == 0 || e.1 == 0 {
                continue;
            }
            let matches = e.1 == g.1 || (g.2 && g.1 % 2 == 0 && e.1 == g.1 / 2);
            let ppm = (e.0 - g.0).abs() + if matches { 0.0 } else { COUNT_MISMATCH_PPM };
            middle[k][i] = edges.len();
            add(
                &mut edges,
                &mut adj,
                1 + k,
                1 + ne + i,
                i64::MAX / 4,
                (ppm * scale).round() as i64,
            );
        }
    }
    for (i, g) in groups.iter().enumerate() {
        add(&mut edges, &mut adj, 1 + ne + i, sink, g.1 as i64, 0);
    }
    loop {
        // Bellman-Ford from the source on the residual graph.
        let mut dist = vec![i64::MAX; n];
        let mut via = vec![usize::MAX; n];
        dist[0] = 0;
        let mut changed = true;
        while changed {
            changed = false;
            for a in 0..n {
                if dist[a] == i64::MAX {
                    continue;
                }
                for &x in &adj[a] {
                    let e = &edges[x];
                    if e.cap > 0 && dist[a] + e.cost < dist[e.to] {
                        dist[e.to] = dist[a] + e.cost;
                        via[e.to] = x;
                        changed = true;
                    }
                }
            }
        }
        if dist[sink] == i64::MAX {
            break;
        }
        // Bottleneck along the path, then push.
        let mut f = i64::MAX;
        let mut v = sink;
        while v != 0 {
            let x = via[v];
            f = f.min(edges[x].cap);
            v = edges[x ^ 1].to;
        }
        let mut v = sink;
        while v != 0 {
            let x = via[v];
            edges[x].cap -= f;
            edges[x ^ 1].cap += f;
            v = edges[x ^ 1].to;
        }
    }
    for k in 0..ne {
        for i in 0..ng {
            let x = middle[k][i];
            if x != usize::MAX {
                out[k][i] = edges[x ^ 1].cap as usize;
            }
        }
    }
    out
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
