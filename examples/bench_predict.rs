//! Benchmark: 1H (and 13C) predictions per second over every constitutional isomer of
//! a formula (default C8H8O, about 1.1e5 isomers), single-threaded and on all
//! cores, with the cost of the canonical labelling alone measured in the same
//! run as the peer (prediction needs at least one labelling per candidate).
//!
//!     cargo run --release --example bench_predict [FORMULA]
//!
//! The isomers come from the project's generator (the same list as
//! `isomerank isomers C8H8O`); they are converted to molecules once, before
//! timing.

use isomerank::chem::canon::{CanonGraph, Canonizer};
use isomerank::chem::{Formula, Molecule};
use isomerank::enumerate::{self, Options};
use isomerank::predict::{PredictOptions, Predictor};
use rayon::prelude::*;
use std::time::Instant;

/// Best rate of `reps` timed runs (the machine is shared: the best run is
/// the one least disturbed by other work).
fn best_rate(n: usize, reps: usize, mut f: impl FnMut() -> usize) -> (f64, usize) {
    let mut best = 0.0f64;
    let mut out = 0;
    for _ in 0..reps {
        let t = Instant::now();
        out = f();
        best = best.max(n as f64 / t.elapsed().as_secs_f64());
    }
    (best, out)
}

/// CPU time of this thread in seconds (Linux schedstat), if available: on a
/// machine shared with other jobs it measures the work, not the waiting.
fn thread_cpu() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
    let ns: f64 = s.split_whitespace().next()?.parse().ok()?;
    Some(ns / 1e9)
}

/// Rate per second of single-thread CPU time for one run of `f`.
fn cpu_rate(n: usize, mut f: impl FnMut() -> usize) -> Option<f64> {
    let t0 = thread_cpu()?;
    std::hint::black_box(f());
    Some(n as f64 / (thread_cpu()? - t0))
}

fn main() {
    let formula = std::env::args().nth(1).unwrap_or_else(|| "C8H8O".into());
    let f = Formula::parse(&formula).expect("formula");
    let mut mols: Vec<Molecule> = Vec::new();
    enumerate::for_each_ordered(
        &f,
        &Options::default(),
        |iso| Some(iso.molecule()),
        |m| {
            mols.push(m);
            true
        },
        &mut |_| {},
    )
    .expect("enumerate");
    println!("{formula}: {} isomers", mols.len());

    let p = Predictor::embedded().expect("library");
    let opts = PredictOptions {
        notes: false,
        ..PredictOptions::default()
    };
    let with_notes = PredictOptions::default();

    // `BENCH_ONLY=predict`: just the single-thread prediction loop (for
    // instruction counts under `perf stat`, steadier than wall time on a
    // shared machine).
    if std::env::var("BENCH_ONLY").as_deref() == Ok("predict") {
        let (rate, signals) = best_rate(mols.len(), 5, || {
            mols.iter().map(|m| p.predict(m, &opts).len()).sum()
        });
        let cpu = cpu_rate(mols.len(), || {
            mols.iter().map(|m| p.predict(m, &opts).len()).sum()
        })
        .unwrap_or(f64::NAN);
        println!("prediction, 1 thread, no notes: {rate:.0} /s wall, {cpu:.0} /s of CPU time ({signals} signals)");
        return;
    }
    // Peer: canonical labelling alone (orbits are the first step of a prediction).
    let mut c = Canonizer::new();
    let n = mols.len();
    let (canon_rate, sink) = best_rate(n, 5, || {
        let mut sink = 0usize;
        for m in &mols {
            let mut g = CanonGraph::new(m.atom_count());
            for e in m.graph.edge_indices() {
                let (a, b) = m.graph.edge_endpoints(e).unwrap();
                g.set_edge(a.index(), b.index(), m.graph[e].order);
            }
            for (i, a) in m.graph.node_weights().enumerate() {
                g.colour[i] = a.hydrogens as u32;
            }
            c.run(&g);
            sink += c.group_size();
        }
        sink
    });
    let (single, signals) = best_rate(n, 5, || {
        mols.iter().map(|m| p.predict(m, &opts).len()).sum()
    });
    let (single_notes, _) = best_rate(n, 3, || {
        mols.iter().map(|m| p.predict(m, &with_notes).len()).sum()
    });
    let (parallel, total) = best_rate(n, 5, || {
        mols.par_iter().map(|m| p.predict(m, &opts).len()).sum()
    });
    assert_eq!(total, signals);

    println!(
        "signals predicted: {signals} ({:.1} per isomer)",
        signals as f64 / mols.len() as f64
    );
    println!("canonical labelling alone (peer), 1 thread: {canon_rate:>12.0} /s");
    println!(
        "prediction, 1 thread, no notes:           {single:>12.0} /s  ({:.2} x the labelling time)",
        canon_rate / single
    );
    println!("prediction, 1 thread, with notes:         {single_notes:>12.0} /s");
    println!(
        "prediction, {} threads, no notes:          {parallel:>12.0} /s",
        rayon::current_num_threads()
    );

    // The ranking's gated path with and without the 13C list
    // (`PredictOptions::carbon`), the gate always open, and the 13C list alone.
    let only_h = PredictOptions {
        carbon: false,
        ..opts.clone()
    };
    let with_c = PredictOptions {
        carbon: true,
        ..opts.clone()
    };
    let gated = |m: &Molecule, o: &PredictOptions| {
        p.predict_gated_here(m, o, None, &mut |_, _| true)
            .unwrap()
            .map_or(0, |x| x.signals.len() + x.carbons.len())
    };
    let (h_only, _) = best_rate(n, 5, || mols.iter().map(|m| gated(m, &only_h)).sum());
    let (h_and_c, _) = best_rate(n, 5, || mols.iter().map(|m| gated(m, &with_c)).sum());
    let (c_only, _) = best_rate(n, 5, || {
        mols.iter().map(|m| p.predict_carbon(m, &opts).len()).sum()
    });
    let (h_and_c_par, _) = best_rate(n, 5, || mols.par_iter().map(|m| gated(m, &with_c)).sum());
    println!("gated path, 1 thread, 1H only:            {h_only:>12.0} /s");
    println!(
        "gated path, 1 thread, 1H and 13C:         {h_and_c:>12.0} /s  ({:.2} x the 1H-only time)",
        h_only / h_and_c
    );
    println!(
        "gated path, {} threads, 1H and 13C:        {h_and_c_par:>12.0} /s",
        rayon::current_num_threads()
    );
    println!("13C list alone, 1 thread:                 {c_only:>12.0} /s");
    std::hint::black_box(sink);
}
