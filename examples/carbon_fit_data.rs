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
use isomerank::predict::carbon::environment;
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
                })
            })
            .collect();
        let obs: Vec<_> = obs
            .iter()
            .map(|o| json!([o.shift, o.hydrogens, o.carbons]))
            .collect();
        let line = json!({"id": case.id, "obs": obs, "classes": classes});
        writeln!(out, "{line}").expect("write");
    }
    eprintln!("{failed} compounds not read");
}
