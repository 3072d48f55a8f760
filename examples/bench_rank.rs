//! Benchmark: rank every isomer of C9H10O (about 0.7 million, no plausibility
//! rules) end to end against a peak list, and measure bare enumeration of the
//! same formula in the same run. Prints both times, their ratio (goal: at
//! most 2x) and candidates scored per second, wall clock and CPU time of
//! the process (the machine may be shared: CPU time is the steadier figure).
//!
//! The peer is bare enumeration: every isomer generated and handed to the
//! caller, nothing built (what `isomerank isomers F --count` does). The
//! same with a `Molecule` built per isomer is printed beside it, for scale.
//! Each measurement runs `REPS` times (default 3); the best is reported.
//!
//! Run: `cargo run --release --example bench_rank [FORMULA [PEAKS]]`
//! (`REPS=1` and `ONLY=rank` or `ONLY=enumerate` for a profiler run).

use isomerank::chem::Formula;
use isomerank::enumerate::{self, rules::RuleSet};
use isomerank::predict::Predictor;
use isomerank::rank::{self, Settings};
use isomerank::score::ScoringModel;
use isomerank::spectrum::{integrals, journal, SolventTable};
use std::time::Instant;

/// Propiophenone in CDCl3 (shifts from memory; any C9H10O list would do).
const PEAKS: &str = "1H NMR (400 MHz, CDCl3) δ 7.96 (m, 2H), 7.55 (m, 1H), 7.45 (m, 2H), \
                     3.00 (q, J = 7.2 Hz, 2H), 1.22 (t, J = 7.2 Hz, 3H)";

/// CPU time of this process (all threads), seconds, from /proc/self/stat
/// (Linux).
fn cpu_seconds() -> f64 {
    let stat = std::fs::read_to_string("/proc/self/stat").unwrap_or_default();
    // Fields after the parenthesised command name; utime and stime are the
    // 14th and 15th fields of the whole line.
    let rest = stat.rsplit(')').next().unwrap_or("");
    let f: Vec<&str> = rest.split_whitespace().collect();
    let ticks: f64 = f.get(11).and_then(|x| x.parse().ok()).unwrap_or(0.0)
        + f.get(12).and_then(|x| x.parse().ok()).unwrap_or(0.0);
    ticks / 100.0
}

/// Best (wall, CPU) seconds of `reps` runs of `f`, and its last result.
fn best<T>(reps: usize, mut f: impl FnMut() -> T) -> (f64, f64, T) {
    let (mut wall, mut cpu) = (f64::INFINITY, f64::INFINITY);
    let mut out = None;
    for _ in 0..reps {
        let (t, c) = (Instant::now(), cpu_seconds());
        out = Some(f());
        wall = wall.min(t.elapsed().as_secs_f64());
        cpu = cpu.min(cpu_seconds() - c);
    }
    (wall, cpu, out.expect("at least one run"))
}

fn main() {
    let mut args = std::env::args().skip(1);
    let text = args.next().unwrap_or_else(|| "C9H10O".to_string());
    let peaks = args.next().unwrap_or_else(|| PEAKS.to_string());
    let reps: usize = std::env::var("REPS")
        .ok()
        .and_then(|r| r.parse().ok())
        .unwrap_or(3)
        .max(1);
    let only = std::env::var("ONLY").unwrap_or_default();
    let formula = Formula::parse(&text).expect("formula");
    let options = enumerate::Options {
        rules: RuleSet::none(),
        ..Default::default()
    };
    let threads = rayon::current_num_threads();
    println!("formula {formula}, {threads} threads, best of {reps}");

    if only.is_empty() || only == "enumerate" {
        let (w, c, n) = best(reps, || {
            enumerate::for_each_ordered(
                &formula,
                &options,
                |iso| Some(iso.atoms()),
                |_| true,
                &mut |_| {},
            )
            .expect("enumeration")
            .isomers
        });
        println!("bare enumeration:           {n} isomers in {w:.3} s (CPU {c:.3} s)");
        if only.is_empty() {
            let (w2, c2, _) = best(reps, || {
                enumerate::for_each_ordered(
                    &formula,
                    &options,
                    |iso| Some(iso.molecule().atom_count()),
                    |_| true,
                    &mut |_| {},
                )
                .expect("enumeration")
            });
            println!("enumeration + Molecule each: {w2:.3} s (CPU {c2:.3} s), for scale");
            let (wr, cr, r) = rank_once(&formula, &options, &peaks, reps);
            println!(
                "ranking:                    {} candidates in {wr:.3} s (CPU {cr:.3} s; {} stopped by the cutoff)",
                r.considered, r.skipped
            );
            println!(
                "ratio ranking / bare enumeration: wall {:.2}, CPU {:.2} (goal <= 2)",
                wr / w,
                cr / c
            );
            println!("candidates per second: {:.0}", r.considered as f64 / wr);
            for c in r.candidates.iter().take(3) {
                println!(
                    "  #{} {:.3} {:.2} {}",
                    c.position, c.probability, c.cost, c.smiles
                );
            }
        }
    } else if only == "rank" {
        let (wr, cr, r) = rank_once(&formula, &options, &peaks, reps);
        println!(
            "ranking: {} candidates in {wr:.3} s (CPU {cr:.3} s)",
            r.considered
        );
    }
}

fn rank_once(
    formula: &Formula,
    options: &enumerate::Options,
    peaks: &str,
    reps: usize,
) -> (f64, f64, rank::Ranking) {
    let spectrum = integrals::build(
        journal::parse(peaks).expect("peaks"),
        formula,
        &SolventTable::embedded(),
    )
    .expect("spectrum");
    let predictor = Predictor::embedded().expect("predictor");
    let mut opts = predictor.options("CDCl3", 400.0).expect("options");
    opts.notes = false;
    let model = ScoringModel::embedded();
    let settings = Settings {
        spectrum: &spectrum,
        model: &model,
        top: 10,
    };
    best(reps, || {
        rank::with_standard_steps(&predictor, &opts, |steps| {
            rank::rank_formula(formula, options, steps, &settings, &mut |_, _| {})
        })
        .expect("ranking")
    })
}
