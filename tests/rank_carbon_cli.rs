//! End-to-end tests of `isomerank rank --carbon`: the 13C input's errors
//! (exit 2, message on stderr naming the entry, nothing on stdout), the
//! ranking with 1H and 13C together and with 13C alone, the JSON's
//! `carbon_assignment`, shortlists, and the soundness of the ranking's gates
//! with the 13C term (the top of a gated ranking equals the top of one that
//! scores every candidate exactly).

mod common;

use common::{fails_with, isomerank, stdout_of};

/// Ethyl acetate: 1H and 13C in CDCl3 (Gottlieb, Kotlyar & Nudelman,
/// J. Org. Chem. 1997, 62, 7512: 1H 4.12 q, 2.05 s, 1.26 t; 13C 171.36,
/// 60.49, 21.04, 14.19; the 13C values from memory). H counts as DEPT gives
/// them (common practice).
const EA_1H: &str =
    "1H NMR (400 MHz, CDCl3) δ 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)";
const EA_13C: &str = "13C NMR (101 MHz, CDCl3) δ 171.4 (C), 60.5 (CH2), 21.0 (CH3), 14.2 (CH3)";

fn run_ok(args: &[&str]) -> String {
    stdout_of(isomerank(args, None))
}

fn fails(args: &[&str], needle: &str) {
    fails_with(args, None, needle)
}

#[test]
fn carbon_input_errors_name_the_entry() {
    let with = |c: &'static str| vec!["rank", "C4H8O2", "--peaks", EA_1H, "--carbon", c];
    for (carbon, needle) in [
        ("171.4 (C), 60.5 (CH2, CH3)", "entry 2"),
        ("171.4 (C), 60.5 (CH2", "missing \")\""),
        (
            "171.4, 60.5, 21.0, 14.2, 30.0",
            "5 lines but C4H8O2 has only 4 carbons",
        ),
        ("171.4, 912.0", "outside the 13C range"),
        (EA_1H, "give it with --peaks"),
        ("171.4 (CH5)", "\"CH5\""),
    ] {
        fails(&with(carbon), needle);
    }
    // The 13C list given to --peaks is named as such.
    fails(&["rank", "C4H8O2", "--peaks", EA_13C], "--carbon");
    fails(&["rank", "C4H8O2"], "no observed data");
}

#[test]
fn carbon_given_twice_is_refused() {
    let dir = std::env::temp_dir().join(format!("isomerank-carbon-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join("ea.toml");
    std::fs::write(
        &p,
        "[[multiplets]]\nshift = 2.05\nmultiplicity = \"s\"\nintegral = 3\n[[carbon]]\nshift = 171.4\nhydrogens = 0\n",
    )
    .unwrap();
    let path = p.to_str().unwrap();
    fails(
        &["rank", "C4H8O2", "--spectrum", path, "--carbon", EA_13C],
        "13C data given twice",
    );
    // The file alone ranks.
    let text = run_ok(&["rank", "C4H8O2", "--spectrum", path, "--top", "3"]);
    assert!(text.contains("1 13C line with H counts"), "{text}");
}

#[test]
fn ethyl_acetate_first_with_both_assignments_in_json() {
    let out = run_ok(&[
        "rank", "C4H8O2", "--peaks", EA_1H, "--carbon", EA_13C, "--format", "json", "--top", "5",
    ]);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let first = &v["candidates"][0];
    assert_eq!(first["smiles"], "CCOC(C)=O");
    let carbon = first["carbon_assignment"].as_array().unwrap();
    assert_eq!(carbon.len(), 4, "four carbon classes: {first}");
    // Every class on its own line, with the H count the line gives.
    let mut entries: Vec<u64> = carbon
        .iter()
        .map(|c| c["observed"].as_u64().unwrap())
        .collect();
    entries.sort();
    assert_eq!(entries, vec![1, 2, 3, 4]);
    for c in carbon {
        assert_eq!(c["hydrogens"], c["observed_hydrogens"], "{c}");
    }
    let (c1, c13, c) = (
        first["cost_1h"].as_f64().unwrap(),
        first["cost_13c"].as_f64().unwrap(),
        first["cost"].as_f64().unwrap(),
    );
    assert!((c1 + c13 - c).abs() < 1e-3, "{c1} + {c13} != {c}");
}

#[test]
fn explain_shows_the_13c_assignment() {
    let text = run_ok(&[
        "rank",
        "C4H8O2",
        "--peaks",
        EA_1H,
        "--carbon",
        EA_13C,
        "--top",
        "3",
        "--explain",
        "1",
    ]);
    assert!(text.contains("13C class"), "{text}");
    assert!(text.contains("-> entry 1: 171.4 C"), "{text}");
    assert!(text.contains("(1H "), "{text}");
}

#[test]
fn carbon_alone_separates_what_h_counts_say() {
    // 13C only: the DEPT counts (one CH2, two CH3, one C) and the carbonyl
    // at 171 leave ethyl acetate first among the C4H8O2 isomers.
    let text = run_ok(&["rank", "C4H8O2", "--carbon", EA_13C, "--top", "3"]);
    assert!(text.contains("no 1H data"), "{text}");
    let first = text
        .lines()
        .find(|l| l.trim_start().starts_with("1 "))
        .unwrap();
    assert!(first.contains("CCOC(C)=O"), "{text}");
}

#[test]
fn shortlist_takes_the_carbon_list() {
    // Methyl propanoate and ethyl acetate tie on counts of 1H signals; the
    // 13C H counts (CH2 at 60.5 is O-CH2) decide.
    let list = "COC(=O)CC methyl propanoate\nCCOC(C)=O ethyl acetate\n";
    let out = isomerank(
        &["rank", "C4H8O2", "--carbon", EA_13C, "--candidates", "-"],
        Some(list),
    );
    let text = String::from_utf8(out.stdout).unwrap();
    let first = text
        .lines()
        .find(|l| l.trim_start().starts_with("1 "))
        .unwrap();
    assert!(first.contains("ethyl acetate"), "{text}");
}

/// The top of a ranking that gates and skips equals the top of one that
/// scores every candidate exactly (a table longer than the candidate list
/// keeps the cutoff infinite), with 1H and 13C and with 13C alone.
#[test]
fn gates_stay_sound_with_the_13c_term() {
    for (formula, peaks, carbon) in [
        ("C4H8O2", Some(EA_1H), EA_13C),
        ("C4H8O2", None, EA_13C),
        (
            // Butan-2-one (common practice; values from memory).
            "C4H8O",
            Some("2.44 (q, 2H), 2.14 (s, 3H), 1.06 (t, 3H)"),
            "209.3 (C), 36.9 (CH2), 29.4 (CH3), 7.9 (CH3)",
        ),
    ] {
        // With the 13C list in the score alone (every isomer) and bounding
        // the search too (the default).
        for score_only in [true, false] {
            let json = |top: &str| -> serde_json::Value {
                let mut args = vec![
                    "rank",
                    formula,
                    "--carbon",
                    carbon,
                    "--keep-all",
                    "--format",
                    "json",
                    "--top",
                    top,
                ];
                if let Some(p) = peaks {
                    args.extend(["--peaks", p]);
                }
                if score_only {
                    args.push("--carbon-score-only");
                }
                serde_json::from_str(&run_ok(&args)).unwrap()
            };
            // A table longer than the candidate list: the cutoff stays infinite
            // and every candidate is scored exactly.
            let all = json("100000");
            let gated = json("5");
            let n = all["isomers_considered"].as_u64().unwrap();
            assert!((1..100000).contains(&n), "{formula}: {n} candidates");
            assert_eq!(all["isomers_considered"], gated["isomers_considered"]);
            // Candidates beyond the best + 30 are left out of both tables.
            let shown = all["candidates"].as_array().unwrap().len().min(5);
            assert_eq!(
                gated["candidates"].as_array().unwrap().len(),
                shown,
                "{formula}"
            );
            for k in 0..shown {
                let (a, g) = (&all["candidates"][k], &gated["candidates"][k]);
                assert_eq!(a["smiles"], g["smiles"], "{formula} #{}", k + 1);
                assert_eq!(a["cost"], g["cost"], "{formula} #{}", k + 1);
                let (pa, pg) = (
                    a["probability"].as_f64().unwrap(),
                    g["probability"].as_f64().unwrap(),
                );
                assert!((pa - pg).abs() < 1e-6, "{formula} #{}: {pa} vs {pg}", k + 1);
            }
        }
    }
}
