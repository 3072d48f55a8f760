//! The full run behind `tests/rank_nmrshiftdb.rs`: every NMRShiftDB2 dev
//! compound (tests/data/nmrshiftdb2-v2-dev.toml) within reach of full
//! enumeration, ranked with its 1H list (when it has one) and its 13C list
//! as a user would; prints one line per compound and top-1/3/10.
//!
//! ```sh
//! cargo run --release --example rank_nmrshiftdb            # up to 8 heavy atoms
//! cargo run --release --example rank_nmrshiftdb -- 9 all   # up to 9, 13C-only cases too
//! cargo run --release --example rank_nmrshiftdb -- 11-20 every=5   # real-size sample
//! cargo run --release --example rank_nmrshiftdb -- 11-20 ids=123,456 generation
//! ```
//!
//! The first argument is a heavy-atom limit (`MAX`, default 8) or range
//! (`MIN-MAX`). The 13C list bounds the search as `rank --carbon` does by
//! default, which is what brings 10-20 heavy atoms within reach. By default
//! only cases with a 1H list are ranked. Further arguments, in any order:
//!
//! * `all`: the 13C-only cases too;
//! * `every=N`: a fixed, spread sample: the 1st, (N+1)th, (2N+1)th ... of the
//!   selected compounds in file order (`11-20 every=5` ranks 129 of the 645
//!   compounds of 11-20 heavy atoms with a 1H list);
//! * `ids=A,B,...`: only these compound ids;
//! * `generation`: for each compound, also time the constrained generation
//!   alone (the same options, counting instead of ranking), to tell the
//!   time spent building candidates from the time spent scoring them.
//!
//! The last line gives the median time per compound as well. With
//! `RANK_NMRSHIFTDB_TSV=FILE` one tab-separated row per compound goes to
//! FILE; besides the shared columns it holds the search bounds the 13C list
//! gave (`bounds`, as JSON in the form `tests/reference/check_constraints.py`
//! reads), the time limit's verdict (`complete`), the true structure's 1H
//! and 13C cost scored alone (`truth_alone_1h`, `truth_alone_13c`) and, with
//! `generation`, the
//! generation alone (`generation_s`, `generated`, `generation_complete`).
//! `scripts/classify_realsize.py` reads that file and sorts every miss.
//!
//! Held-out runs (fragment-library/README.md, "Held-out ranking"):
//! `LIBRARY=DIR` reads the fragment-library files found in DIR instead of
//! the embedded ones (tables written by `scripts/fit_carbon.py --write
//! --half even --out DIR`, no rebuild), and `IDS=odd` (or `even`) ranks only
//! the compounds with an odd (even) record id.

#[path = "common/nmrshiftdb.rs"]
mod nmrshiftdb;

use isomerank::chem::{Element, Formula};
use isomerank::enumerate::{self, constraints::Constraints, rules::RuleSet};
use isomerank::predict::Predictor;
use isomerank::score::ScoringModel;
use isomerank::spectrum::{carbon, observed, SolventTable};
use nmrshiftdb::{cases, rank_case, summary, Case};
use std::io::Write;
use std::time::{Duration, Instant};

/// Each compound's search stops after this long (the issue's goal: at most
/// 60 s per compound on the 2-core machine).
const LIMIT: Duration = Duration::from_secs(60);

/// The search bounds the case's 13C list gives, as `rank --carbon` applies
/// them (None when the list is refused; rank_case then reports why).
fn bounds(case: &Case) -> Option<(Formula, Constraints)> {
    let formula = Formula::parse(&case.formula).ok()?;
    let raw = carbon::parse(&case.carbon).ok()?;
    let (_, lines) = observed(None, Some(raw), &formula, &SolventTable::embedded()).ok()?;
    let mut constraints = Constraints::default();
    lines?.constrain_search(&formula, &mut constraints).ok()?;
    Some((formula, constraints))
}

/// The bounds as the JSON spec `tests/reference/check_constraints.py` reads.
fn bounds_json(c: &Constraints) -> String {
    let mut parts = Vec::new();
    if !c.hydrogens.is_empty() {
        let per: Vec<String> = c
            .hydrogens
            .iter()
            .map(|h| {
                let pairs: Vec<String> = (0..h.lo.len())
                    .map(|i| format!("[{},{}]", h.lo[i], h.hi[i]))
                    .collect();
                format!("\"{}\":[{}]", h.element.symbol(), pairs.join(","))
            })
            .collect();
        parts.push(format!("\"hydrogens\":{{{}}}", per.join(",")));
    }
    if let Some(k) = &c.classes {
        let per: Vec<String> = enumerate::constraints::CarbonClass::ALL
            .iter()
            .map(|cl| {
                let i = cl.index();
                format!("\"{}\":[{},{}]", cl.name(), k.lo[i], k.hi[i].min(999))
            })
            .collect();
        parts.push(format!("\"classes\":{{{}}}", per.join(",")));
    }
    format!("{{{}}}", parts.join(","))
}

/// The constrained generation alone, with the options rank_case uses:
/// (seconds, structures after the rules, whether it finished in the limit).
fn generation(formula: &Formula, constraints: &Constraints) -> (f64, u64, bool) {
    let start = Instant::now();
    let options = enumerate::Options {
        limits: enumerate::Limits {
            max_candidates: None,
            deadline: Some(start + LIMIT),
            default_cap: false,
        },
        constraints: constraints.clone(),
        rules: RuleSet::all(),
        expanded_valence: formula.count(Element::S) + formula.count(Element::P) > 0,
        ..Default::default()
    };
    match enumerate::count_summary(formula, &options, &mut |_| {}) {
        Ok(s) => (start.elapsed().as_secs_f64(), s.isomers, s.complete()),
        Err(_) => (start.elapsed().as_secs_f64(), 0, false),
    }
}

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
    let (mut all, mut every, mut ids, mut timed) = (false, 1usize, None::<Vec<u64>>, false);
    for a in args {
        if a == "all" {
            all = true;
        } else if a == "generation" {
            timed = true;
        } else if let Some(n) = a.strip_prefix("every=") {
            every = n.parse().expect("every=N with N a whole number");
            assert!(every >= 1, "every=N needs N >= 1");
        } else if let Some(list) = a.strip_prefix("ids=") {
            ids = Some(
                list.split(',')
                    .map(|x| x.parse().expect("ids=A,B,... with whole numbers"))
                    .collect(),
            );
        } else {
            panic!("unknown argument {a:?} (expected all, every=N, ids=A,B,... or generation)");
        }
    }
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
        .filter(|c| ids.as_ref().is_none_or(|l| l.contains(&c.id)))
        .step_by(every)
        .collect();
    println!(
        "NMRShiftDB2 dev split, {} compounds of {min_heavy} to {max_heavy} heavy atoms{}{}",
        selected.len(),
        if all { "" } else { " with a 1H list" },
        if every > 1 {
            format!(" (every {every}th in file order)")
        } else {
            String::new()
        }
    );
    let mut tsv = std::env::var_os("RANK_NMRSHIFTDB_TSV").map(|p| {
        let mut f = std::fs::File::create(&p).expect("create the TSV file");
        writeln!(
            f,
            "{}\tcomplete\tseconds\ttruth_alone_1h\ttruth_alone_13c\tbounds\tgeneration_s\tgenerated\tgeneration_complete",
            nmrshiftdb::Outcome::TSV_HEADER
        )
        .expect("write");
        f
    });
    let mut outcomes = Vec::new();
    for c in &selected {
        let o = rank_case(c, &predictor, &model, 10, Some(LIMIT));
        println!("{}", o.line(&c.smiles));
        let bounded = bounds(c);
        let gen = match (&bounded, timed && o.refused.is_none()) {
            (Some((f, k)), true) => {
                let (s, n, done) = generation(f, k);
                println!(
                    "{:>9} generation alone: {n} structures in {s:.2} s{}",
                    c.id,
                    if done { "" } else { " (stopped at the limit)" }
                );
                format!("{s:.3}\t{n}\t{done}")
            }
            _ => "\t\t".to_string(),
        };
        if let Some(f) = &mut tsv {
            writeln!(
                f,
                "{}\t{}\t{:.3}\t{:.4}\t{:.4}\t{}\t{gen}",
                o.tsv(&c.smiles),
                o.complete,
                o.seconds,
                o.truth_parts.0,
                o.truth_parts.1,
                bounded.map_or("{}".to_string(), |(_, k)| bounds_json(&k))
            )
            .expect("write");
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
