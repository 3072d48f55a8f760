//! The full run behind `tests/rank_nmrshiftdb.rs`: every NMRShiftDB2 dev
//! compound (tests/data/nmrshiftdb2-v2-dev.toml) within reach of full
//! enumeration, ranked with its 1H list (when it has one) and its 13C list
//! as a user would; prints one line per compound and top-1/3/10.
//!
//! ```sh
//! cargo run --release --example rank_nmrshiftdb            # up to 8 heavy atoms
//! cargo run --release --example rank_nmrshiftdb -- 9 all   # up to 9, 13C-only cases too
//! ```
//!
//! "Within reach" is a heavy-atom limit (first argument, default 8): every
//! isomer of such a formula is enumerated and scored in seconds. By default
//! only cases with a 1H list are ranked; `all` adds the 13C-only cases.

#[path = "common/nmrshiftdb.rs"]
mod nmrshiftdb;

use isomerank::predict::Predictor;
use isomerank::score::ScoringModel;
use nmrshiftdb::{cases, rank_case, summary};

fn main() {
    let mut args = std::env::args().skip(1);
    let max_heavy: u32 = args
        .next()
        .map(|a| a.parse().expect("heavy-atom limit"))
        .unwrap_or(8);
    let all = args.next().is_some_and(|a| a == "all");
    let predictor = Predictor::embedded().expect("predictor");
    let model = ScoringModel::embedded();
    let selected: Vec<_> = cases()
        .into_iter()
        .filter(|c| c.heavy_atoms <= max_heavy && (all || !c.peaks.is_empty()))
        .collect();
    println!(
        "NMRShiftDB2 dev split, {} compounds of at most {max_heavy} heavy atoms{}",
        selected.len(),
        if all { "" } else { " with a 1H list" }
    );
    let mut outcomes = Vec::new();
    for c in &selected {
        let o = rank_case(c, &predictor, &model, 10);
        println!("{}", o.line(&c.smiles));
        outcomes.push(o);
    }
    let (n, t1, t3, t10) = summary(&outcomes);
    let pct = |k: usize| 100.0 * k as f64 / n.max(1) as f64;
    println!(
        "ranked {n} (refused {}): first {t1} ({:.1} %), top 3 {t3} ({:.1} %), top 10 {t10} ({:.1} %)",
        outcomes.len() - n,
        pct(t1),
        pct(t3),
        pct(t10)
    );
}
