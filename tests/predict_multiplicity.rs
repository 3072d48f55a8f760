//! Multiplicities of first-order spectra of simple structures
//! (tests/data/first_order_multiplicities.toml: n+1 rule, common practice;
//! the reported patterns from memory). The share predicted right is printed
//! and must reach the project's goal of 95%.

mod common;

use common::{data_table, DataCompound, DataTable};
use isomerank::chem::smiles::parse_smiles;
use isomerank::predict::Predictor;
use serde::Deserialize;

#[derive(Deserialize)]
struct Ref {
    atom: usize,
    mult: String,
}

#[test]
fn first_order_multiplicities() {
    let table: DataTable<DataCompound<Ref>> = data_table("first_order_multiplicities.toml");
    let p = Predictor::embedded().unwrap();
    let opts = p.options("CDCl3", 400.0).unwrap();
    let (mut total, mut right) = (0, 0);
    let mut wrong = Vec::new();
    for c in &table.compound {
        let sig = p.predict(&parse_smiles(&c.smiles).unwrap(), &opts);
        for r in &c.signals {
            let s = sig.iter().find(|s| s.atoms.contains(&r.atom)).unwrap();
            // n+1 rule (common practice); reported pattern from memory.
            let label = s.label().replace("br s", "s");
            total += 1;
            if label == r.mult {
                right += 1;
            } else {
                wrong.push(format!(
                    "{} atom {}: predicted {label}, reported {}",
                    c.name, r.atom, r.mult
                ));
            }
        }
    }
    let share = right as f64 / total as f64;
    println!(
        "first-order multiplicities: {right}/{total} ({:.0}%)\n{}",
        share * 100.0,
        wrong.join("\n")
    );
    assert!(share >= 0.95, "{}", wrong.join("\n"));
}
