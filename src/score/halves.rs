//! Diastereotopic pairs read either way. In a molecule with a stereocentre
//! the two methyls on a prochiral carbon (isopropyl, gem-dimethyl) and the
//! two H of a CH2 are diastereotopic: anisochronous and usually resolved as
//! two signals (two 3H doublets, two 13C lines), but often close enough to
//! be reported as one (common practice). The predictor marks such a group
//! (`halves`, src/predict/groups.rs) and the scorer takes whichever reading
//! explains the data better, with no penalty for either: the cost is the
//! least over every way of reading the marked items (each one whole or as
//! two halves), each reading scored exactly.
//!
//! Exactness and bounds: each reading is an ordinary prediction list, so its
//! score is exact, and the least of exact scores is exact. A lower bound of
//! the least is the least of the readings' lower bounds, so a test that
//! rejects only when every reading's bound clears the cutoff stays sound
//! ([`super::Prepared::may_beat`]). Ties keep the earlier reading (the whole
//! groups first), so the result does not depend on anything but the lists.
//! At most `MAX_HALVES` items per molecule are marked (2^k readings).

use super::Scored;
use crate::predict::{PredictedCarbon, PredictedSignal, ShiftEstimate};

/// An item of a predicted list that may be a diastereotopic pair.
pub trait Halves: Clone {
    /// Whether the item may be read as two halves.
    fn halves(&self) -> bool;
    /// A copy with half the H (or carbons), unmarked.
    fn halved(&self) -> Self;
    /// The atoms of the two halves when the halves lie on different atoms
    /// (one methyl of each pair first, as the predictor orders them).
    fn split_atoms(&self) -> Option<(Vec<usize>, Vec<usize>)> {
        None
    }
    fn set_atoms(&mut self, _atoms: Vec<usize>) {}

    /// The two halves (each unmarked).
    fn split(&self) -> (Self, Self) {
        let mut a = self.halved();
        let mut b = a.clone();
        if let Some((x, y)) = self.split_atoms() {
            a.set_atoms(x);
            b.set_atoms(y);
        }
        (a, b)
    }
}

/// The first and the second half of `atoms`.
fn halves_of(atoms: &[usize]) -> (Vec<usize>, Vec<usize>) {
    let (a, b) = atoms.split_at(atoms.len() / 2);
    (a.to_vec(), b.to_vec())
}

/// `Halves` for a predicted list item with `atoms` and a count field
/// (`hydrogens`, `carbons`); `$apart` says whether its halves lie on
/// different atoms.
macro_rules! listed_item {
    ($t:ty, $count:ident, $apart:expr) => {
        impl Halves for $t {
            fn halves(&self) -> bool {
                self.halves
            }

            fn halved(&self) -> Self {
                let mut x = self.clone();
                x.halves = false;
                x.$count /= 2;
                x
            }

            fn split_atoms(&self) -> Option<(Vec<usize>, Vec<usize>)> {
                let apart: fn(&$t) -> bool = $apart;
                apart(self).then(|| halves_of(&self.atoms))
            }

            fn set_atoms(&mut self, atoms: Vec<usize>) {
                self.atoms = atoms;
            }
        }
    };
}

// A 13C pair is always two methyls.
listed_item!(PredictedCarbon, carbons, |_| true);

// Two methyls per prochiral carbon (3 H per atom) split their atoms; a CH2
// pair keeps all its atoms in both halves, and each of its H is split by
// the other (the geminal J) and by every vicinal H on its own.
impl Halves for PredictedSignal {
    fn halves(&self) -> bool {
        self.halves
    }

    fn halved(&self) -> Self {
        let mut x = self.clone();
        x.halves = false;
        x.hydrogens /= 2;
        if let Some((m, j)) = &self.half_pattern {
            // The predictor's pattern of one H from its own couplings.
            x.multiplicity = m.clone();
            x.j_hz = j.clone();
        } else if self.geminal_hz > 0.0 && !self.methyl_pair() {
            with_geminal(&mut x, self.geminal_hz);
        }
        x.geminal_hz = 0.0;
        x.half_pattern = None;
        x
    }

    fn split_atoms(&self) -> Option<(Vec<usize>, Vec<usize>)> {
        self.methyl_pair().then(|| halves_of(&self.atoms))
    }

    fn set_atoms(&mut self, atoms: Vec<usize>) {
        self.atoms = atoms;
    }
}

impl PredictedSignal {
    fn methyl_pair(&self) -> bool {
        self.hydrogens as usize == 3 * self.atoms.len()
    }
}

/// The pattern of one H of a diastereotopic CH2 read as its own signal:
/// the whole group's couplings plus the geminal J to the other H, and the
/// H of a partner CH2 or of two CH coupled apart (two diastereotopic or
/// unlike H have unlike J: a whole-group t becomes d d, written ddd or dt
/// as they come out; a methyl's three H stay together). Largest J first;
/// patterns without a trade name (more than four J, or a quintet or more
/// beside others) are m, as the predictor writes them (src/predict/coupling.rs).
fn with_geminal(x: &mut PredictedSignal, geminal: f64) {
    use crate::predict::Multiplicity;
    let mut parts: Vec<(u8, f64)> = vec![(1, geminal)];
    match &x.multiplicity {
        Multiplicity::Multiplet => return,
        Multiplicity::Singlet => {}
        Multiplicity::Coupled(ns) => {
            for (&n, &j) in ns.iter().zip(&x.j_hz) {
                if n <= 2 {
                    parts.extend(std::iter::repeat_n((1, j), n as usize));
                } else {
                    parts.push((n, j));
                }
            }
        }
    }
    (x.multiplicity, x.j_hz) = crate::predict::coupling::named(&mut parts);
}

impl Halves for ShiftEstimate {
    fn halves(&self) -> bool {
        self.halves
    }

    fn halved(&self) -> Self {
        ShiftEstimate {
            hydrogens: self.hydrogens / 2,
            halves: false,
            ..*self
        }
    }
}

/// Number of marked items.
pub fn marked<T: Halves>(items: &[T]) -> usize {
    items.iter().filter(|x| x.halves()).count()
}

/// Reading `mask` of `items` into `out`: the k-th marked item split in
/// place when bit k of `mask` is set, whole otherwise.
pub fn reading<T: Halves>(items: &[T], mask: u32, out: &mut Vec<T>) {
    out.clear();
    let mut k = 0;
    for x in items {
        if x.halves() {
            if mask >> k & 1 == 1 {
                let (a, b) = x.split();
                out.push(a);
                out.push(b);
            } else {
                out.push(x.clone());
            }
            k += 1;
        } else {
            out.push(x.clone());
        }
    }
}

/// The best reading of `items` below `cutoff` under `score` (an exact
/// scorer answering `None` when nothing costs less than its cutoff): its
/// score, and the reading itself when some item was split (`None`: the list
/// as given). `None` when no reading costs less than `cutoff`.
pub fn best<T: Halves>(
    items: &[T],
    cutoff: f64,
    mut score: impl FnMut(&[T], f64) -> Option<Scored>,
) -> Option<(Scored, Option<Vec<T>>)> {
    let mut found = score(items, cutoff).map(|s| (s, None));
    let k = marked(items);
    if k == 0 {
        return found;
    }
    let mut list = Vec::with_capacity(items.len() + k);
    for mask in 1..1u32 << k {
        reading(items, mask, &mut list);
        let cut = found.as_ref().map_or(cutoff, |f| f.0.cost);
        if let Some(s) = score(&list, cut) {
            found = Some((s, Some(list.clone())));
        }
    }
    found
}

/// Whether some reading of `items` passes `test` (a lower-bound test that
/// answers false only when that reading cannot beat the cutoff).
pub fn any_reading<T: Halves>(items: &[T], mut test: impl FnMut(&[T]) -> bool) -> bool {
    if test(items) {
        return true;
    }
    let k = marked(items);
    let mut list = Vec::with_capacity(items.len() + k);
    (1..1u32 << k).any(|mask| {
        reading(items, mask, &mut list);
        test(&list)
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::Formula;
    use crate::predict::Multiplicity;
    use crate::score::testgen::{prediction, rng, spectrum};
    use crate::score::{CarbonPrepared, Prepared, ScoringModel};
    use crate::spectrum::{carbon, integrals, journal, CarbonSpectrum, SolventTable, Spectrum};

    /// The halves of a diastereotopic CH2 gain the geminal J and their
    /// vicinal partners one by one (common practice: the two H of such a
    /// CH2 next to a CH are each a dd, next to a CH2 each a ddd or dt);
    /// a methyl pair's halves keep the whole group's pattern.
    #[test]
    fn a_ch2_pair_read_apart_shows_the_geminal_j() {
        let labels = |m: Multiplicity, j: Vec<f64>, h: u32, atoms: Vec<usize>| {
            let mut s = sig(2.0, h, m, atoms, true);
            s.j_hz = j;
            s.geminal_hz = 13.0;
            let (a, b) = s.split();
            assert_eq!(a, b);
            (a.label(), a.j_hz, a.hydrogens)
        };
        let c = Multiplicity::Coupled;
        assert_eq!(
            labels(Multiplicity::Singlet, vec![], 2, vec![4]),
            ("d".into(), vec![13.0], 1)
        );
        assert_eq!(
            labels(c(vec![1]), vec![7.0], 2, vec![4]),
            ("dd".into(), vec![13.0, 7.0], 1)
        );
        assert_eq!(
            labels(c(vec![2]), vec![7.0], 2, vec![4]),
            ("ddd".into(), vec![13.0, 7.0, 7.0], 1)
        );
        assert_eq!(
            labels(c(vec![3]), vec![7.0], 2, vec![4]),
            ("dq".into(), vec![13.0, 7.0], 1)
        );
        assert_eq!(
            labels(c(vec![2, 2]), vec![7.0, 5.0], 2, vec![4]),
            ("m".into(), vec![], 1)
        );
        assert_eq!(
            labels(Multiplicity::Multiplet, vec![], 2, vec![4]),
            ("m".into(), vec![], 1)
        );
        // Two CH2 atoms of one symmetry class: one H of each per half.
        assert_eq!(
            labels(c(vec![1]), vec![7.0], 4, vec![4, 9]),
            ("dd".into(), vec![13.0, 7.0], 2)
        );
        // Two methyls (3 H per atom): no geminal J between them.
        let mut pair = sig(0.9, 6, c(vec![1]), vec![3, 7], true);
        pair.geminal_hz = 0.0;
        let (a, b) = pair.split();
        assert_eq!(
            (a.label(), a.atoms, b.atoms),
            ("d".into(), vec![3], vec![7])
        );
    }

    fn hydrogen(text: &str, formula: &str) -> Spectrum {
        integrals::build(
            journal::parse(text).unwrap(),
            &Formula::parse(formula).unwrap(),
            &SolventTable::embedded(),
        )
        .unwrap()
    }

    fn carbon13(text: &str, formula: &str) -> CarbonSpectrum {
        carbon::build(
            carbon::parse(text).unwrap(),
            &Formula::parse(formula).unwrap(),
            &SolventTable::embedded(),
            "CDCl3",
        )
        .unwrap()
    }

    fn sig(
        shift: f64,
        h: u32,
        m: Multiplicity,
        atoms: Vec<usize>,
        halves: bool,
    ) -> PredictedSignal {
        PredictedSignal {
            shift,
            sigma: 0.15,
            hydrogens: h,
            multiplicity: m,
            j_hz: vec![7.0],
            atoms,
            exchangeable: false,
            notes: vec![],
            halves,
            geminal_hz: 0.0,
            half_pattern: None,
        }
    }

    /// 3-methylbutan-2-ol as the predictor gives it (shifts invented near
    /// the usual ones): the isopropyl's two methyls as one 6H doublet marked
    /// as a pair, the CH3CH doublet, the two CH and the OH.
    fn methylbutanol(halves: bool) -> Vec<PredictedSignal> {
        let d = || Multiplicity::Coupled(vec![1]);
        vec![
            sig(3.55, 1, Multiplicity::Multiplet, vec![3], false),
            sig(1.65, 1, Multiplicity::Multiplet, vec![1], false),
            sig(1.50, 1, Multiplicity::Singlet, vec![5], false),
            sig(1.15, 3, d(), vec![4], false),
            sig(0.90, 6, d(), vec![0, 2], halves),
        ]
    }

    /// The best reading costs the least of the whole (`a`) and the split
    /// (`b`) list's scores, comes back split exactly when `want_split`, and
    /// the reading that fits beats the other by a margin; its cost.
    fn least_of_two<T>(
        text: &str,
        a: Option<Scored>,
        b: Option<Scored>,
        best: Option<(Scored, Option<Vec<T>>)>,
        want_split: bool,
    ) -> f64 {
        let (a, b) = (a.unwrap().cost, b.unwrap().cost);
        let (best, list) = best.unwrap();
        assert_eq!(best.cost, a.min(b), "{text}");
        assert_eq!(list.is_some(), want_split, "{text}: {a} {b}");
        assert!((a - b).abs() > 1.0, "{text}: {a} {b}");
        best.cost
    }

    // Common practice: an isopropyl next to a stereocentre is reported as
    // two 3H doublets when resolved and as one 6H doublet when not; the
    // score takes whichever reading fits, with no penalty for either: the
    // least of the whole and the split list's exact scores.
    #[test]
    fn a_pair_is_read_whole_or_as_halves_whichever_fits() {
        let m = ScoringModel::embedded();
        let whole = methylbutanol(false);
        let marked = methylbutanol(true);
        let mut split = Vec::new();
        reading(&marked, 1, &mut split);
        assert_eq!(split.len(), 6);
        assert_eq!((split[4].hydrogens, split[5].hydrogens), (3, 3));
        assert_eq!(
            (&split[4].atoms[..], &split[5].atoms[..]),
            (&[0][..], &[2][..])
        );
        for (text, want_split) in [
            // Resolved: two methyl doublets.
            (
                "3.58 (m, 1H), 1.68 (m, 1H), 1.45 (br s, 1H), 1.16 (d, J = 6.3 Hz, 3H), \
              0.92 (d, J = 6.8 Hz, 3H), 0.89 (d, J = 6.8 Hz, 3H)",
                true,
            ),
            // Not resolved: one 6H doublet.
            (
                "3.58 (m, 1H), 1.68 (m, 1H), 1.45 (br s, 1H), 1.16 (d, J = 6.3 Hz, 3H), \
              0.90 (d, J = 6.8 Hz, 6H)",
                false,
            ),
        ] {
            let obs = hydrogen(text, "C5H12O");
            let p = Prepared::new(&obs, &m);
            let best = least_of_two(
                text,
                p.score(&whole, f64::INFINITY),
                p.score(&split, f64::INFINITY),
                p.score_halves(&marked, f64::INFINITY),
                want_split,
            );
            // Unmarked lists score as before.
            assert!(p.score_halves(&whole, f64::INFINITY).unwrap().1.is_none());
            // A cutoff at the best cost finds nothing (strictly below).
            assert!(p.score_halves(&marked, best).is_none());
        }
    }

    // Common practice: the two methyl carbons of such an isopropyl give two
    // 13C lines about 1-2 ppm apart, or one line of 2C.
    #[test]
    fn a_carbon_pair_is_read_whole_or_as_two_classes() {
        let m = ScoringModel::embedded();
        let class =
            |shift: f64, carbons: u32, h: u8, atoms: Vec<usize>, halves: bool| PredictedCarbon {
                shift,
                sigma: 1.5,
                carbons,
                hydrogens: h,
                atoms,
                halves,
            };
        let marked = vec![
            class(72.5, 1, 1, vec![3], false),
            class(35.0, 1, 1, vec![1], false),
            class(20.0, 1, 3, vec![4], false),
            class(18.0, 2, 3, vec![0, 2], true),
        ];
        let mut whole = marked.clone();
        whole[3].halves = false;
        let mut split = Vec::new();
        reading(&marked, 1, &mut split);
        for (text, want_split) in [
            (
                "72.8 (CH), 35.1 (CH), 20.3 (CH3), 18.9 (CH3), 17.6 (CH3)",
                true,
            ),
            ("72.8 (CH), 35.1 (CH), 20.3 (CH3), 18.2 (CH3, 2C)", false),
        ] {
            let obs = carbon13(text, "C5H12O");
            let p = CarbonPrepared::new(&obs, &m);
            least_of_two(
                text,
                p.score(&whole, f64::INFINITY),
                p.score(&split, f64::INFINITY),
                p.score_halves(&marked, f64::INFINITY),
                want_split,
            );
        }
    }

    // Source: property of the bound (the least of lower bounds bounds the
    // least of the scores), checked against the exact best reading on
    // random instances with marked pairs.
    #[test]
    fn may_beat_stays_a_lower_bound_with_pairs() {
        let model = ScoringModel::embedded();
        let mut st = 0x7f4a_7c15_9e37_79b9u64;
        let (mut rejected, mut split_won) = (0, 0);
        for _ in 0..400 {
            let s = spectrum(&mut st);
            let p = Prepared::new(&s, &model);
            let mut predicted = prediction(&mut st, &s);
            // Mark up to three groups with an even H count as pairs.
            for x in predicted.iter_mut().take(3) {
                if x.hydrogens % 2 == 0 && rng(&mut st) < 0.7 {
                    x.halves = true;
                }
            }
            let g: Vec<ShiftEstimate> = predicted.iter().map(ShiftEstimate::of).collect();
            let (best, list) = p.score_halves(&predicted, f64::INFINITY).unwrap();
            split_won += list.is_some() as usize;
            // Every reading costs at least the best one.
            let mut r = Vec::new();
            for mask in 0..1u32 << marked(&predicted) {
                reading(&predicted, mask, &mut r);
                assert!(p.score(&r, f64::INFINITY).unwrap().cost >= best.cost);
            }
            for above in [1e-12, 1e-6, 0.1, 3.0] {
                assert!(p.may_beat(&g, best.cost + above));
                assert!(p.may_beat_quick(&g, best.cost + above));
            }
            for _ in 0..4 {
                let cutoff = rng(&mut st) * best.cost * 1.2;
                if !p.may_beat(&g, cutoff) {
                    rejected += 1;
                    assert!(best.cost >= cutoff);
                    assert!(p.score_halves(&predicted, cutoff).is_none());
                }
            }
        }
        // Both readings won somewhere, and the bound has teeth.
        assert!(split_won > 10, "{split_won}");
        assert!(rejected > 100, "{rejected}");
    }
}
