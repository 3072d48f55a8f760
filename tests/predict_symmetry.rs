//! Equivalent-atom classes of the predictor (automorphism orbits) against
//! RDKit's canonical ranks with ties kept, Chem.CanonicalRankAtoms(mol,
//! breakTies=False) (RDKit, PyPI package `rdkit`; run through
//! tests/reference/symmetry_classes.py). Structures: every isomer of five
//! formulas from the project's generator plus a hand-picked list. The test
//! fails (never skips) when RDKit is missing.

mod common;

use isomerank::chem::smiles::parse_smiles;
use isomerank::chem::Formula;
use isomerank::enumerate::{self, Options};
use isomerank::predict::Predictor;

/// Same-class relation as a canonical list: for each atom, the first atom
/// index of its class.
fn partition(ids: &[usize]) -> Vec<usize> {
    ids.iter()
        .map(|&x| ids.iter().position(|&y| y == x).unwrap())
        .collect()
}

#[test]
fn symmetry_classes_match_rdkit() {
    let mut smiles: Vec<String> = Vec::new();
    for f in ["C5H10O", "C6H6", "C4H4O", "C3H6O2", "C4H6O"] {
        let formula = Formula::parse(f).unwrap();
        enumerate::for_each_ordered(
            &formula,
            &Options::default(),
            |iso| Some(iso.smiles()),
            |s| {
                smiles.push(s);
                true
            },
            &mut |_| {},
        )
        .unwrap();
    }
    let named = [
        "Cc1ccccc1",
        "Cc1ccc(C)cc1",
        "Cc1cccc(C)c1",
        "Cc1ccccc1C",
        "c1ccncc1",
        "c1ccoc1",
        "c1ccsc1",
        "c1cc[nH]c1",
        "c1ccc2ccccc2c1",
        "CC(C)(C)c1cc(C)cc(C(C)(C)C)c1O",
        "CN(C)C=O",
        "CC(=O)N(C)C",
        "C1CCOC1",
        "C1COCCO1",
        "COCCOCCOC",
        "CCN(CC)CC",
        "CC(O)CC",
        "OC1CCCCC1",
        "CC1CCCCC1",
        "O=C1CCCCC1",
        "C=Cc1ccccc1",
        "C/C=C/C",
        "CC(C)=C",
        "ClC(Cl)Cl",
        "CS(C)=O",
        "OCCO",
        "c1ccc(cc1)-c1ccccc1",
        "C1CC2CCC1C2",
        "C12C3C4C1C5C2C3C45",
        "C1CC1",
        "c1ccc2[nH]ccc2c1",
        "Oc1ccc(O)cc1",
        "O=Cc1ccc(C=O)cc1",
        "CC(C)C(C)C",
        "CCC(CC)(CC)CC",
        "c1cnc2ncccc2c1",
    ];
    smiles.extend(named.iter().map(|s| s.to_string()));
    assert!(smiles.len() >= 200, "only {} structures", smiles.len());
    let input: String = smiles.iter().map(|s| format!("{s}\n")).collect();
    let out = common::run_reference_script("symmetry_classes.py", &[], &input);
    let lines: Vec<&str> = out.lines().collect();
    assert_eq!(lines.len(), smiles.len());
    let p = Predictor::embedded().unwrap();
    let mut mismatches = Vec::new();
    for (s, line) in smiles.iter().zip(&lines) {
        assert_ne!(*line, "ERROR", "RDKit could not read {s}");
        let rdkit: Vec<usize> = line
            .split_whitespace()
            .map(|x| x.parse().unwrap())
            .collect();
        let mol = parse_smiles(s).unwrap();
        let ours = p.symmetry_classes(&mol).unwrap();
        // RDKit, Chem.CanonicalRankAtoms(breakTies=False): equal ranks = one class.
        if partition(&ours) != partition(&rdkit) {
            mismatches.push(format!("{s}: ours {ours:?}, RDKit {rdkit:?}"));
        }
    }
    println!(
        "symmetry classes: {} structures compared with RDKit, {} differ",
        smiles.len(),
        mismatches.len()
    );
    assert!(mismatches.is_empty(), "{}", mismatches.join("\n"));
}
