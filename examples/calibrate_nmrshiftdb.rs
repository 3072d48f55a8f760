//! Calibration of the ranking's probabilities and of the absolute fit
//! verdict on the NMRShiftDB2 dev split (tests/data/nmrshiftdb2-v2-dev.toml;
//! Steinbeck, Krause & Kuhn, J. Chem. Inf. Comput. Sci. 2003, 43, 1733).
//!
//! ```sh
//! cargo run --release --example calibrate_nmrshiftdb            # fit and check
//! cargo run --release --example calibrate_nmrshiftdb -- write   # also write the table
//! cargo run --release --example calibrate_nmrshiftdb -- proton write   # 1H-only rows only
//! ```
//!
//! Every dev compound of at most 8 heavy atoms (with a 1H list or 13C only)
//! is ranked as `rank --carbon` ranks it. The compounds are split by
//! record id: even ids fit, odd ids check (a fixed, documented split).
//!
//! 1. **Cost scale.** For each value of `[ranking] cost_scale` on a grid,
//!    the fit half is ranked and the log loss of the first candidate's
//!    stated probability against whether it is the deposited structure is
//!    summed; the scale with the least loss is the fit. The table of stated
//!    against observed (bins of 0.1) is printed for the check half at the
//!    embedded scale and at the fitted one, with each bin's standard error.
//! 2. **Fit verdict.** Over the fit half, the true structure's cost per
//!    observed line (1H multiplets plus 13C lines) gives the percentiles
//!    of `fragment-library/fit-percentiles.toml` (written with `write`);
//!    the check half reports how many true structures lie above the 99th
//!    percentile (about 1 % expected).
//! 3. **1H-only verdict.** Every dev compound with a 1H list (any size) has
//!    its deposited structure scored on the 1H list alone, as `rank` without
//!    `--carbon` would score it; the even ids give the table's
//!    `[proton_only]` rows, the odd ids are checked the same way.

#[path = "common/nmrshiftdb.rs"]
mod nmrshiftdb;

use isomerank::chem::smiles::{canonical_smiles, parse_smiles};
use isomerank::chem::Formula;
use isomerank::predict::Predictor;
use isomerank::rank;
use isomerank::score::ScoringModel;
use isomerank::spectrum::{journal, observed, SolventTable};
use nmrshiftdb::{calibration_markdown, cases, log_loss, rank_case, Case, Outcome};
use rayon::prelude::*;
use std::fmt::Write as _;

const MAX_HEAVY: u32 = 8;
const GRID: [f64; 5] = [0.5, 0.7, 1.0, 1.4, 2.0];
/// The percentiles the verdict table lists.
const LEVELS: [f64; 9] = [10.0, 25.0, 50.0, 75.0, 90.0, 95.0, 98.0, 99.0, 99.5];

fn run(cases: &[Case], predictor: &Predictor, model: &ScoringModel) -> Vec<Outcome> {
    cases
        .par_iter()
        .map(|c| rank_case(c, predictor, model, 10, None))
        .filter(|o| o.refused.is_none())
        .collect()
}

/// The deposited structure's cost per 1H multiplet when it is scored on
/// the case's 1H list alone (None: no 1H list, or data the tool refuses).
fn proton_only_cost_per_line(
    case: &Case,
    predictor: &Predictor,
    model: &ScoringModel,
) -> Option<f64> {
    if case.peaks.is_empty() {
        return None;
    }
    let formula = Formula::parse(&case.formula).ok()?;
    let molecule = parse_smiles(&case.smiles).ok()?;
    let hydrogen = journal::parse(&case.peaks).ok()?;
    let (spectrum, _) = observed(Some(hydrogen), None, &formula, &SolventTable::embedded()).ok()?;
    if spectrum.multiplets.is_empty() {
        return None;
    }
    let solvent = spectrum.solvent.clone().unwrap_or_else(|| "CDCl3".into());
    let mhz = spectrum.frequency_mhz.unwrap_or(400.0);
    let mut opts = predictor
        .options(&solvent, mhz)
        .or_else(|_| predictor.options("CDCl3", mhz))
        .ok()?;
    opts.notes = false;
    let settings = rank::Settings {
        spectrum: &spectrum,
        carbon: None,
        model,
        top: 1,
    };
    let item = rank::ShortlistItem {
        smiles: canonical_smiles(&molecule),
        molecule,
        name: None,
    };
    let r = rank::with_standard_steps(predictor, &opts, |steps| {
        let mut one = std::iter::once(Ok(vec![item]));
        rank::rank_shortlist_chunks(&mut one, steps, &settings)
    })
    .ok()?;
    Some(r.candidates[0].cost / spectrum.multiplets.len() as f64)
}

/// Marks the start of the 1H-only part of the table file.
const PROTON_MARK: &str = "# The [proton_only] rows:";

/// The table's 1H-only part: every dev compound with a 1H list, its
/// deposited structure scored alone on the 1H list; even ids give the rows,
/// odd ids are checked against their 99th percentile.
fn proton_section(predictor: &Predictor, model: &ScoringModel) -> String {
    let all = cases();
    let proton = |even: bool| -> Vec<f64> {
        let mut v: Vec<f64> = all
            .par_iter()
            .filter(|c| (c.id % 2 == 0) == even)
            .filter_map(|c| proton_only_cost_per_line(c, predictor, model))
            .filter(|x| x.is_finite())
            .collect();
        v.sort_by(f64::total_cmp);
        v
    };
    let (fit, check) = (proton(true), proton(false));
    let p99 = percentile(&fit, 99.0);
    let above = check.iter().filter(|&&x| x > p99).count();
    println!(
        "1H-only verdict: fit half n = {}, 99th percentile {p99:.3}; check half: {above} of {} above it ({:.1} %)",
        fit.len(),
        check.len(),
        100.0 * above as f64 / check.len().max(1) as f64
    );
    let mut t = String::new();
    let _ = writeln!(
        t,
        "{PROTON_MARK} data with a 1H list and no 13C list. Every dev\n\
         # compound with a 1H list and even record id (any size, n = {}), its\n\
         # deposited structure scored on the 1H list alone at cost_scale = {:.2}\n\
         # (cost per 1H multiplet); checked on the odd ids: {above} of {} above\n\
         # the 99th percentile. Made by `... calibrate_nmrshiftdb -- proton write`\n\
         # (this part only) or with the whole table.\n\n[proton_only]\nn = {}\n",
        fit.len(),
        model.ranking.cost_scale,
        check.len(),
        fit.len()
    );
    for q in LEVELS {
        let _ = writeln!(
            t,
            "[[proton_only.percentile]]\nlevel = {q:.1}\ncost_per_line = {:.4}\n",
            percentile(&fit, q)
        );
    }
    t
}

fn table_path() -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("fragment-library/fit-percentiles.toml")
}

fn per_line(o: &Outcome) -> f64 {
    o.truth_cost / o.observed_lines.max(1) as f64
}

fn percentile(sorted: &[f64], q: f64) -> f64 {
    let k = ((q / 100.0) * (sorted.len() - 1) as f64).round() as usize;
    sorted[k.min(sorted.len() - 1)]
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let write = args.iter().any(|a| a == "write");
    let predictor = Predictor::embedded().expect("predictor");
    let embedded = ScoringModel::embedded();
    if args.iter().any(|a| a == "proton") {
        // Only the 1H-only rows, at the embedded scale; the rest of the file
        // is kept.
        let section = proton_section(&predictor, &embedded);
        print!("\n{section}");
        if write {
            let old = std::fs::read_to_string(table_path()).expect("read the table");
            let main = old.split(PROTON_MARK).next().unwrap_or("").trim_end();
            let text = format!("{main}\n\n{}", section.trim_end()) + "\n";
            std::fs::write(table_path(), text).expect("write the table");
            println!("wrote {}", table_path().display());
        }
        return;
    }
    let selected: Vec<Case> = cases()
        .into_iter()
        .filter(|c| c.heavy_atoms <= MAX_HEAVY)
        .collect();
    let (fit, check): (Vec<Case>, Vec<Case>) = selected.into_iter().partition(|c| c.id % 2 == 0);
    println!(
        "NMRShiftDB2 dev, <= {MAX_HEAVY} heavy atoms, 1H + 13C (13C only where no 1H list): fit half (even ids) {}, check half (odd ids) {}",
        fit.len(),
        check.len()
    );
    let mut best = (f64::INFINITY, 1.0, Vec::new());
    for scale in GRID {
        let mut model = embedded.clone();
        model.ranking.cost_scale = scale;
        let outcomes = run(&fit, &predictor, &model);
        let loss = log_loss(&outcomes);
        println!(
            "cost_scale {scale:.2}: fit-half log loss {loss:.1} over {}",
            outcomes.len()
        );
        if loss < best.0 {
            best = (loss, scale, outcomes);
        }
    }
    let (_, fitted, fit_outcomes) = best;
    println!(
        "fitted cost_scale {fitted:.2} (embedded {:.2})",
        embedded.ranking.cost_scale
    );
    let mut model = embedded.clone();
    model.ranking.cost_scale = fitted;
    let check_embedded = run(&check, &predictor, &embedded);
    let check_fitted = if fitted == embedded.ranking.cost_scale {
        check_embedded.clone()
    } else {
        run(&check, &predictor, &model)
    };
    println!(
        "\ncheck half at the embedded scale {:.2} (log loss {:.1}):\n{}",
        embedded.ranking.cost_scale,
        log_loss(&check_embedded),
        calibration_markdown(&check_embedded)
    );
    println!(
        "check half at the fitted scale {fitted:.2} (log loss {:.1}):\n{}",
        log_loss(&check_fitted),
        calibration_markdown(&check_fitted)
    );

    // The verdict's table: true structures' cost per observed line, at the
    // fitted scale, over the fit half.
    let mut costs: Vec<f64> = fit_outcomes
        .iter()
        .filter(|o| o.truth_cost.is_finite())
        .map(per_line)
        .collect();
    costs.sort_by(f64::total_cmp);
    let p99 = percentile(&costs, 99.0);
    let above = check_fitted
        .iter()
        .filter(|o| o.truth_cost.is_finite() && per_line(o) > p99)
        .count();
    println!(
        "verdict: fit half n = {}, 99th percentile of the true structure's cost per line {p99:.3}; check half: {above} of {} true structures above it ({:.1} %)",
        costs.len(),
        check_fitted.len(),
        100.0 * above as f64 / check_fitted.len().max(1) as f64
    );
    let mut table = String::new();
    let _ = writeln!(
        table,
        "# How well the correct structure fits: percentiles of the true structure's\n\
         # cost per observed line (1H multiplets plus 13C lines; cost at\n\
         # [ranking] cost_scale = {fitted:.2}) over the NMRShiftDB2 v2 dev split\n\
         # (tests/data/nmrshiftdb2-v2-dev.toml; Steinbeck, Krause & Kuhn, J. Chem.\n\
         # Inf. Comput. Sci. 2003, 43, 1733), compounds of at most {MAX_HEAVY} heavy atoms with\n\
         # even record id (n = {}), each ranked with its 1H list (when it has one) and\n\
         # its 13C list with H counts as `rank --carbon` ranks it.\n\
         # Made by `cargo run --release --example calibrate_nmrshiftdb -- write`;\n\
         # checked on the odd ids: {above} of {} true structures above the 99th\n\
         # percentile. Data, not code: src/rank/verdict.rs reads it.\n",
        costs.len(),
        check_fitted.len()
    );
    let _ = writeln!(table, "n = {}", costs.len());
    let _ = writeln!(table, "cost_scale = {fitted:.2}");
    let _ = writeln!(table, "warn_above_percentile = 99.0\n");
    for q in LEVELS {
        let _ = writeln!(
            table,
            "[[percentile]]\nlevel = {q:.1}\ncost_per_line = {:.4}\n",
            percentile(&costs, q)
        );
    }
    table.push_str(&proton_section(&predictor, &model));
    print!("\n{table}");
    if write {
        std::fs::write(table_path(), table.trim_end().to_string() + "\n").expect("write the table");
        println!("wrote {}", table_path().display());
    }
}
