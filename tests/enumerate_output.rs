//! The `isomers` command's output as a user or a batch scheduler sees it:
//! every line valid by RDKit with the asked formula and no compound twice;
//! shards (`--part K/N`) that partition the full output; the same output
//! whatever the thread count; quiet exit on a closed pipe; bad input rejected
//! with exit code 2, a message on stderr and nothing on stdout.

mod common;

use common::*;
use std::collections::BTreeSet;
use std::io::{BufRead, BufReader};
use std::process::{Command, Stdio};

#[derive(serde::Deserialize)]
struct Check {
    lines: u64,
    unique: u64,
    problem_count: u64,
    problems: Vec<String>,
}

#[test]
fn every_line_is_a_valid_distinct_isomer_by_rdkit() {
    let formulas = [
        "C6H6", "C5H5N", "C4H4S", "C3H7Cl", "C2H3Cl3", "C4H9Br", "C3H4F2", "C6H6O", "C5H9NO",
        "C8H10", "C3H9P", "C4H4N2", "C3H3NO",
    ];
    let mut failures = Vec::new();
    for formula in formulas {
        let output = isomers_ok(&[formula]);
        let count = isomers_count(formula, &[]);
        // Source: RDKit (PyPI rdkit) via tests/reference/check_isomers.py: each SMILES
        // parses, is one neutral closed-shell molecule of the asked formula, and no two
        // lines are the same compound (FIELD-GUIDE section 3).
        let json = run_reference_script("check_isomers.py", &[formula], &output);
        let check: Check = serde_json::from_str(&json).expect("check_isomers.py prints JSON");
        if check.problem_count > 0 || check.lines == 0 || check.unique != check.lines {
            failures.push(format!(
                "{formula}: {} lines, {} distinct, {} problems: {:#?}",
                check.lines, check.unique, check.problem_count, check.problems
            ));
        }
        if check.lines != count {
            failures.push(format!(
                "{formula}: --count says {count} but the list has {} lines",
                check.lines
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn shards_partition_the_full_output() {
    for formula in ["C6H6O", "C7H8"] {
        let full = isomers_ok(&[formula]);
        let full_set: BTreeSet<&str> = full.lines().collect();
        assert_eq!(
            full_set.len(),
            full.lines().count(),
            "{formula}: repeated lines"
        );
        for n in [3, 7] {
            let mut seen: BTreeSet<String> = BTreeSet::new();
            let mut counted = 0;
            for k in 1..=n {
                let part = format!("{k}/{n}");
                let out = isomers_ok(&[formula, "--part", &part]);
                for line in out.lines() {
                    assert!(
                        seen.insert(line.to_string()),
                        "{formula}: {line} is in shard {part} and an earlier shard (or twice)"
                    );
                    assert!(
                        full_set.contains(line),
                        "{formula}: shard {part} has {line}, which the full run lacks"
                    );
                }
                counted += isomers_count(formula, &["--part", &part]);
            }
            assert_eq!(
                seen.len(),
                full_set.len(),
                "{formula}: the {n} shards together miss {} isomers of the full run",
                full_set.len() - seen.len()
            );
            assert_eq!(
                counted,
                full_set.len() as u64,
                "{formula}: --count over {n} shards"
            );
        }
    }
}

#[test]
fn output_is_the_same_for_any_thread_count() {
    for formula in ["C7H8", "C6H6O", "C5H9NO"] {
        let one = isomers_ok(&[formula, "--threads", "1"]);
        let two = isomers_ok(&[formula, "--threads", "2"]);
        let four = isomers_ok(&[formula, "--threads", "4"]);
        assert!(!one.is_empty(), "{formula}: no output");
        assert!(
            one == two,
            "{formula}: output differs between --threads 1 and 2"
        );
        assert!(
            one == four,
            "{formula}: output differs between --threads 1 and 4"
        );
        assert_eq!(
            one,
            isomers_ok(&[formula]),
            "{formula}: differs from the default"
        );
    }
}

#[test]
fn closed_pipe_ends_quietly() {
    // The shell form a user types: `isomerank isomers C6H14 | head -1`.
    let cmd = format!(
        "set -o pipefail; '{}' isomers C6H14 | head -1",
        bin().display()
    );
    let out = Command::new("bash").arg("-c").arg(&cmd).output().unwrap();
    assert!(out.status.success(), "exit {:?}", out.status.code());
    assert_eq!(String::from_utf8_lossy(&out.stdout).lines().count(), 1);
    assert!(
        out.stderr.is_empty(),
        "stderr: {}",
        String::from_utf8_lossy(&out.stderr)
    );

    // Reader gone before the first write (C6H14), and after one line of a list far
    // bigger than a pipe buffer (C8H8O): both must still exit 0 without a word.
    for (formula, read_lines) in [("C6H14", 0), ("C8H8O", 1)] {
        let mut child = Command::new(bin())
            .args(["isomers", formula])
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        {
            let stdout = child.stdout.take().unwrap();
            let mut reader = BufReader::new(stdout);
            for _ in 0..read_lines {
                let mut line = String::new();
                reader.read_line(&mut line).unwrap();
                assert!(!line.is_empty());
            }
        } // dropping the reader closes the pipe
        let out = child.wait_with_output().unwrap();
        assert!(
            out.status.success(),
            "{formula}: exit {:?} after the reader closed the pipe",
            out.status.code()
        );
        assert!(
            out.stderr.is_empty(),
            "{formula}: stderr after closed pipe: {}",
            String::from_utf8_lossy(&out.stderr)
        );
    }
}

/// Bad input: exit 2, nothing on stdout, a message on stderr containing `needle`.
fn rejected(args: &[&str], needle: &str) {
    let out = isomerank(args, None);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(
        out.status.code(),
        Some(2),
        "{args:?}: exit code; stderr: {stderr}"
    );
    assert!(out.stdout.is_empty(), "{args:?}: stdout not empty");
    assert!(
        stderr.contains(needle),
        "{args:?}: stderr {stderr:?} lacks {needle:?}"
    );
    assert!(!stderr.contains("panicked"), "{args:?}: panic: {stderr}");
}

#[test]
fn bad_formulas_are_rejected_with_the_place() {
    rejected(
        &["isomers", "C6Xy"],
        "unknown element \"Xy\" at column 3 of \"C6Xy\"",
    );
    // DBE = C - (H + X)/2 + (N + P)/2 + 1 (FIELD-GUIDE section 2): C2H7 gives -0.5.
    rejected(&["isomers", "C2H7"], "DBE = -0.5");
    rejected(&["isomers", "C2H7", "--count"], "DBE = -0.5");
    rejected(&["isomers", ""], "empty");
    // Wrong case: "CL4" reads as C then an unknown "L" at column 2.
    rejected(&["isomers", "CL4"], "column 2");
    rejected(&["isomers", "C6H6", "--part", "0/3"], "0/3");
    rejected(&["isomers", "C6H6", "--part", "4/3"], "4/3");
}
