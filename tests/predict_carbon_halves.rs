//! Diastereotopic pairs in the prediction (src/predict/groups.rs,
//! src/score/halves.rs): which 1H groups and 13C classes are marked as
//! pairs that the scorer may read as two halves. A fact of the trade
//! (common practice): in a molecule with a stereocentre the two methyls of
//! an isopropyl or a gem-dimethyl group on a prochiral carbon, and the two
//! H of a CH2, are diastereotopic (anisochronous, usually resolved); in a
//! molecule without one they are equivalent (enantiotopic or homotopic).

use isomerank::chem::smiles::parse_smiles;
use isomerank::predict::{PredictOptions, PredictedCarbon, PredictedSignal, Predictor};

fn predict(smiles: &str) -> (Vec<PredictedSignal>, Vec<PredictedCarbon>) {
    let p = Predictor::embedded().unwrap();
    let mol = parse_smiles(smiles).unwrap();
    let o = PredictOptions::default();
    (
        p.try_predict(&mol, &o).unwrap(),
        p.try_predict_carbon(&mol, &o).unwrap(),
    )
}

/// The marked 1H groups as (H, atoms) and the marked 13C classes as
/// (carbons, atoms), atoms sorted, in order.
type Marks = (Vec<(u32, Vec<usize>)>, Vec<(u32, Vec<usize>)>);

fn marked(smiles: &str) -> Marks {
    let (h, c) = predict(smiles);
    let sorted = |a: &[usize]| {
        let mut a = a.to_vec();
        a.sort_unstable();
        a
    };
    let mut h: Vec<_> = h
        .iter()
        .filter(|s| s.halves)
        .map(|s| (s.hydrogens, sorted(&s.atoms)))
        .collect();
    let mut c: Vec<_> = c
        .iter()
        .filter(|s| s.halves)
        .map(|s| (s.carbons, sorted(&s.atoms)))
        .collect();
    h.sort();
    c.sort();
    (h, c)
}

#[test]
fn isopropyl_next_to_a_stereocentre_is_a_pair() {
    // 3-methylbutan-2-ol (atoms C0 C1(C2) C3(C4) O5): the isopropyl's
    // methyls 0 and 2 are diastereotopic (C3 is a stereocentre); 1H and 13C.
    let (h, c) = marked("CC(C)C(C)O");
    assert_eq!(h, vec![(6, vec![0, 2])]);
    assert_eq!(c, vec![(2, vec![0, 2])]);
    // Valine (common practice: two methyl doublets and two methyl carbons).
    let (h, c) = marked("CC(C)C(N)C(=O)O");
    assert_eq!(h, vec![(6, vec![0, 2])]);
    assert_eq!(c, vec![(2, vec![0, 2])]);
}

#[test]
fn gem_dimethyl_and_ch2_next_to_a_stereocentre_are_pairs() {
    // 3-chloro-2-methylbutan-2-ol, CC(C)(O)C(C)Cl: the gem-dimethyl on C1
    // (other places OH and the stereocentre) is a pair.
    let (h, c) = marked("CC(C)(O)C(C)Cl");
    assert_eq!(h, vec![(6, vec![0, 2])]);
    assert_eq!(c, vec![(2, vec![0, 2])]);
    // Butan-2-ol, CCC(C)O: the CH2 (atom 1) next to the stereocentre; its
    // carbon is one carbon (no 13C pair).
    let (h, c) = marked("CCC(C)O");
    assert_eq!(h, vec![(2, vec![1])]);
    assert!(c.is_empty());
    // 2-chloro-2,4-dimethylpentan-3-ol: the isopropyl and the CMe2Cl
    // methyls are two pairs on either side of the stereocentre.
    let (h, c) = marked("CC(C)C(O)C(C)(C)Cl");
    assert_eq!(h, vec![(6, vec![0, 2]), (6, vec![6, 7])]);
    assert_eq!(c.len(), 2);
}

#[test]
fn no_pair_without_a_stereocentre() {
    // Isobutanol, 2,3-dimethylbutane, tert-butanol, pentan-3-ol,
    // diisopropyl ether: no stereocentre, nothing marked.
    for smiles in [
        "CC(C)CO",
        "CC(C)C(C)C",
        "CC(C)(C)O",
        "CCC(CC)O",
        "CC(C)OC(C)C",
    ] {
        let (h, c) = marked(smiles);
        assert!(h.is_empty() && c.is_empty(), "{smiles}: {h:?} {c:?}");
    }
    // 3,3-dimethylbutan-2-ol: a stereocentre, but a tert-butyl's three
    // methyls are no pair (no prochiral carbon).
    let (h, c) = marked("CC(O)C(C)(C)C");
    assert!(h.is_empty() && c.is_empty(), "{h:?} {c:?}");
}
