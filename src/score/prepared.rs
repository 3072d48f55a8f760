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
//! The lower bound behind the early exits: every pair cost is its shift
//! term plus a multiplicity and a J term that are never negative (the model
//! refuses probabilities outside (0, 1] and negative caps, see
//! `model::validate`), so with the shift term alone in place of the pair
//! cost every assignment costs no more, and any lower bound of that relaxed
//! problem (the search's root bound, or the search itself) bounds the real
//! one. The real-number argument holds in floating point up to rounding: all
//! terms are non-negative and the ones a bound keeps are small (each at most
//! an unassigned or unexplained penalty plus a group's cheapest option), so
//! rounding stays many orders below 1e-9, and a bound must clear the cutoff
//! by `SLACK` (relative) before it rejects.

use super::assign::{self, CostsRef, Workspace};
use super::halves;
use super::model::{shift_term, ScoringModel};
use super::pattern_rows::PatternRows;
use super::Scored;
use crate::predict::PredictedSignal;
use crate::spectrum::{ObservedMultiplet, Spectrum};
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
/// known: the predictor's own record of that step (shift, sigma, H count,
/// exchangeable), so a ranking passes the predictor's list straight in.
pub use crate::predict::ShiftEstimate as GroupShift;

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
    /// Per multiplet the interval it covers, for the shift bound.
    lo: Vec<f64>,
    hi: Vec<f64>,
}

static NEXT_ID: AtomicU64 = AtomicU64::new(1);

/// Search nodes `may_beat` spends on the relaxed problem before it gives up
/// and answers true (a rare candidate whose relaxed search is long is
/// then simply scored).
const MAY_BEAT_NODES: u64 = 64;

/// A thread's buffers (grown to the largest candidate, then reused).
#[derive(Default)]
struct Work {
    /// The `Prepared` whose rows and sigma terms are held (0: none).
    owner: u64,
    /// Lower bounds of the shift terms, `g * m`.
    bound: Vec<f64>,
    pair: Vec<f64>,
    unassigned: Vec<f64>,
    hydrogens: Vec<u32>,
    min_choice: Vec<f64>,
    /// Scratch of the floored root bound.
    extra: Vec<f64>,
    floor: Vec<f64>,
    /// Recent (predicted sigma bits, terms): a predictor uses a handful of
    /// sigmas, so this spares a logarithm and a division per group.
    sigmas: [Option<(u64, Sigma)>; 4],
    next_sigma: usize,
    rows: PatternRows,
    search: Workspace,
}

/// A group's sigma after the floor, ln(sigma / min_sigma), and
/// 1 / (2 sigma^2) for the bound.
#[derive(Clone, Copy)]
struct Sigma {
    sigma: f64,
    ln: f64,
    inv: f64,
}

impl Work {
    fn claim(&mut self, p: &Prepared) {
        if self.owner != p.id {
            self.owner = p.id;
            self.rows.reset(p.spectrum.multiplets.len());
            self.sigmas = [None; 4];
        }
    }

    fn sigma(&mut self, model: &ScoringModel, predicted_sigma: f64) -> Sigma {
        let bits = predicted_sigma.to_bits();
        if let Some((_, s)) = self.sigmas.iter().flatten().find(|e| e.0 == bits) {
            return *s;
        }
        let (sigma, ln) = model.shift_sigma(predicted_sigma);
        let s = Sigma {
            sigma,
            ln,
            inv: 1.0 / (2.0 * sigma * sigma),
        };
        self.sigmas[self.next_sigma] = Some((bits, s));
        self.next_sigma = (self.next_sigma + 1) % self.sigmas.len();
        s
    }

    /// Fill the lower bounds of the shift terms, the unassigned costs and
    /// the H counts of the groups. The bound is the shift term with the
    /// division by 2 sigma^2 done as a multiplication by its reciprocal (a
    /// few ulp apart, far inside [`SLACK`]) and the distance to a range
    /// computed without branches, so that the loop vectorises.
    fn bounds(&mut self, p: &Prepared, groups: impl Iterator<Item = (f64, f64, u32, bool)>) {
        self.bound.clear();
        self.unassigned.clear();
        self.hydrogens.clear();
        for (shift, sigma, hydrogens, exchangeable) in groups {
            let s = self.sigma(p.model, sigma);
            self.bound.extend(p.lo.iter().zip(&p.hi).map(|(&lo, &hi)| {
                let d = (lo - shift).max(shift - hi).max(0.0);
                d * d * s.inv + s.ln
            }));
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
        // The interval a multiplet covers (one point without a range), ends
        // in order whatever the input's order.
        let ends = |o: &ObservedMultiplet| match o.range {
            Some((a, b)) => (a.min(b), a.max(b)),
            None => (o.shift, o.shift),
        };
        Prepared {
            spectrum,
            model,
            id: NEXT_ID.fetch_add(1, Ordering::Relaxed),
            observed_h: obs.iter().map(|o| o.hydrogens).collect(),
            empty: obs.iter().map(|o| model.empty_cost(o)).collect(),
            overlap: obs.iter().map(|o| model.overlap_cost(o)).collect(),
            lo: obs.iter().map(|o| ends(o).0).collect(),
            hi: obs.iter().map(|o| ends(o).1).collect(),
        }
    }

    pub fn spectrum(&self) -> &'a Spectrum {
        self.spectrum
    }

    pub fn model(&self) -> &'a ScoringModel {
        self.model
    }

    fn view<'c>(
        &'c self,
        pair: &'c [f64],
        unassigned: &'c [f64],
        hydrogens: &'c [u32],
    ) -> CostsRef<'c> {
        CostsRef {
            groups: hydrogens.len(),
            multiplets: self.empty.len(),
            pair,
            unassigned,
            hydrogens,
            observed_h: &self.observed_h,
            empty: &self.empty,
            overlap: &self.overlap,
            abs_sigma: self.model.integral.abs_sigma,
            rel_sigma: self.model.integral.rel_sigma,
        }
    }

    /// The search's first bound (the root bound raised by the multiplets'
    /// floors, [`assign::root_bound_floored`]) over the shift terms alone
    /// (filled by `Work::bounds`): a lower bound of every assignment's cost.
    fn shift_root_bound(&self, w: &mut Work) -> f64 {
        let Work {
            bound,
            unassigned,
            hydrogens,
            min_choice,
            extra,
            floor,
            ..
        } = w;
        assign::root_bound_floored(
            &self.view(bound, unassigned, hydrogens),
            min_choice,
            extra,
            floor,
        )
    }

    /// Same result as `score::score(predicted, spectrum, model, cutoff)`:
    /// identical cost (bit for bit) and identical assignment. Allocates only
    /// the returned [`Scored`] (and, the first time a thread meets a
    /// predicted pattern, its remembered row).
    pub fn score(&self, predicted: &[PredictedSignal], cutoff: f64) -> Option<Scored> {
        with_work(|w| self.score_in(w, predicted, cutoff))
    }

    /// The best reading of `predicted`'s diastereotopic pairs (each whole
    /// or as two halves, src/score/halves.rs), each scored as
    /// [`Prepared::score`] does: the least cost and its assignment, with
    /// the list that reading gives when some group was split.
    pub fn score_halves(
        &self,
        predicted: &[PredictedSignal],
        cutoff: f64,
    ) -> Option<(Scored, Option<Vec<PredictedSignal>>)> {
        halves::best(predicted, cutoff, |list, cut| self.score(list, cut))
    }

    fn score_in(&self, w: &mut Work, predicted: &[PredictedSignal], cutoff: f64) -> Option<Scored> {
        w.claim(self);
        let m = self.empty.len();
        let finite = cutoff < f64::INFINITY;
        if finite {
            // Shift terms alone already bound the search's root bound from
            // below (module doc): leave before the multiplicity terms.
            w.bounds(
                self,
                predicted
                    .iter()
                    .map(|p| (p.shift, p.sigma, p.hydrogens, p.exchangeable)),
            );
            if clears(self.shift_root_bound(w), cutoff) {
                return None;
            }
        } else {
            w.unassigned.clear();
            w.hydrogens.clear();
            w.unassigned
                .extend(predicted.iter().map(|p| self.model.unassigned_cost(p)));
            w.hydrogens.extend(predicted.iter().map(|p| p.hydrogens));
        }
        w.pair.clear();
        for p in predicted {
            let s = w.sigma(self.model, p.sigma);
            let row = w.rows.row(p, self.model, &self.spectrum.multiplets);
            // The terms and order of `ScoringModel::pair_cost_with` and
            // `PairCost::total`: (shift + multiplicity) + J.
            w.pair
                .extend(self.spectrum.multiplets.iter().enumerate().map(|(j, o)| {
                    shift_term(o.distance(p.shift), s.sigma, s.ln) + row[j] + row[m + j]
                }));
        }
        let Work {
            pair,
            unassigned,
            hydrogens,
            search,
            ..
        } = w;
        Scored::solve(&self.view(pair, unassigned, hydrogens), cutoff, search)
    }

    /// Lower-bound test for use before multiplicities are predicted.
    /// Returns false only when every assignment of these groups costs at
    /// least `cutoff` even if all multiplicity and J terms were zero (they
    /// are never negative), so the exact score of any prediction with these
    /// shifts, sigmas, H counts and exchangeable flags is >= `cutoff`.
    ///
    /// The shift terms are those of `ScoringModel::pair_cost` (same sigma
    /// floor, log term and distance to a reported range; see
    /// `Work::bounds` for the rounding). The relaxed problem goes through the
    /// same search (integrals and overlaps included) against the cutoff
    /// raised by the rounding slack, stopping at the first assignment below
    /// it and answering true when it would take more than
    /// `MAY_BEAT_NODES` nodes.
    ///
    /// A group marked as a diastereotopic pair is tried whole and as two
    /// halves (every reading, as [`Prepared::score_halves`] scores them):
    /// false only when no reading may beat the cutoff.
    pub fn may_beat(&self, groups: &[GroupShift], cutoff: f64) -> bool {
        halves::any_reading(groups, |g| self.may_beat_with(g, cutoff, true))
    }

    /// [`Prepared::may_beat`] with a lower bound of the cost: `None` when no
    /// reading may beat `cutoff`, else the least, over the readings that
    /// may, of the first bound over their shift terms
    /// ([`assign::root_bound_floored`]). A caller with another part of the
    /// cost (the 13C score) may search that part against `cutoff` minus
    /// this bound: the two parts add.
    pub fn may_beat_bound(&self, groups: &[GroupShift], cutoff: f64) -> Option<f64> {
        let mut least: Option<f64> = None;
        halves::any_reading(groups, |g| {
            if let Some(b) = self.reading_bound(g, cutoff) {
                least = Some(least.map_or(b, |l| l.min(b)));
            }
            false
        });
        least
    }

    /// The shift terms' bounds of `groups` into `w` (`Work::bounds`).
    fn shift_terms(&self, w: &mut Work, groups: &[GroupShift]) {
        w.claim(self);
        w.bounds(
            self,
            groups
                .iter()
                .map(|x| (x.shift, x.sigma, x.hydrogens, x.exchangeable)),
        );
    }

    /// One reading of [`Prepared::may_beat_bound`].
    fn reading_bound(&self, groups: &[GroupShift], cutoff: f64) -> Option<f64> {
        with_work(|w| {
            self.shift_terms(w, groups);
            let root = self.shift_root_bound(w);
            // Lowered by the rounding margin, so that a caller may subtract it.
            let bound = root - SLACK * (1.0 + root.abs());
            if cutoff.is_nan() || cutoff == f64::INFINITY {
                return Some(bound);
            }
            if clears(root, cutoff) {
                return None;
            }
            let Work {
                bound: b,
                unassigned,
                hydrogens,
                search,
                ..
            } = w;
            let raised = cutoff + SLACK * (1.0 + cutoff.abs());
            assign::may_reach_below(
                &self.view(b, unassigned, hydrogens),
                raised,
                search,
                MAY_BEAT_NODES,
            )
            .then_some(bound)
        })
    }

    /// [`Prepared::may_beat`] with the root bound only (no search, so no
    /// integral terms): less than half its cost, but on the C9H10O benchmark
    /// it lets through about 4.6 times as many candidates.
    pub fn may_beat_quick(&self, groups: &[GroupShift], cutoff: f64) -> bool {
        halves::any_reading(groups, |g| self.may_beat_with(g, cutoff, false))
    }

    fn may_beat_with(&self, groups: &[GroupShift], cutoff: f64, search_too: bool) -> bool {
        if cutoff.is_nan() || cutoff == f64::INFINITY {
            return true;
        }
        if search_too {
            return self.reading_bound(groups, cutoff).is_some();
        }
        with_work(|w| {
            self.shift_terms(w, groups);
            !clears(self.shift_root_bound(w), cutoff)
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
        p.iter().map(GroupShift::of).collect()
    }

    #[test]
    fn prepared_is_shared_between_threads() {
        fn sync<T: Sync>() {}
        sync::<Prepared>();
        // And threads score with their own buffers, to the same result.
        let model = ScoringModel::embedded();
        let mut st = 0x51u64;
        let s = spectrum(&mut st);
        let p = Prepared::new(&s, &model);
        let preds: Vec<_> = (0..50).map(|_| prediction(&mut st, &s)).collect();
        let here: Vec<_> = preds
            .iter()
            .map(|x| bits(p.score(x, f64::INFINITY)))
            .collect();
        let there = std::thread::scope(|sc| {
            sc.spawn(|| {
                preds
                    .iter()
                    .map(|x| bits(p.score(x, f64::INFINITY)))
                    .collect::<Vec<_>>()
            })
            .join()
            .unwrap()
        });
        assert_eq!(here, there);
    }

    // Reference: the plain `score::score` path (itself checked against an
    // exhaustive search in assign.rs); internal consistency, no outside source.
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

    // Source: property of the bound (every dropped term is >= 0), checked
    // against the exact score on random instances.
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
                assert!(p.may_beat_quick(&g, exact + above), "{exact} {predicted:?}");
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
                if !p.may_beat_quick(&g, cutoff) {
                    // The quick bound is the weaker one.
                    assert!(!p.may_beat(&g, cutoff));
                    assert!(exact >= cutoff);
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
            halves: false,
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
