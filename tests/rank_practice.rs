//! Hand-made cases from common practice: signal patterns every chemist reads
//! at a glance, ranked over all isomers of the formula; and the behaviour of
//! the probabilities when the data are made ambiguous.

use isomerank::chem::smiles::{canonical_smiles, parse_smiles};
use isomerank::chem::Formula;
use isomerank::enumerate::{self, rules::RuleSet};
use isomerank::predict::Predictor;
use isomerank::rank::{self, Ranking, Settings};
use isomerank::score::ScoringModel;
use isomerank::spectrum::{integrals, journal, SolventTable};

fn rank_all(formula: &str, peaks: &str) -> Ranking {
    let formula = Formula::parse(formula).unwrap();
    let spectrum = integrals::build(
        journal::parse(peaks).unwrap(),
        &formula,
        &SolventTable::embedded(),
    )
    .unwrap();
    let predictor = Predictor::embedded().unwrap();
    let mut opts = predictor.options("CDCl3", 400.0).unwrap();
    opts.notes = false;
    let model = ScoringModel::embedded();
    let settings = Settings {
        spectrum: &spectrum,
        carbon: None,
        model: &model,
        top: 10,
    };
    let options = enumerate::Options {
        rules: RuleSet::all(),
        ..Default::default()
    };
    rank::with_standard_steps(&predictor, &opts, |steps| {
        rank::rank_formula(&formula, &options, steps, &settings, &mut |_, _| {}).unwrap()
    })
}

#[test]
fn a_9h_singlet_is_a_tert_butyl_group() {
    // Common practice: a 9H singlet is a tert-butyl group (three equivalent
    // methyls on one quaternary carbon). Shift of tert-butyl chloride
    // 1.60 ppm from memory.
    let r = rank_all("C4H9Cl", "1.60 (s, 9H)");
    assert_eq!(r.candidates[0].smiles, canonical("CC(C)(C)Cl"));
    assert!(
        r.candidates[0].probability > 0.9,
        "{}",
        r.candidates[0].probability
    );
}

#[test]
fn a_6h_doublet_with_a_1h_septet_is_an_isopropyl_group() {
    // Common practice: 6H d + 1H sept = (CH3)2CH-. Shifts of 2-bromopropane
    // (4.21 sept, 1.71 d, J about 6.6 Hz) from memory.
    let r = rank_all(
        "C3H7Br",
        "4.21 (sept, J = 6.6 Hz, 1H), 1.71 (d, J = 6.6 Hz, 6H)",
    );
    assert_eq!(r.candidates[0].smiles, canonical("CC(C)Br"));
    // The same pattern inside a larger formula: isopropyl acetate
    // (4.99 sept, 2.02 s, 1.23 d; from memory) among all C5H10O2 isomers.
    let r = rank_all("C5H10O2", "4.99 (sept, 1H), 2.02 (s, 3H), 1.23 (d, 6H)");
    assert_eq!(r.candidates[0].smiles, canonical("CC(=O)OC(C)C"));
}

#[test]
fn an_ethyl_group_is_a_quartet_and_a_triplet() {
    // Common practice: 2H q + 3H t with the same J = CH3CH2-; ethyl acetate
    // values from Gottlieb, Kotlyar & Nudelman, J. Org. Chem. 1997, 62, 7512.
    let r = rank_all(
        "C4H8O2",
        "4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)",
    );
    assert_eq!(r.candidates[0].smiles, canonical("CC(=O)OCC"));
    // Changing the 2.05 s into a 3.67 s (a methyl ester OCH3 shift, common
    // practice) and the quartet to 2.32 moves methyl propanoate to the top.
    let r = rank_all(
        "C4H8O2",
        "3.67 (s, 3H), 2.32 (q, J = 7.5 Hz, 2H), 1.14 (t, J = 7.5 Hz, 3H)",
    );
    assert_eq!(r.candidates[0].smiles, canonical("CCC(=O)OC"));
}

#[test]
fn a_para_disubstituted_phenol_is_found_with_the_default_rules() {
    // Common practice: two 2H "doublets" (AA'BB') = a para-disubstituted
    // ring; a broad 1H singlet = OH. p-Cresol in CDCl3 (7.03 d, 6.74 d,
    // 2.27 s, OH near 4.6; from memory). The default plausibility rules
    // keep phenols: the enol rule concerns OH on a non-aromatic C=C.
    let r = rank_all(
        "C7H8O",
        "1H NMR (400 MHz, CDCl3) δ 7.03 (d, J = 8.4 Hz, 2H), 6.74 (d, J = 8.4 Hz, 2H), \
         4.6 (br s, 1H), 2.27 (s, 3H)",
    );
    assert_eq!(r.candidates[0].smiles, canonical("Cc1ccc(O)cc1"));
    assert!(r.candidates[0].probability > 0.9);
}

#[test]
fn top_probability_falls_when_the_integrals_are_removed() {
    // Without integrals the data no longer say how many H each signal has,
    // so more candidates fit and the best one is less certain.
    let with = rank_all("C5H10O2", "4.99 (sept, 1H), 2.02 (s, 3H), 1.23 (d, 6H)");
    let without = rank_all("C5H10O2", "4.99 (sept), 2.02 (s), 1.23 (d)");
    let (p1, p2) = (
        with.candidates[0].probability,
        without.candidates[0].probability,
    );
    assert!(p2 < p1, "with integrals {p1}, without {p2}");
    // Dropping the multiplicities too (everything m) makes it worse still.
    let vague = rank_all("C5H10O2", "4.99 (m), 2.02 (m), 1.23 (m)");
    assert!(vague.candidates[0].probability < p2);
}

#[test]
fn a_solvent_peak_in_the_list_is_set_aside() {
    // Residual CHCl3 at 7.26 ppm in CDCl3 (Gottlieb et al. 1997, Table 1)
    // pasted along with the compound's signals: ethyl acetate still first.
    let r = rank_all(
        "C4H8O2",
        "1H NMR (400 MHz, CDCl3) δ 7.26 (s, 1H), 4.12 (q, 2H), 2.05 (s, 3H), 1.26 (t, 3H)",
    );
    assert_eq!(r.candidates[0].smiles, canonical("CC(=O)OCC"));
    assert_eq!(
        r.candidates[0]
            .scored
            .assigned
            .iter()
            .filter(|a| **a == Some(0))
            .count(),
        0
    );
}

/// Our canonical SMILES of a structure written as any SMILES.
fn canonical(smiles: &str) -> String {
    canonical_smiles(&parse_smiles(smiles).expect("test SMILES"))
}

#[test]
fn a_diastereotopic_och2_reported_as_two_dd_is_read_as_two_signals() {
    // Common practice: the CH2 next to a stereocentre gives two signals,
    // each a dd (geminal J about 10-11 Hz next to O, and the vicinal J to
    // the CH). Shifts of 2-methylbutan-1-ol from memory. The predicted
    // list read as halves carries the two dd (src/score/halves.rs).
    let r = rank_all(
        "C5H12O",
        "3.50 (dd, J = 10.6, 5.9 Hz, 1H), 3.41 (dd, J = 10.6, 6.5 Hz, 1H), \
         1.62 (m, 1H), 1.46 (m, 1H), 1.41 (br s, 1H), 1.15 (m, 1H), \
         0.91 (d, J = 6.7 Hz, 3H), 0.90 (t, J = 7.4 Hz, 3H)",
    );
    let first = &r.candidates[0];
    assert_eq!(first.smiles, canonical("CCC(C)CO"));
    assert!(first.probability > 0.99, "{}", first.probability);
    // Both dd entries hold a 1H dd of the split CH2 (J 13 and 7 Hz).
    let dd: Vec<_> = first
        .predicted
        .iter()
        .filter(|s| s.hydrogens == 1 && s.label() == "dd")
        .collect();
    assert_eq!(dd.len(), 2, "{:?}", first.predicted);
    assert_eq!(dd[0].j_hz, vec![13.0, 7.0]);
}
