//! The NMRShiftDB2 v2 dev split (tests/data/nmrshiftdb2-v2-dev.toml; source
//! and derivation in its header and tests/data/nmrshiftdb2-README.md) as
//! the 13C checks read it: a small reader of its journal-style 13C lines
//! (`13C NMR (CDCl3) δ 171.1 (C), 128.5 (CH, 2C)`) and the error measure
//! (per compound both lists expanded by their carbon counts, sorted by
//! shift and compared position by position; carbon-weighted mean absolute
//! error, split by carbon type and by H count).
//! Shared by tests/predict_carbon_nmrshiftdb.rs and the fitting tools in
//! examples/ (included with `#[path]`).
#![allow(dead_code)]

use isomerank::chem::Element;
use isomerank::predict::carbon::{family_of, FAMILIES};
use isomerank::predict::view::View;
use isomerank::predict::PredictedCarbon;
use serde::Deserialize;

pub const DEV_FILE: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/tests/data/nmrshiftdb2-v2-dev.toml"
);

#[derive(Deserialize)]
pub struct Case {
    pub id: u64,
    pub smiles: String,
    pub carbon: String,
}

#[derive(Deserialize)]
struct File {
    case: Vec<Case>,
}

pub fn load() -> Vec<Case> {
    let text = std::fs::read_to_string(DEV_FILE).expect("read the NMRShiftDB2 dev file");
    toml::from_str::<File>(&text)
        .expect("parse the NMRShiftDB2 dev file")
        .case
}

/// One observed 13C entry.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Observed {
    pub shift: f64,
    /// Attached H (0 C, 1 CH, 2 CH2, 3 CH3, 4 CH4).
    pub hydrogens: u8,
    /// Carbons the entry stands for.
    pub carbons: u32,
}

/// Read `13C NMR (solvent) δ 171.1 (C), 128.5 (CH, 2C), ...`.
pub fn parse_carbon_line(line: &str) -> Result<Vec<Observed>, String> {
    let rest = line
        .split_once('δ')
        .ok_or_else(|| format!("no δ in {line:?}"))?
        .1;
    let mut out = Vec::new();
    for entry in rest.split("),") {
        let entry = entry.trim().trim_end_matches(')');
        if entry.is_empty() {
            continue;
        }
        let (shift, inside) = entry
            .split_once('(')
            .ok_or_else(|| format!("entry {entry:?} has no (H letters)"))?;
        let shift: f64 = shift
            .trim()
            .parse()
            .map_err(|_| format!("entry {entry:?}: shift is not a number"))?;
        let mut parts = inside.split(',').map(str::trim);
        let hydrogens = match parts.next() {
            Some("C") => 0,
            Some("CH") => 1,
            Some("CH2") => 2,
            Some("CH3") => 3,
            Some("CH4") => 4,
            other => return Err(format!("entry {entry:?}: H letters {other:?}")),
        };
        let carbons = match parts.next() {
            None => 1,
            Some(n) => n
                .strip_suffix('C')
                .and_then(|n| n.parse().ok())
                .ok_or_else(|| format!("entry {entry:?}: carbon count {n:?}"))?,
        };
        out.push(Observed {
            shift,
            hydrogens,
            carbons,
        });
    }
    Ok(out)
}

/// Carbon types of the error table.
pub const KINDS: [&str; 5] = [
    "C=O, C=N, C=S",
    "aromatic and alkene sp2",
    "sp (nitrile, alkyne, cumulated)",
    "sp3 bonded to O, N or halogen",
    "plain sp3",
];

/// The carbon type (index into [`KINDS`]) of carbon `c`.
pub fn kind_of(v: &View, c: usize) -> usize {
    match FAMILIES[family_of(v, c)] {
        "carbonyl" | "imine" | "thione" => 0,
        "aro6" | "aro5" | "alkene" | "other" => 1,
        "nitrile" | "alkyne" | "cumulene" => 2,
        _ => {
            let polar = v.neighbours(c).any(|(x, _)| {
                matches!(
                    v.element[x],
                    Element::O | Element::N | Element::F | Element::Cl | Element::Br | Element::I
                )
            });
            if polar {
                3
            } else {
                4
            }
        }
    }
}

/// Sums of absolute errors and counts (carbon-weighted).
#[derive(Clone, Debug, Default)]
pub struct Errors {
    pub by_kind: [(f64, u64); 5],
    pub by_h: [(f64, u64); 5],
    pub total: (f64, u64),
    pub compounds: u64,
    /// Compounds whose predicted and observed carbon totals differ (not compared).
    pub skipped: u64,
}

impl Errors {
    /// Compare one compound; false when the carbon totals differ.
    pub fn add(&mut self, v: &View, pred: &[PredictedCarbon], obs: &[Observed]) -> bool {
        let mut p: Vec<(f64, usize, u8)> = Vec::new();
        for c in pred {
            let k = kind_of(v, c.atoms[0]);
            for _ in 0..c.carbons {
                p.push((c.shift, k, c.hydrogens));
            }
        }
        let mut o: Vec<f64> = Vec::new();
        for e in obs {
            for _ in 0..e.carbons {
                o.push(e.shift);
            }
        }
        if p.len() != o.len() {
            self.skipped += 1;
            return false;
        }
        p.sort_by(|a, b| a.0.total_cmp(&b.0));
        o.sort_by(|a, b| a.total_cmp(b));
        for (&(shift, k, h), &x) in p.iter().zip(&o) {
            let e = (shift - x).abs();
            self.by_kind[k].0 += e;
            self.by_kind[k].1 += 1;
            self.by_h[h.min(4) as usize].0 += e;
            self.by_h[h.min(4) as usize].1 += 1;
            self.total.0 += e;
            self.total.1 += 1;
        }
        self.compounds += 1;
        true
    }

    pub fn mae(&self) -> f64 {
        self.total.0 / self.total.1.max(1) as f64
    }

    /// The table as text.
    pub fn table(&self) -> String {
        let mut t = format!(
            "{} compounds compared ({} skipped: carbon totals differ), {} carbons, MAE {:.2} ppm\n",
            self.compounds,
            self.skipped,
            self.total.1,
            self.mae()
        );
        for (name, (s, n)) in KINDS.iter().zip(&self.by_kind) {
            t += &format!(
                "  {name:<34} {n:>7} carbons  MAE {:.2}\n",
                s / (*n).max(1) as f64
            );
        }
        for (h, (s, n)) in self.by_h.iter().enumerate() {
            let name = ["C", "CH", "CH2", "CH3", "CH4"][h];
            t += &format!(
                "  {name:<34} {n:>7} carbons  MAE {:.2}\n",
                s / (*n).max(1) as f64
            );
        }
        t
    }
}
