//! Benchmark of the scorer alone: predict every isomer of a formula once
//! (in parallel, untimed), then time, on one thread, the plain
//! `score::score`, `score::Prepared::score` and `score::Prepared::may_beat`
//! over all of them, without a cutoff and at the cutoff a ranking would
//! use (best + skip_margin). Also checks that the two scorers agree bit for
//! bit on every candidate.
//!
//! Run: `cargo run --release --example bench_score [FORMULA]`
//! (`PROFILE_ONLY=score` or `=may_beat`: only repeat that loop at the
//! ranking cutoff, for a profiler.)
//! (C9H10O by default: about 0.7 million isomers, about 1 GB of predictions.)

mod common;

use common::{thread_cpu_seconds, Setup, PROPIOPHENONE};
use isomerank::enumerate;
use isomerank::predict::PredictedSignal;
use isomerank::score::{self, GroupShift, Prepared, Scored};
use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::Instant;

/// Counts allocations, to check that scoring allocates only for results.
struct Counting;

static ALLOCATIONS: AtomicU64 = AtomicU64::new(0);

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        ALLOCATIONS.fetch_add(1, Ordering::Relaxed);
        System.alloc(layout)
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        System.dealloc(ptr, layout)
    }
}

#[global_allocator]
static GLOBAL: Counting = Counting;

/// Time `f` over all candidates: (wall µs, thread-CPU µs) per candidate,
/// and how many returned true.
fn time(n: usize, mut f: impl FnMut(usize) -> bool) -> (f64, f64, usize) {
    let (t, c) = (Instant::now(), thread_cpu_seconds());
    let mut hits = 0;
    for i in 0..n {
        hits += f(i) as usize;
    }
    let wall = t.elapsed().as_secs_f64();
    let cpu = thread_cpu_seconds() - c;
    (wall * 1e6 / n as f64, cpu * 1e6 / n as f64, hits)
}

/// Candidates per chunk of the "hot" timing (their predictions, about 80 kB,
/// fit in the L2 cache).
const CHUNK: usize = 64;

/// Time `f` over all candidates chunk by chunk, each chunk first read once
/// untimed by `warm`: a ranking scores a prediction right after making it,
/// so its signals are in cache, which streaming over a gigabyte of stored
/// predictions does not reproduce. Wall µs per candidate.
fn time_hot(n: usize, warm: impl Fn(usize) -> f64, mut f: impl FnMut(usize) -> bool) -> f64 {
    let mut total = 0.0;
    let mut from = 0;
    while from < n {
        let to = (from + CHUNK).min(n);
        let mut x = 0.0;
        for i in from..to {
            x += warm(i);
        }
        std::hint::black_box(x);
        let t = Instant::now();
        let mut hits = 0;
        for i in from..to {
            hits += f(i) as usize;
        }
        total += t.elapsed().as_secs_f64();
        std::hint::black_box(hits);
        from = to;
    }
    total * 1e6 / n as f64
}

fn same(a: &Option<Scored>, b: &Option<Scored>) -> bool {
    match (a, b) {
        (None, None) => true,
        (Some(a), Some(b)) => a.cost.to_bits() == b.cost.to_bits() && a.assigned == b.assigned,
        _ => false,
    }
}

fn main() {
    let text = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "C9H10O".to_string());
    // The propiophenone list of bench_rank, whatever the formula.
    let setup = Setup::new(&text, PROPIOPHENONE);
    let (formula, options, spectrum) = (&setup.formula, &setup.options, &setup.spectrum);
    let (predictor, opts, model) = (&setup.predictor, &setup.opts, &setup.model);

    // Predict everything once, kept flat (one Vec of signals and offsets)
    // with the atom lists dropped, to keep the memory down.
    let t = Instant::now();
    let mut signals: Vec<PredictedSignal> = Vec::new();
    let mut starts: Vec<usize> = vec![0];
    enumerate::for_each_ordered(
        formula,
        options,
        |iso| {
            let mut p = predictor.predict(&iso.molecule(), opts);
            for s in &mut p {
                s.atoms = Vec::new();
                s.notes = Vec::new();
            }
            Some(p)
        },
        |p| {
            signals.extend(p);
            starts.push(signals.len());
            true
        },
        &mut |_| {},
    )
    .expect("enumeration");
    let n = starts.len() - 1;
    let cand = |i: usize| &signals[starts[i]..starts[i + 1]];
    let shifts: Vec<GroupShift> = signals.iter().map(GroupShift::of).collect();
    let groups = |i: usize| &shifts[starts[i]..starts[i + 1]];
    println!(
        "formula {formula}: {n} candidates, {} predicted groups, predicted in {:.1} s ({} threads)",
        signals.len(),
        t.elapsed().as_secs_f64(),
        rayon::current_num_threads()
    );

    let prepared = Prepared::new(spectrum, model);
    let best = (0..n)
        .filter_map(|i| prepared.score(cand(i), f64::INFINITY))
        .map(|s| s.cost)
        .fold(f64::INFINITY, f64::min);
    let ranking_cutoff = best + model.ranking.skip_margin;
    println!("best cost {best:.3}; ranking cutoff best + skip_margin = {ranking_cutoff:.3}");

    // Read every byte the scorers read of candidate i.
    let warm = |i: usize| -> f64 {
        cand(i)
            .iter()
            .map(|s| {
                let m = match &s.multiplicity {
                    isomerank::predict::Multiplicity::Coupled(ns) => {
                        ns.iter().map(|&x| x as f64).sum()
                    }
                    _ => 0.0,
                };
                s.shift + s.sigma + s.hydrogens as f64 + m + s.j_hz.iter().sum::<f64>()
            })
            .sum::<f64>()
            + groups(i).iter().map(|g| g.shift).sum::<f64>()
    };
    if let Ok(mode) = std::env::var("PROFILE_ONLY") {
        for _ in 0..10 {
            let w = time_hot(n, warm, |i| match mode.as_str() {
                "may_beat" => prepared.may_beat(groups(i), ranking_cutoff),
                "may_beat_quick" => prepared.may_beat_quick(groups(i), ranking_cutoff),
                _ => prepared.score(cand(i), ranking_cutoff).is_some(),
            });
            println!("{w:.3} µs per candidate");
        }
        return;
    }
    // Allocations (the other threads are idle here).
    for cutoff in [f64::INFINITY, ranking_cutoff] {
        let before = ALLOCATIONS.load(Ordering::Relaxed);
        let mut results = 0;
        for i in 0..n {
            results += prepared.score(cand(i), cutoff).is_some() as u64;
        }
        let a = ALLOCATIONS.load(Ordering::Relaxed) - before;
        println!("cutoff {cutoff:.3}: Prepared::score made {a} allocations for {results} results over {n} candidates");
    }
    // Agreement, untimed.
    for cutoff in [f64::INFINITY, ranking_cutoff] {
        let bad = (0..n)
            .filter(|&i| {
                !same(
                    &score::score(cand(i), spectrum, model, cutoff),
                    &prepared.score(cand(i), cutoff),
                )
            })
            .count();
        println!("cutoff {cutoff:.3}: Prepared::score differs from score::score on {bad} of {n}");
    }

    println!(
        "single thread, µs per candidate, predictions in cache (wall, {CHUNK}-candidate chunks):"
    );
    for cutoff in [f64::INFINITY, ranking_cutoff] {
        let a = time_hot(n, warm, |i| {
            score::score(cand(i), spectrum, model, cutoff).is_some()
        });
        let b = time_hot(n, warm, |i| prepared.score(cand(i), cutoff).is_some());
        let c = time_hot(n, warm, |i| prepared.may_beat(groups(i), cutoff));
        let q = time_hot(n, warm, |i| prepared.may_beat_quick(groups(i), cutoff));
        let d = time_hot(n, warm, |i| {
            prepared.may_beat(groups(i), cutoff) && prepared.score(cand(i), cutoff).is_some()
        });
        println!(
            "  cutoff {cutoff:>7.3}: score::score {a:6.3}, Prepared::score {b:6.3}, may_beat {c:6.3}, may_beat_quick {q:6.3}, may_beat then score {d:6.3}"
        );
    }
    println!("single thread, µs per candidate, streaming over all stored predictions (wall / thread CPU):");
    for cutoff in [f64::INFINITY, ranking_cutoff] {
        let (w, c, hits) = time(n, |i| {
            score::score(cand(i), spectrum, model, cutoff).is_some()
        });
        println!(
            "  score::score          cutoff {cutoff:>7.3}: {w:6.3} / {c:6.3}  ({hits} scored)"
        );
        let (w, c, hits) = time(n, |i| prepared.score(cand(i), cutoff).is_some());
        println!(
            "  Prepared::score       cutoff {cutoff:>7.3}: {w:6.3} / {c:6.3}  ({hits} scored)"
        );
        let (w, c, hits) = time(n, |i| prepared.may_beat(groups(i), cutoff));
        println!(
            "  Prepared::may_beat    cutoff {cutoff:>7.3}: {w:6.3} / {c:6.3}  ({hits} may beat)"
        );
        let (w, c, hits) = time(n, |i| prepared.may_beat_quick(groups(i), cutoff));
        println!(
            "  may_beat_quick        cutoff {cutoff:>7.3}: {w:6.3} / {c:6.3}  ({hits} may beat)"
        );
    }
    // What a ranking would do at that cutoff with may_beat first: the
    // exact score only for the candidates the bound lets through.
    let (w, c, hits) = time(n, |i| {
        prepared.may_beat(groups(i), ranking_cutoff)
            && prepared.score(cand(i), ranking_cutoff).is_some()
    });
    println!(
        "  may_beat then score   cutoff {ranking_cutoff:>7.3}: {w:6.3} / {c:6.3}  ({hits} scored)"
    );
}
