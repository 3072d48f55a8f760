//! The full run behind `tests/rank_nmrshiftdb.rs`: every NMRShiftDB2 dev
//! compound (tests/data/nmrshiftdb2-v2-dev.toml) within reach of full
//! enumeration, ranked with its 1H list (when it has one) and its 13C list
//! as a user would; prints one line per compound and top-1/3/10.
//!
//! ```sh
//! cargo run --release --example rank_nmrshiftdb            # up to 8 heavy atoms
//! cargo run --release --example rank_nmrshiftdb -- 9 all   # up to 9, 13C-only cases too
//! cargo run --release --example rank_nmrshiftdb -- 11-14    # real-size unknowns
//! ```
//!
//! The first argument is a heavy-atom limit (`MAX`, default 8) or range
//! (`MIN-MAX`). The 13C list bounds the search as `rank --carbon` does by
//! default, which is what brings 10-16 heavy atoms within reach. By default
//! only cases with a 1H list are ranked; `all` adds the 13C-only cases. The
//! last line gives the median time per compound as well.
//!
//! Held-out runs (fragment-library/README.md, "Held-out ranking"):
//! `LIBRARY=DIR` reads the fragment-library files found in DIR instead of
//! the embedded ones (tables written by `scripts/fit_carbon.py --write
//! --half even --out DIR`, no rebuild), and `IDS=odd` (or `even`) ranks only
//! the compounds with an odd (even) record id.

#[path = "common/nmrshiftdb.rs"]
mod nmrshiftdb;

use isomerank::predict::Predictor;
use isomerank::score::ScoringModel;
use nmrshiftdb::{cases, rank_case, summary};
use std::io::Write;

/// Each compound's search stops after this long (the issue's goal: at most
/// 60 s per compound on the 2-core machine).
const LIMIT: std::time::Duration = std::time::Duration::from_secs(60);

fn main() {
    let mut args = std::env::args().skip(1);
    let (min_heavy, max_heavy): (u32, u32) = match args.next() {
        None => (0, 8),
        Some(a) => match a.split_once('-') {
            Some((lo, hi)) => (
                lo.parse().expect("heavy-atom range MIN-MAX"),
                hi.parse().expect("heavy-atom range MIN-MAX"),
            ),
            None => (0, a.parse().expect("heavy-atom limit")),
        },
    };
    let all = args.next().is_some_and(|a| a == "all");
    let predictor = match std::env::var_os("LIBRARY") {
        Some(dir) => Predictor::from_dir(std::path::Path::new(&dir)).expect("LIBRARY folder"),
        None => Predictor::embedded().expect("predictor"),
    };
    let parity: Option<u64> = std::env::var("IDS").ok().map(|p| match p.as_str() {
        "even" => 0,
        "odd" => 1,
        _ => panic!("IDS must be even or odd"),
    });
    let model = ScoringModel::embedded();
    let selected: Vec<_> = cases()
        .into_iter()
        .filter(|c| {
            (min_heavy..=max_heavy).contains(&c.heavy_atoms)
                && (all || !c.peaks.is_empty())
                && parity.is_none_or(|p| c.id % 2 == p)
        })
        .collect();
    println!(
        "NMRShiftDB2 dev split, {} compounds of {min_heavy} to {max_heavy} heavy atoms{}",
        selected.len(),
        if all { "" } else { " with a 1H list" }
    );
    // RANK_NMRSHIFTDB_TSV=FILE: one tab-separated row per compound as well.
    let mut tsv = std::env::var_os("RANK_NMRSHIFTDB_TSV").map(|p| {
        let mut f = std::fs::File::create(&p).expect("create the TSV file");
        writeln!(f, "{}", nmrshiftdb::Outcome::TSV_HEADER).expect("write");
        f
    });
    let mut outcomes = Vec::new();
    for c in &selected {
        let o = rank_case(c, &predictor, &model, 10, Some(LIMIT));
        println!("{}", o.line(&c.smiles));
        if let Some(f) = &mut tsv {
            writeln!(f, "{}", o.tsv(&c.smiles)).expect("write");
        }
        outcomes.push(o);
    }
    let (n, t1, t3, t10) = summary(&outcomes);
    let partial = outcomes
        .iter()
        .filter(|o| o.refused.is_none() && !o.complete)
        .count();
    let mut times: Vec<f64> = outcomes.iter().map(|o| o.seconds).collect();
    times.sort_by(f64::total_cmp);
    let median = times.get(times.len() / 2).copied().unwrap_or(0.0);
    let slowest = times.last().copied().unwrap_or(0.0);
    let pct = |k: usize| 100.0 * k as f64 / n.max(1) as f64;
    println!(
        "ranked {n} (refused {}): first {t1} ({:.1} %), top 3 {t3} ({:.1} %), top 10 {t10} ({:.1} %); median {median:.2} s, slowest {slowest:.1} s; {partial} stopped at the {}-s limit",
        outcomes.len() - n,
        pct(t1),
        pct(t3),
        pct(t10),
        LIMIT.as_secs()
    );
}
