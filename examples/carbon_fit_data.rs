//! The fitting data for the 13C increment tables: for every compound of the
//! NMRShiftDB2 v2 dev split, its observed 13C entries and, per predicted
//! carbon symmetry class, the terms the predictor sums (centre class, ring
//! size, atom type and distance of every atom within four bonds) with the
//! current prediction. One JSON object per line on stdout, read by
//! `scripts/fit_carbon.py` (fragment-library/README.md, "Refit of the 13C
//! tables").
//!
//!     cargo run --release --example carbon_fit_data > /tmp/carbon-terms.jsonl

#[path = "../tests/common/carbon_dev.rs"]
mod carbon_dev;

use isomerank::chem::smiles::parse_smiles;
use isomerank::predict::carbon::{atom_type, environment, ATOM_TYPES};
use isomerank::predict::view::View;
use isomerank::predict::{PredictOptions, Predictor};
use serde_json::json;
use std::io::Write;

fn main() {
    let p = Predictor::embedded().expect("library");
    let opts = PredictOptions::default();
    let mut out = std::io::BufWriter::new(std::io::stdout().lock());
    let mut failed = 0;
    for case in carbon_dev::load() {
        let (Ok(mol), Ok(obs)) = (
            parse_smiles(&case.smiles),
            carbon_dev::parse_carbon_line(&case.carbon),
        ) else {
            failed += 1;
            continue;
        };
        let Ok(v) = View::new(&mol) else {
            failed += 1;
            continue;
        };
        let pred = p.predict_carbon(&mol, &opts);
        let classes: Vec<_> = pred
            .iter()
            .map(|c| {
                let e = environment(&p.library().carbon, &v, c.atoms[0]);
                json!({
                    "centre": e.centre,
                    "ring": e.ring,
                    "h": c.hydrogens,
                    "n": c.carbons,
                    "kind": carbon_dev::kind_of(&v, c.atoms[0]),
                    "pred": c.shift,
                    "terms": e.terms,
                    "paths": e.paths,
                    "groups": e.groups,
                    "atoms": c.atoms,
                })
            })
            .collect();
        let obs: Vec<_> = obs
            .iter()
            .map(|o| json!([o.shift, o.hydrogens, o.carbons]))
            .collect();
        // The molecular graph as the predictor sees it, for exploring new
        // terms in the fitting script: per atom (element, H count, atom
        // type, aromatic, smallest ring, smallest aromatic ring size), and
        // per bond (atom, atom, kind: 1 single, 2 double, 3 triple, 4 aromatic).
        let atoms: Vec<_> = (0..v.n)
            .map(|a| {
                json!([
                    v.element[a].symbol(),
                    v.h[a],
                    ATOM_TYPES[atom_type(&v, a) as usize],
                    v.is_aromatic(a),
                    v.ring_size[a],
                    v.aromatic_ring_of(a).map_or(0, |r| r.count_ones()),
                ])
            })
            .collect();
        let bonds: Vec<_> = (0..v.n)
            .flat_map(|a| v.neighbours(a).map(move |(b, k)| (a, b, k)))
            .filter(|&(a, b, _)| a < b)
            .map(|(a, b, k)| json!([a, b, k]))
            .collect();
        let line = json!({"id": case.id, "smiles": case.smiles, "obs": obs,
            "classes": classes, "atoms": atoms, "bonds": bonds});
        writeln!(out, "{line}").expect("write");
    }
    eprintln!("{failed} compounds not read");
}
