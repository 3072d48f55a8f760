//! A ranking with a 13C list searches in two stages when the lines narrow
//! the carbon types further where they lie in their typical regions
//! (`Constraints::stages`): the structures that fit the typical regions
//! first, then the rest. A complete ranking must be the same as the
//! one-stage ranking over the whole search.

use isomerank::chem::Formula;
use isomerank::enumerate::{self, constraints::Constraints, rules::RuleSet};
use isomerank::predict::Predictor;
use isomerank::rank::{self, Ranking, Settings};
use isomerank::score::ScoringModel;
use isomerank::spectrum::{carbon, journal, observed, SolventTable};

/// Rank `formula` against 1H `peaks` and the 13C list `lines`, in two
/// stages (`staged`) or in one over the sound bounds alone.
fn rank_with(formula: &str, peaks: &str, lines: &str, staged: bool) -> (Ranking, usize) {
    let formula = Formula::parse(formula).unwrap();
    let solvents = SolventTable::embedded();
    let (spectrum, carbon) = observed(
        Some(journal::parse(peaks).unwrap()),
        Some(carbon::parse(lines).unwrap()),
        &formula,
        &solvents,
    )
    .unwrap();
    let carbon = carbon.unwrap();
    let mut constraints = Constraints::default();
    carbon.constrain_search(&formula, &mut constraints).unwrap();
    let stages = constraints.stages().len();
    if !staged {
        constraints.typical = None;
    }
    let predictor = Predictor::embedded().unwrap();
    let mut opts = predictor.options("CDCl3", 400.0).unwrap();
    opts.notes = false;
    let model = ScoringModel::embedded();
    let settings = Settings {
        spectrum: &spectrum,
        carbon: Some(&carbon),
        model: &model,
        top: 10,
    };
    let options = enumerate::Options {
        rules: RuleSet::all(),
        constraints,
        ..Default::default()
    };
    let r = rank::with_standard_steps(&predictor, &opts, |steps| {
        rank::rank_formula(&formula, &options, steps, &settings, &mut |_, _| {}).unwrap()
    });
    (r, stages)
}

/// The two rankings agree in everything they report.
fn assert_same(two: &Ranking, one: &Ranking) {
    assert!(two.coverage.complete() && one.coverage.complete());
    assert_eq!(two.coverage.first_stage, Some(1.0));
    assert_eq!(one.coverage.first_stage, None);
    assert_eq!(two.considered, one.considered);
    assert_eq!(two.excluded, one.excluded);
    assert_eq!(two.skipped, one.skipped);
    assert_eq!(two.rules, one.rules);
    assert_eq!(two.candidates.len(), one.candidates.len());
    for (a, b) in two.candidates.iter().zip(&one.candidates) {
        assert_eq!(a.smiles, b.smiles);
        assert_eq!(a.cost, b.cost);
        assert_eq!(a.probability, b.probability);
    }
}

#[test]
fn a_complete_two_stage_ranking_equals_the_one_stage_ranking() {
    // Anisole in CDCl3 (common practice, values from memory): 1H 7.29 (2H),
    // 6.93 (3H), 3.80 (s, 3H); 13C 159.6 (C), 129.5 (CH, 2C), 120.7 (CH),
    // 114.0 (CH, 2C), 55.1 (CH3). The 55.1 CH3 may be a C-CH3 in the sound
    // regions, typically only an O-CH3: 4 of the 16 structures the sound
    // bounds keep are in the first stage (tests/enumerate_constraints.rs).
    let peaks = "7.29 (m, 2H), 6.93 (m, 3H), 3.80 (s, 3H)";
    let lines = "159.6 (C), 129.5 (CH, 2C), 120.7 (CH), 114.0 (CH, 2C), 55.1 (CH3)";
    let (two, stages) = rank_with("C7H8O", peaks, lines, true);
    let (one, _) = rank_with("C7H8O", peaks, lines, false);
    assert_eq!(stages, 2);
    assert_same(&two, &one);
    assert_eq!(two.considered + two.excluded, 16);
    assert_eq!(two.candidates[0].smiles, "COc1ccccc1");
    // Acetophenone in CDCl3 (same source): the 198.1 line is a C=O or, in
    // the sound regions, a fully substituted C=C with O; typically only the
    // C=O. Here every structure the sound bounds keep is in the first stage.
    let peaks = "7.96 (m, 2H), 7.56 (m, 1H), 7.46 (m, 2H), 2.61 (s, 3H)";
    let lines = "198.1 (C), 137.1 (C), 133.0 (CH), 128.5 (CH, 2C), 128.2 (CH, 2C), 26.5 (CH3)";
    let (two, stages) = rank_with("C8H8O", peaks, lines, true);
    let (one, _) = rank_with("C8H8O", peaks, lines, false);
    assert_eq!(stages, 2);
    assert_same(&two, &one);
    assert_eq!(two.candidates[0].smiles, "CC(c1ccccc1)=O");
}
