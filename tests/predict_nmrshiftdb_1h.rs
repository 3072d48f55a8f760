//! The 1H predictor against measured spectra: every compound of the
//! NMRShiftDB2 dev splits with a 1H list (tests/data/nmrshiftdb2-dev.toml and
//! nmrshiftdb2-v2-dev.toml; Steinbeck, Krause & Kuhn, J. Chem. Inf. Comput.
//! Sci. 2003, 43, 1733; values as deposited). Per compound the observed
//! C-bound H, sorted by shift, are compared pair by pair with the predicted
//! non-exchangeable H, sorted by shift (exchangeable H are left out: the
//! lists hold only C-bound H). Printed: the mean absolute error over all H,
//! over aromatic H and over the DMSO-d6 spectra, the share within 0.3 ppm,
//! and the agreement of multiplicity labels on the compounds whose
//! depositors gave them (a reported m agrees only with a predicted m, i.e.
//! a pattern we do not call first order). Each figure is asserted as a
//! floor, the value measured when the floor was last raised: the issue's
//! goals are all-H 0.12 ppm, aromatic 0.15, DMSO-d6 0.20, 92% within 0.3
//! and 80% label agreement.
//!
//! The label figure is printed under two pairings of reported entries with
//! predicted groups (each entry is compared with the group that takes most
//! of its H). The sorted pairing is the per-H pairing of the shift figures:
//! where two predicted groups come out in the other order than their
//! entries, an entry's label meets another group's. The assignment pairing
//! (`nmrshiftdb::assign`) pairs H at minimum total cost using only the
//! shifts and the H counts (an H count that differs costs 0.3 ppm per H),
//! never the labels: a pairing that looked at the labels would pick the
//! group that agrees and inflate the figure. The goal of 80% is measured
//! on the assignment pairing, since it compares each label with the group
//! the entry most plausibly belongs to; both figures have a floor, so that
//! neither falls unnoticed. The shift figures keep the sorted pairing (the
//! issue defines them that way).
//!
//! `NMRSHIFTDB_WORST=N` prints the N compounds with the largest mean error.

#[path = "common/nmrshiftdb.rs"]
mod nmrshiftdb;

use isomerank::predict::Predictor;
use nmrshiftdb::{cases, compare_all, labels_agree, mae, Pair};

#[test]
fn nmrshiftdb2_dev_1h_lists() {
    // ISOMERANK_LIBRARY=DIR measures a changed library (files in DIR replace
    // their embedded namesakes) without rebuilding; the floors below hold
    // for the embedded one.
    let library = std::env::var_os("ISOMERANK_LIBRARY");
    let predictor = match &library {
        Some(dir) => Predictor::from_dir(std::path::Path::new(dir)).unwrap(),
        None => Predictor::embedded().unwrap(),
    };
    let all = cases();
    let (done, skipped) = compare_all(&predictor, &all);
    for s in &skipped {
        println!("skipped {}: {}", s.id, s.why);
    }
    let pairs: Vec<&Pair> = done.iter().flat_map(|c| c.pairs.iter()).collect();
    let (all_h, n_all) = mae(&pairs, |_| true);
    let (aromatic, n_aro) = mae(&pairs, |p| p.aromatic);
    let (dmso, n_dmso) = mae(&pairs, |p| p.dmso);
    let within = pairs
        .iter()
        .filter(|p| (p.observed - p.predicted).abs() <= 0.3)
        .count() as f64
        / n_all as f64;
    let labels: Vec<_> = done.iter().flat_map(|c| c.labels.iter()).collect();
    let agree = labels.iter().filter(|l| labels_agree(l)).count();
    let labelled = done.iter().filter(|c| !c.labels.is_empty()).count();
    let label_share = agree as f64 / labels.len() as f64;
    let sorted: Vec<_> = done.iter().flat_map(|c| c.labels_sorted.iter()).collect();
    let agree_sorted = sorted.iter().filter(|l| labels_agree(l)).count();
    let sorted_share = agree_sorted as f64 / sorted.len() as f64;
    let half = |v: &[&nmrshiftdb::Label], h: u64| {
        let w: Vec<_> = v.iter().filter(|l| l.id % 2 == h).collect();
        let ok = w.iter().filter(|l| labels_agree(l)).count();
        format!(
            "{ok}/{} = {:.1}%",
            w.len(),
            100.0 * ok as f64 / w.len().max(1) as f64
        )
    };
    println!(
        "NMRShiftDB2 dev 1H: {} of {} compounds compared, {} H",
        done.len(),
        all.len(),
        n_all
    );
    println!("  all-H mean absolute error {all_h:.3} ppm");
    println!("  aromatic H {aromatic:.3} ppm ({n_aro} H)");
    println!("  DMSO-d6 spectra {dmso:.3} ppm ({n_dmso} H)");
    println!("  within 0.3 ppm {:.1}%", 100.0 * within);
    println!(
        "  multiplicity labels {agree}/{} = {:.1}% ({labelled} compounds; assignment pairing; odd ids {}, even {})",
        labels.len(),
        100.0 * label_share,
        half(&labels, 1),
        half(&labels, 0)
    );
    println!(
        "  multiplicity labels {agree_sorted}/{} = {:.1}% (sorted per-H pairing; odd ids {}, even {})",
        sorted.len(),
        100.0 * sorted_share,
        half(&sorted, 1),
        half(&sorted, 0)
    );
    if let Some(n) = std::env::var("NMRSHIFTDB_WORST")
        .ok()
        .and_then(|v| v.parse::<usize>().ok())
    {
        let mut worst: Vec<(f64, &nmrshiftdb::Compared)> = done
            .iter()
            .map(|c| {
                let e = c
                    .pairs
                    .iter()
                    .map(|p| (p.observed - p.predicted).abs())
                    .sum::<f64>()
                    / c.pairs.len().max(1) as f64;
                (e, c)
            })
            .collect();
        worst.sort_by(|a, b| b.0.total_cmp(&a.0));
        for (e, c) in worst.iter().take(n) {
            println!("  {e:.2} {} {} {}", c.case.id, c.case.smiles, c.case.peaks);
        }
        let mut bad: Vec<_> = labels.iter().filter(|l| !labels_agree(l)).collect();
        bad.sort_by(|a, b| (&a.predicted, &a.observed).cmp(&(&b.predicted, &b.observed)));
        let mut counts: Vec<((String, String), usize)> = Vec::new();
        for l in bad {
            let k = (l.predicted.clone(), l.observed.clone());
            match counts.last_mut() {
                Some((last, n)) if *last == k => *n += 1,
                _ => counts.push((k, 1)),
            }
        }
        counts.sort_by_key(|c| std::cmp::Reverse(c.1));
        if std::env::var_os("NMRSHIFTDB_LABELS").is_some() {
            // Every label, tab-separated, for tabulating elsewhere.
            for c in &done {
                let arom = isomerank::chem::aromaticity::perceive(&c.molecule);
                for (l, ls) in c.labels.iter().zip(&c.labels_sorted) {
                    let s = &c.signals[l.signal];
                    let atom = c.molecule.atom(s.atoms[0]);
                    let double = s
                        .atoms
                        .iter()
                        .any(|&a| c.molecule.neighbours(a).any(|(_, o)| o == 2));
                    let aromatic = s.atoms.iter().any(|&a| arom.atom[a]);
                    println!(
                        "L\t{}\t{}\t{}\t{}\t{}\t{}\t{:.2}\t{:?}\t{}\t{}\t{:?}\t{}\t{:?}\t{}\t{:?}\t{}\t{}\t{:.2}",
                        l.id,
                        c.case.mhz.unwrap_or(400.0),
                        l.observed,
                        l.predicted,
                        labels_agree(l) as u8,
                        s.hydrogens,
                        l.shift,
                        atom.element,
                        double as u8,
                        aromatic as u8,
                        s.j_hz,
                        l.notes.join(" | "),
                        s.atoms,
                        l.entry_h,
                        l.observed_j,
                        l.apart as u8,
                        ls.predicted,
                        c.signals[l.signal].shift
                    );
                }
            }
            for l in labels.iter().filter(|l| !labels_agree(l)) {
                println!(
                    "  disagree {}: predicted {}, reported {}; {}",
                    l.id,
                    l.predicted,
                    l.observed,
                    l.notes.join("; ")
                );
            }
        }
        for ((p, o), n) in counts.iter().take(20) {
            println!("  label: predicted {p}, reported {o}: {n}");
        }
    }
    if library.is_some() {
        return;
    }
    // Floors: the figures measured when they were last set (see the header).
    assert!(skipped.is_empty(), "{} skipped", skipped.len());
    // These are in-sample since the 1H group terms (h-groups.toml) were
    // fitted on these compounds; the cross-validated figures (fit on even
    // ids, measure on odd, and back) are in fragment-library/README.md.
    assert!(all_h <= 0.095, "all-H {all_h:.3}");
    assert!(aromatic <= 0.121, "aromatic {aromatic:.3}");
    assert!(dmso <= 0.146, "DMSO-d6 {dmso:.3}");
    assert!(within >= 0.940, "within 0.3 ppm {within:.3}");
    // Assignment pairing (the goal's figure), then the sorted pairing.
    assert!(label_share >= 0.731, "labels {label_share:.3}");
    assert!(
        sorted_share >= 0.720,
        "labels, sorted pairing {sorted_share:.3}"
    );
}
