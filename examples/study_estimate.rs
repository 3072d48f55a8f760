//! How close the isomer-count estimate (Knuth's estimator, Math. Comp. 29
//! (1975) 121, `enumerate::estimate`) comes to the true count, and what it
//! costs. True counts: enumerated here for the smaller formulas; for the
//! large alkanes from OEIS A000602 (number of alkanes CnH2n+2).
//!
//! `cargo run --release --example study_estimate` prints one row per formula.

use isomerank::chem::Formula;
use isomerank::enumerate::{self, Options};
use std::time::Instant;

fn main() {
    // (formula, OEIS count where enumerating here would take too long)
    let cases: &[(&str, Option<u64>)] = &[
        ("C8H8O", None),
        ("C9H10O", None),
        ("C7H8O2", None),
        ("C6H13NO", None),
        ("C11H14", None),
        ("C10H12O", None),
        // OEIS A000602: alkanes with 20, 25 and 30 carbons.
        ("C20H42", Some(366_319)),
        ("C25H52", Some(36_797_588)),
        ("C30H62", Some(4_111_846_763)),
    ];
    println!("formula   true count      estimate        ratio  probes  estimate time");
    for &(f, known) in cases {
        let formula = Formula::parse(f).expect("formula");
        let opts = Options::default();
        let t = Instant::now();
        let e = enumerate::estimate(&formula, &opts).expect("estimate");
        let secs = t.elapsed().as_secs_f64();
        let truth = known.unwrap_or_else(|| enumerate::count(&formula, &opts).expect("count"));
        println!(
            "{f:<9} {truth:>13} {:>13.0} {:>8.3} {:>7} {secs:>8.2} s",
            e.isomers,
            e.isomers / truth as f64,
            e.probes
        );
    }
}
