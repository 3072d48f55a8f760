//! Remembered multiplicity and coupling-constant terms per predicted pattern.
//!
//! The multiplicity term -ln(compatibility) and the J term of a pair depend
//! only on the predicted group's pattern (multiplicity, J list, exchangeable
//! flag) and on the observed multiplet, not on the shift. Across the isomers
//! of one formula the same few dozen patterns (a t with J = 7 Hz, an aromatic
//! d, a singlet, ...) recur millions of times, so each thread keeps, per
//! pattern, its row of terms against every observed multiplet of the
//! spectrum being ranked, and computes a row only the first time it meets
//! the pattern. The stored numbers are the ones `ScoringModel::pair_cost`
//! computes, so scores stay bit for bit the same.

use super::model::ScoringModel;
use crate::predict::{Multiplicity, PredictedSignal};
use crate::spectrum::ObservedMultiplet;
use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

/// Rows kept per thread at most; beyond, rows are computed each time (a
/// bound on memory for pathological predictors, never reached in practice).
const MAX_ROWS: usize = 1 << 14;

/// The key is already a well-mixed 64-bit hash: pass it through.
#[derive(Default)]
struct PassHasher(u64);

impl Hasher for PassHasher {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.0 = (self.0.rotate_left(8) ^ b as u64).wrapping_mul(0x100_0000_01b3);
        }
    }
    fn write_u64(&mut self, x: u64) {
        self.0 = x;
    }
}

/// The full pattern a row belongs to (checked on every hit, so a hash
/// collision can only cost time, never a wrong term).
#[derive(Clone, Debug)]
struct Key {
    multiplicity: Multiplicity,
    j_bits: Vec<u64>,
    exchangeable: bool,
}

impl Key {
    fn matches(&self, p: &PredictedSignal) -> bool {
        self.exchangeable == p.exchangeable
            && self.multiplicity == p.multiplicity
            && self.j_bits.len() == p.j_hz.len()
            && self
                .j_bits
                .iter()
                .zip(&p.j_hz)
                .all(|(&a, b)| a == b.to_bits())
    }
}

fn mix(h: u64, x: u64) -> u64 {
    (h.rotate_left(5) ^ x).wrapping_mul(0x517c_c1b7_2722_0a95)
}

fn hash(p: &PredictedSignal) -> u64 {
    let mut h = mix(0x9e37_79b9_7f4a_7c15, p.exchangeable as u64);
    h = match &p.multiplicity {
        Multiplicity::Singlet => mix(h, 1),
        Multiplicity::Multiplet => mix(h, 2),
        Multiplicity::Coupled(ns) => ns.iter().fold(mix(h, 3), |h, &n| mix(h, n as u64)),
    };
    h = mix(h, p.j_hz.len() as u64);
    for j in &p.j_hz {
        h = mix(h, j.to_bits());
    }
    // Final avalanche (MurmurHash3's fmix64): the table indexes by low bits.
    h ^= h >> 33;
    h = h.wrapping_mul(0xff51_afd7_ed55_8ccd);
    h ^= h >> 33;
    h
}

/// One thread's rows for one spectrum and model.
#[derive(Default)]
pub(crate) struct PatternRows {
    index: HashMap<u64, u32, BuildHasherDefault<PassHasher>>,
    keys: Vec<Key>,
    /// Per row, `2 m` numbers: the m multiplicity terms, then the m J terms.
    rows: Vec<f64>,
    scratch: Vec<f64>,
    m: usize,
}

impl PatternRows {
    /// Forget every row (a new spectrum or model).
    pub(crate) fn reset(&mut self, multiplets: usize) {
        self.index.clear();
        self.keys.clear();
        self.rows.clear();
        self.m = multiplets;
    }

    /// The row of `p`: `[multiplicity term; m]` followed by `[J term; m]`.
    pub(crate) fn row(
        &mut self,
        p: &PredictedSignal,
        model: &ScoringModel,
        multiplets: &[ObservedMultiplet],
    ) -> &[f64] {
        let m = self.m;
        debug_assert_eq!(m, multiplets.len());
        let h = hash(p);
        match self.index.get(&h).copied() {
            Some(i) if self.keys[i as usize].matches(p) => {
                let at = i as usize * 2 * m;
                &self.rows[at..at + 2 * m]
            }
            None if self.keys.len() < MAX_ROWS => {
                let i = self.keys.len() as u32;
                self.keys.push(Key {
                    multiplicity: p.multiplicity.clone(),
                    j_bits: p.j_hz.iter().map(|j| j.to_bits()).collect(),
                    exchangeable: p.exchangeable,
                });
                let at = self.rows.len();
                fill(&mut self.rows, p, model, multiplets);
                self.index.insert(h, i);
                &self.rows[at..at + 2 * m]
            }
            // A collision with another pattern, or the table is full.
            _ => {
                self.scratch.clear();
                fill(&mut self.scratch, p, model, multiplets);
                &self.scratch
            }
        }
    }
}

/// Append the row of `p` to `out`, with exactly the terms of
/// `ScoringModel::pair_cost_with`.
fn fill(
    out: &mut Vec<f64>,
    p: &PredictedSignal,
    model: &ScoringModel,
    multiplets: &[ObservedMultiplet],
) {
    out.extend(
        multiplets
            .iter()
            .map(|o| -model.compatibility(p, &o.pattern).ln()),
    );
    out.extend(
        multiplets
            .iter()
            .map(|o| model.coupling_cost(&p.j_hz, &o.j_hz)),
    );
}
