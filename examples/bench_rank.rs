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

mod common;

use common::{best, Setup};
use isomerank::enumerate;
use isomerank::rank::{self, Settings};

fn main() {
    let setup = Setup::from_args();
    let (formula, options) = (&setup.formula, &setup.options);
    let (reps, only) = common::reps_and_only();
    let threads = rayon::current_num_threads();
    println!("formula {formula}, {threads} threads, best of {reps}");

    if only.is_empty() || only == "enumerate" {
        let (w, c, n) = best(reps, || {
            enumerate::for_each_ordered(
                formula,
                options,
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
                    formula,
                    options,
                    |iso| Some(iso.molecule().atom_count()),
                    |_| true,
                    &mut |_| {},
                )
                .expect("enumeration")
            });
            println!("enumeration + Molecule each: {w2:.3} s (CPU {c2:.3} s), for scale");
            let (wr, cr, r) = rank_once(&setup, reps);
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
        let (wr, cr, r) = rank_once(&setup, reps);
        println!(
            "ranking: {} candidates in {wr:.3} s (CPU {cr:.3} s)",
            r.considered
        );
    }
}

fn rank_once(setup: &Setup, reps: usize) -> (f64, f64, rank::Ranking) {
    let settings = Settings {
        spectrum: &setup.spectrum,
        carbon: None,
        model: &setup.model,
        top: 10,
    };
    best(reps, || {
        rank::with_standard_steps(&setup.predictor, &setup.opts, |steps| {
            rank::rank_formula(
                &setup.formula,
                &setup.options,
                steps,
                &settings,
                &mut |_, _| {},
            )
        })
        .expect("ranking")
    })
}
