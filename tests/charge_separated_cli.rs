//! `--charge-separated` from the command line: the note when the option is
//! off and the formula could hold such a group, the ranking with it on, and
//! `predict` on the charged forms.

mod common;

use common::{isomerank, stdout_of};

/// Pyridine N-oxide in CDCl3 (from memory: H2/H6 8.2-8.3, H3-H5 7.3-7.4).
const PYRIDINE_N_OXIDE: &str = "8.25 (m, 2H), 7.35 (m, 3H)";

fn rank(extra: &[&str]) -> String {
    let mut args = vec![
        "rank",
        "C5H5NO",
        "--quiet",
        "--top",
        "3",
        "--peaks",
        PYRIDINE_N_OXIDE,
    ];
    args.extend_from_slice(extra);
    let out = isomerank(&args, None);
    assert_eq!(out.status.code(), Some(0));
    stdout_of(out)
}

#[test]
fn without_the_option_a_note_names_it_and_with_it_the_n_oxide_ranks_first() {
    let off = rank(&[]);
    assert!(off.contains("could hold a charge-separated group"), "{off}");
    assert!(off.contains("--charge-separated"), "{off}");
    assert!(!off.contains("[n+]"), "{off}");
    let on = rank(&["--charge-separated"]);
    assert!(!on.contains("could hold a charge-separated group"), "{on}");
    let first = on
        .lines()
        .find(|l| l.trim_start().starts_with("1 "))
        .expect("a first row");
    assert!(first.contains("[O-][n+]1ccccc1"), "{on}");
}

#[test]
fn no_note_where_no_group_fits() {
    // Common practice: a formula without N or without O holds no N-oxide.
    let out = isomerank(
        &[
            "rank",
            "C7H8O",
            "--quiet",
            "--peaks",
            "7.3 (m, 5H), 4.6 (s, 2H), 2.0 (s, 1H)",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(0));
    assert!(!stdout_of(out).contains("charge-separated"));
}

#[test]
fn predict_reads_the_charged_forms() {
    // Gottlieb, Kotlyar & Nudelman 1997 (CDCl3): nitromethane 4.33 (s, 3H).
    let out = isomerank(&["predict", "C[N+](=O)[O-]"], None);
    assert_eq!(out.status.code(), Some(0));
    let text = stdout_of(out);
    let shift: f64 = text
        .split("δ ")
        .nth(1)
        .and_then(|t| t.split_whitespace().next())
        .and_then(|x| x.parse().ok())
        .expect("a predicted shift");
    assert!(
        text.contains("(CH3NO2)") && (shift - 4.33).abs() <= 0.15,
        "{text}"
    );
    let bad = isomerank(&["predict", "C[N+](C)(C)C"], None);
    assert_eq!(bad.status.code(), Some(2));
}
