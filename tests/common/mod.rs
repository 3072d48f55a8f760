//! Shared helpers for the integration tests: the isomerank binary and the
//! outside reference tools (RDKit through the project's Python environment,
//! nauty from Debian's package).
//!
//! The reference tools are installed by `scripts/test` (the README's test
//! command). A test that needs one and cannot find it FAILS with a message
//! saying how to get it; it never skips silently.
#![allow(dead_code)]

use serde::de::DeserializeOwned;
use serde::Deserialize;
use std::io::Write;
use std::path::PathBuf;
use std::process::{Command, Output, Stdio};

/// Path of the isomerank binary built for these tests.
pub fn bin() -> PathBuf {
    PathBuf::from(env!("CARGO_BIN_EXE_isomerank"))
}

/// Run isomerank with arguments and optional standard input.
pub fn isomerank(args: &[&str], stdin: Option<&str>) -> Output {
    let mut child = Command::new(bin())
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start isomerank");
    {
        let mut input = child.stdin.take().unwrap();
        if let Some(s) = stdin {
            let _ = input.write_all(s.as_bytes());
        }
    }
    child.wait_with_output().expect("wait for isomerank")
}

/// The Python interpreter that has RDKit: `$ISOMERANK_PYTHON`, else the
/// project's `.venv/bin/python`. Panics (fails the test) when neither exists.
pub fn python() -> PathBuf {
    if let Ok(p) = std::env::var("ISOMERANK_PYTHON") {
        return PathBuf::from(p);
    }
    let venv = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(".venv/bin/python");
    if venv.exists() {
        return venv;
    }
    panic!(
        "reference Python with RDKit not found: run scripts/test (it creates .venv with RDKit) \
         or set ISOMERANK_PYTHON"
    );
}

/// Run a Python script from tests/reference/ with arguments and standard input;
/// returns stdout, failing the test on a non-zero exit.
pub fn run_reference_script(script: &str, args: &[&str], stdin: &str) -> String {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/reference")
        .join(script);
    let mut child = Command::new(python())
        .arg(&path)
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap_or_else(|e| panic!("start {}: {e}", path.display()));
    // Feed standard input from a thread: a big isomer list must not deadlock
    // against the script's own output filling the pipe.
    let mut input = child.stdin.take().unwrap();
    let data = stdin.to_string();
    let feeder = std::thread::spawn(move || input.write_all(data.as_bytes()));
    let out = child.wait_with_output().expect("wait for reference script");
    feeder
        .join()
        .expect("stdin feeder thread")
        .unwrap_or_else(|e| panic!("write to reference script {script}: {e}"));
    assert!(
        out.status.success(),
        "reference script {script} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).expect("utf-8 from reference script")
}

/// Where a command is found on PATH (`command -v`), if anywhere.
pub fn on_path(name: &str) -> Option<PathBuf> {
    let out = Command::new("sh")
        .arg("-c")
        .arg(format!("command -v {name}"))
        .output()
        .ok()?;
    let p = String::from_utf8_lossy(&out.stdout).trim().to_string();
    (out.status.success() && !p.is_empty()).then(|| PathBuf::from(p))
}

/// A nauty tool by its upstream name (`geng`, `vcolg`, `multig`): Debian installs
/// them as `nauty-geng` etc. Panics when absent.
pub fn nauty_tool(name: &str) -> PathBuf {
    for candidate in [format!("nauty-{name}"), name.to_string()] {
        if let Some(p) = on_path(&candidate) {
            return p;
        }
    }
    panic!("nauty tool {name} not found: run scripts/test (it installs Debian's package nauty)");
}

/// Run `isomerank isomers <args>`; fails the test (showing stderr) unless it
/// exits 0. Returns stdout.
pub fn isomers_ok(args: &[&str]) -> String {
    let mut full = vec!["isomers"];
    full.extend_from_slice(args);
    let out = isomerank(&full, None);
    assert!(
        out.status.success(),
        "isomerank {} exited with {:?}: {}",
        full.join(" "),
        out.status.code(),
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).expect("utf-8 from isomerank")
}

/// `isomerank isomers FORMULA --count` plus extra flags, parsed as a number.
pub fn isomers_count(formula: &str, extra: &[&str]) -> u64 {
    let mut args = vec![formula, "--count"];
    args.extend_from_slice(extra);
    let text = isomers_ok(&args);
    text.trim()
        .parse()
        .unwrap_or_else(|_| panic!("isomers {formula} --count printed {text:?}, not a number"))
}

/// The independent isomer count of tests/reference/nauty_isomers.py
/// (nauty geng | vcolg | multig, RDKit dedupe). `extra` takes its flags,
/// e.g. `--expanded-valence`.
pub fn reference_count(formula: &str, extra: &[&str]) -> u64 {
    let mut args = vec![formula];
    args.extend_from_slice(extra);
    let text = run_reference_script("nauty_isomers.py", &args, "");
    text.trim()
        .parse()
        .unwrap_or_else(|_| panic!("nauty_isomers.py {formula} printed {text:?}"))
}

/// The independent isomer set (RDKit canonical SMILES, sorted) of
/// tests/reference/nauty_isomers.py.
pub fn reference_smiles(formula: &str, extra: &[&str]) -> Vec<String> {
    let mut args = vec![formula, "--smiles"];
    args.extend_from_slice(extra);
    run_reference_script("nauty_isomers.py", &args, "")
        .lines()
        .map(str::to_string)
        .collect()
}

/// RDKit canonical SMILES of each line of `smiles`, in order (a line RDKit
/// cannot read becomes `!INVALID <line>`).
pub fn rdkit_canonical(smiles: &str) -> Vec<String> {
    run_reference_script("canonical_smiles.py", &[], smiles)
        .lines()
        .map(str::to_string)
        .collect()
}

/// A few members of each side of a set difference, for a failure message.
pub fn set_difference_report(ours: &[String], theirs: &[String], shown: usize) -> String {
    use std::collections::BTreeSet;
    let a: BTreeSet<&String> = ours.iter().collect();
    let b: BTreeSet<&String> = theirs.iter().collect();
    let only_a: Vec<&&String> = a.difference(&b).collect();
    let only_b: Vec<&&String> = b.difference(&a).collect();
    let list = |v: &[&&String]| {
        v.iter()
            .take(shown)
            .map(|s| format!("    {s}"))
            .collect::<Vec<_>>()
            .join("\n")
    };
    format!(
        "{} only in isomerank's output, e.g.\n{}\n{} only in the nauty+RDKit reference, e.g.\n{}",
        only_a.len(),
        list(&only_a),
        only_b.len(),
        list(&only_b)
    )
}

/// Our canonical SMILES of a structure given as any SMILES, so that tests name
/// the expected structure without pinning the writer's exact string.
pub fn canonical(smiles: &str) -> String {
    let mol = isomerank::chem::smiles::parse_smiles(smiles)
        .unwrap_or_else(|e| panic!("test SMILES {smiles}: {e}"));
    isomerank::chem::smiles::canonical_smiles(&mol)
}

/// A table of reference compounds in `tests/data/` (TOML, `[[compound]]`
/// rows), with the spectrometer frequency where the file gives one.
#[derive(Deserialize)]
pub struct DataTable<C> {
    pub mhz: Option<f64>,
    pub compound: Vec<C>,
}

/// A reference compound with its per-signal reference values of type `R`.
#[derive(Deserialize)]
pub struct DataCompound<R> {
    pub name: String,
    pub smiles: String,
    pub signals: Vec<R>,
}

/// Read `tests/data/<file>`; a malformed file fails the test.
pub fn data_table<C: DeserializeOwned>(file: &str) -> DataTable<C> {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data")
        .join(file);
    let text =
        std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("read {}: {e}", path.display()));
    toml::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// A reference compound with its observed peak list (journal style).
#[derive(Deserialize)]
pub struct PeakListCompound {
    pub name: String,
    pub smiles: String,
    pub peaks: String,
}

/// Where each compound of `table` lands when every isomer of its formula is
/// ranked against its peak list (CDCl3, `mhz`; the plausibility rules
/// `rules`; the expanded valences of S and P where the formula has them,
/// since sulfoxides need S(IV)): per compound its 1-based position (None
/// beyond the table of 10) and a report line.
pub fn rank_positions(
    table: &[PeakListCompound],
    mhz: f64,
    rules: isomerank::enumerate::rules::RuleSet,
) -> Vec<(Option<usize>, String)> {
    use isomerank::chem::Element;
    use isomerank::rank::{self, Settings};
    use isomerank::spectrum::{integrals, journal, SolventTable};
    let predictor = isomerank::predict::Predictor::embedded().unwrap();
    let model = isomerank::score::ScoringModel::embedded();
    let solvents = SolventTable::embedded();
    let mut opts = predictor.options("CDCl3", mhz).unwrap();
    opts.notes = false;
    table
        .iter()
        .map(|c| {
            let answer = isomerank::chem::smiles::parse_smiles(&c.smiles).unwrap();
            let formula = answer.formula();
            let want = isomerank::chem::smiles::canonical_smiles(&answer);
            let spectrum =
                integrals::build(journal::parse(&c.peaks).unwrap(), &formula, &solvents).unwrap();
            let settings = Settings {
                spectrum: &spectrum,
                carbon: None,
                model: &model,
                top: 10,
            };
            let options = isomerank::enumerate::Options {
                rules: rules.clone(),
                expanded_valence: formula.count(Element::S) + formula.count(Element::P) > 0,
                ..Default::default()
            };
            let r = rank::with_standard_steps(&predictor, &opts, |steps| {
                rank::rank_formula(&formula, &options, steps, &settings, &mut |_, _| {}).unwrap()
            });
            let pos = r
                .candidates
                .iter()
                .position(|x| x.smiles == want)
                .map(|p| p + 1);
            let line = format!(
                "{:<28} {:<10} {:>7} isomers  position {:<6} first: {} ({:.2} vs {:.2})",
                c.name,
                formula.to_string(),
                r.considered,
                pos.map(|p| p.to_string()).unwrap_or_else(|| ">10".into()),
                r.candidates[0].smiles,
                r.candidates[0].cost,
                pos.map(|p| r.candidates[p - 1].cost).unwrap_or(f64::NAN)
            );
            (pos, line)
        })
        .collect()
}

/// Every isomer of each formula, as the generator's canonical SMILES.
pub fn isomer_smiles(formulas: &[&str]) -> Vec<String> {
    let mut smiles = Vec::new();
    for f in formulas {
        let formula = isomerank::chem::Formula::parse(f).unwrap();
        isomerank::enumerate::for_each_ordered(
            &formula,
            &isomerank::enumerate::Options::default(),
            |iso| Some(iso.smiles()),
            |s| {
                smiles.push(s);
                true
            },
            &mut |_| {},
        )
        .unwrap();
    }
    smiles
}

/// Run and expect a bad-input failure (exit 2, nothing on stdout) whose
/// stderr contains `needle`.
pub fn fails_with(args: &[&str], stdin: Option<&str>, needle: &str) {
    let out = isomerank(args, stdin);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "args {args:?}: stderr {err}");
    assert!(out.stdout.is_empty(), "args {args:?}: stdout not empty");
    assert!(
        err.contains(needle),
        "args {args:?}: stderr {err:?} lacks {needle:?}"
    );
}

/// The standard output of a run that must succeed (exit 0).
pub fn stdout_of(out: std::process::Output) -> String {
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}
