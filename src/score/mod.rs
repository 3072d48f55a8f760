//! Scoring one candidate: the cost (negative log-likelihood) of the observed
//! multiplet list given the candidate's predicted list, and the exact best
//! assignment of predicted groups to observed multiplets behind it.
//!
//! Depends only on `&[PredictedSignal]` and the observed [`Spectrum`], so it
//! is tested with hand-built predictions and knows nothing of structures.
//!
//! [`score`] is the plain path; a ranking builds one [`Prepared`] per
//! spectrum and calls [`Prepared::score`] (same result, a fraction of the
//! cost) and, before multiplicities are predicted, [`Prepared::may_beat`].

pub mod assign;
pub mod assign_reference;
pub mod carbon;
pub mod halves;
mod line_bound;
mod matching;
pub mod model;
mod pattern_rows;
pub mod prepared;
mod small;
mod split;
#[cfg(test)]
mod testgen;

pub use carbon::CarbonPrepared;
pub use model::{PairCost, ScoringModel};
pub use prepared::{GroupShift, Prepared};

use crate::predict::PredictedSignal;
use crate::spectrum::Spectrum;
use assign::{Costs, NONE};
use serde::Serialize;

/// A candidate's score: the cost and, per predicted signal (same order as
/// the prediction), the index into `spectrum.multiplets` it is assigned to.
#[derive(Clone, Debug, PartialEq)]
pub struct Scored {
    pub cost: f64,
    pub assigned: Vec<Option<usize>>,
}

impl Scored {
    /// The exact best assignment of `costs` below `cutoff` (see
    /// [`assign::solve_in`]), with each group's line or `None`.
    pub fn solve(
        costs: &assign::CostsRef,
        cutoff: f64,
        search: &mut assign::Workspace,
    ) -> Option<Scored> {
        let cost = assign::solve_in(costs, cutoff, search)?;
        Some(Scored {
            cost,
            assigned: search
                .choice()
                .iter()
                .map(|&j| (j != NONE).then_some(j as usize))
                .collect(),
        })
    }
}

/// Build the search's cost arrays for one candidate.
pub fn costs(predicted: &[PredictedSignal], spectrum: &Spectrum, model: &ScoringModel) -> Costs {
    let m = spectrum.multiplets.len();
    let mut pair = Vec::with_capacity(predicted.len() * m);
    for p in predicted {
        let (sigma, ln_sigma) = model.shift_sigma(p.sigma);
        for o in &spectrum.multiplets {
            pair.push(model.pair_cost_with(p, o, sigma, ln_sigma).total());
        }
    }
    Costs {
        groups: predicted.len(),
        multiplets: m,
        pair,
        unassigned: predicted.iter().map(|p| model.unassigned_cost(p)).collect(),
        hydrogens: predicted.iter().map(|p| p.hydrogens).collect(),
        observed_h: spectrum.multiplets.iter().map(|o| o.hydrogens).collect(),
        empty: spectrum
            .multiplets
            .iter()
            .map(|o| model.empty_cost(o))
            .collect(),
        overlap: spectrum
            .multiplets
            .iter()
            .map(|o| model.overlap_cost(o))
            .collect(),
        abs_sigma: model.integral.abs_sigma,
        rel_sigma: model.integral.rel_sigma,
    }
}

/// Score a candidate exactly. Returns `None` when no assignment costs less
/// than `cutoff` (pass `f64::INFINITY` to always get the optimum).
///
/// The plain path (fresh arrays per call); a ranking should build one
/// [`Prepared`] and call [`Prepared::score`], which gives the same result.
pub fn score(
    predicted: &[PredictedSignal],
    spectrum: &Spectrum,
    model: &ScoringModel,
    cutoff: f64,
) -> Option<Scored> {
    let c = costs(predicted, spectrum, model);
    let s = assign::solve(&c, cutoff)?;
    Some(Scored {
        cost: s.cost,
        assigned: s
            .choice
            .iter()
            .map(|&j| (j != NONE).then_some(j as usize))
            .collect(),
    })
}

/// One predicted group's line of an explanation.
#[derive(Clone, Debug, Serialize)]
pub struct GroupLine {
    /// Index of the predicted signal.
    pub group: usize,
    /// Index into the spectrum's multiplets, if assigned.
    pub observed: Option<usize>,
    pub terms: Option<PairCostSer>,
    /// Penalty paid when left unassigned.
    pub unassigned: Option<f64>,
}

/// Pair cost terms, serialisable.
#[derive(Clone, Copy, Debug, Serialize)]
pub struct PairCostSer {
    pub shift: f64,
    pub multiplicity: f64,
    pub coupling: f64,
}

/// One observed multiplet's line: the integral (or unexplained) term.
#[derive(Clone, Debug, Serialize)]
pub struct MultipletLine {
    pub observed: usize,
    /// Predicted groups placed here.
    pub groups: Vec<usize>,
    pub assigned_h: u32,
    /// Integral plus overlap cost when holding groups, else the unexplained
    /// (or solvent set-aside) cost.
    pub cost: f64,
}

/// The signal-by-signal account of a score (`--explain`).
#[derive(Clone, Debug, Serialize)]
pub struct Explanation {
    pub groups: Vec<GroupLine>,
    pub multiplets: Vec<MultipletLine>,
    pub total: f64,
}

/// Break a score down into its terms.
pub fn explain(
    predicted: &[PredictedSignal],
    spectrum: &Spectrum,
    model: &ScoringModel,
    scored: &Scored,
) -> Explanation {
    let mut groups = Vec::new();
    let mut total = 0.0;
    for (g, p) in predicted.iter().enumerate() {
        match scored.assigned[g] {
            Some(j) => {
                let t = model.pair_cost(p, &spectrum.multiplets[j]);
                total += t.total();
                groups.push(GroupLine {
                    group: g,
                    observed: Some(j),
                    terms: Some(PairCostSer {
                        shift: t.shift,
                        multiplicity: t.multiplicity,
                        coupling: t.coupling,
                    }),
                    unassigned: None,
                });
            }
            None => {
                let u = model.unassigned_cost(p);
                total += u;
                groups.push(GroupLine {
                    group: g,
                    observed: None,
                    terms: None,
                    unassigned: Some(u),
                });
            }
        }
    }
    let mut multiplets = Vec::new();
    for (j, o) in spectrum.multiplets.iter().enumerate() {
        let gs: Vec<usize> = (0..predicted.len())
            .filter(|&g| scored.assigned[g] == Some(j))
            .collect();
        let h: u32 = gs.iter().map(|&g| predicted[g].hydrogens).sum();
        let cost = if gs.is_empty() {
            model.empty_cost(o)
        } else {
            model.filled_cost(o, h as f64, gs.len())
        };
        total += cost;
        multiplets.push(MultipletLine {
            observed: j,
            groups: gs,
            assigned_h: h,
            cost,
        });
    }
    Explanation {
        groups,
        multiplets,
        total,
    }
}

/// A one-line reason for a candidate's place: what costs most.
pub fn reason(predicted: &[PredictedSignal], spectrum: &Spectrum, e: &Explanation) -> String {
    reason_with(predicted, spectrum, e, Vec::new())
}

/// [`reason`] with more costed phrases to weigh beside the 1H ones (the 13C
/// part's, [`carbon::worst_terms`]).
pub fn reason_with(
    predicted: &[PredictedSignal],
    spectrum: &Spectrum,
    e: &Explanation,
    extra: Vec<(f64, String)>,
) -> String {
    // Candidate terms: (cost, text).
    let mut worst: Vec<(f64, String)> = extra;
    if spectrum.multiplets.is_empty() {
        // No 1H data: the 1H part costs nothing and says nothing.
        worst.sort_by(|a, b| b.0.total_cmp(&a.0).then_with(|| a.1.cmp(&b.1)));
        if worst.is_empty() {
            return "every 13C line fits".to_string();
        }
        let texts: Vec<&str> = worst.iter().take(2).map(|w| w.1.as_str()).collect();
        return texts.join("; ");
    }
    for line in &e.groups {
        let p = &predicted[line.group];
        match (line.observed, line.terms) {
            (Some(j), Some(t)) => {
                let o = &spectrum.multiplets[j];
                let d = o.distance(p.shift);
                // The deviation part of the shift term (without the sigma
                // normalisation, which every match pays): worth naming when
                // beyond two sigma.
                let z = d / p.sigma.max(1e-6);
                let deviation = z * z / 2.0;
                if deviation > 2.0 {
                    worst.push((
                        deviation,
                        format!(
                            "{}H predicted at {:.2} for the {} signal at {} (off by {:.2} ppm)",
                            p.hydrogens,
                            p.shift,
                            o.pattern.label(),
                            o.shift_text(),
                            d
                        ),
                    ));
                }
                if t.multiplicity > 2.0 {
                    worst.push((
                        t.multiplicity,
                        format!(
                            "predicted {} reported as {} at {}",
                            p.multiplicity.label(),
                            o.pattern.label(),
                            o.shift_text()
                        ),
                    ));
                }
                if t.coupling > 2.0 {
                    worst.push((
                        t.coupling,
                        format!(
                            "J at {} differs from the predicted {:.0} Hz",
                            o.shift_text(),
                            p.j_hz.first().copied().unwrap_or(0.0)
                        ),
                    ));
                }
            }
            _ => {
                if !p.exchangeable {
                    worst.push((
                        line.unassigned.unwrap_or(0.0),
                        format!(
                            "predicted {}H {} at {:.2} has no observed signal",
                            p.hydrogens,
                            p.multiplicity.label(),
                            p.shift
                        ),
                    ));
                }
            }
        }
    }
    for line in &e.multiplets {
        let o = &spectrum.multiplets[line.observed];
        if line.groups.is_empty() {
            if o.solvent.is_none() {
                worst.push((
                    line.cost,
                    format!(
                        "nothing explains the {} at {}",
                        o.pattern.label(),
                        o.shift_text()
                    ),
                ));
            }
        } else if line.cost > 2.0 {
            if let Some(h) = o.hydrogens {
                worst.push((
                    line.cost,
                    format!(
                        "{} H for the {:.0}H signal at {}",
                        line.assigned_h,
                        h,
                        o.shift_text()
                    ),
                ));
            }
        }
    }
    worst.sort_by(|a, b| b.0.total_cmp(&a.0).then_with(|| a.1.cmp(&b.1)));
    if worst.is_empty() {
        let max_dev = e
            .groups
            .iter()
            .filter_map(|l| {
                l.observed
                    .map(|j| spectrum.multiplets[j].distance(predicted[l.group].shift))
            })
            .fold(0.0, f64::max);
        return format!("every signal fits (largest shift deviation {max_dev:.2} ppm)");
    }
    let texts: Vec<&str> = worst.iter().take(2).map(|w| w.1.as_str()).collect();
    texts.join("; ")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::Formula;
    use crate::predict::Multiplicity;
    use crate::spectrum::{integrals, journal, SolventTable};

    fn sig(shift: f64, h: u32, m: Multiplicity, j: &[f64]) -> PredictedSignal {
        PredictedSignal {
            shift,
            sigma: 0.2,
            hydrogens: h,
            multiplicity: m,
            j_hz: j.to_vec(),
            atoms: vec![0],
            exchangeable: false,
            notes: vec![],
            halves: false,
            geminal_hz: 0.0,
            half_pattern: None,
        }
    }
    fn q() -> Multiplicity {
        Multiplicity::Coupled(vec![3])
    }
    fn t() -> Multiplicity {
        Multiplicity::Coupled(vec![2])
    }
    fn s() -> Multiplicity {
        Multiplicity::Singlet
    }

    fn spectrum(text: &str, formula: &str) -> Spectrum {
        integrals::build(
            journal::parse(text).unwrap(),
            &Formula::parse(formula).unwrap(),
            &SolventTable::embedded(),
        )
        .unwrap()
    }

    #[test]
    fn ethyl_acetate_beats_methyl_propanoate() {
        // Ethyl acetate in CDCl3: 2.05 (s, 3H), 4.12 (q, 2H), 1.26 (t, 3H)
        // (Gottlieb, Kotlyar & Nudelman, J. Org. Chem. 1997, 62, 7512).
        let obs = spectrum(
            "4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)",
            "C4H8O2",
        );
        let m = ScoringModel::embedded();
        // Hand-built predictions (additive-increment estimates, common practice).
        let ethyl_acetate = [
            sig(4.10, 2, q(), &[7.0]),
            sig(2.02, 3, s(), &[]),
            sig(1.25, 3, t(), &[7.0]),
        ];
        let methyl_propanoate = [
            sig(3.67, 3, s(), &[]),
            sig(2.32, 2, q(), &[7.0]),
            sig(1.14, 3, t(), &[7.0]),
        ];
        let a = score(&ethyl_acetate, &obs, &m, f64::INFINITY).unwrap();
        let b = score(&methyl_propanoate, &obs, &m, f64::INFINITY).unwrap();
        assert_eq!(a.assigned, vec![Some(0), Some(1), Some(2)]);
        assert!(a.cost + 5.0 < b.cost, "{} vs {}", a.cost, b.cost);
        let e = explain(&ethyl_acetate, &obs, &m, &a);
        assert!((e.total - a.cost).abs() < 1e-9);
    }

    #[test]
    fn several_groups_share_an_aromatic_multiplet() {
        let obs = spectrum("7.32-7.15 (m, 5H), 2.35 (s, 3H)", "C7H8");
        let m = ScoringModel::embedded();
        let toluene = [
            sig(7.18, 2, Multiplicity::Coupled(vec![1]), &[7.5]),
            sig(7.25, 2, t(), &[7.5]),
            sig(7.16, 1, t(), &[7.5]),
            sig(2.34, 3, s(), &[]),
        ];
        let a = score(&toluene, &obs, &m, f64::INFINITY).unwrap();
        assert_eq!(a.assigned, vec![Some(0), Some(0), Some(0), Some(1)]);
    }

    #[test]
    fn missing_exchangeable_h_costs_little() {
        // Ethanol without its OH signal (FIELD-GUIDE 4: OH often missing).
        let obs = spectrum("3.72 (q, 2H), 1.24 (t, 3H)", "C2H6O");
        let m = ScoringModel::embedded();
        let mut oh = sig(2.0, 1, s(), &[]);
        oh.exchangeable = true;
        oh.sigma = 1.5;
        let ethanol = [
            sig(3.65, 2, q(), &[7.0]),
            sig(1.20, 3, t(), &[7.0]),
            oh.clone(),
        ];
        let mut ch = oh;
        ch.exchangeable = false;
        let other = [sig(3.65, 2, q(), &[7.0]), sig(1.20, 3, t(), &[7.0]), ch];
        let a = score(&ethanol, &obs, &m, f64::INFINITY).unwrap();
        let b = score(&other, &obs, &m, f64::INFINITY).unwrap();
        assert_eq!(a.assigned[2], None);
        assert!(a.cost + 3.0 < b.cost);
    }

    #[test]
    fn solvent_peak_is_set_aside_cheaply() {
        let with = spectrum("1H NMR (CDCl3) δ 7.26 (s, 1H), 2.17 (s, 6H)", "C3H6O");
        let m = ScoringModel::embedded();
        let acetone = [sig(2.15, 6, s(), &[])];
        let a = score(&acetone, &with, &m, f64::INFINITY).unwrap();
        assert_eq!(a.assigned, vec![Some(1)]);
        assert!(a.cost < 5.0, "{}", a.cost);
    }

    #[test]
    fn cutoff_skips_hopeless_candidates() {
        let obs = spectrum("4.12 (q, 2H), 2.05 (s, 3H), 1.26 (t, 3H)", "C4H8O2");
        let m = ScoringModel::embedded();
        let bad = [
            sig(9.7, 1, t(), &[]),
            sig(2.4, 2, Multiplicity::Multiplet, &[]),
            sig(1.0, 5, s(), &[]),
        ];
        let full = score(&bad, &obs, &m, f64::INFINITY).unwrap();
        assert!(score(&bad, &obs, &m, full.cost - 0.1).is_none());
        assert_eq!(score(&bad, &obs, &m, full.cost + 0.1).unwrap(), full);
    }
}
