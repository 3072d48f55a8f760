//! Benchmark of isomer enumeration: measures, asserts nothing.
//!
//! Run with `cargo run --release --example bench_enumerate`. It builds the
//! release `isomerank` binary, then in one run:
//! - times `isomerank isomers F --count` on the pure hydrocarbons C11H14 and
//!   C12H14 against nauty's generator of the same carbon skeleton multigraphs,
//!   `geng -c -D4 n (n-1):B | multig -m3 -D4 -eB -u` (B = total bond order),
//!   and prints both times and their ratio (nauty counts Kekule forms
//!   separately, so its number is slightly higher);
//! - prints the rate (isomers per second) for C8H8O and C9H10O;
//! - prints the machine (cores, CPU model).
//!
//! Extra arguments replace the formula lists: `-- C10H12 C9H10O` times those
//! (hydrocarbons get the nauty comparison, the rest only a rate).

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

fn main() {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let binary = build_release(&root);
    print_machine();

    let args: Vec<String> = std::env::args().skip(1).collect();
    let (versus, rates): (Vec<String>, Vec<String>) = if args.is_empty() {
        (
            vec!["C11H14".into(), "C12H14".into()],
            vec!["C8H8O".into(), "C9H10O".into()],
        )
    } else {
        args.into_iter().partition(|f| hydrocarbon(f).is_some())
    };

    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    for formula in &versus {
        let (c, h) = hydrocarbon(formula).unwrap();
        let bonds = (4 * c as i64 - h as i64) / 2;
        println!("\n{formula}: {c} carbons, total bond order {bonds}");
        let (count, ours) = time_isomerank(&binary, formula, None);
        let (count1, ours1) = time_isomerank(&binary, formula, Some(1));
        let (multigraphs, nauty) = time_nauty(c, bonds);
        println!(
            "  isomerank isomers {formula} --count            {count:>10} isomers    {:>8.2} s ({threads} threads)",
            ours.as_secs_f64()
        );
        println!(
            "  isomerank isomers {formula} --count --threads 1 {count1:>10} isomers    {:>8.2} s",
            ours1.as_secs_f64()
        );
        println!(
            "  nauty geng | multig                  {multigraphs:>10} multigraphs {:>8.2} s (1 thread)",
            nauty.as_secs_f64()
        );
        println!(
            "  ratio isomerank / nauty: {:.2} ({threads} threads), {:.2} (1 thread)",
            ours.as_secs_f64() / nauty.as_secs_f64(),
            ours1.as_secs_f64() / nauty.as_secs_f64()
        );
    }
    for formula in &rates {
        let (count, t) = time_isomerank(&binary, formula, None);
        println!(
            "\n{formula}: {count} isomers in {:.2} s = {:.0} isomers/s ({threads} threads)",
            t.as_secs_f64(),
            count as f64 / t.as_secs_f64()
        );
    }
}

/// Build the release binary (a no-op when it is fresh) and return its path.
fn build_release(root: &Path) -> PathBuf {
    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".into());
    let status = Command::new(cargo)
        .args(["build", "--release", "--quiet", "--bin", "isomerank"])
        .current_dir(root)
        .status()
        .expect("run cargo build --release");
    assert!(status.success(), "cargo build --release failed");
    let target =
        std::env::var("CARGO_TARGET_DIR").map_or_else(|_| root.join("target"), PathBuf::from);
    target.join("release").join("isomerank")
}

fn print_machine() {
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    println!("machine: {cores} cores available, {}", common::cpu_model());
}

/// `CnHm` with only C and H: (n, m).
fn hydrocarbon(formula: &str) -> Option<(u32, u32)> {
    let rest = formula.strip_prefix('C')?;
    let (c, h) = rest.split_once('H')?;
    let c = if c.is_empty() { 1 } else { c.parse().ok()? };
    let h = if h.is_empty() { 1 } else { h.parse().ok()? };
    Some((c, h))
}

fn time_isomerank(binary: &Path, formula: &str, threads: Option<usize>) -> (u64, Duration) {
    let mut cmd = Command::new(binary);
    cmd.args(["isomers", formula, "--count"]);
    if let Some(t) = threads {
        cmd.args(["--threads", &t.to_string()]);
    }
    let start = Instant::now();
    let out = cmd
        .stderr(Stdio::inherit())
        .output()
        .expect("run isomerank");
    let elapsed = start.elapsed();
    assert!(
        out.status.success(),
        "isomerank isomers {formula} --count failed"
    );
    let count = String::from_utf8_lossy(&out.stdout)
        .trim()
        .parse()
        .expect("isomerank --count prints a number");
    (count, elapsed)
}

/// nauty tool by upstream name: Debian installs `geng` as `nauty-geng`.
fn nauty(name: &str) -> String {
    for candidate in [format!("nauty-{name}"), name.to_string()] {
        let found = Command::new("sh")
            .arg("-c")
            .arg(format!("command -v {candidate}"))
            .output()
            .is_ok_and(|o| o.status.success());
        if found {
            return candidate;
        }
    }
    panic!("nauty's {name} not found: install Debian's package nauty (scripts/test does)");
}

/// Time `geng -c -D4 n (n-1):B | multig -m3 -D4 -eB -u` and read the number of
/// multigraphs from multig's summary line (">Z ... N multigraphs generated").
fn time_nauty(carbons: u32, bonds: i64) -> (u64, Duration) {
    let pipeline = format!(
        "{} -c -q -D4 {carbons} {}:{bonds} | {} -m3 -D4 -e{bonds} -u",
        nauty("geng"),
        carbons - 1,
        nauty("multig")
    );
    println!("  nauty pipeline: {pipeline}");
    let start = Instant::now();
    let out = Command::new("sh")
        .arg("-c")
        .arg(format!("set -e; {pipeline}"))
        .output()
        .expect("run nauty");
    let elapsed = start.elapsed();
    assert!(out.status.success(), "nauty pipeline failed");
    let summary = String::from_utf8_lossy(&out.stderr);
    let count = summary
        .lines()
        .find(|l| l.contains("multigraphs"))
        .and_then(|l| {
            let words: Vec<&str> = l.split_whitespace().collect();
            let i = words.iter().position(|w| *w == "multigraphs")?;
            words.get(i.checked_sub(1)?)?.parse().ok()
        })
        .unwrap_or_else(|| panic!("no multigraph count in multig's output: {summary}"));
    (count, elapsed)
}
