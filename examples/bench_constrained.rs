//! Benchmark of constrained generation: measures, asserts nothing.
//!
//! Run with `cargo run --release --example bench_constrained`. In one run:
//!
//! 1. On formulas where the full enumeration finishes, the constrained
//!    search (`isomers F --count` with constraints, as the library runs it)
//!    against the full one: both times, their ratio, and the time per
//!    structure each outputs. "Time to list" the constrained output is the
//!    full enumeration's time per isomer times the constrained count: the
//!    goal is constrained time <= 2x that.
//! 2. Formulas of 12-16 heavy atoms that only finish constrained, each with
//!    the attached-H counts of a compound of the NMRShiftDB2 dev split
//!    (tests/data/nmrshiftdb2-v2-dev.toml: its 13C lines with their H
//!    letters give the counts), with and without a required benzene ring:
//!    counts and times.
//!
//! Each row of part 1 also prints where the constrained search spends what
//! listing does not: per constraint, how many skeletons, bond-order steps
//! and complete structures it cut (`Summary::constraints`), against the
//! structures output. A cut at the complete-structure stage means the
//! skeleton and all its bond orders were built for nothing; a cut at the
//! skeleton stage is cheap.
//!
//! `REPS` (default 3) runs per measurement, best taken; `ONLY=1` or `ONLY=2`
//! runs one part.

mod common;

use isomerank::chem::Formula;
use isomerank::enumerate::constraints::{fragment::Fragment, Constraints};
use isomerank::enumerate::{self, Options};

fn constraints(attached_h: Option<&str>, require: &[&str], forbid: &[&str]) -> Constraints {
    let mut c = Constraints::default();
    if let Some(list) = attached_h {
        for h in Constraints::parse_attached_h(list).expect("benchmark list") {
            c.add_hydrogens(h);
        }
    }
    for r in require {
        c.require
            .push(Fragment::parse(r, "--require").expect("fragment"));
    }
    for f in forbid {
        c.forbid
            .push(Fragment::parse(f, "--forbid").expect("fragment"));
    }
    c
}

fn count(formula: &str, c: &Constraints) -> u64 {
    summary(formula, c).isomers
}

fn summary(formula: &str, c: &Constraints) -> enumerate::Summary {
    let f = Formula::parse(formula).expect("formula");
    let opts = Options {
        constraints: c.clone(),
        ..Options::default()
    };
    enumerate::count_summary(&f, &opts, &mut |_| {}).expect("enumeration")
}

/// One line per constraint: what it cut at each stage.
fn cuts(s: &enumerate::Summary) -> String {
    s.constraints
        .iter()
        .map(|c| {
            format!(
                "      {}: {}",
                c.name,
                enumerate::constraints::STAGES
                    .iter()
                    .zip(c.cut)
                    .map(|(stage, n)| format!("{n} {stage}"))
                    .collect::<Vec<_>>()
                    .join(", ")
            )
        })
        .collect::<Vec<_>>()
        .join("\n")
}

fn describe(attached_h: Option<&str>, require: &[&str], forbid: &[&str]) -> String {
    let mut s = Vec::new();
    if let Some(h) = attached_h {
        s.push(format!("--attached-h {h}"));
    }
    for r in require {
        s.push(format!("--require {r}"));
    }
    for f in forbid {
        s.push(format!("--forbid {f}"));
    }
    s.join(" ")
}

fn main() {
    let (reps, only) = common::reps_and_only();
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    println!(
        "machine: {} ({threads} threads); REPS={reps}, best wall time taken",
        common::cpu_model()
    );
    type Set = (
        Option<&'static str>,
        &'static [&'static str],
        &'static [&'static str],
    );
    if only.is_empty() || only == "1" {
        println!("\n1. constrained against full enumeration (both finish)");
        // Attached-H counts of common compounds (common practice):
        // acetophenone C8H8O, propiophenone C9H10O, 4-phenylbutan-2-one
        // C10H12O; and the same formulas with a benzene ring required.
        let rows: [(&str, Set); 9] = [
            ("C8H8O", (Some("CH3=1,CH=5,C=2"), &[], &[])),
            ("C8H8O", (None, &["c1ccccc1"], &[])),
            ("C8H8O", (Some("CH3=1,CH=5,C=2"), &["c1ccccc1"], &[])),
            ("C9H10O", (Some("CH3=1,CH2=1,CH=5,C=2"), &[], &[])),
            ("C9H10O", (None, &["c1ccccc1"], &[])),
            (
                "C9H10O",
                (Some("CH3=1,CH2=1,CH=5,C=2"), &["c1ccccc1"], &["C=C"]),
            ),
            ("C10H12O", (Some("CH3=1,CH2=2,CH=5,C=2"), &[], &[])),
            ("C10H12O", (None, &["c1ccccc1"], &[])),
            (
                "C10H12O",
                (Some("CH3=1,CH2=2,CH=5,C=2"), &["c1ccccc1"], &[]),
            ),
        ];
        let mut full_cache: Vec<(&str, f64, u64)> = Vec::new();
        for (formula, (h, req, forb)) in rows {
            let (full_t, full_n) = match full_cache.iter().find(|c| c.0 == formula) {
                Some(&(_, t, n)) => (t, n),
                None => {
                    let (t, _, n) = common::best(reps, || count(formula, &Constraints::default()));
                    full_cache.push((formula, t, n));
                    (t, n)
                }
            };
            let c = constraints(h, req, forb);
            let (t, _, n) = common::best(reps, || count(formula, &c));
            let per_full = full_t / full_n as f64;
            let list_time = per_full * n as f64;
            println!(
                "  {formula} {}\n    full {full_n} isomers {full_t:.3} s ({:.2} us each); constrained {n} in {t:.4} s ({:.2} us each); time ratio constrained/full {:.4}; against listing its output at the full rate ({list_time:.4} s): {:.1}x",
                describe(h, req, forb),
                per_full * 1e6,
                t / n.max(1) as f64 * 1e6,
                t / full_t,
                t / list_time.max(1e-9)
            );
            println!(
                "    cut by each constraint:\n{}",
                cuts(&summary(formula, &c))
            );
        }
    }
    if only.is_empty() || only == "2" {
        println!("\n2. formulas of 12-16 heavy atoms, constrained only");
        // Attached-H counts from the 13C lines (H letters) of NMRShiftDB2 dev
        // compounds, tests/data/nmrshiftdb2-v2-dev.toml (ids in brackets).
        let rows: [(&str, &str, Set); 8] = [
            (
                "C11H14O2 [10022417]",
                "C11H14O2",
                (Some("CH3=2,CH2=1,CH=5,C=3"), &[], &[]),
            ),
            (
                "C11H14O2 [10022417]",
                "C11H14O2",
                (Some("CH3=2,CH2=1,CH=5,C=3"), &["c1ccccc1"], &[]),
            ),
            (
                "C12H24O [10008948]",
                "C12H24O",
                (Some("CH3=1,CH2=10,CH=1"), &[], &[]),
            ),
            (
                "C10H12O4 [20041091]",
                "C10H12O4",
                (Some("CH3=3,CH=3,C=4"), &["c1ccccc1"], &[]),
            ),
            (
                "C11H13BrO2 [20227042]",
                "C11H13BrO2",
                (Some("CH3=1,CH2=2,CH=5,C=3"), &["c1ccccc1"], &[]),
            ),
            (
                "C10H16O4 [20027265]",
                "C10H16O4",
                (Some("CH3=2,CH2=4,CH=2,C=2"), &["C(=O)O"], &[]),
            ),
            (
                "C11H17NO2 [20200894]",
                "C11H17NO2",
                (Some("CH3=1,CH2=4,CH=4,C=2"), &["c1ccccc1"], &[]),
            ),
            (
                "C12H14O2 (no H counts)",
                "C12H14O2",
                (None, &["c1ccccc1", "C(=O)O"], &[]),
            ),
        ];
        for (label, formula, (h, req, forb)) in rows {
            let c = constraints(h, req, forb);
            let (t, _, n) = common::best(reps.min(2), || count(formula, &c));
            println!(
                "  {label} {}: {n} structures in {t:.2} s ({:.1} us each)",
                describe(h, req, forb),
                t / n.max(1) as f64 * 1e6
            );
        }
    }
}
