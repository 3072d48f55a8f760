//! Benchmark: rank every isomer of C9H10O (about 0.7 million, no plausibility
//! rules) end to end against a peak list, and measure bare enumeration of the
//! same formula in the same run. Prints both times, their ratio (goal: at
//! most 2x) and candidates scored per second.
//!
//! Run: `cargo run --release --example bench_rank [FORMULA]`

use isomerank::chem::{Formula, Molecule};
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
/// (Linux); the machine is shared, so wall time alone is noisy.
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

fn main() {
    let text = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "C9H10O".to_string());
    let formula = Formula::parse(&text).expect("formula");
    let options = enumerate::Options {
        rules: RuleSet::none(),
        ..Default::default()
    };
    let threads = rayon::current_num_threads();

    // Peer: bare enumeration, each isomer converted to a Molecule (the
    // ranker's starting point) and nothing else.
    let (t, c) = (Instant::now(), cpu_seconds());
    let bare = enumerate::for_each_ordered(
        &formula,
        &options,
        |iso| Some(iso.molecule().atom_count()),
        |_| true,
        &mut |_| {},
    )
    .expect("enumeration");
    let t_enum = t.elapsed().as_secs_f64();
    let c_enum = cpu_seconds() - c;

    // Ranking end to end: predict + exact scoring + top-k.
    let spectrum = integrals::build(
        journal::parse(PEAKS).expect("peaks"),
        &formula,
        &SolventTable::embedded(),
    )
    .expect("spectrum");
    let predictor = Predictor::embedded().expect("predictor");
    let mut opts = predictor.options("CDCl3", 400.0).expect("options");
    opts.notes = false;
    let model = ScoringModel::embedded();
    let predict = |m: &Molecule| predictor.predict(m, &opts);
    let settings = Settings {
        spectrum: &spectrum,
        model: &model,
        top: 10,
    };
    // Diagnostic: enumeration plus prediction, no scoring.
    let (t, c) = (Instant::now(), cpu_seconds());
    enumerate::for_each_ordered(
        &formula,
        &options,
        |iso| Some(predict(&iso.molecule()).len()),
        |_| true,
        &mut |_| {},
    )
    .expect("enumeration");
    let t_pred = t.elapsed().as_secs_f64();
    let c_pred = cpu_seconds() - c;

    let (t, c) = (Instant::now(), cpu_seconds());
    let r = rank::with_standard_steps(&predictor, &opts, |steps| {
        rank::rank_formula(&formula, &options, steps, &settings, &mut |_, _| {})
    })
    .expect("ranking");
    let t_rank = t.elapsed().as_secs_f64();
    let c_rank = cpu_seconds() - c;

    println!("formula {formula}, {threads} threads");
    println!(
        "bare enumeration: {} isomers in {t_enum:.2} s (CPU {c_enum:.2} s)",
        bare.isomers
    );
    println!("enumeration + prediction only: {t_pred:.2} s (CPU {c_pred:.2} s)");
    println!(
        "ranking:          {} candidates in {t_rank:.2} s (CPU {c_rank:.2} s; {} skipped by the cutoff before exact assignment)",
        r.considered, r.skipped
    );
    println!(
        "ratio ranking / enumeration: wall {:.2}, CPU {:.2} (goal <= 2)",
        t_rank / t_enum,
        c_rank / c_enum
    );
    println!("candidates per second: {:.0}", r.considered as f64 / t_rank);
    for c in r.candidates.iter().take(3) {
        println!(
            "  #{} {:.3} {:.2} {}",
            c.position, c.probability, c.cost, c.smiles
        );
    }
}
