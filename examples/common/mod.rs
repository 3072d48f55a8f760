//! What the ranking benchmarks and studies share: the default peak list,
//! one setup of formula, spectrum, predictor and model, and CPU-time
//! readers (the machine may be shared, so CPU time is the steadier figure).
//! Included by each example with `mod common;` (Cargo does not build
//! `examples/common/` as an example of its own).
#![allow(dead_code)]

use isomerank::chem::Formula;
use isomerank::enumerate::{self, rules::RuleSet};
use isomerank::predict::{PredictOptions, Predictor};
use isomerank::score::ScoringModel;
use isomerank::spectrum::{integrals, journal, SolventTable, Spectrum};
use std::time::Instant;

/// Propiophenone in CDCl3 (shifts from memory; any C9H10O list would do).
pub const PROPIOPHENONE: &str = "1H NMR (400 MHz, CDCl3) δ 7.96 (m, 2H), 7.55 (m, 1H), \
                                 7.45 (m, 2H), 3.00 (q, J = 7.2 Hz, 2H), 1.22 (t, J = 7.2 Hz, 3H)";

/// A formula, every isomer (no plausibility rules), a spectrum and the
/// ranking's predictor and model.
pub struct Setup {
    pub formula: Formula,
    pub options: enumerate::Options,
    pub spectrum: Spectrum,
    pub predictor: Predictor,
    /// CDCl3, 400 MHz, no note strings (as the ranking predicts).
    pub opts: PredictOptions,
    pub model: ScoringModel,
}

impl Setup {
    /// From the command line: `[FORMULA [PEAKS]]`, by default C9H10O and
    /// [`PROPIOPHENONE`].
    pub fn from_args() -> Setup {
        let mut args = std::env::args().skip(1);
        let formula = args.next().unwrap_or_else(|| "C9H10O".to_string());
        let peaks = args.next().unwrap_or_else(|| PROPIOPHENONE.to_string());
        Setup::new(&formula, &peaks)
    }

    pub fn new(formula: &str, peaks: &str) -> Setup {
        let formula = Formula::parse(formula).expect("formula");
        let spectrum = integrals::build(
            journal::parse(peaks).expect("peaks"),
            &formula,
            &SolventTable::embedded(),
        )
        .expect("spectrum");
        let predictor = Predictor::embedded().expect("predictor");
        let mut opts = predictor.options("CDCl3", 400.0).expect("options");
        opts.notes = false;
        Setup {
            formula,
            options: enumerate::Options {
                rules: RuleSet::none(),
                ..Default::default()
            },
            spectrum,
            predictor,
            opts,
            model: ScoringModel::embedded(),
        }
    }
}

/// CPU time, seconds, from a Linux /proc stat file: utime and stime, the
/// 14th and 15th fields (counted after the parenthesised command name).
fn cpu_from(path: &str) -> f64 {
    let stat = std::fs::read_to_string(path).unwrap_or_default();
    let rest = stat.rsplit(')').next().unwrap_or("");
    let f: Vec<&str> = rest.split_whitespace().collect();
    let ticks: f64 = f.get(11).and_then(|x| x.parse().ok()).unwrap_or(0.0)
        + f.get(12).and_then(|x| x.parse().ok()).unwrap_or(0.0);
    ticks / 100.0
}

/// CPU time of this process (all threads), seconds.
pub fn process_cpu_seconds() -> f64 {
    cpu_from("/proc/self/stat")
}

/// CPU time of the calling thread, seconds.
pub fn thread_cpu_seconds() -> f64 {
    cpu_from("/proc/thread-self/stat")
}

/// Best (wall, process CPU) seconds of `reps` runs of `f`, and its last
/// result.
pub fn best<T>(reps: usize, mut f: impl FnMut() -> T) -> (f64, f64, T) {
    let (mut wall, mut cpu) = (f64::INFINITY, f64::INFINITY);
    let mut out = None;
    for _ in 0..reps.max(1) {
        let (t, c) = (Instant::now(), process_cpu_seconds());
        out = Some(f());
        wall = wall.min(t.elapsed().as_secs_f64());
        cpu = cpu.min(process_cpu_seconds() - c);
    }
    (wall, cpu, out.expect("at least one run"))
}

/// The CPU's model name as /proc/cpuinfo gives it.
pub fn cpu_model() -> String {
    std::fs::read_to_string("/proc/cpuinfo")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("model name"))
                .and_then(|l| l.split(':').nth(1))
                .map(|m| m.trim().to_string())
        })
        .unwrap_or_else(|| "unknown CPU".into())
}

/// Runs per measurement (`REPS`, default 3) and the part to run alone
/// (`ONLY`, empty for all): the benchmarks' environment switches.
pub fn reps_and_only() -> (usize, String) {
    let reps = std::env::var("REPS")
        .ok()
        .and_then(|r| r.parse().ok())
        .unwrap_or(3usize)
        .max(1);
    (reps, std::env::var("ONLY").unwrap_or_default())
}
