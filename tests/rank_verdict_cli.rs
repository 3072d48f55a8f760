//! The absolute fit verdict of `rank` (issue 12, item 7) in the text and
//! JSON reports: a peak list that its formula's isomers explain draws no
//! warning; the same list under a wrong formula (no isomer explains it)
//! does. The verdict's table (fragment-library/fit-percentiles.toml) comes
//! from the NMRShiftDB2 dev compounds (examples/calibrate_nmrshiftdb.rs).

mod common;

use common::{isomerank, stdout_of};

/// Isopropyl acetate's 1H list (common practice: OCH septet near 5.0 ppm,
/// acetyl singlet near 2.0, isopropyl methyl doublet near 1.2; from
/// memory, as the demo's invented data).
const PEAKS: &str =
    "1H NMR (400 MHz, CDCl3) δ 4.99 (sept, J = 6.3 Hz, 1H), 2.02 (s, 3H), 1.23 (d, J = 6.3 Hz, 6H)";

#[test]
fn a_fitting_answer_draws_no_warning_and_a_wrong_formula_does() {
    let good = stdout_of(isomerank(
        &["rank", "C5H10O2", "--peaks", PEAKS, "--top", "3"],
        None,
    ));
    assert!(good.contains("\nFit: the first candidate costs "), "{good}");
    assert!(!good.contains("WARNING"), "{good}");
    let bad = stdout_of(isomerank(
        &["rank", "C6H12O2", "--peaks", PEAKS, "--top", "3"],
        None,
    ));
    assert!(
        bad.contains("WARNING: the best candidate fits worse than 99 % of correct structures"),
        "{bad}"
    );
    // The safety wording still ends the report.
    assert!(bad.trim_end().ends_with("local regulations."));
}

#[test]
fn json_fit_field() {
    let fit = |formula: &str| -> serde_json::Value {
        let out = stdout_of(isomerank(
            &[
                "rank", formula, "--peaks", PEAKS, "--top", "1", "--format", "json",
            ],
            None,
        ));
        let v: serde_json::Value = serde_json::from_str(&out).expect("JSON report");
        v["fit"].clone()
    };
    let good = fit("C5H10O2");
    assert_eq!(good["warning"], false);
    let p = good["percentile"].as_f64().unwrap();
    assert!((0.0..99.0).contains(&p), "{good}");
    assert_eq!(good["reference_compounds"], 731);
    let bad = fit("C6H12O2");
    assert_eq!(bad["warning"], true);
    assert!(bad["cost_per_line"].as_f64().unwrap() > good["cost_per_line"].as_f64().unwrap());
    assert!(bad["message"].as_str().unwrap().starts_with("WARNING"));
}
