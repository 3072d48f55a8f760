//! 13C shift prediction against measured spectra: every compound of the
//! NMRShiftDB2 v2 dev split (tests/data/nmrshiftdb2-v2-dev.toml, 9,964
//! compounds; Steinbeck, Krause & Kuhn, J. Chem. Inf. Comput. Sci. 2003,
//! 43, 1733; derivation in the file's header). Per compound the predicted
//! and observed 13C lists are expanded by their carbon counts, sorted and
//! compared position by position; the carbon-weighted mean absolute error
//! is printed by carbon type and H count (`cargo test --test
//! predict_carbon_nmrshiftdb -- --nocapture`).

#[path = "common/carbon_dev.rs"]
mod carbon_dev;

use carbon_dev::Errors;
use isomerank::chem::smiles::parse_smiles;
use isomerank::predict::view::View;
use isomerank::predict::{PredictOptions, Predictor};

/// The goal of the 13C predictor on the dev compounds, ppm (project issue
/// 9). Met: the tables as committed (fitted on all dev compounds) give 2.03
/// here, and the cross-validated figure (fit on one half, measured on the
/// other, both ways) is 2.35 (fragment-library/README.md, "Refit of the
/// 13C tables"); the assertion below guards against a regression from the
/// measured figure.
const GOAL_MAE: f64 = 2.5;
/// The measured figure of the tables as committed (2.03), with some slack.
const MEASURED_MAE: f64 = 2.1;

#[test]
fn carbon_shifts_on_nmrshiftdb2_dev() {
    let p = Predictor::embedded().unwrap();
    let opts = PredictOptions::default();
    let cases = carbon_dev::load();
    // The dev file's header: 9964 cases.
    assert_eq!(cases.len(), 9964);
    let (mut all, mut even, mut odd) = (Errors::default(), Errors::default(), Errors::default());
    let mut unread = Vec::new();
    for case in &cases {
        let mol = parse_smiles(&case.smiles).unwrap_or_else(|e| panic!("{}: {e}", case.id));
        let obs = carbon_dev::parse_carbon_line(&case.carbon)
            .unwrap_or_else(|e| panic!("{}: {e}", case.id));
        let Ok(v) = View::new(&mol) else {
            unread.push(case.id);
            continue;
        };
        let pred = p.try_predict_carbon(&mol, &opts).unwrap();
        all.add(&v, &pred, &obs);
        if case.id % 2 == 0 {
            even.add(&v, &pred, &obs);
        } else {
            odd.add(&v, &pred, &obs);
        }
    }
    println!("NMRShiftDB2 v2 dev, 13C:\n{}", all.table());
    println!(
        "even ids: MAE {:.2} ppm; odd ids: MAE {:.2} ppm",
        even.mae(),
        odd.mae()
    );
    assert!(
        unread.is_empty(),
        "compounds the view cannot hold: {unread:?}"
    );
    // Every compound's carbon total matches (symmetry classes as the data's).
    assert!(
        all.skipped * 100 <= all.compounds,
        "{} skipped",
        all.skipped
    );
    println!(
        "goal {GOAL_MAE} ppm: {}",
        if all.mae() <= GOAL_MAE {
            "met"
        } else {
            "not met"
        }
    );
    assert!(
        all.mae() <= MEASURED_MAE,
        "13C MAE {:.2} ppm: worse than the committed tables' {MEASURED_MAE}",
        all.mae()
    );
}
