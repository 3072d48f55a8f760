//! The cost model (fragment-library/scoring.toml): the terms of the negative
//! log-likelihood of an observed multiplet list given one candidate's
//! predicted list, and the multiplicity compatibility table.

use crate::error::{Error, Result};
use crate::predict::{Multiplicity, PredictedSignal};
use crate::spectrum::{ObservedMultiplet, ObservedPattern};
use serde::Deserialize;

pub const SCORING_TOML: &str = include_str!("../../fragment-library/scoring.toml");

#[derive(Clone, Debug, Deserialize)]
pub struct ShiftParams {
    pub min_sigma: f64,
}

#[derive(Clone, Debug, Deserialize)]
pub struct IntegralParams {
    pub abs_sigma: f64,
    pub rel_sigma: f64,
}

#[derive(Clone, Debug, Deserialize)]
pub struct Penalties {
    pub unexplained_base: f64,
    pub unexplained_per_h: f64,
    pub unassigned_base: f64,
    pub unassigned_per_h: f64,
    pub unassigned_exchangeable: f64,
    pub solvent_set_aside: f64,
    pub overlap_in_m: f64,
    pub overlap_other: f64,
}

#[derive(Clone, Debug, Deserialize)]
pub struct CouplingParams {
    pub sigma_hz: f64,
    pub cap: f64,
    pub small_j_hz: f64,
    pub similar_j_hz: f64,
}

#[derive(Clone, Debug, Deserialize)]
pub struct MultiplicityParams {
    pub same: f64,
    pub unresolved: f64,
    pub merged: f64,
    pub as_m: f64,
    pub predicted_m_as_m: f64,
    /// Any predicted pattern inside a reported m whose integral holds more
    /// H than the group (several groups overlap there, so the label says
    /// nothing about this one's pattern); absent: `predicted_m_as_m`.
    #[serde(default)]
    pub in_shared_m: Option<f64>,
    pub predicted_m_as_other: f64,
    pub other: f64,
    pub broad_exchangeable: f64,
    pub broad_other: f64,
}

#[derive(Clone, Debug, Deserialize)]
pub struct RankingParams {
    pub indistinguishable_margin: f64,
    pub skip_margin: f64,
    /// A candidate's cost is this factor times the sum of its 1H and 13C
    /// parts (a temperature of the softmax, fitted so that the stated
    /// probabilities match how often the first candidate is right).
    #[serde(default = "unit_scale")]
    pub cost_scale: f64,
}

fn unit_scale() -> f64 {
    1.0
}

/// The 13C part of the cost (fragment-library/scoring.toml, `[carbon]`;
/// used by [`crate::score::carbon`]).
#[derive(Clone, Debug, Deserialize)]
pub struct CarbonParams {
    pub min_sigma: f64,
    pub shift_cap: f64,
    pub hydrogens_mismatch: f64,
    pub unassigned_quaternary: f64,
    pub unassigned_protonated: f64,
    pub unexplained: f64,
    pub solvent_set_aside: f64,
    pub overlap: f64,
    pub count_sigma: f64,
}

#[derive(Clone, Debug, Deserialize)]
struct CompatRow {
    predicted: String,
    observed: String,
    probability: f64,
    #[allow(dead_code)]
    source: String,
}

#[derive(Clone, Debug, Deserialize)]
struct ModelFile {
    shift: ShiftParams,
    integral: IntegralParams,
    penalties: Penalties,
    coupling: CouplingParams,
    multiplicity: MultiplicityParams,
    #[serde(default)]
    compatibility: Vec<CompatRow>,
    ranking: RankingParams,
    carbon: CarbonParams,
}

/// The loaded cost model.
#[derive(Clone, Debug)]
pub struct ScoringModel {
    pub shift: ShiftParams,
    pub integral: IntegralParams,
    pub penalties: Penalties,
    pub coupling: CouplingParams,
    pub multiplicity: MultiplicityParams,
    pub ranking: RankingParams,
    pub carbon: CarbonParams,
    /// (predicted code, observed code, apparent, probability): a few dozen
    /// rows, scanned linearly (faster than hashing at this size).
    table: Vec<(u64, u64, bool, f64)>,
}

/// A compact, allocation-free key for a multiplicity (used in the hot loop).
fn code(m: &Multiplicity) -> u64 {
    match m {
        Multiplicity::Singlet => 1,
        Multiplicity::Multiplet => 2,
        Multiplicity::Coupled(ns) => ns.iter().fold(3u64, |acc, &n| {
            acc.wrapping_mul(257).wrapping_add(n as u64 + 1)
        }),
    }
}

impl ScoringModel {
    pub fn embedded() -> ScoringModel {
        ScoringModel::from_toml(SCORING_TOML).expect("embedded scoring.toml is valid")
    }

    pub fn from_toml(text: &str) -> Result<ScoringModel> {
        let f: ModelFile = toml::from_str(text)
            .map_err(|e| Error::input(format!("scoring table: {}", e.message())))?;
        validate(&f)?;
        let mut table = Vec::new();
        for (n, row) in f.compatibility.iter().enumerate() {
            let at = format!("scoring table: [[compatibility]] row {}", n + 1);
            let p = ObservedPattern::parse(&row.predicted).ok_or_else(|| {
                Error::input(format!(
                    "{at}: unknown predicted pattern \"{}\"",
                    row.predicted
                ))
            })?;
            let o = ObservedPattern::parse(&row.observed).ok_or_else(|| {
                Error::input(format!(
                    "{at}: unknown observed pattern \"{}\"",
                    row.observed
                ))
            })?;
            check_probability(
                &format!("{at} ({} -> {}): probability", row.predicted, row.observed),
                row.probability,
            )?;
            table.push((
                code(&p.multiplicity),
                code(&o.multiplicity),
                o.apparent,
                row.probability,
            ));
        }
        Ok(ScoringModel {
            shift: f.shift,
            integral: f.integral,
            penalties: f.penalties,
            coupling: f.coupling,
            multiplicity: f.multiplicity,
            ranking: f.ranking,
            carbon: f.carbon,
            table,
        })
    }

    /// Probability that a group predicted as `signal` is reported as `obs`.
    pub fn compatibility(&self, signal: &PredictedSignal, obs: &ObservedPattern) -> f64 {
        if !obs.reported {
            // No multiplicity written: nothing to compare (cost 0).
            return 1.0;
        }
        let mp = &self.multiplicity;
        let pred = &signal.multiplicity;
        let (pc, oc) = (code(pred), code(&obs.multiplicity));
        // Order: a pattern seen as predicted; one derived from the predicted J
        // (unresolved or merged couplings); a row of the table; the defaults.
        let p = if *pred == obs.multiplicity && !obs.apparent {
            mp.same
        } else if let Some(p) = self.derived(signal, &obs.multiplicity) {
            p
        } else if let Some(p) = self.row(pc, oc, obs.apparent) {
            p
        } else if let Some(p) = self.row(pc, oc, false) {
            p
        } else if *pred == obs.multiplicity {
            mp.same
        } else if obs.multiplicity == Multiplicity::Multiplet {
            if *pred == Multiplicity::Multiplet {
                mp.predicted_m_as_m
            } else {
                mp.as_m
            }
        } else if *pred == Multiplicity::Multiplet {
            mp.predicted_m_as_other
        } else {
            mp.other
        };
        p * self.broad_factor(signal, obs)
    }

    /// The factor a "br" on the observed label puts on the probability.
    fn broad_factor(&self, signal: &PredictedSignal, obs: &ObservedPattern) -> f64 {
        let mp = &self.multiplicity;
        if !obs.broad {
            1.0
        } else if signal.exchangeable {
            mp.broad_exchangeable
        } else {
            mp.broad_other
        }
    }

    /// Multiplicity term of a pair, -ln(probability): the label table of
    /// [`ScoringModel::compatibility`], except in a reported m whose
    /// integral holds more H than this group (by more than half an H): that
    /// m covers other groups as well, and overlapping patterns make an m
    /// whatever each one's own pattern is (common practice: a 4H aromatic
    /// m of a disubstituted ring, a 5H m of a phenyl group), so every
    /// predicted pattern gets `in_shared_m`.
    pub fn multiplicity_cost(&self, signal: &PredictedSignal, obs: &ObservedMultiplet) -> f64 {
        let p = &obs.pattern;
        let shared = p.reported
            && !p.apparent
            && p.multiplicity == Multiplicity::Multiplet
            && obs
                .hydrogens
                .is_some_and(|h| h > signal.hydrogens as f64 + 0.5);
        if shared {
            let mp = &self.multiplicity;
            -(mp.in_shared_m.unwrap_or(mp.predicted_m_as_m) * self.broad_factor(signal, p)).ln()
        } else {
            -self.compatibility(signal, p).ln()
        }
    }

    fn row(&self, pc: u64, oc: u64, apparent: bool) -> Option<f64> {
        self.table
            .iter()
            .find(|r| r.0 == pc && r.1 == oc && r.2 == apparent)
            .map(|r| r.3)
    }

    /// The patterns a first-order prediction turns into when small couplings
    /// are not resolved or similar couplings merge (FIELD-GUIDE 4: "s observed
    /// for a predicted d with tiny J is mild").
    fn derived(&self, signal: &PredictedSignal, obs: &Multiplicity) -> Option<f64> {
        let Multiplicity::Coupled(ns) = &signal.multiplicity else {
            return None;
        };
        if ns.len() != signal.j_hz.len() || ns.is_empty() {
            return None;
        }
        let c = &self.coupling;
        let Multiplicity::Coupled(target) = obs else {
            // Everything unresolved: a singlet.
            let all_small = signal.j_hz.iter().all(|j| j.abs() < c.small_j_hz);
            return (*obs == Multiplicity::Singlet && all_small)
                .then_some(self.multiplicity.unresolved);
        };
        // Fixed-size buffers: this runs for every group against every
        // observed multiplet of every candidate.
        const MAX: usize = 8;
        if ns.len() > MAX {
            return None;
        }
        // Drop unresolved small couplings.
        let mut kept = [(0u8, 0.0f64); MAX];
        let mut nk = 0;
        for (&n, &j) in ns.iter().zip(&signal.j_hz) {
            if j.abs() >= c.small_j_hz {
                kept[nk] = (n, j);
                nk += 1;
            }
        }
        let dropped = nk < ns.len();
        let same = |v: &[(u8, f64)]| {
            v.len() == target.len() && v.iter().zip(target).all(|(a, &b)| a.0 == b)
        };
        if dropped && same(&kept[..nk]) {
            return Some(self.multiplicity.unresolved);
        }
        // Merge neighbouring couplings with similar J (sorted largest first).
        let mut merged = [(0u8, 0.0f64); MAX];
        let mut nm = 0;
        for &(n, j) in &kept[..nk] {
            if nm > 0 && (merged[nm - 1].1 - j).abs() < c.similar_j_hz {
                merged[nm - 1].0 += n;
            } else {
                merged[nm] = (n, j);
                nm += 1;
            }
        }
        if nm < nk && same(&merged[..nm]) {
            return Some(if dropped {
                self.multiplicity.unresolved * self.multiplicity.merged
            } else {
                self.multiplicity.merged
            });
        }
        None
    }

    /// Cost of assigning `signal` to `obs` apart from the integral: shift,
    /// multiplicity and coupling constants.
    pub fn pair_cost(&self, signal: &PredictedSignal, obs: &ObservedMultiplet) -> PairCost {
        let (sigma, ln_sigma) = self.shift_sigma(signal.sigma);
        self.pair_cost_with(signal, obs, sigma, ln_sigma)
    }

    /// [`ScoringModel::pair_cost`] with the group's sigma and its log term
    /// computed once by the caller.
    pub fn pair_cost_with(
        &self,
        signal: &PredictedSignal,
        obs: &ObservedMultiplet,
        sigma: f64,
        ln_sigma: f64,
    ) -> PairCost {
        PairCost {
            shift: shift_term(obs.distance(signal.shift), sigma, ln_sigma),
            multiplicity: self.multiplicity_cost(signal, obs),
            coupling: self.coupling_cost(&signal.j_hz, &obs.j_hz),
        }
    }

    /// The group's shift sigma after the floor, and its normalisation term
    /// ln(sigma / min_sigma) of the shift cost.
    pub fn shift_sigma(&self, predicted_sigma: f64) -> (f64, f64) {
        let sigma = predicted_sigma.max(self.shift.min_sigma);
        (sigma, (sigma / self.shift.min_sigma).ln())
    }

    /// Coupling-constant term: reported J matched with predicted |J| in
    /// order (both largest first), each squared deviation capped.
    pub fn coupling_cost(&self, predicted_j: &[f64], observed_j: &[f64]) -> f64 {
        let mut coupling = 0.0;
        if !observed_j.is_empty() && !predicted_j.is_empty() {
            let c = &self.coupling;
            for (o, p) in observed_j.iter().zip(predicted_j) {
                let dj = o - p.abs();
                coupling += (dj * dj / (2.0 * c.sigma_hz * c.sigma_hz)).min(c.cap);
            }
        }
        coupling
    }

    /// Cost of leaving `signal` without an observed multiplet.
    pub fn unassigned_cost(&self, signal: &PredictedSignal) -> f64 {
        self.unassigned_cost_of(signal.hydrogens, signal.exchangeable)
    }

    /// [`ScoringModel::unassigned_cost`] from the H count and the
    /// exchangeable flag alone.
    pub fn unassigned_cost_of(&self, hydrogens: u32, exchangeable: bool) -> f64 {
        let p = &self.penalties;
        if exchangeable {
            p.unassigned_exchangeable
        } else {
            p.unassigned_base + p.unassigned_per_h * hydrogens as f64
        }
    }

    /// Cost of an observed multiplet that no group explains.
    pub fn empty_cost(&self, obs: &ObservedMultiplet) -> f64 {
        let p = &self.penalties;
        if obs.solvent.is_some() {
            p.solvent_set_aside
        } else {
            p.unexplained_base + p.unexplained_per_h * obs.hydrogens.unwrap_or(1.0)
        }
    }

    /// Integral sigma (H) for an observed integral.
    pub fn integral_sigma(&self, observed: f64, assigned: f64) -> f64 {
        self.integral.abs_sigma + self.integral.rel_sigma * observed.max(assigned)
    }

    /// Cost of each group beyond the first in `obs`.
    pub fn overlap_cost(&self, obs: &ObservedMultiplet) -> f64 {
        if obs.pattern.multiplicity == Multiplicity::Multiplet {
            self.penalties.overlap_in_m
        } else {
            self.penalties.overlap_other
        }
    }

    /// Cost of an observed multiplet holding `k >= 1` groups with `h` H.
    pub fn filled_cost(&self, obs: &ObservedMultiplet, h: f64, k: usize) -> f64 {
        let overlap = self.overlap_cost(obs);
        let integral = match obs.hydrogens {
            Some(i) => {
                let s = self.integral_sigma(i, h);
                (i - h) * (i - h) / (2.0 * s * s)
            }
            None => 0.0,
        };
        integral + overlap * (k.saturating_sub(1)) as f64
    }
}

/// Check the numbers of a model file before use.
///
/// Why these limits: the search (assign.rs) and the early rejections of
/// `Prepared` (prepared.rs) prune with lower bounds that assume every cost
/// term is >= 0, so that adding a group or a term never lowers a cost. A
/// multiplicity cost -ln p is >= 0 only for p <= 1, and p = 0 would be an
/// infinite cost, so every probability (table rows, the defaults and the
/// broad factors, which multiply them) must lie in (0, 1]. Penalties, the J
/// cap and the thresholds must be >= 0; a sigma divides and must be > 0
/// (the relative integral sigma only adds and may be 0). Non-finite values
/// (toml allows `inf` and `nan`) are refused everywhere.
fn validate(f: &ModelFile) -> Result<()> {
    check_positive("[shift] min_sigma", f.shift.min_sigma)?;
    check_positive("[integral] abs_sigma", f.integral.abs_sigma)?;
    check_non_negative("[integral] rel_sigma", f.integral.rel_sigma)?;
    let p = &f.penalties;
    for (name, v) in [
        ("unexplained_base", p.unexplained_base),
        ("unexplained_per_h", p.unexplained_per_h),
        ("unassigned_base", p.unassigned_base),
        ("unassigned_per_h", p.unassigned_per_h),
        ("unassigned_exchangeable", p.unassigned_exchangeable),
        ("solvent_set_aside", p.solvent_set_aside),
        ("overlap_in_m", p.overlap_in_m),
        ("overlap_other", p.overlap_other),
    ] {
        check_non_negative(&format!("[penalties] {name}"), v)?;
    }
    let c = &f.coupling;
    check_positive("[coupling] sigma_hz", c.sigma_hz)?;
    check_non_negative("[coupling] cap", c.cap)?;
    check_non_negative("[coupling] small_j_hz", c.small_j_hz)?;
    check_non_negative("[coupling] similar_j_hz", c.similar_j_hz)?;
    let m = &f.multiplicity;
    for (name, v) in [
        ("same", m.same),
        ("unresolved", m.unresolved),
        ("merged", m.merged),
        ("as_m", m.as_m),
        ("predicted_m_as_m", m.predicted_m_as_m),
        ("in_shared_m", m.in_shared_m.unwrap_or(m.predicted_m_as_m)),
        ("predicted_m_as_other", m.predicted_m_as_other),
        ("other", m.other),
        ("broad_exchangeable", m.broad_exchangeable),
        ("broad_other", m.broad_other),
    ] {
        check_probability(&format!("scoring table: [multiplicity] {name}"), v)?;
    }
    check_non_negative(
        "[ranking] indistinguishable_margin",
        f.ranking.indistinguishable_margin,
    )?;
    check_non_negative("[ranking] skip_margin", f.ranking.skip_margin)?;
    check_positive("[ranking] cost_scale", f.ranking.cost_scale)?;
    let c = &f.carbon;
    check_positive("[carbon] min_sigma", c.min_sigma)?;
    check_positive("[carbon] count_sigma", c.count_sigma)?;
    for (name, v) in [
        ("shift_cap", c.shift_cap),
        ("hydrogens_mismatch", c.hydrogens_mismatch),
        ("unassigned_quaternary", c.unassigned_quaternary),
        ("unassigned_protonated", c.unassigned_protonated),
        ("unexplained", c.unexplained),
        ("solvent_set_aside", c.solvent_set_aside),
        ("overlap", c.overlap),
    ] {
        check_non_negative(&format!("[carbon] {name}"), v)?;
    }
    Ok(())
}

/// `what` names the row and field, e.g. "scoring table: [multiplicity] other".
fn check_probability(what: &str, v: f64) -> Result<()> {
    if v > 0.0 && v <= 1.0 {
        Ok(())
    } else {
        Err(Error::input(format!(
            "{what} = {v}: a probability must be in (0, 1] (its cost is -ln p, which must be >= 0 and finite)"
        )))
    }
}

fn check_non_negative(field: &str, v: f64) -> Result<()> {
    if v >= 0.0 && v.is_finite() {
        Ok(())
    } else {
        Err(Error::input(format!(
            "scoring table: {field} = {v}: must be a finite number >= 0 (the search's lower bounds assume no cost term is negative)"
        )))
    }
}

fn check_positive(field: &str, v: f64) -> Result<()> {
    if v > 0.0 && v.is_finite() {
        Ok(())
    } else {
        Err(Error::input(format!(
            "scoring table: {field} = {v}: must be a finite number > 0 (it divides a deviation)"
        )))
    }
}

/// Shift term of a pair: d^2 / (2 sigma^2) + ln(sigma / min_sigma), with the
/// log term passed in (computed once per group).
pub fn shift_term(distance: f64, sigma: f64, ln_sigma: f64) -> f64 {
    distance * distance / (2.0 * sigma * sigma) + ln_sigma
}

/// The three per-pair terms, kept apart for `--explain`.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct PairCost {
    pub shift: f64,
    pub multiplicity: f64,
    pub coupling: f64,
}

impl PairCost {
    pub fn total(&self) -> f64 {
        self.shift + self.multiplicity + self.coupling
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sig(m: Multiplicity, j: Vec<f64>) -> PredictedSignal {
        PredictedSignal {
            shift: 1.0,
            sigma: 0.2,
            hydrogens: 2,
            multiplicity: m,
            j_hz: j,
            atoms: vec![0],
            exchangeable: false,
            notes: vec![],
            halves: false,
            geminal_hz: 0.0,
            half_pattern: None,
        }
    }

    fn obs(label: &str) -> ObservedPattern {
        ObservedPattern::parse(label).unwrap()
    }

    #[test]
    fn sextet_as_m_is_mild_triplet_as_quartet_severe() {
        let m = ScoringModel::embedded();
        let sext = sig(Multiplicity::Coupled(vec![5]), vec![7.0]);
        let t = sig(Multiplicity::Coupled(vec![2]), vec![7.0]);
        let p_sext_m = m.compatibility(&sext, &obs("m"));
        let p_t_q = m.compatibility(&t, &obs("q"));
        let p_t_t = m.compatibility(&t, &obs("t"));
        assert!(p_sext_m >= 0.3, "{p_sext_m}");
        assert!(p_t_q <= 0.005, "{p_t_q}");
        assert!(p_t_t > 0.8);
    }

    #[test]
    fn tiny_j_doublet_reported_as_singlet_is_mild() {
        let m = ScoringModel::embedded();
        let small = sig(Multiplicity::Coupled(vec![1]), vec![1.2]);
        let large = sig(Multiplicity::Coupled(vec![1]), vec![7.0]);
        assert!(m.compatibility(&small, &obs("s")) >= 0.4);
        assert!(m.compatibility(&large, &obs("s")) <= 0.02);
        // dd with two similar J merges into a t.
        let dd = sig(Multiplicity::Coupled(vec![1, 1]), vec![7.2, 6.8]);
        assert!(m.compatibility(&dd, &obs("t")) >= 0.4);
    }

    /// A d of 2H inside a reported 4H m shares it with other groups: its
    /// own pattern is not seen (scoring.toml `in_shared_m`); inside a 2H m
    /// (or one without an integral) the label table applies.
    #[test]
    fn any_pattern_fits_an_m_shared_with_other_groups() {
        let m = ScoringModel::embedded();
        let d = sig(Multiplicity::Coupled(vec![1]), vec![8.0]);
        let mut line = ObservedMultiplet {
            entry: 1,
            shift: 7.2,
            range: Some((7.1, 7.3)),
            pattern: obs("m"),
            j_hz: vec![],
            integral: Some(4.0),
            hydrogens: Some(4.0),
            solvent: None,
        };
        assert!((m.multiplicity_cost(&d, &line) + 0.8f64.ln()).abs() < 1e-12);
        let alone = -m.compatibility(&d, &obs("m")).ln();
        assert!(alone > -0.5f64.ln(), "{alone}");
        line.hydrogens = Some(2.0);
        assert_eq!(m.multiplicity_cost(&d, &line), alone);
        line.hydrogens = None;
        assert_eq!(m.multiplicity_cost(&d, &line), alone);
    }

    #[test]
    fn unreported_multiplicity_costs_nothing() {
        let m = ScoringModel::embedded();
        let t = sig(Multiplicity::Coupled(vec![2]), vec![7.0]);
        assert_eq!(m.compatibility(&t, &ObservedPattern::not_reported()), 1.0);
    }

    #[test]
    fn broad_favours_exchangeable_h() {
        let m = ScoringModel::embedded();
        let mut oh = sig(Multiplicity::Singlet, vec![]);
        oh.exchangeable = true;
        let ch = sig(Multiplicity::Singlet, vec![]);
        assert!(m.compatibility(&oh, &obs("br s")) > m.compatibility(&ch, &obs("br s")));
    }

    /// The embedded table with the first `from` replaced by `to`.
    fn edited(from: &str, to: &str) -> String {
        assert!(SCORING_TOML.contains(from), "{from}");
        SCORING_TOML.replacen(from, to, 1)
    }

    fn error(text: &str) -> String {
        match ScoringModel::from_toml(text) {
            Ok(_) => panic!("accepted"),
            Err(e) => {
                assert_eq!(e.exit_code(), 2);
                e.to_string()
            }
        }
    }

    #[test]
    fn probabilities_outside_zero_one_are_refused() {
        // A probability lies in (0, 1] (definition); -ln p >= 0 needs p <= 1.
        let e = error(&edited("other = 0.004", "other = 1.5"));
        assert!(e.contains("[multiplicity] other = 1.5"), "{e}");
        assert!(e.contains("(0, 1]"), "{e}");
        let e = error(&edited("broad_other = 0.3", "broad_other = 0"));
        assert!(e.contains("[multiplicity] broad_other = 0"), "{e}");
        // The first [[compatibility]] row is sext -> m.
        let e = error(&edited("probability = 0.5", "probability = -0.2"));
        assert!(
            e.contains("[[compatibility]] row 1 (sext -> m): probability = -0.2"),
            "{e}"
        );
        let e = error(&edited("probability = 0.5", "probability = nan"));
        assert!(e.contains("row 1"), "{e}");
    }

    #[test]
    fn negative_penalties_caps_and_sigmas_are_refused() {
        let e = error(&edited("overlap_in_m = 0.3", "overlap_in_m = -0.3"));
        assert!(e.contains("[penalties] overlap_in_m = -0.3"), "{e}");
        assert!(e.contains(">= 0"), "{e}");
        let e = error(&edited("cap = 4.5", "cap = -1.0"));
        assert!(e.contains("[coupling] cap = -1"), "{e}");
        let e = error(&edited("sigma_hz = 1.5", "sigma_hz = 0.0"));
        assert!(e.contains("[coupling] sigma_hz = 0"), "{e}");
        assert!(e.contains("> 0"), "{e}");
        let e = error(&edited("min_sigma = 0.05", "min_sigma = -0.05"));
        assert!(e.contains("[shift] min_sigma = -0.05"), "{e}");
        let e = error(&edited("rel_sigma = 0.06", "rel_sigma = -0.01"));
        assert!(e.contains("[integral] rel_sigma = -0.01"), "{e}");
        let e = error(&edited("unassigned_base = 3.0", "unassigned_base = inf"));
        assert!(e.contains("[penalties] unassigned_base = inf"), "{e}");
        // Zero is allowed where it is a cost, and the embedded table loads.
        assert!(
            ScoringModel::from_toml(&edited("overlap_in_m = 0.3", "overlap_in_m = 0.0")).is_ok()
        );
        assert!(ScoringModel::from_toml(SCORING_TOML).is_ok());
    }
}
