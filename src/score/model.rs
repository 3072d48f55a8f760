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
    pub predicted_m_as_other: f64,
    pub other: f64,
    pub broad_exchangeable: f64,
    pub broad_other: f64,
}

#[derive(Clone, Debug, Deserialize)]
pub struct RankingParams {
    pub indistinguishable_margin: f64,
    pub skip_margin: f64,
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
        let mut table = Vec::new();
        for row in &f.compatibility {
            let p = ObservedPattern::parse(&row.predicted).ok_or_else(|| {
                Error::input(format!(
                    "scoring table: unknown pattern \"{}\"",
                    row.predicted
                ))
            })?;
            let o = ObservedPattern::parse(&row.observed).ok_or_else(|| {
                Error::input(format!(
                    "scoring table: unknown pattern \"{}\"",
                    row.observed
                ))
            })?;
            if !(row.probability > 0.0 && row.probability <= 1.0) {
                return Err(Error::input(format!(
                    "scoring table: probability {} for {} -> {} must be in (0, 1]",
                    row.probability, row.predicted, row.observed
                )));
            }
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
            table,
        })
    }

    /// Probability that a group predicted as `signal` is reported as `obs`.
    pub fn compatibility(&self, signal: &PredictedSignal, obs: &ObservedPattern) -> f64 {
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
        let broad = if !obs.broad {
            1.0
        } else if signal.exchangeable {
            mp.broad_exchangeable
        } else {
            mp.broad_other
        };
        p * broad
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
        let sigma = signal.sigma.max(self.shift.min_sigma);
        self.pair_cost_with(signal, obs, sigma, (sigma / self.shift.min_sigma).ln())
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
        let d = obs.distance(signal.shift);
        let shift = d * d / (2.0 * sigma * sigma) + ln_sigma;
        let multiplicity = -self.compatibility(signal, &obs.pattern).ln();
        let mut coupling = 0.0;
        if !obs.j_hz.is_empty() && !signal.j_hz.is_empty() {
            let c = &self.coupling;
            for (o, p) in obs.j_hz.iter().zip(&signal.j_hz) {
                let dj = o - p.abs();
                coupling += (dj * dj / (2.0 * c.sigma_hz * c.sigma_hz)).min(c.cap);
            }
        }
        PairCost {
            shift,
            multiplicity,
            coupling,
        }
    }

    /// Cost of leaving `signal` without an observed multiplet.
    pub fn unassigned_cost(&self, signal: &PredictedSignal) -> f64 {
        let p = &self.penalties;
        if signal.exchangeable {
            p.unassigned_exchangeable
        } else {
            p.unassigned_base + p.unassigned_per_h * signal.hydrogens as f64
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

    #[test]
    fn broad_favours_exchangeable_h() {
        let m = ScoringModel::embedded();
        let mut oh = sig(Multiplicity::Singlet, vec![]);
        oh.exchangeable = true;
        let ch = sig(Multiplicity::Singlet, vec![]);
        assert!(m.compatibility(&oh, &obs("br s")) > m.compatibility(&ch, &obs("br s")));
    }
}
