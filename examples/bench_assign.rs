//! Benchmark of the exact assignment search alone: time per candidate
//! against the number of observed multiplets (5 to 40), the current search
//! (`score::assign`) beside the previous one (`score::assign_reference`) in
//! the same run, on two kinds of instance built with the real cost model
//! (`score::costs`):
//!
//! * realistic: M multiplets at distinct shifts (1-3 H each, s/d/t/q/m/dd)
//!   and M predicted groups, each near one of them (invented lists, seeded);
//! * adversarial: M equal-shift one-proton `m` lines ("1.30 (m, 1H)")
//!   against the predicted spectrum of `CCCCCCCCC(C)CCCCCC(C)CCC` (C20H42,
//!   20 groups, 14 of them alike), the case reported slow.
//!
//! The previous search runs only while its time per candidate stayed below
//! `OLD_CAP_S` at the smaller sizes (it grows too fast to wait for). Each
//! figure is the mean over the instances (and repeats) of one size.
//!
//! Run: `cargo run --release --example bench_assign`

mod common;

use common::cpu_model;
use isomerank::chem::smiles::parse_smiles;
use isomerank::chem::Formula;
use isomerank::predict::{Multiplicity, PredictedSignal, Predictor};
use isomerank::score::assign::{self, Costs};
use isomerank::score::{self, assign_reference, ScoringModel};
use isomerank::spectrum::{integrals, journal, SolventTable, Spectrum};
use std::time::Instant;

/// Stop timing the previous search once one size took this long per
/// candidate.
const OLD_CAP_S: f64 = 2.0;

/// Small deterministic pseudo-random numbers (xorshift) in [0, 1).
fn rng(state: &mut u64) -> f64 {
    *state ^= *state << 13;
    *state ^= *state >> 7;
    *state ^= *state << 17;
    (*state % 10_000) as f64 / 10_000.0
}

fn spectrum(text: &str) -> Spectrum {
    integrals::build(
        journal::parse(text).expect("peaks"),
        &Formula::parse("C80H162").unwrap(),
        &SolventTable::embedded(),
    )
    .expect("spectrum")
}

/// A realistic instance: `m` multiplets at distinct shifts and as many
/// predicted groups, each within 0.25 ppm of its own multiplet, with the
/// same H count and mostly the same pattern.
fn realistic(m: usize, st: &mut u64, model: &ScoringModel) -> Costs {
    let patterns: [(&str, Multiplicity); 6] = [
        ("s", Multiplicity::Singlet),
        ("d", Multiplicity::Coupled(vec![1])),
        ("t", Multiplicity::Coupled(vec![2])),
        ("q", Multiplicity::Coupled(vec![3])),
        ("m", Multiplicity::Multiplet),
        ("dd", Multiplicity::Coupled(vec![1, 1])),
    ];
    let mut lines = vec![];
    let mut predicted = vec![];
    for i in 0..m {
        let shift = 0.8 + 7.5 * (i as f64 + 0.2 + 0.6 * rng(st)) / m as f64;
        let h = 1 + (rng(st) * 3.0) as u32;
        let (label, mult) = &patterns[(rng(st) * 6.0) as usize % 6];
        let j = match label {
            &"s" | &"m" => String::new(),
            &"dd" => "J = 8.0, 1.5 Hz, ".to_string(),
            _ => "J = 7.1 Hz, ".to_string(),
        };
        lines.push(format!("{shift:.2} ({label}, {j}{h}H)"));
        let (mult, j_hz) = if rng(st) < 0.8 {
            let j_hz = match label {
                &"s" | &"m" => vec![],
                &"dd" => vec![8.0, 1.5],
                _ => vec![7.0],
            };
            (mult.clone(), j_hz)
        } else {
            (Multiplicity::Multiplet, vec![])
        };
        predicted.push(PredictedSignal {
            shift: shift + (rng(st) - 0.5) * 0.5,
            sigma: 0.2,
            hydrogens: h,
            multiplicity: mult,
            j_hz,
            atoms: vec![i],
            exchangeable: false,
            notes: vec![],
        });
    }
    let spectrum = spectrum(&lines.join(", "));
    score::costs(&predicted, &spectrum, model)
}

/// The adversarial instance: `predicted` against `m` lines "1.30 (m, 1H)".
fn adversarial(m: usize, predicted: &[PredictedSignal], model: &ScoringModel) -> Costs {
    let text = vec!["1.30 (m, 1H)"; m].join(", ");
    score::costs(predicted, &spectrum(&text), model)
}

/// Mean seconds per solve over `instances`, repeated until 0.2 s passed
/// (at least once each), the total search nodes of one pass, and the costs.
fn time(instances: &[Costs], solve: impl Fn(&Costs) -> (f64, u64)) -> (f64, u64, Vec<f64>) {
    let start = Instant::now();
    let mut passes = 0;
    let (mut nodes, mut costs) = (0, vec![]);
    while passes == 0 || start.elapsed().as_secs_f64() < 0.2 {
        nodes = 0;
        costs.clear();
        for c in instances {
            let (cost, n) = solve(c);
            nodes += n;
            costs.push(cost);
        }
        passes += 1;
    }
    let per = start.elapsed().as_secs_f64() / (passes * instances.len()) as f64;
    (per, nodes, costs)
}

fn new(c: &Costs) -> (f64, u64) {
    let s = assign::solve(c, f64::INFINITY).expect("optimum");
    (s.cost, s.nodes)
}

fn old(c: &Costs) -> (f64, u64) {
    let s = assign_reference::solve(c, f64::INFINITY).expect("optimum");
    (s.cost, s.nodes)
}

/// Print one row of a series: the new search and, while under the cap, the
/// old one (checking that both find the same optimum).
fn row(m: usize, instances: &[Costs], old_on: &mut bool) {
    let (t_new, n_new, c_new) = time(instances, new);
    let old_text = if *old_on {
        let (t_old, n_old, c_old) = time(instances, old);
        for (a, b) in c_new.iter().zip(&c_old) {
            assert!((a - b).abs() < 1e-9, "optimum differs: {a} vs {b}");
        }
        *old_on = t_old < OLD_CAP_S;
        format!(
            "{:>12.3} ms {:>12} nodes",
            t_old * 1e3,
            n_old / instances.len() as u64
        )
    } else {
        format!("{:>15} {:>18}", "not run", "")
    };
    println!(
        "{m:>3} {:>4} {:>10.3} ms {:>8} nodes   {old_text}",
        instances[0].groups,
        t_new * 1e3,
        n_new / instances.len() as u64
    );
}

fn main() {
    let model = ScoringModel::embedded();
    println!(
        "machine: {}, {} threads available, one used",
        cpu_model(),
        num_cpus()
    );
    println!("time per candidate (mean), new search beside the previous one (skipped once above {OLD_CAP_S} s)");
    let sizes = [5, 10, 15, 20, 25, 30, 35, 40];

    println!("\nrealistic: M distinct-shift multiplets, M groups (20 instances per size)");
    println!("  M    G        new            nodes            old              nodes");
    let mut old_on = std::env::var_os("NEW_ONLY").is_none();
    let mut st = 0x2545_f491_4f6c_dd1du64;
    for &m in &sizes {
        let instances: Vec<Costs> = (0..20).map(|_| realistic(m, &mut st, &model)).collect();
        row(m, &instances, &mut old_on);
    }

    println!("\nadversarial: M x \"1.30 (m, 1H)\" against CCCCCCCCC(C)CCCCCC(C)CCC (predicted, CDCl3, 400 MHz)");
    println!("  M    G        new            nodes            old              nodes");
    let predictor = Predictor::embedded().expect("predictor");
    let opts = predictor.options("CDCl3", 400.0).expect("options");
    let mol = parse_smiles("CCCCCCCCC(C)CCCCCC(C)CCC").expect("SMILES");
    let predicted = predictor.predict(&mol, &opts);
    let mut old_on = std::env::var_os("NEW_ONLY").is_none();
    for &m in &sizes {
        row(m, &[adversarial(m, &predicted, &model)], &mut old_on);
    }
}

fn num_cpus() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get())
}
