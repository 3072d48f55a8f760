//! Scoring a stream of candidates against one spectrum: everything that
//! depends only on the spectrum and the model is computed once, the
//! per-candidate arrays live in reused per-thread buffers, and hopeless
//! candidates leave on a lower bound before the expensive terms.
//!
//! [`Prepared::score`] gives exactly what [`super::score`] gives (same cost
//! bits, same assignment): it builds the same pair costs with the same
//! arithmetic and runs the same search ([`assign::solve_in`]). The early
//! exits only ever answer `None` where the full computation would.
//!
//! The lower bound behind both early exits: every pair cost is its shift
//! term plus a multiplicity and a J term that are never negative (the model
//! refuses probabilities outside (0, 1] and negative caps, see
//! `model::validate`), so with the shift term alone in place of the pair
//! cost every assignment costs no more, and any lower bound of that relaxed
//! problem bounds the real one. The bound is computed in floating point,
//! where the real-number argument holds up to rounding; all terms are
//! non-negative and far below 1e6, so rounding stays below 1e-9 and the
//! bound must clear the cutoff by [`SLACK`] (relative) before it rejects.

use super::assign::{self, CostsRef, Workspace, NONE};
use super::model::{shift_term, ScoringModel};
use super::pattern_rows::PatternRows;
use super::Scored;
use crate::predict::PredictedSignal;
use crate::spectrum::Spectrum;
use std::cell::RefCell;
use std::sync::atomic::{AtomicU64, Ordering};

/// Margin (relative to the bound) by which a floating-point lower bound
/// must reach the cutoff before a candidate is rejected on it.
const SLACK: f64 = 1e-9;

/// True when `bound` shows, despite rounding, that nothing reaches below
/// `cutoff`.
fn clears(bound: f64, cutoff: f64) -> bool {
    bound - SLACK * (1.0 + bound.abs()) >= cutoff
}

/// What [`Prepared::may_beat`] needs of a group before its multiplicity is
/// known.
#[derive(Clone, Copy, Debug)]
pub struct GroupShift {
    pub shift: f64,
    pub sigma: f64,
    pub hydrogens: u32,
    pub exchangeable: bool,
}

/// The spectrum- and model-constant part of scoring, built once per ranking
/// and shared by all threads.
pub struct Prepared<'a> {
    spectrum: &'a Spectrum,
    model: &'a ScoringModel,
    /// Tells a thread's buffers which spectrum and model their remembered
    /// rows belong to.
    id: u64,
    observed_h: Vec<Option<f64>>,
    empty: Vec<f64>,
    overlap: Vec<f64>,
}

static NEXT_ID: AtomicU64 = AtomicU64::new(1);

/// A thread's buffers (grown to the largest candidate, then reused).
#[derive(Default)]
struct Work {
    /// The `Prepared` whose rows and log terms are held (0: none).
    owner: u64,
    shift: Vec<f64>,
    pair: Vec<f64>,
    unassigned: Vec<f64>,
    hydrogens: Vec<u32>,
    min_choice: Vec<f64>,
    /// Recent (predicted sigma bits, floored sigma, ln term): a predictor
    /// uses a handful of sigmas, so this spares the logarithm per group.
    sigmas: [Option<(u64, f64, f64)>; 4],
    next_sigma: usize,
    rows: PatternRows,
    search: Workspace,
}

impl Work {
    fn claim(&mut self, p: &Prepared) {
        if self.owner != p.id {
            self.owner = p.id;
            self.rows.reset(p.spectrum.multiplets.len());
            self.sigmas = [None; 4];
        }
    }

    fn shift_sigma(&mut self, model: &ScoringModel, predicted_sigma: f64) -> (f64, f64) {
        let bits = predicted_sigma.to_bits();
        if let Some((_, s, l)) = self.sigmas.iter().flatten().find(|e| e.0 == bits) {
            return (*s, *l);
        }
        let (s, l) = model.shift_sigma(predicted_sigma);
        self.sigmas[self.next_sigma] = Some((bits, s, l));
        self.next_sigma = (self.next_sigma + 1) % self.sigmas.len();
        (s, l)
    }

    /// Fill the shift terms, unassigned costs and H counts of `g` groups.
    fn shifts(
        &mut self,
        p: &Prepared,
        groups: impl Iterator<Item = (f64, f64, u32, bool)>,
        g: usize,
    ) {
        let multiplets = &p.spectrum.multiplets;
        let m = multiplets.len();
        self.shift.clear();
        self.shift.reserve(g * m);
        self.unassigned.clear();
        self.hydrogens.clear();
        for (shift, sigma, hydrogens, exchangeable) in groups {
            let (sigma, ln_sigma) = self.shift_sigma(p.model, sigma);
            for o in multiplets {
                self.shift
                    .push(shift_term(o.distance(shift), sigma, ln_sigma));
            }
            self.unassigned
                .push(p.model.unassigned_cost_of(hydrogens, exchangeable));
            self.hydrogens.push(hydrogens);
        }
    }
}

thread_local! {
    static WORK: RefCell<Work> = RefCell::new(Work::default());
}

/// Run `f` on this thread's buffers (fresh ones if they are in use).
fn with_work<R>(f: impl FnOnce(&mut Work) -> R) -> R {
    WORK.with(|w| match w.try_borrow_mut() {
        Ok(mut w) => f(&mut w),
        Err(_) => f(&mut Work::default()),
    })
}

impl<'a> Prepared<'a> {
    pub fn new(spectrum: &'a Spectrum, model: &'a ScoringModel) -> Prepared<'a> {
        let obs = &spectrum.multiplets;
        Prepared {
            spectrum,
            model,
            id: NEXT_ID.fetch_add(1, Ordering::Relaxed),
            observed_h: obs.iter().map(|o| o.hydrogens).collect(),
            empty: obs.iter().map(|o| model.empty_cost(o)).collect(),
            overlap: obs.iter().map(|o| model.overlap_cost(o)).collect(),
        }
    }

    pub fn spectrum(&self) -> &'a Spectrum {
        self.spectrum
    }

    pub fn model(&self) -> &'a ScoringModel {
        self.model
    }

    fn view<'c>(&'c self, pair: &'c [f64], w: &'c Work) -> CostsRef<'c> {
        CostsRef {
            groups: w.hydrogens.len(),
            multiplets: self.empty.len(),
            pair,
            unassigned: &w.unassigned,
            hydrogens: &w.hydrogens,
            observed_h: &self.observed_h,
            empty: &self.empty,
            overlap: &self.overlap,
            abs_sigma: self.model.integral.abs_sigma,
            rel_sigma: self.model.integral.rel_sigma,
        }
    }

    /// Same result as `score::score(predicted, spectrum, model, cutoff)`:
    /// identical cost (bit for bit) and identical assignment. Allocates only
    /// the returned [`Scored`] (and, the first time a thread meets a
    /// predicted pattern, its remembered row).
    pub fn score(&self, predicted: &[PredictedSignal], cutoff: f64) -> Option<Scored> {
        with_work(|w| self.score_in(w, predicted, cutoff))
    }

    fn score_in(&self, w: &mut Work, predicted: &[PredictedSignal], cutoff: f64) -> Option<Scored> {
        w.claim(self);
        let g = predicted.len();
        let m = self.empty.len();
        w.shifts(
            self,
            predicted
                .iter()
                .map(|p| (p.shift, p.sigma, p.hydrogens, p.exchangeable)),
            g,
        );
        // Shift terms alone already bound the root bound of the search from
        // below (module doc): leave before the multiplicity terms.
        if cutoff < f64::INFINITY {
            let mut min_choice = std::mem::take(&mut w.min_choice);
            let bound = assign::root_bound(&self.view(&w.shift, w), &mut min_choice);
            w.min_choice = min_choice;
            if clears(bound, cutoff) {
                return None;
            }
        }
        let mut pair = std::mem::take(&mut w.pair);
        pair.clear();
        pair.reserve(g * m);
        for (gi, p) in predicted.iter().enumerate() {
            let row = w.rows.row(p, self.model, &self.spectrum.multiplets);
            let shift = &w.shift[gi * m..(gi + 1) * m];
            // The order of `PairCost::total`: (shift + multiplicity) + J.
            pair.extend((0..m).map(|j| shift[j] + row[j] + row[m + j]));
        }
        let mut search = std::mem::take(&mut w.search);
        let cost = assign::solve_in(&self.view(&pair, w), cutoff, &mut search);
        let scored = cost.map(|cost| Scored {
            cost,
            assigned: search
                .choice()
                .iter()
                .map(|&j| (j != NONE).then_some(j as usize))
                .collect(),
        });
        w.search = search;
        w.pair = pair;
        scored
    }

    /// Lower-bound test for use before multiplicities are predicted.
    /// Returns false only when every assignment of these groups costs at
    /// least `cutoff` even if all multiplicity and J terms were zero (they
    /// are never negative), so the exact score of any prediction with these
    /// shifts, sigmas, H counts and exchangeable flags is >= `cutoff`.
    ///
    /// The shift terms are those of `ScoringModel::pair_cost` (same sigma
    /// floor, log term and distance to a reported range). The relaxed
    /// problem is solved exactly (the same search, integrals and overlaps
    /// included) against the cutoff raised by the rounding slack.
    pub fn may_beat(&self, groups: &[GroupShift], cutoff: f64) -> bool {
        if cutoff.is_nan() || cutoff == f64::INFINITY {
            return true;
        }
        with_work(|w| {
            w.claim(self);
            w.shifts(
                self,
                groups
                    .iter()
                    .map(|x| (x.shift, x.sigma, x.hydrogens, x.exchangeable)),
                groups.len(),
            );
            let raised = cutoff + SLACK * (1.0 + cutoff.abs());
            let mut search = std::mem::take(&mut w.search);
            let found = assign::solve_in(&self.view(&w.shift, w), raised, &mut search).is_some();
            w.search = search;
            found
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::score::testgen::{prediction, rng, spectrum};

    fn bits(s: Option<Scored>) -> Option<(u64, Vec<Option<usize>>)> {
        s.map(|s| (s.cost.to_bits(), s.assigned))
    }

    fn groups(p: &[PredictedSignal]) -> Vec<GroupShift> {
        p.iter()
            .map(|s| GroupShift {
                shift: s.shift,
                sigma: s.sigma,
                hydrogens: s.hydrogens,
                exchangeable: s.exchangeable,
            })
            .collect()
    }

    #[test]
    fn prepared_score_equals_plain_score_bit_for_bit() {
        let model = ScoringModel::embedded();
        let mut st = 0x2545_f491_4f6c_dd1du64;
        let spectra: Vec<Spectrum> = (0..300).map(|_| spectrum(&mut st)).collect();
        let prepared: Vec<Prepared> = spectra.iter().map(|s| Prepared::new(s, &model)).collect();
        let (mut compared, mut none) = (0, 0);
        for i in 0..spectra.len() {
            // Alternate between two spectra so a thread's remembered rows
            // must follow the `Prepared` they belong to.
            for k in 0..6 {
                let at = if k % 2 == 0 { i } else { i.saturating_sub(1) };
                let (s, p) = (&spectra[at], &prepared[at]);
                let predicted = prediction(&mut st, s);
                let exact = crate::score::score(&predicted, s, &model, f64::INFINITY).unwrap();
                let c = exact.cost;
                for cutoff in [
                    f64::INFINITY,
                    c,
                    c + 1e-12,
                    c - 1e-12,
                    c + 0.5,
                    c - 0.5,
                    c * 0.5,
                    c * 2.0,
                    0.0,
                    rng(&mut st) * 40.0,
                ] {
                    let old = crate::score::score(&predicted, s, &model, cutoff);
                    none += old.is_none() as usize;
                    assert_eq!(
                        bits(p.score(&predicted, cutoff)),
                        bits(old),
                        "spectrum {at}, cutoff {cutoff}, prediction {predicted:?}"
                    );
                    compared += 1;
                }
            }
        }
        // Both outcomes were exercised in quantity.
        assert!(
            none > compared / 5 && none < compared * 4 / 5,
            "{none} of {compared}"
        );
    }

    #[test]
    fn may_beat_never_rejects_a_candidate_below_the_cutoff() {
        let model = ScoringModel::embedded();
        let mut st = 0x9e37_79b9_7f4a_7c15u64;
        let mut rejected = 0;
        for _ in 0..500 {
            let s = spectrum(&mut st);
            let p = Prepared::new(&s, &model);
            let predicted = prediction(&mut st, &s);
            let g = groups(&predicted);
            let exact = crate::score::score(&predicted, &s, &model, f64::INFINITY)
                .unwrap()
                .cost;
            // Property of the bound: a candidate whose exact score is below
            // the cutoff is never rejected.
            for above in [1e-12, 1e-6, 0.1, 3.0, 50.0] {
                assert!(p.may_beat(&g, exact + above), "{exact} {predicted:?}");
            }
            assert!(p.may_beat(&g, f64::INFINITY));
            // And where it rejects, the exact scorer finds nothing either.
            for _ in 0..4 {
                let cutoff = rng(&mut st) * exact * 1.2;
                if !p.may_beat(&g, cutoff) {
                    rejected += 1;
                    assert!(exact >= cutoff);
                    assert!(p.score(&predicted, cutoff).is_none());
                }
            }
        }
        // The bound has teeth: it rejects a good share of the low cutoffs.
        assert!(rejected > 200, "{rejected}");
    }

    #[test]
    fn may_beat_bound_is_tight_on_one_group() {
        // One observed 3H singlet at 2.10 and one predicted 3H group at 2.10
        // with sigma 0.2: only the sigma normalisation ln(0.2 / 0.05) = 1.386
        // is certain (integral matches, no empty multiplet).
        let s = crate::score::testgen::spectrum(&mut 7u64);
        let model = ScoringModel::embedded();
        let mut one = s.clone();
        one.multiplets.truncate(1);
        let o = &mut one.multiplets[0];
        o.shift = 2.10;
        o.range = None;
        o.hydrogens = Some(3.0);
        o.solvent = None;
        let p = Prepared::new(&one, &model);
        let g = [GroupShift {
            shift: 2.10,
            sigma: 0.2,
            hydrogens: 3,
            exchangeable: false,
        }];
        let ln4 = (0.2f64 / 0.05).ln();
        assert!(p.may_beat(&g, ln4 + 1e-6));
        assert!(!p.may_beat(&g, ln4 - 1e-6));
        // A 1H group in that 3H multiplet: the integral term (3 - 1)^2 /
        // (2 (0.25 + 0.06 * 3)^2) = 10.8 is certain too.
        let g1 = [GroupShift {
            hydrogens: 1,
            ..g[0]
        }];
        let integral = 4.0 / (2.0 * (0.25f64 + 0.06 * 3.0).powi(2));
        let unassigned_or_not = (ln4 + integral).min(3.0 + 1.5 + 3.0 + 1.5 * 3.0);
        assert!(!p.may_beat(&g1, unassigned_or_not - 1e-6));
        assert!(p.may_beat(&g1, unassigned_or_not + 1e-6));
    }
}
