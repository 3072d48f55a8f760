//! The 13C part of a candidate's cost: the exact best assignment of its
//! predicted carbon symmetry classes to the observed 13C lines, with the
//! same search as the 1H part ([`assign`]) and 13C cost terms
//! (fragment-library/scoring.toml, `[carbon]`):
//!
//! | 1H search term | 13C meaning |
//! | --- | --- |
//! | group | a carbon symmetry class (one expected signal) |
//! | multiplet | an observed 13C line |
//! | pair cost | capped shift deviation over sigma, plus the H-count mismatch when the line gives an H count |
//! | H of a group | carbons in the class |
//! | integral of a multiplet | the line's carbon count, when the list counts carbons |
//! | unassigned | a class with no line (mild for quaternary carbons) |
//! | unexplained | a line no class explains (small on the solvent's own line) |
//! | overlap | each class beyond the first on one line |
//!
//! The signal count enters through the last three: a candidate with more
//! classes than lines pays for overlaps or missing lines, one with fewer
//! pays for unexplained lines. The 1H and 13C parts add as one negative
//! log-likelihood.
//!
//! Every term is >= 0 (the model refuses negative values), which the
//! search's bounds need.

use super::assign::{CostsRef, Workspace};
use super::model::{shift_term, CarbonParams, ScoringModel};
use super::Scored;
use crate::predict::PredictedCarbon;
use crate::spectrum::{CarbonLine, CarbonSpectrum};
use serde::Serialize;
use std::cell::RefCell;

/// The terms of one class on one line.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct CarbonPairCost {
    pub shift: f64,
    pub hydrogens: f64,
}

impl CarbonPairCost {
    pub fn total(&self) -> f64 {
        self.shift + self.hydrogens
    }
}

/// The class's sigma after the floor and its normalisation term.
fn sigma_terms(c: &CarbonParams, predicted_sigma: f64) -> (f64, f64) {
    let sigma = predicted_sigma.max(c.min_sigma);
    (sigma, (sigma / c.min_sigma).ln())
}

/// Cost terms of class `p` on line `line`.
pub fn pair_cost(model: &ScoringModel, p: &PredictedCarbon, line: &CarbonLine) -> CarbonPairCost {
    let c = &model.carbon;
    let (sigma, ln) = sigma_terms(c, p.sigma);
    pair_cost_with(c, p, line, sigma, ln)
}

fn pair_cost_with(
    c: &CarbonParams,
    p: &PredictedCarbon,
    line: &CarbonLine,
    sigma: f64,
    ln: f64,
) -> CarbonPairCost {
    let deviation = shift_term(line.distance(p.shift), sigma, 0.0).min(c.shift_cap);
    let hydrogens = match line.hydrogens {
        Some(h) if h != p.hydrogens => c.hydrogens_mismatch,
        _ => 0.0,
    };
    CarbonPairCost {
        shift: deviation + ln,
        hydrogens,
    }
}

/// Cost of a class left without a line.
pub fn unassigned_cost(model: &ScoringModel, p: &PredictedCarbon) -> f64 {
    if p.hydrogens == 0 {
        model.carbon.unassigned_quaternary
    } else {
        model.carbon.unassigned_protonated
    }
}

/// Cost of a line no class explains.
pub fn empty_cost(model: &ScoringModel, line: &CarbonLine) -> f64 {
    if line.solvent {
        model.carbon.solvent_set_aside
    } else {
        model.carbon.unexplained
    }
}

/// Cost of a line holding `k >= 1` classes with `carbons` carbons in all.
pub fn filled_cost(model: &ScoringModel, line: &CarbonLine, carbons: u32, k: usize) -> f64 {
    let c = &model.carbon;
    let count = match line.count {
        Some(n) => {
            let d = n as f64 - carbons as f64;
            d * d / (2.0 * c.count_sigma * c.count_sigma)
        }
        None => 0.0,
    };
    count + c.overlap * k.saturating_sub(1) as f64
}

/// The spectrum-constant arrays, built once per ranking and shared.
pub struct CarbonPrepared<'a> {
    spectrum: &'a CarbonSpectrum,
    model: &'a ScoringModel,
    observed: Vec<Option<f64>>,
    empty: Vec<f64>,
    overlap: Vec<f64>,
}

/// A thread's buffers.
#[derive(Default)]
struct Work {
    pair: Vec<f64>,
    unassigned: Vec<f64>,
    carbons: Vec<u32>,
    search: Workspace,
}

thread_local! {
    static WORK: RefCell<Work> = RefCell::new(Work::default());
}

impl<'a> CarbonPrepared<'a> {
    pub fn new(spectrum: &'a CarbonSpectrum, model: &'a ScoringModel) -> CarbonPrepared<'a> {
        CarbonPrepared {
            spectrum,
            model,
            observed: spectrum
                .lines
                .iter()
                .map(|l| l.count.map(|n| n as f64))
                .collect(),
            empty: spectrum
                .lines
                .iter()
                .map(|l| empty_cost(model, l))
                .collect(),
            overlap: vec![model.carbon.overlap; spectrum.lines.len()],
        }
    }

    pub fn spectrum(&self) -> &'a CarbonSpectrum {
        self.spectrum
    }

    /// The exact 13C cost and assignment of `predicted`, or `None` when
    /// nothing costs less than `cutoff`. Equal to [`score`] (same arithmetic).
    pub fn score(&self, predicted: &[PredictedCarbon], cutoff: f64) -> Option<Scored> {
        WORK.with(|w| match w.try_borrow_mut() {
            Ok(mut w) => self.score_in(&mut w, predicted, cutoff),
            Err(_) => self.score_in(&mut Work::default(), predicted, cutoff),
        })
    }

    /// The best reading of `predicted`'s diastereotopic methyl pairs (each
    /// class whole or as two, src/score/halves.rs), each scored exactly:
    /// the least cost and its assignment, with the list that reading gives
    /// when some class was split.
    pub fn score_halves(
        &self,
        predicted: &[PredictedCarbon],
        cutoff: f64,
    ) -> Option<(Scored, Option<Vec<PredictedCarbon>>)> {
        super::halves::best(predicted, cutoff, |list, cut| self.score(list, cut))
    }

    fn score_in(&self, w: &mut Work, predicted: &[PredictedCarbon], cutoff: f64) -> Option<Scored> {
        let c = &self.model.carbon;
        w.pair.clear();
        w.unassigned.clear();
        w.carbons.clear();
        for p in predicted {
            let (sigma, ln) = sigma_terms(c, p.sigma);
            w.pair.extend(
                self.spectrum
                    .lines
                    .iter()
                    .map(|l| pair_cost_with(c, p, l, sigma, ln).total()),
            );
            w.unassigned.push(unassigned_cost(self.model, p));
            w.carbons.push(p.carbons);
        }
        let Work {
            pair,
            unassigned,
            carbons,
            search,
        } = w;
        let view = CostsRef {
            groups: carbons.len(),
            multiplets: self.empty.len(),
            pair,
            unassigned,
            hydrogens: carbons,
            observed_h: &self.observed,
            empty: &self.empty,
            overlap: &self.overlap,
            abs_sigma: c.count_sigma,
            rel_sigma: 0.0,
        };
        Scored::solve(&view, cutoff, search)
    }
}

/// Score a candidate's 13C prediction exactly (fresh buffers).
pub fn score(
    predicted: &[PredictedCarbon],
    spectrum: &CarbonSpectrum,
    model: &ScoringModel,
    cutoff: f64,
) -> Option<Scored> {
    CarbonPrepared::new(spectrum, model).score_in(&mut Work::default(), predicted, cutoff)
}

/// One predicted class's line of a 13C explanation.
#[derive(Clone, Debug, Serialize)]
pub struct ClassLine {
    /// Index of the predicted class.
    pub class: usize,
    /// Index into the spectrum's lines, if assigned.
    pub observed: Option<usize>,
    pub terms: Option<CarbonPairCost>,
    pub unassigned: Option<f64>,
}

/// One observed line's account: the count/overlap or unexplained term.
#[derive(Clone, Debug, Serialize)]
pub struct LineAccount {
    pub observed: usize,
    pub classes: Vec<usize>,
    pub carbons: u32,
    pub cost: f64,
}

/// The line-by-line account of a 13C score.
#[derive(Clone, Debug, Serialize)]
pub struct CarbonExplanation {
    pub classes: Vec<ClassLine>,
    pub lines: Vec<LineAccount>,
    pub total: f64,
}

/// Break a 13C score down into its terms (they add up to `scored.cost`).
pub fn explain(
    predicted: &[PredictedCarbon],
    spectrum: &CarbonSpectrum,
    model: &ScoringModel,
    scored: &Scored,
) -> CarbonExplanation {
    let mut total = 0.0;
    let mut classes = Vec::new();
    for (g, p) in predicted.iter().enumerate() {
        match scored.assigned[g] {
            Some(j) => {
                let t = pair_cost(model, p, &spectrum.lines[j]);
                total += t.total();
                classes.push(ClassLine {
                    class: g,
                    observed: Some(j),
                    terms: Some(t),
                    unassigned: None,
                });
            }
            None => {
                let u = unassigned_cost(model, p);
                total += u;
                classes.push(ClassLine {
                    class: g,
                    observed: None,
                    terms: None,
                    unassigned: Some(u),
                });
            }
        }
    }
    let mut lines = Vec::new();
    for (j, l) in spectrum.lines.iter().enumerate() {
        let members: Vec<usize> = (0..predicted.len())
            .filter(|&g| scored.assigned[g] == Some(j))
            .collect();
        let carbons: u32 = members.iter().map(|&g| predicted[g].carbons).sum();
        let cost = if members.is_empty() {
            empty_cost(model, l)
        } else {
            filled_cost(model, l, carbons, members.len())
        };
        total += cost;
        lines.push(LineAccount {
            observed: j,
            classes: members,
            carbons,
            cost,
        });
    }
    CarbonExplanation {
        classes,
        lines,
        total,
    }
}

/// What costs most in a 13C score, as short phrases with their costs (for
/// the one-line reason of a candidate).
pub fn worst_terms(
    predicted: &[PredictedCarbon],
    spectrum: &CarbonSpectrum,
    e: &CarbonExplanation,
) -> Vec<(f64, String)> {
    let mut out = Vec::new();
    for c in &e.classes {
        let p = &predicted[c.class];
        let kind = crate::spectrum::carbon::carbon_kind(p.hydrogens);
        match (c.observed, c.terms) {
            (Some(j), Some(t)) => {
                let l = &spectrum.lines[j];
                if t.hydrogens > 0.0 {
                    out.push((
                        t.hydrogens,
                        format!(
                            "13C: a {kind} matched to the {} line at {}",
                            l.kind_label(),
                            l.shift_text()
                        ),
                    ));
                }
                let d = l.distance(p.shift);
                let z = d / p.sigma.max(1e-6);
                if z > 2.0 {
                    out.push((
                        t.shift,
                        format!(
                            "13C: {kind} predicted at {:.1} for the line at {} (off by {:.1} ppm)",
                            p.shift,
                            l.shift_text(),
                            d
                        ),
                    ));
                }
            }
            _ => out.push((
                c.unassigned.unwrap_or(0.0),
                format!("13C: predicted {kind} at {:.1} has no line", p.shift),
            )),
        }
    }
    for a in &e.lines {
        let l = &spectrum.lines[a.observed];
        if a.classes.is_empty() && !l.solvent {
            out.push((
                a.cost,
                format!("13C: nothing explains the line at {}", l.shift_text()),
            ));
        } else if a.cost > 2.0 {
            out.push((
                a.cost,
                match l.count {
                    Some(n) if n != a.carbons => format!(
                        "13C: {} carbon{} on the {n}C line at {}",
                        a.carbons,
                        if a.carbons == 1 { "" } else { "s" },
                        l.shift_text()
                    ),
                    _ => format!(
                        "13C: {} classes share the line at {}",
                        a.classes.len(),
                        l.shift_text()
                    ),
                },
            ));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::Formula;
    use crate::spectrum::carbon;

    fn class(shift: f64, carbons: u32, hydrogens: u8) -> PredictedCarbon {
        PredictedCarbon {
            shift,
            sigma: 2.5,
            carbons,
            hydrogens,
            atoms: vec![0],
            halves: false,
        }
    }

    fn spectrum(text: &str, formula: &str) -> CarbonSpectrum {
        carbon::build(
            carbon::parse(text).unwrap(),
            &Formula::parse(formula).unwrap(),
            &crate::spectrum::solvent::SolventTable::embedded(),
            "CDCl3",
        )
        .unwrap()
    }

    /// Brute force over every assignment (each class to a line or none).
    fn brute(p: &[PredictedCarbon], s: &CarbonSpectrum, m: &ScoringModel) -> f64 {
        let lines = s.lines.len();
        let mut best = f64::INFINITY;
        let mut choice = vec![0usize; p.len()];
        loop {
            let scored = Scored {
                cost: 0.0,
                assigned: choice.iter().map(|&c| (c < lines).then_some(c)).collect(),
            };
            best = best.min(explain(p, s, m, &scored).total);
            let mut i = 0;
            loop {
                if i == choice.len() {
                    return best;
                }
                choice[i] += 1;
                if choice[i] <= lines {
                    break;
                }
                choice[i] = 0;
                i += 1;
            }
        }
    }

    #[test]
    fn propiophenone_beats_its_para_methyl_isomer_on_13c() {
        // Propiophenone, 13C (CDCl3): 200.8 (C=O), 137.0 (C), 132.9 (CH),
        // 128.6 (2 CH), 128.0 (2 CH), 31.8 (CH2), 8.3 (CH3): common
        // textbook values, from memory.
        let obs = spectrum(
            "13C NMR (CDCl3) δ 200.8 (C), 137.0 (C), 132.9 (CH), 128.6 (CH, 2C), 128.0 (CH, 2C), 31.8 (CH2), 8.3 (CH3)",
            "C9H10O",
        );
        let m = ScoringModel::embedded();
        // Hand-built predictions (additive-increment estimates).
        let propiophenone = [
            class(199.0, 1, 0),
            class(137.5, 1, 0),
            class(132.5, 1, 1),
            class(128.4, 2, 1),
            class(128.1, 2, 1),
            class(31.5, 1, 2),
            class(8.0, 1, 3),
        ];
        // 4'-methylacetophenone: same signal count but CH3 x2, no CH2.
        let methylacetophenone = [
            class(197.5, 1, 0),
            class(143.5, 1, 0),
            class(135.0, 1, 0),
            class(129.2, 2, 1),
            class(128.4, 2, 1),
            class(26.5, 1, 3),
            class(21.5, 1, 3),
        ];
        let a = score(&propiophenone, &obs, &m, f64::INFINITY).unwrap();
        let b = score(&methylacetophenone, &obs, &m, f64::INFINITY).unwrap();
        assert_eq!(
            a.assigned,
            (0..7).map(Some).collect::<Vec<_>>(),
            "every class on its own line"
        );
        // Two H-count mismatches at least (CH2 line, a C line as CH...).
        assert!(
            a.cost + 2.0 * m.carbon.hydrogens_mismatch < b.cost,
            "{} vs {}",
            a.cost,
            b.cost
        );
        let e = explain(&propiophenone, &obs, &m, &a);
        assert!((e.total - a.cost).abs() < 1e-9);
        assert!((brute(&propiophenone, &obs, &m) - a.cost).abs() < 1e-9);
    }

    #[test]
    fn the_signal_count_separates_para_from_ortho() {
        // p-xylene: 3 lines (134.7 C, 129.0 CH, 21.0 CH3); o-xylene: 4
        // classes (common practice: 13C signal counts by symmetry; shifts
        // from memory).
        let obs = spectrum("134.7 (C), 129.0 (CH), 21.0 (CH3)", "C8H10");
        let m = ScoringModel::embedded();
        let para = [class(134.5, 2, 0), class(129.1, 4, 1), class(21.2, 2, 3)];
        let ortho = [
            class(136.5, 2, 0),
            class(129.6, 2, 1),
            class(125.8, 2, 1),
            class(19.7, 2, 3),
        ];
        let a = score(&para, &obs, &m, f64::INFINITY).unwrap();
        let b = score(&ortho, &obs, &m, f64::INFINITY).unwrap();
        assert!(a.cost + 1.5 < b.cost, "{} vs {}", a.cost, b.cost);
        assert!((brute(&ortho, &obs, &m) - b.cost).abs() < 1e-9);
    }

    #[test]
    fn counts_and_solvent_lines() {
        // A counted list: two classes of one carbon on a 2C line pay the
        // overlap and the second class's sigma normalisation, ln(2.5 / 0.5),
        // but no count term; one class of two carbons pays neither.
        let obs = spectrum("128.5 (CH, 2C), 21.0 (CH3, 2C)", "C4H8");
        let m = ScoringModel::embedded();
        let one = [class(128.4, 2, 1), class(21.0, 2, 3)];
        let two = [class(128.4, 1, 1), class(128.6, 1, 1), class(21.0, 2, 3)];
        let a = score(&one, &obs, &m, f64::INFINITY).unwrap();
        let b = score(&two, &obs, &m, f64::INFINITY).unwrap();
        assert!(
            (b.cost - a.cost - m.carbon.overlap - 5f64.ln()).abs() < 0.1,
            "{} {}",
            a.cost,
            b.cost
        );
        // The CDCl3 line costs only its set-aside term.
        let with = spectrum(
            "13C NMR (CDCl3) δ 128.5 (CH, 2C), 77.2, 21.0 (CH3, 2C)",
            "C4H8",
        );
        let c = score(&one, &with, &m, f64::INFINITY).unwrap();
        assert!((c.cost - a.cost - m.carbon.solvent_set_aside).abs() < 1e-9);
        // Cutoff: nothing below the optimum.
        assert!(score(&one, &obs, &m, a.cost - 1e-6).is_none());
    }

    #[test]
    fn prepared_equals_plain_and_brute_force() {
        let m = ScoringModel::embedded();
        let obs = spectrum(
            "170.2 (C), 133.0 (CH), 128.4 (CH, 2C), 77.2, 60.1 (CH2), 30.5, 14.1 (CH3)",
            "C12H16O2",
        );
        let p = CarbonPrepared::new(&obs, &m);
        // A few deterministic pseudo-random predictions.
        let mut x: u64 = 12345;
        let mut next = || {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            x
        };
        for _ in 0..40 {
            let n = 1 + (next() % 5) as usize;
            let pred: Vec<PredictedCarbon> = (0..n)
                .map(|_| {
                    class(
                        (next() % 2000) as f64 / 10.0,
                        1 + (next() % 2) as u32,
                        (next() % 4) as u8,
                    )
                })
                .collect();
            let a = p.score(&pred, f64::INFINITY).unwrap();
            let b = score(&pred, &obs, &m, f64::INFINITY).unwrap();
            assert_eq!(a, b);
            assert!((brute(&pred, &obs, &m) - a.cost).abs() < 1e-9);
        }
    }
}
