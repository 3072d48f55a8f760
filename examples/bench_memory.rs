//! Peak memory of long runs stopped by the time cap: `rank C12H14O2` (the
//! default plausibility rules, a C12H14O2 peak list) and `isomers C30H62
//! --count`, each for SECONDS (default 60) in a process of its own, peak
//! resident memory read from /proc/self/status (VmHWM). The documented bound
//! (README, DEVELOPERS.md) is 64 MB for both (measured 2026-12-02: 13.6 MB
//! and 15.5 MB; the C30 count took 141 MB while the generator listed whole
//! automorphism groups, DEVELOPERS.md "Long runs").
//!
//! `cargo run --release --example bench_memory [SECONDS]`

mod common;

use common::Setup;
use isomerank::enumerate::{self, rules::RuleSet, Limits};
use isomerank::rank::{self, Settings};
use std::time::{Duration, Instant};

/// Ethyl 4-methylcinnamate in CDCl3 (shifts from memory): a C12H14O2 list.
const C12H14O2_PEAKS: &str = "1H NMR (400 MHz, CDCl3) δ 7.66 (d, J = 16.0 Hz, 1H), \
    7.42 (d, J = 8.0 Hz, 2H), 7.19 (d, J = 8.0 Hz, 2H), 6.39 (d, J = 16.0 Hz, 1H), \
    4.26 (q, J = 7.1 Hz, 2H), 2.37 (s, 3H), 1.33 (t, J = 7.1 Hz, 3H)";

fn peak_mb() -> f64 {
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    status
        .lines()
        .find_map(|l| l.strip_prefix("VmHWM:"))
        .and_then(|v| v.trim().trim_end_matches("kB").trim().parse::<f64>().ok())
        .map_or(f64::NAN, |kb| kb / 1024.0)
}

fn limits(secs: f64) -> Limits {
    Limits {
        max_candidates: None,
        deadline: Some(Instant::now() + Duration::from_secs_f64(secs)),
        default_cap: false,
    }
}

fn main() {
    let mut args = std::env::args().skip(1);
    let first = args.next();
    let secs: f64 = match first.as_deref() {
        Some("rank") | Some("isomers") => args.next(),
        _ => first.clone(),
    }
    .and_then(|s| s.parse().ok())
    .unwrap_or(60.0);
    match first.as_deref() {
        Some("rank") => {
            let mut setup = Setup::new("C12H14O2", C12H14O2_PEAKS);
            setup.options.rules = RuleSet::all();
            setup.options.limits = limits(secs);
            let settings = Settings {
                spectrum: &setup.spectrum,
                carbon: None,
                model: &setup.model,
                top: 10,
            };
            let r = rank::with_standard_steps(&setup.predictor, &setup.opts, |steps| {
                rank::rank_formula(
                    &setup.formula,
                    &setup.options,
                    steps,
                    &settings,
                    &mut |_, _| {},
                )
            })
            .expect("ranking");
            println!(
                "rank C12H14O2, {secs} s: {} candidates, {:.2}% of the search, peak memory {:.1} MB",
                r.considered,
                r.coverage.share * 100.0,
                peak_mb()
            );
        }
        Some("isomers") => {
            let formula = isomerank::chem::Formula::parse("C30H62").expect("formula");
            let opts = enumerate::Options {
                limits: limits(secs),
                ..Default::default()
            };
            let s = enumerate::count_summary(&formula, &opts, &mut |_| {}).expect("count");
            println!(
                "isomers C30H62 --count, {secs} s: {} isomers, peak memory {:.1} MB",
                s.isomers,
                peak_mb()
            );
        }
        _ => {
            println!("machine: {}", common::cpu_model());
            let me = std::env::current_exe().expect("own path");
            for what in ["rank", "isomers"] {
                let out = std::process::Command::new(&me)
                    .args([what, &secs.to_string()])
                    .output()
                    .expect("run");
                print!("{}", String::from_utf8_lossy(&out.stdout));
            }
        }
    }
}
