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

/// Rows kept per thread at most; beyond, rows are computed each time (a
/// bound on memory for pathological predictors, never reached in practice).
const MAX_ROWS: usize = 1 << 14;

/// A pattern packed into four words: flags, kind and up to six coupling
/// counts in the first, the bits of up to three J values in the others. A
/// packed key compares in four integer comparisons, so a lookup costs less
/// than hashing the vectors would. Patterns that do not fit (more couplings)
/// are computed each time; first-order predictions rarely have them.
type Key = [u64; 4];

fn pack(p: &PredictedSignal) -> Option<Key> {
    if p.j_hz.len() > 3 {
        return None;
    }
    // The H count decides the multiplicity term in a shared m
    // (`ScoringModel::multiplicity_cost`).
    if p.hydrogens > 255 {
        return None;
    }
    let mut w0 = p.exchangeable as u64 | (p.j_hz.len() as u64) << 1 | (p.hydrogens as u64) << 56;
    match &p.multiplicity {
        Multiplicity::Singlet => w0 |= 1 << 4,
        Multiplicity::Multiplet => w0 |= 2 << 4,
        Multiplicity::Coupled(ns) => {
            if ns.len() > 5 {
                return None;
            }
            w0 |= 3 << 4 | (ns.len() as u64) << 8;
            for (i, &n) in ns.iter().enumerate() {
                w0 |= (n as u64) << (16 + 8 * i);
            }
        }
    }
    let mut key = [w0, 0, 0, 0];
    for (i, j) in p.j_hz.iter().enumerate() {
        key[1 + i] = j.to_bits();
    }
    Some(key)
}

/// Multiplicative hashing: the top `bits` bits of a sum of independent
/// products (Knuth, TAOCP vol. 3, 6.4).
fn slot(key: &Key, bits: u32) -> usize {
    let h = key[0].wrapping_mul(0x9e37_79b9_7f4a_7c15)
        ^ key[1].wrapping_mul(0xc2b2_ae3d_27d4_eb4f)
        ^ key[2].wrapping_mul(0x1656_67b1_9e37_79f9)
        ^ key[3].wrapping_mul(0xff51_afd7_ed55_8ccd);
    (h.wrapping_mul(0x9e37_79b9_7f4a_7c15) >> (64 - bits)) as usize
}

const EMPTY: u32 = u32::MAX;

/// One thread's rows for one spectrum and model: an open-addressing table
/// (linear probing, at most half full) from packed pattern to row.
#[derive(Default)]
pub(crate) struct PatternRows {
    slots: Vec<(Key, u32)>,
    bits: u32,
    count: usize,
    /// Per row, `2 m` numbers: the m multiplicity terms, then the m J terms.
    rows: Vec<f64>,
    scratch: Vec<f64>,
    m: usize,
}

impl PatternRows {
    /// Forget every row (a new spectrum or model).
    pub(crate) fn reset(&mut self, multiplets: usize) {
        self.bits = 8;
        self.slots.clear();
        self.slots.resize(1 << self.bits, ([0; 4], EMPTY));
        self.count = 0;
        self.rows.clear();
        self.m = multiplets;
    }

    fn grow(&mut self) {
        let old = std::mem::take(&mut self.slots);
        self.bits += 1;
        self.slots.resize(1 << self.bits, ([0; 4], EMPTY));
        let mask = self.slots.len() - 1;
        for (key, row) in old.into_iter().filter(|s| s.1 != EMPTY) {
            let mut i = slot(&key, self.bits);
            while self.slots[i].1 != EMPTY {
                i = (i + 1) & mask;
            }
            self.slots[i] = (key, row);
        }
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
        let key = match pack(p) {
            Some(k) if self.count < MAX_ROWS => k,
            _ => {
                self.scratch.clear();
                fill(&mut self.scratch, p, model, multiplets);
                return &self.scratch;
            }
        };
        let mask = self.slots.len() - 1;
        let mut i = slot(&key, self.bits);
        loop {
            let (k, row) = self.slots[i];
            if row == EMPTY {
                break;
            }
            if k == key {
                let at = row as usize * 2 * m;
                return &self.rows[at..at + 2 * m];
            }
            i = (i + 1) & mask;
        }
        // First meeting: compute and remember.
        let row = self.count as u32;
        self.slots[i] = (key, row);
        self.count += 1;
        let at = self.rows.len();
        fill(&mut self.rows, p, model, multiplets);
        if 2 * self.count > self.slots.len() {
            self.grow();
        }
        &self.rows[at..at + 2 * m]
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
    out.extend(multiplets.iter().map(|o| model.multiplicity_cost(p, o)));
    out.extend(
        multiplets
            .iter()
            .map(|o| model.coupling_cost(&p.j_hz, &o.j_hz)),
    );
}
