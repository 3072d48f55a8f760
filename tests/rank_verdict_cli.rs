//! The absolute fit verdict of `rank` (issue 12, item 7) in the text and
//! JSON reports: a peak list that its formula's isomers explain draws no
//! warning; the same list under a wrong formula (C5H12: no isomer has the
//! O-CH and acetyl signals) does. A 1H list alone is judged against the
//! table's 1H-only rows. The verdict's table
//! (fragment-library/fit-percentiles.toml) comes from the NMRShiftDB2 dev
//! compounds (examples/calibrate_nmrshiftdb.rs).

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
        &["rank", "C5H12", "--peaks", PEAKS, "--top", "3"],
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
    // A 1H list alone is judged against the 1H-only rows.
    assert_eq!(good["reference_compounds"], 739);
    let bad = fit("C5H12");
    assert_eq!(bad["warning"], true);
    assert!(bad["cost_per_line"].as_f64().unwrap() > good["cost_per_line"].as_f64().unwrap());
    assert!(bad["message"].as_str().unwrap().starts_with("WARNING"));
}

#[test]
fn html_report_shows_the_verdict_and_the_warning() {
    let dir = std::env::temp_dir().join(format!("isomerank-verdict-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let html = |formula: &str| -> String {
        let path = dir.join(format!("{formula}.html"));
        stdout_of(isomerank(
            &[
                "rank",
                formula,
                "--peaks",
                PEAKS,
                "--top",
                "3",
                "--report",
                path.to_str().unwrap(),
            ],
            None,
        ));
        std::fs::read_to_string(&path).expect("the HTML report")
    };
    let good = html("C5H10O2");
    assert!(good.contains("<p class=\"fit\">Fit: the first candidate costs "));
    assert!(!good.contains("WARNING"));
    let bad = html("C5H12");
    assert!(bad.contains(
        "<p class=\"warning\"><b>WARNING: the best candidate fits worse than 99 % of correct structures"
    ));
    let _ = std::fs::remove_dir_all(&dir);
}
