//! Ranking across a cluster: `rank --part K/N --format json` shard files
//! merged by `isomerank merge` give, byte for byte, the text and JSON report
//! of one run over the whole search (N = 1, 3, 8; a 1H list alone and a
//! 1H + 13C pair); shards that do not belong together are refused with the
//! difference named (exit 2, nothing on stdout); shards cut short by a cap
//! merge into a result that says it is partial.

mod common;

use common::{fails_with, isomerank, stdout_of};
use serde_json::Value;
use std::path::PathBuf;

/// p-Xylene in CDCl3 (Gottlieb, Kotlyar & Nudelman, J. Org. Chem. 1997, 62,
/// 7512: CH3 2.32 s, ArH 7.05 s). A 1H list the data cannot settle between
/// several C8H10 isomers, so the ranking has groups of candidates it cannot
/// separate.
const XYLENE_1H: &str = "1H NMR (400 MHz, CDCl3) δ 7.05 (s, 4H), 2.32 (s, 6H)";

/// Ethyl acetate in CDCl3 (Gottlieb et al. 1997, as above: 1H 4.12 q, 2.05
/// s, 1.26 t; 13C 171.36, 60.49, 21.04, 14.19, the 13C values from memory);
/// H counts as DEPT gives them (common practice).
const EA_1H: &str =
    "1H NMR (400 MHz, CDCl3) δ 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)";
const EA_13C: &str = "13C NMR (101 MHz, CDCl3) δ 171.4 (C), 60.5 (CH2), 21.0 (CH3), 14.2 (CH3)";

fn dir(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("isomerank-shards-{}-{tag}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Write the N shard files of `rank ARGS --part K/N --format json` into
/// `d`; returns their paths (part order).
fn shards(d: &std::path::Path, args: &[&str], n: usize) -> Vec<String> {
    (1..=n)
        .map(|k| {
            let part = format!("{k}/{n}");
            let mut a: Vec<&str> = vec!["rank"];
            a.extend_from_slice(args);
            a.extend_from_slice(&["--part", &part, "--format", "json", "--quiet"]);
            let text = stdout_of(isomerank(&a, None));
            let path = d.join(format!("n{n}-part{k}.json"));
            std::fs::write(&path, text).unwrap();
            path.to_str().unwrap().to_string()
        })
        .collect()
}

fn merge(files: &[String], extra: &[&str]) -> String {
    let mut a: Vec<&str> = vec!["merge"];
    a.extend(files.iter().map(String::as_str));
    a.extend_from_slice(extra);
    stdout_of(isomerank(&a, None))
}

fn single(args: &[&str], extra: &[&str]) -> String {
    let mut a: Vec<&str> = vec!["rank"];
    a.extend_from_slice(args);
    a.extend_from_slice(extra);
    a.push("--quiet");
    stdout_of(isomerank(&a, None))
}

/// Shards merged equal the single run, text and JSON, for N = 1, 3, 8; the
/// files are given in reverse order for N = 8 (order must not matter).
fn merged_equals_single(tag: &str, args: &[&str]) -> Value {
    let d = dir(tag);
    let text = single(args, &[]);
    let json = single(args, &["--format", "json"]);
    for n in [1, 3, 8] {
        let mut files = shards(&d, args, n);
        if n == 8 {
            files.reverse();
        }
        // The check: byte-identical reports (the single run is the reference).
        assert_eq!(merge(&files, &[]), text, "{tag}: text report, N = {n}");
        assert_eq!(
            merge(&files, &["--format", "json"]),
            json,
            "{tag}: JSON report, N = {n}"
        );
        if n == 3 {
            // The HTML report (drawings marked by the stored atom numbers)
            // and --explain are the single run's too.
            let (a, b) = (d.join("single.html"), d.join("merged.html"));
            let explained = single(args, &["--explain", "1", "--report", a.to_str().unwrap()]);
            let merged = merge(&files, &["--explain", "1", "--report", b.to_str().unwrap()]);
            assert_eq!(merged, explained, "{tag}: --explain 1");
            assert_eq!(
                std::fs::read(&b).unwrap(),
                std::fs::read(&a).unwrap(),
                "{tag}: HTML report"
            );
        }
        // And the shard files carry what the README says.
        let first: Value =
            serde_json::from_str(&std::fs::read_to_string(&files[0]).unwrap()).unwrap();
        assert_eq!(first["isomerank_shard"], 1);
        assert_eq!(first["part"]["of"], n);
        assert_eq!(first["complete"], true);
    }
    let _ = std::fs::remove_dir_all(&d);
    serde_json::from_str(&json).unwrap()
}

#[test]
fn shards_of_a_1h_ranking_merge_to_the_single_run() {
    let doc = merged_equals_single("xylene", &["C8H10", "--peaks", XYLENE_1H, "--top", "5"]);
    // The case exercises what must survive a merge: every C8H10 isomer
    // after the rules considered, some skipped, and a group that goes on
    // past the table (ties at the cut).
    assert!(doc["isomers_considered"].as_u64().unwrap() > 1000, "{doc}");
    assert!(doc["isomers_excluded"].as_u64().unwrap() > 0);
    let groups = doc["groups"].as_array().unwrap();
    assert!(
        groups
            .iter()
            .any(|g| g["members"].as_array().unwrap().len() > 1
                || g["beyond_table"].as_u64().unwrap() > 0),
        "no group of inseparable candidates: {doc}"
    );
}

#[test]
fn shards_of_a_1h_and_13c_ranking_merge_to_the_single_run() {
    let doc = merged_equals_single(
        "ethyl-acetate",
        &["C4H8O2", "--peaks", EA_1H, "--carbon", EA_13C],
    );
    assert_eq!(doc["candidates"][0]["smiles"], "CCOC(C)=O");
    assert_eq!(doc["source"], "constrained isomers");
    // The 60.5 CH2 is typically an O-CH2 only (a C-CH2 in the sound 13C
    // regions), so each shard searched in two stages, typical regions first.
    assert_eq!(doc["coverage"]["first_stage_share"], 1.0);
    // The probabilities are over all candidates: the merged ones sum to at
    // most 1 and the first is the same number as in the single run (the
    // equality of the whole document above is the check).
    let p: f64 = doc["candidates"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["probability"].as_f64().unwrap())
        .sum();
    assert!(p <= 1.0 + 1e-12 && p > 0.5, "{p}");
}

#[test]
fn shards_that_do_not_belong_together_are_refused() {
    let d = dir("refuse");
    let base = ["C8H10", "--peaks", XYLENE_1H];
    let three = shards(&d, &base, 3);
    // A part missing, a part twice.
    fails_with(
        &["merge", &three[0], &three[2]],
        None,
        "part 2 of 3 is missing",
    );
    fails_with(
        &["merge", &three[0], &three[1], &three[1], &three[2]],
        None,
        "part 2/3 is given twice",
    );
    // Different N.
    let eight = shards(&d, &base, 8);
    fails_with(&["merge", &three[0], &eight[1], &three[2]], None, "share N");
    // A different spectrum, a different table length, a different formula.
    let other_peaks = dir("refuse-peaks");
    let p = shards(
        &other_peaks,
        &["C8H10", "--peaks", "7.10 (m, 4H), 2.30 (s, 6H)"],
        3,
    );
    fails_with(
        &["merge", &three[0], &p[1], &three[2]],
        None,
        "different --peaks",
    );
    let other_top = dir("refuse-top");
    let t = shards(
        &other_top,
        &["C8H10", "--peaks", XYLENE_1H, "--top", "5"],
        3,
    );
    fails_with(
        &["merge", &three[0], &t[1], &three[2]],
        None,
        "different --top",
    );
    let other_formula = dir("refuse-formula");
    let f = shards(&other_formula, &["C4H8O2", "--peaks", EA_1H], 3);
    fails_with(
        &["merge", &three[0], &f[1], &three[2]],
        None,
        "different formulas",
    );
    // Not a shard file; a file cut short.
    let bogus = d.join("bogus.json");
    std::fs::write(&bogus, "{\"formula\": \"C8H10\"}").unwrap();
    fails_with(
        &["merge", bogus.to_str().unwrap()],
        None,
        "not a shard file",
    );
    let text = std::fs::read_to_string(&three[0]).unwrap();
    let cut = d.join("cut.json");
    std::fs::write(&cut, &text[..text.len() / 2]).unwrap();
    fails_with(
        &["merge", cut.to_str().unwrap(), &three[1], &three[2]],
        None,
        "cut.json",
    );
    // --part writes shard files only.
    fails_with(
        &["rank", "C8H10", "--peaks", XYLENE_1H, "--part", "1/3"],
        None,
        "add --format json",
    );
    for dd in [d, other_peaks, other_top, other_formula] {
        let _ = std::fs::remove_dir_all(dd);
    }
}

#[test]
fn a_search_the_constraints_empty_gives_the_single_runs_message() {
    let d = dir("empty");
    // A benzene ring both required and forbidden leaves nothing to rank.
    let args = [
        "C8H10",
        "--peaks",
        XYLENE_1H,
        "--require",
        "c1ccccc1",
        "--forbid",
        "c1ccccc1",
    ];
    let mut a = vec!["rank"];
    a.extend_from_slice(&args);
    let out = isomerank(&a, None);
    assert_eq!(out.status.code(), Some(2));
    let message = String::from_utf8_lossy(&out.stderr).to_string();
    assert!(message.contains("fits the constraints"), "{message}");
    let files = shards(&d, &args, 3);
    let mut m = vec!["merge"];
    m.extend(files.iter().map(String::as_str));
    let merged = isomerank(&m, None);
    assert_eq!(merged.status.code(), Some(2));
    assert!(merged.stdout.is_empty());
    assert_eq!(String::from_utf8_lossy(&merged.stderr), message);
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn shards_cut_short_by_a_cap_merge_into_a_partial_result() {
    let d = dir("partial");
    let files = shards(
        &d,
        &["C8H10", "--peaks", XYLENE_1H, "--max-candidates", "100"],
        3,
    );
    let json: Value = serde_json::from_str(&merge(&files, &["--format", "json"])).unwrap();
    assert_eq!(json["complete"], false);
    assert_eq!(json["coverage"]["stopped_by"], "--max-candidates");
    let share = json["coverage"]["share"].as_f64().unwrap();
    assert!(share > 0.0 && share < 1.0, "{share}");
    // Each shard stopped at its own cap: 3 x 100 candidates.
    assert_eq!(json["isomers_considered"], 300);
    let text = merge(&files, &[]);
    assert!(text.contains("PARTIAL RESULT"), "{text}");
    let _ = std::fs::remove_dir_all(&d);
}
