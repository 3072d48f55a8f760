//! End-to-end tests of `isomerank rank` and `isomerank demo`: every error
//! message of the observed-data and shortlist input (exit code 2, the message
//! on stderr, nothing on stdout), the JSON schema, shortlist mode and its
//! composition with `isomers`, and the demo.

mod common;

use common::{canonical, fails_with, isomerank, stdout_of};
use std::io::Write;

const ETHYL_ACETATE: &str =
    "1H NMR (400 MHz, CDCl3) δ 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)";

/// `rank C4H8O2 --peaks ETHYL_ACETATE` followed by `extra`.
fn ethyl_acetate<'a>(extra: &[&'a str]) -> Vec<&'a str> {
    let mut args = vec!["rank", "C4H8O2", "--peaks", ETHYL_ACETATE];
    args.extend_from_slice(extra);
    args
}

fn temp_file(name: &str, text: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("isomerank-rank-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    std::fs::File::create(&p)
        .unwrap()
        .write_all(text.as_bytes())
        .unwrap();
    p
}

/// Each peak list fails for C4H8O2 with a message containing the text.
fn peaks_fail(cases: &[(&str, &str)]) {
    for (peaks, needle) in cases {
        fails_with(&["rank", "C4H8O2", "--peaks", peaks], None, needle);
    }
}

#[test]
fn peak_text_errors_name_entry_and_character() {
    peaks_fail(&[
        (
            "4.12 (q, 2H), 1.26 (t, 3H), 2.05 (s 3H",
            "entry 3 \"2.05 (s 3H\": missing \")\"",
        ),
        (
            "4.12 (q, 2H), 2.05 (x, 3H)",
            "entry 2 \"2.05 (x, 3H)\": \"x\" at character 21 is not a multiplicity",
        ),
        (
            "4.12 q 2H",
            "entry 1 \"4.12 q 2H\": unexpected \"q\" at character 6",
        ),
        ("", "no multiplets"),
        ("72.1 (s, 3H)", "shift 72.1 ppm is outside the 1H range"),
        ("4.12 (q, J = 70 Hz, 2H)", "J = 70 Hz"),
        (
            "4.12 (q, 2H), (s, 3H)",
            "entry 2 \"(s, 3H)\": expected a chemical shift",
        ),
        (
            "4.12 (2H), 2.05 (s, 3H), 1.26 (t, 3H), 20.7 (1H)",
            "entry 4 \"20.7 (1H)\": shift 20.7 ppm",
        ),
    ]);
}

#[test]
fn entries_without_multiplicity_rank_and_say_so() {
    // Issue 9 item 4: `4.12 (2H)` is a multiplet whose multiplicity was not
    // reported; ethyl acetate (Gottlieb, Kotlyar & Nudelman, J. Org. Chem.
    // 1997, 62, 7512: 4.12, 2.05, 1.26) still ranks first on shifts and
    // integrals alone, and the explanation says which entries had no term.
    let out = isomerank(
        &[
            "rank",
            "C4H8O2",
            "--peaks",
            "1H NMR (400 MHz, CDCl3): δ 4.12 (2H), 2.05 (3H), 1.26 (3H)",
            "--explain",
            "1",
        ],
        None,
    );
    let text = stdout_of(out);
    assert!(text.contains("Assignment of #1 CCOC(C)=O"), "{text}");
    assert!(text.contains("(multiplicity not reported)"), "{text}");
    assert!(!text.contains("-0.00"), "{text}");
    assert!(
        text.contains("entries without a reported multiplicity have no multiplicity term"),
        "{text}"
    );
    assert!(text.contains("no entry gives a multiplicity"), "{text}");
}

#[test]
fn integral_errors_show_the_numbers() {
    peaks_fail(&[
        (
            "4.12 (q, 2H), 2.05 (s, 3H), 1.26 (t, 6H)",
            "the integrals add up to 11 H but C4H8O2 has 8 H",
        ),
        (
            "4.12 (q, 2H), 2.05 (s, 1.5)",
            "entry 2 gives a relative number (1.50) but entry 1 gave an H count",
        ),
        (
            "4.12 (q, 2), 2.05 (s)",
            "entry 2 has no integral: relative integrals",
        ),
    ]);
}

#[test]
fn too_few_integrals_are_reported_not_rejected() {
    // Ethanol without the OH: 5 of 6 H (exchangeable H may be missing).
    let out = isomerank(
        &["rank", "C2H6O", "--peaks", "3.72 (q, 2H), 1.25 (t, 3H)"],
        None,
    );
    let text = stdout_of(out);
    assert!(
        text.contains("add up to 5 H of the 6 H in C2H6O: 1 H not observed"),
        "{text}"
    );
}

#[test]
fn spectrum_file_errors() {
    let bad_toml = temp_file("bad.toml", "[[multiplets]]\nshift = \n");
    fails_with(
        &["rank", "C4H8O2", "--spectrum", bad_toml.to_str().unwrap()],
        None,
        "line 2",
    );
    let bad_mult = temp_file(
        "mult.toml",
        "[[multiplets]]\nshift = 4.12\nmultiplicity = \"q\"\nintegral = 2\n[[multiplets]]\nshift = 2.05\nmultiplicity = \"zz\"\n",
    );
    fails_with(
        &["rank", "C4H8O2", "--spectrum", bad_mult.to_str().unwrap()],
        None,
        "entry 2: multiplicity \"zz\"",
    );
    let other = temp_file(
        "other.json",
        r#"{"formula": "C4H10O", "multiplets": [{"shift": 1.0, "multiplicity": "s"}]}"#,
    );
    fails_with(
        &["rank", "C4H8O2", "--spectrum", other.to_str().unwrap()],
        None,
        "is for C4H10O but the command line asks for C4H8O2",
    );
    let unknown = temp_file(
        "unknown.json",
        r#"{"multiplets": [{"shift": 1.0, "colour": 2}]}"#,
    );
    fails_with(
        &["rank", "C4H8O2", "--spectrum", unknown.to_str().unwrap()],
        None,
        "unknown field `colour`",
    );
    fails_with(
        &["rank", "C4H8O2", "--spectrum", "/nonexistent/spectrum.toml"],
        None,
        "cannot read spectrum file /nonexistent/spectrum.toml",
    );
}

#[test]
fn spectrum_file_ranks_like_the_text() {
    let f = temp_file(
        "ea.toml",
        "formula = \"C4H8O2\"\nsolvent = \"CDCl3\"\nfrequency = 400\n\
         [[multiplets]]\nshift = 4.12\nmultiplicity = \"q\"\nj = 7.1\nintegral = 2\n\
         [[multiplets]]\nshift = 2.05\nmultiplicity = \"s\"\nintegral = 3\n\
         [[multiplets]]\nshift = 1.26\nmultiplicity = \"t\"\nj = [7.1]\nintegral = 3\n",
    );
    let a = isomerank(
        &[
            "rank",
            "C4H8O2",
            "--spectrum",
            f.to_str().unwrap(),
            "--format",
            "json",
        ],
        None,
    );
    let b = isomerank(&ethyl_acetate(&["--format", "json"]), None);
    assert_eq!(a.status.code(), Some(0));
    assert_eq!(a.stdout, b.stdout);
}

#[test]
fn option_errors() {
    fails_with(
        &ethyl_acetate(&["--top", "0"]),
        None,
        "--top must be at least 1",
    );
    fails_with(
        &ethyl_acetate(&["--top", "5", "--explain", "6"]),
        None,
        "--explain 6: give a position from 1 to 5",
    );
    fails_with(
        &["rank", "C4H8Xx", "--peaks", ETHYL_ACETATE],
        None,
        "unknown element \"Xx\" at column 5",
    );
    fails_with(
        &["rank", "C2H7", "--peaks", "1.0 (s, 3H)"],
        None,
        "DBE = -0.5",
    );
    // Neither --peaks nor --spectrum: the argument parser's own error (exit 2).
    fails_with(&["rank", "C4H8O2"], None, "--peaks");
}

#[test]
fn shortlist_errors_name_the_line() {
    for (list, needle) in [
        (
            "CCOC(C)=O ethyl acetate\nCC(C\n",
            "standard input, line 2: \"CC(C\"",
        ),
        (
            "# expected esters\nCCOC(C)=O\n\nCCO ethanol\n",
            "standard input, line 4: \"CCO\" is C2H6O, not C4H8O2",
        ),
        ("\n# nothing\n", "no candidate structures"),
    ] {
        fails_with(&ethyl_acetate(&["--candidates", "-"]), Some(list), needle);
    }
    fails_with(
        &ethyl_acetate(&["--candidates", "/nonexistent/list.smi"]),
        None,
        "cannot read candidates file /nonexistent/list.smi",
    );
}

#[test]
fn shortlist_ranks_the_expected_ester_first_with_names() {
    let list = "COC(=O)CC methyl propanoate\nCCOC(C)=O ethyl acetate\nCCCC(=O)O butanoic acid\n";
    let out = isomerank(
        &ethyl_acetate(&["--candidates", "-", "--format", "json"]),
        Some(list),
    );
    let v = json_of(out);
    assert_eq!(v["isomers_considered"], 3);
    assert_eq!(v["candidates"][0]["smiles"], canonical("CC(=O)OCC"));
    assert_eq!(v["candidates"][0]["name"], "ethyl acetate");
}

/// A C7H8O peak list (benzyl alcohol in CDCl3; shifts from memory). Any
/// list would do: the test compares two paths of our own.
const BENZYL_ALCOHOL: &str =
    "1H NMR (400 MHz, CDCl3) δ 7.40-7.26 (m, 5H), 4.67 (s, 2H), 1.90 (br s, 1H)";

fn json_of(out: std::process::Output) -> serde_json::Value {
    serde_json::from_str(&stdout_of(out)).unwrap()
}

// Reference: the same ranking straight from the generator (our own other
// path). The shortlist reader parses chunks of 64, 128, ... lines, so the
// 3693 plausible C7H8O isomers span six chunks and the cutoff of earlier
// chunks is applied to later ones.
#[test]
fn isomers_output_composes_with_shortlist_mode() {
    let iso = isomerank(&["isomers", "C7H8O", "--plausible"], None);
    assert_eq!(iso.status.code(), Some(0));
    let list = String::from_utf8(iso.stdout).unwrap();
    assert_eq!(list.lines().count(), 3693);
    let rank = |stdin: Option<&str>| {
        let mut args = vec![
            "rank",
            "C7H8O",
            "--peaks",
            BENZYL_ALCOHOL,
            "--format",
            "json",
            "--top",
            "5",
        ];
        if stdin.is_some() {
            args.extend(["--candidates", "-"]);
        }
        json_of(isomerank(&args, stdin))
    };
    let piped = rank(Some(&list));
    let direct = rank(None);
    assert_eq!(piped["isomers_considered"], 3693);
    assert_eq!(direct["isomers_considered"], 3693);
    let rows = |v: &serde_json::Value| -> Vec<(String, f64, f64, u64)> {
        v["candidates"]
            .as_array()
            .unwrap()
            .iter()
            .map(|c| {
                (
                    c["smiles"].as_str().unwrap().to_string(),
                    c["cost"].as_f64().unwrap(),
                    c["probability"].as_f64().unwrap(),
                    c["group"].as_u64().unwrap(),
                )
            })
            .collect()
    };
    let (a, b) = (rows(&piped), rows(&direct));
    assert_eq!(a.len(), 5);
    for (x, y) in a.iter().zip(&b) {
        assert_eq!((&x.0, x.1, x.3), (&y.0, y.1, y.3));
        // The normaliser sums the same costs in another order.
        assert!((x.2 - y.2).abs() <= 1e-9 * y.2.max(1e-300), "{x:?} {y:?}");
    }
    assert_eq!(a[0].0, canonical("OCc1ccccc1"));

    // The list twice, with Windows line ends, comments and blank lines in
    // between: every structure once, the same ranking.
    let twice = format!(
        "# first copy\r\n{}\r\n\n# second copy\n{list}",
        list.replace('\n', "\r\n")
    );
    let again = rank(Some(&twice));
    assert_eq!(again["isomers_considered"], 3693);
    assert_eq!(rows(&again), a);
}

#[test]
fn shortlist_error_late_in_a_long_list_names_its_line() {
    let iso = isomerank(&["isomers", "C8H8O", "--plausible"], None);
    let mut lines: Vec<String> = String::from_utf8(iso.stdout)
        .unwrap()
        .lines()
        .map(String::from)
        .collect();
    // (C8H8O: 17002 plausible isomers.) Line 5000 (in the seventh chunk) has the wrong formula, line 7000 is
    // not SMILES: the first in line order is reported, nothing is printed.
    lines[4999] = "CCO".into();
    lines[6999] = "C1CC".into();
    fails_with(
        &[
            "rank",
            "C8H8O",
            "--peaks",
            BENZYL_ALCOHOL,
            "--candidates",
            "-",
        ],
        Some(&lines.join("\n")),
        "standard input, line 5000: \"CCO\" is C2H6O, not C8H8O",
    );
}

#[test]
fn json_follows_the_schema() {
    let out = isomerank(&ethyl_acetate(&["--format", "json", "--top", "3"]), None);
    assert_eq!(out.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["formula"], "C4H8O2");
    assert_eq!(v["dbe"], 1.0);
    assert!(v["isomers_considered"].as_u64().unwrap() > 10);
    assert!(v["isomers_excluded"].as_u64().is_some());
    let c = v["candidates"].as_array().unwrap();
    assert_eq!(c.len(), 3);
    let mut sum = 0.0;
    for (i, cand) in c.iter().enumerate() {
        assert_eq!(cand["position"], i + 1);
        assert!(cand["smiles"].is_string() && cand["cost"].is_f64() && cand["group"].is_u64());
        sum += cand["probability"].as_f64().unwrap();
        for a in cand["assignment"].as_array().unwrap() {
            assert!(a["observed"].is_u64() || a["observed"].is_null());
            assert!(a["predicted_shift"].is_f64());
            assert!(a["observed_shift"].is_f64() || a["observed_shift"].is_null());
            assert!(a["hydrogens"].is_u64());
            assert!(a["predicted_multiplicity"].is_string());
            assert!(a["observed_multiplicity"].is_string() || a["observed_multiplicity"].is_null());
        }
    }
    assert!(sum <= 1.0 + 1e-9);
    // Ethyl acetate (Gottlieb et al. 1997, CDCl3): q 4.12 -> OCH2, s 2.05 -> CH3CO.
    assert_eq!(c[0]["smiles"], canonical("CC(=O)OCC"));
    let assigned: Vec<(u64, String)> = c[0]["assignment"]
        .as_array()
        .unwrap()
        .iter()
        .map(|a| {
            (
                a["observed"].as_u64().unwrap(),
                a["predicted_multiplicity"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    assert!(assigned.contains(&(1, "q".to_string())) && assigned.contains(&(3, "t".to_string())));
}

#[test]
fn output_is_deterministic_across_thread_counts() {
    let a = isomerank(
        &[
            "--threads",
            "1",
            "rank",
            "C5H10O2",
            "--peaks",
            "4.99 (sept, 1H), 2.02 (s, 3H), 1.23 (d, 6H)",
            "--format",
            "json",
        ],
        None,
    );
    let b = isomerank(
        &[
            "--threads",
            "2",
            "rank",
            "C5H10O2",
            "--peaks",
            "4.99 (sept, 1H), 2.02 (s, 3H), 1.23 (d, 6H)",
            "--format",
            "json",
        ],
        None,
    );
    assert_eq!(a.status.code(), Some(0));
    assert_eq!(a.stdout, b.stdout);
}

#[test]
fn explain_prints_the_assignment_and_the_safety_wording_ends_the_report() {
    let out = isomerank(&ethyl_acetate(&["--explain", "1"]), None);
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(
        text.contains(&format!("Assignment of #1 {}", canonical("CC(=O)OCC"))),
        "{text}"
    );
    assert!(text.contains("-> entry 1: 4.12 q 2H"), "{text}");
    assert!(text.contains("Plausibility rules applied"), "{text}");
    assert!(
        text.trim_end()
            .ends_with("follow the laboratory's safety rules and local regulations."),
        "{text}"
    );
    let all = isomerank(&ethyl_acetate(&["--keep-all"]), None);
    let t2 = String::from_utf8(all.stdout).unwrap();
    assert!(t2.contains("Plausibility rules: off (--keep-all)"), "{t2}");
}

#[test]
fn demo_says_it_is_invented_and_ends_with_the_safety_wording() {
    let out = isomerank(&["demo"], None);
    let text = stdout_of(out);
    assert!(
        text.contains("invented scenario with invented data"),
        "{text}"
    );
    assert!(text.contains("A ranking is a hypothesis, not an identification"));
    assert!(text.contains("authentic reference standard"));
    // The invented data describe isopropyl acetate (sept + 6H d + acetyl s).
    assert!(
        text.contains("   1 ") && text.contains(&canonical("CC(=O)OC(C)C")),
        "{text}"
    );
    for banned in ["chloroethane", "diethyl ether", "propylbenzene"] {
        assert!(!text.to_lowercase().contains(banned));
    }
}
