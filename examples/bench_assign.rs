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
//!   20 groups, 14 of them alike), the case reported slow;
//! * 13C: M lines at distinct shifts (10-210 ppm, an H count on each, a
//!   carbon count of 2 on some) and M predicted carbon classes, each near its
//!   own line, through the ranking's 13C scorer (`CarbonPrepared::score`:
//!   the pair costs and the same search; invented lists, seeded).
//!
//! The previous search runs only while its time per candidate stayed below
//! `OLD_CAP_S` at the smaller sizes (it grows too fast to wait for). Each
//! figure is the time per candidate over all instances of one size, the
//! median of five rounds of at least 0.1 s (a shared machine's load moves
//! single rounds by 2x); each series ends with the ratio of the time at
//! M = 30 to the time at M = 5. `WHOLE=1` searches every problem whole
//! (without the split into independent parts, `score::split`);
//! `EXCHANGE=0` without exchange dominance (`score::assign`, item 6).
//!
//! Run: `cargo run --release --example bench_assign`. `NEW_ONLY=1` skips
//! the previous search; `SERIES=realistic,adversarial,13C` picks series and
//! `SIZES=5,30` sizes (for profiling one of them); `TUNING=S,L` makes the Lagrangian bound join after
//! S nodes and the line bound after L (`assign::Tuning`; the result is the
//! same, only the time differs). `DIGEST=1` ends each row with a hash of
//! every instance's optimum (the cost's bits and the assignment; for 13C
//! also the scorer's), so that two builds can be checked for the same
//! results.

mod common;

use common::cpu_model;
use isomerank::chem::smiles::parse_smiles;
use isomerank::chem::Formula;
use isomerank::predict::{Multiplicity, PredictedCarbon, PredictedSignal, Predictor};
use isomerank::score::assign::{self, Costs, Tuning, Workspace};
use isomerank::score::{self, assign_reference, CarbonPrepared, ScoringModel};
use isomerank::spectrum::{carbon, integrals, journal, CarbonSpectrum, SolventTable, Spectrum};
use std::time::Instant;

/// Stop timing the previous search once one size took this long per
/// candidate.
const OLD_CAP_S: f64 = 2.0;

/// The sizes (observed multiplets) timed by default.
const ALL_SIZES: [usize; 8] = [5, 10, 15, 20, 25, 30, 35, 40];

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
            halves: false,
            geminal_hz: 0.0,
            half_pattern: None,
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

/// Seconds per solve over `instances`: the median of five rounds, each
/// repeated until 0.1 s passed (at least once each; the median keeps other
/// programs' load on a shared machine out of the figure), the total search
/// nodes of one pass, and the costs.
fn time(instances: &[Costs], solve: impl Fn(&Costs) -> (f64, u64)) -> (f64, u64, Vec<f64>) {
    let (mut nodes, mut costs) = (0, vec![]);
    let per = median_of_rounds(|| {
        nodes = 0;
        costs.clear();
        for c in instances {
            let (cost, n) = solve(c);
            nodes += n;
            costs.push(cost);
        }
        instances.len()
    });
    (per, nodes, costs)
}

/// The median over five rounds of the seconds per item of `pass` (which
/// returns how many items it did), each round repeating it until 0.1 s
/// passed.
fn median_of_rounds(mut pass: impl FnMut() -> usize) -> f64 {
    let mut rounds: Vec<f64> = (0..5)
        .map(|_| {
            let start = Instant::now();
            let mut items = 0;
            while items == 0 || start.elapsed().as_secs_f64() < 0.1 {
                items += pass();
            }
            start.elapsed().as_secs_f64() / items as f64
        })
        .collect();
    rounds.sort_by(f64::total_cmp);
    rounds[2]
}

/// When the stronger bounds join: `TUNING=S,L`, else the default.
fn tuning() -> Tuning {
    let split = std::env::var_os("WHOLE").is_none();
    let exchange = std::env::var("EXCHANGE").map_or(true, |v| v != "0");
    let Ok(text) = std::env::var("TUNING") else {
        return Tuning {
            split,
            exchange,
            ..Tuning::default()
        };
    };
    let v: Vec<u64> = text
        .split(',')
        .map(|x| x.trim().parse().expect("TUNING=S,L (two node counts)"))
        .collect();
    assert_eq!(v.len(), 2, "TUNING=S,L (two node counts)");
    Tuning {
        strong_after: v[0],
        lines_after: v[1],
        split,
        exchange,
    }
}

fn new(c: &Costs) -> (f64, u64) {
    let mut ws = Workspace::default();
    let cost = assign::solve_tuned(&c.view(), f64::INFINITY, &mut ws, tuning()).expect("optimum");
    (cost, ws.nodes())
}

fn old(c: &Costs) -> (f64, u64) {
    let s = assign_reference::solve(c, f64::INFINITY).expect("optimum");
    (s.cost, s.nodes)
}

/// FNV-1a over 64-bit words.
fn fnv(hash: &mut u64, word: u64) {
    for b in word.to_le_bytes() {
        *hash ^= u64::from(b);
        *hash = hash.wrapping_mul(0x100_0000_01b3);
    }
}

/// With `DIGEST=1`: a hash of the optimum (cost bits and assignment) of
/// every instance, printed at the end of a row.
fn digest(instances: &[Costs]) -> String {
    if std::env::var_os("DIGEST").is_none() {
        return String::new();
    }
    let mut hash = 0xcbf2_9ce4_8422_2325u64;
    for c in instances {
        let mut ws = Workspace::default();
        let cost = assign::solve_tuned(&c.view(), f64::INFINITY, &mut ws, tuning());
        fnv(&mut hash, cost.map_or(u64::MAX, f64::to_bits));
        for &j in ws.choice() {
            fnv(&mut hash, u64::from(j));
        }
    }
    format!("  digest {hash:016x}")
}

/// Print one row of a series (no line end): the new search and, while under
/// the cap, the old one (checking that both find the same optimum); the new
/// search's time per candidate.
fn row(m: usize, instances: &[Costs], old_on: &mut bool) -> f64 {
    let (t_new, n_new, c_new) = time(instances, new);
    let old_text = if *old_on {
        let (t_old, n_old, c_old) = time(instances, old);
        for (a, b) in c_new.iter().zip(&c_old) {
            assert!((a - b).abs() < 1e-9, "optimum differs: {a} vs {b}");
        }
        *old_on = t_old < OLD_CAP_S;
        format!(
            "{:>12.4} ms {:>12} nodes",
            t_old * 1e3,
            n_old / instances.len() as u64
        )
    } else {
        format!("{:>15} {:>18}", "not run", "")
    };
    print!(
        "{m:>3} {:>4} {:>10.4} ms {:>8} nodes   {old_text}{}",
        instances[0].groups,
        t_new * 1e3,
        n_new / instances.len() as u64,
        digest(instances)
    );
    t_new
}

/// The ratio line that ends a series: time at M = 30 over time at M = 5.
fn ratio(times: &[(usize, f64)]) {
    let at = |m| times.iter().find(|x| x.0 == m).map(|x| x.1);
    if let (Some(a), Some(b)) = (at(5), at(30)) {
        println!("  ratio M = 30 / M = 5: {:.1}", b / a);
    }
}

/// A 13C instance: `m` lines at distinct shifts with DEPT H counts (a
/// carbon count of 2 on about one line in five, so the list counts carbons)
/// and as many predicted classes, each within 4 ppm of its own line, with
/// the same carbons and mostly the same H.
fn carbon_instance(m: usize, st: &mut u64) -> (CarbonSpectrum, Vec<PredictedCarbon>) {
    let kinds = ["C", "CH", "CH2", "CH3"];
    let mut lines = vec![];
    let mut predicted = vec![];
    for i in 0..m {
        let shift = 10.0 + 200.0 * (i as f64 + 0.2 + 0.6 * rng(st)) / m as f64;
        let hydrogens = (rng(st) * 4.0) as u8 % 4;
        let carbons = if rng(st) < 0.2 { 2 } else { 1 };
        let count = if carbons == 2 { ", 2C" } else { "" };
        lines.push(format!("{shift:.1} ({}{count})", kinds[hydrogens as usize]));
        let predicted_h = if rng(st) < 0.85 {
            hydrogens
        } else {
            (hydrogens + 1) % 4
        };
        predicted.push(PredictedCarbon {
            shift: shift + (rng(st) - 0.5) * 8.0,
            sigma: 3.0,
            carbons,
            hydrogens: predicted_h,
            atoms: vec![i],
            halves: false,
        });
    }
    let raw = carbon::parse(&lines.join(", ")).expect("13C list");
    let spectrum = carbon::build(
        raw,
        &Formula::parse("C90H182").unwrap(),
        &SolventTable::embedded(),
        "CDCl3",
    )
    .expect("13C spectrum");
    (spectrum, predicted)
}

/// The search's numbers of a 13C instance, as `CarbonPrepared` fills them
/// (the cost terms of `score::carbon`).
fn carbon_costs(
    spectrum: &CarbonSpectrum,
    predicted: &[PredictedCarbon],
    model: &ScoringModel,
) -> Costs {
    let lines = &spectrum.lines;
    Costs {
        groups: predicted.len(),
        multiplets: lines.len(),
        pair: predicted
            .iter()
            .flat_map(|p| {
                lines
                    .iter()
                    .map(|l| score::carbon::pair_cost(model, p, l).total())
            })
            .collect(),
        unassigned: predicted
            .iter()
            .map(|p| score::carbon::unassigned_cost(model, p))
            .collect(),
        hydrogens: predicted.iter().map(|p| p.carbons).collect(),
        observed_h: lines.iter().map(|l| l.count.map(f64::from)).collect(),
        empty: lines
            .iter()
            .map(|l| score::carbon::empty_cost(model, l))
            .collect(),
        overlap: vec![model.carbon.overlap; lines.len()],
        abs_sigma: model.carbon.count_sigma,
        rel_sigma: 0.0,
    }
}

/// Seconds per 13C candidate (the ranking's scorer: pair costs and
/// search) over the instances, the median of five rounds.
fn time_carbon(instances: &[(CarbonSpectrum, Vec<PredictedCarbon>)], model: &ScoringModel) -> f64 {
    let prepared: Vec<CarbonPrepared> = instances
        .iter()
        .map(|(s, _)| CarbonPrepared::new(s, model))
        .collect();
    if std::env::var_os("DIGEST").is_some() {
        let mut hash = 0xcbf2_9ce4_8422_2325u64;
        for (p, (_, predicted)) in prepared.iter().zip(instances) {
            let s = p.score(predicted, f64::INFINITY).expect("optimum");
            fnv(&mut hash, s.cost.to_bits());
            for a in &s.assigned {
                fnv(&mut hash, a.map_or(u64::MAX, |x| x as u64));
            }
        }
        print!("  scorer digest {hash:016x}");
    }
    median_of_rounds(|| {
        for (p, (_, predicted)) in prepared.iter().zip(instances) {
            p.score(predicted, f64::INFINITY).expect("optimum");
        }
        instances.len()
    })
}

fn main() {
    let model = ScoringModel::embedded();
    println!(
        "machine: {}, {} threads available, one used",
        cpu_model(),
        num_cpus()
    );
    println!("time per candidate (mean), new search beside the previous one (skipped once above {OLD_CAP_S} s)");
    let sizes: Vec<usize> = match std::env::var("SIZES") {
        Ok(t) => t
            .split(',')
            .map(|x| x.trim().parse().expect("SIZES=5,30 (multiplet counts)"))
            .collect(),
        Err(_) => ALL_SIZES.to_vec(),
    };
    let series = std::env::var("SERIES").unwrap_or_default();
    let on = |name: &str| series.is_empty() || series.split(',').any(|s| s == name);

    if on("realistic") {
        println!("\nrealistic: M distinct-shift multiplets, M groups (20 instances per size)");
        println!("  M    G        new            nodes            old              nodes");
        let mut old_on = std::env::var_os("NEW_ONLY").is_none();
        let mut st = 0x2545_f491_4f6c_dd1du64;
        let mut times = vec![];
        for &m in &ALL_SIZES {
            // Every size's instances are drawn, so a size has the same ones
            // whatever SIZES picks.
            let instances: Vec<Costs> = (0..20).map(|_| realistic(m, &mut st, &model)).collect();
            if !sizes.contains(&m) {
                continue;
            }
            times.push((m, row(m, &instances, &mut old_on)));
            println!();
        }
        ratio(&times);
    }

    if on("adversarial") {
        println!("\nadversarial: M x \"1.30 (m, 1H)\" against CCCCCCCCC(C)CCCCCC(C)CCC (predicted, CDCl3, 400 MHz)");
        println!("  M    G        new            nodes            old              nodes");
        let predictor = Predictor::embedded().expect("predictor");
        let opts = predictor.options("CDCl3", 400.0).expect("options");
        let mol = parse_smiles("CCCCCCCCC(C)CCCCCC(C)CCC").expect("SMILES");
        let predicted = predictor.predict(&mol, &opts);
        let mut old_on = std::env::var_os("NEW_ONLY").is_none();
        let mut times = vec![];
        for &m in &sizes {
            times.push((
                m,
                row(m, &[adversarial(m, &predicted, &model)], &mut old_on),
            ));
            println!();
        }
        ratio(&times);
    }

    if on("13C") {
        println!("\n13C: M distinct-shift lines, M predicted classes (20 instances per size); the search alone, then the ranking's scorer (pair costs and search)");
        println!(
            "  M    G        new            nodes            old              nodes      scorer"
        );
        let mut st = 0x9e37_79b9_7f4a_7c15u64;
        let (mut times, mut scorer) = (vec![], vec![]);
        let mut old_on = std::env::var_os("NEW_ONLY").is_none();
        for &m in &ALL_SIZES {
            let instances: Vec<_> = (0..20).map(|_| carbon_instance(m, &mut st)).collect();
            if !sizes.contains(&m) {
                continue;
            }
            let costs: Vec<Costs> = instances
                .iter()
                .map(|(s, p)| carbon_costs(s, p, &model))
                .collect();
            times.push((m, row(m, &costs, &mut old_on)));
            let t = time_carbon(&instances, &model);
            println!(" {:>8.4} ms", t * 1e3);
            scorer.push((m, t));
        }
        ratio(&times);
        print!("  scorer:");
        ratio(&scorer);
    }
}

fn num_cpus() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get())
}
