//! Ring-H shifts of substituted benzenes against handbook values
//! (tests/data/benzenes_handbook.toml; the values there are from memory,
//! standing in for Shapiro & Mohrmann, J. Phys. Chem. Ref. Data 1977, 6,
//! 919). Every ring H must lie within the predicted sigma; the mean absolute
//! error is printed.

mod common;

use common::{data_table, DataCompound, DataTable};
use isomerank::chem::smiles::parse_smiles;
use isomerank::predict::Predictor;
use serde::Deserialize;

#[derive(Deserialize)]
struct Ref {
    atoms: Vec<usize>,
    shift: f64,
    position: String,
}

#[test]
fn substituted_benzenes_handbook_shifts() {
    let table: DataTable<DataCompound<Ref>> = data_table("benzenes_handbook.toml");
    let p = Predictor::embedded().unwrap();
    let opts = p.options("CDCl3", 400.0).unwrap();
    let mut errs = Vec::new();
    let mut bad = Vec::new();
    for c in &table.compound {
        let mol = match parse_smiles(&c.smiles) {
            Ok(m) => m,
            // Nitro groups need a five-valent N that the reader may refuse.
            Err(e) => panic!("{}: {e}", c.name),
        };
        let sig = p.predict(&mol, &opts);
        for r in &c.signals {
            let s = sig
                .iter()
                .find(|s| s.atoms.iter().any(|a| r.atoms.contains(a)))
                .unwrap_or_else(|| panic!("{}: no signal on {:?}", c.name, r.atoms));
            // Handbook value (from memory; see the data file).
            let e = (s.shift - r.shift).abs();
            errs.push(e);
            if e > s.sigma {
                bad.push(format!(
                    "{} {}: handbook {:.2}, predicted {:.2} +- {:.2}",
                    c.name, r.position, r.shift, s.shift, s.sigma
                ));
            }
        }
    }
    let mae = errs.iter().sum::<f64>() / errs.len() as f64;
    println!(
        "substituted benzenes: {} ring H, MAE {:.3} ppm",
        errs.len(),
        mae
    );
    assert!(bad.is_empty(), "{}", bad.join("\n"));
    assert!(mae <= 0.15, "MAE {mae:.3}");
}
