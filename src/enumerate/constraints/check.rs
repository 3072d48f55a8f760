//! The constraint tests on complete skeletons and complete structures, with
//! the work space one generator thread keeps for them.

use super::fragment::AROMATIC;
use super::{Bounds, CarbonClass, MAX_H};
use crate::chem::aromaticity::{Aromaticity, Perceiver};
use crate::chem::canon::MAX_ATOMS;
use crate::chem::flat::FlatMolecule;
use crate::chem::rings::RingInfo;
use crate::chem::Element;
use crate::enumerate::generator::{bits, Node, Problem};
use crate::enumerate::Isomer;
use std::sync::Arc;

/// One generator thread's constraint state: the bounds, this problem's
/// kind-to-element tables, the cuts counted so far (added to the shared
/// totals when dropped) and perception buffers.
pub struct Work {
    pub bounds: Arc<Bounds>,
    /// Per kind, its element slot where `max_below` bounds that element.
    pub skeleton_slots: [u8; crate::enumerate::generator::MAX_KINDS],
    /// Per kind, its element slot where `h_below` bounds that element.
    pub order_slots: [u8; crate::enumerate::generator::MAX_KINDS],
    /// Per kind, its element slot (every kind).
    slot_of_kind: Vec<usize>,
    /// Whether any bond-order test is needed (H counts given).
    pub orders_test: bool,
    pub cuts: Vec<[u64; 3]>,
    flat: FlatMolecule,
    rings: RingInfo,
    perceiver: Perceiver,
    aromatic: Aromaticity,
    /// Per bond kind (0 any, 1-3 non-aromatic orders, 4 aromatic), per atom,
    /// its neighbours by such a bond.
    kind_nb: [[u64; MAX_ATOMS]; 5],
}

impl Work {
    pub fn new(bounds: Arc<Bounds>, p: &Problem) -> Work {
        let skeleton_slots = super::kind_slots(&p.kinds, &bounds.max_below);
        let order_slots = super::kind_slots(&p.kinds, &bounds.h_below);
        let orders_test = order_slots.iter().any(|&s| s != u8::MAX);
        let n = bounds.names.len();
        Work {
            skeleton_slots,
            order_slots,
            slot_of_kind: p
                .kinds
                .iter()
                .map(|k| k.element.heavy_index().expect("heavy kind"))
                .collect(),
            orders_test,
            cuts: vec![[0; 3]; n],
            bounds,
            flat: FlatMolecule::default(),
            rings: RingInfo::default(),
            perceiver: Perceiver::default(),
            aromatic: Aromaticity::default(),
            kind_nb: [[0; MAX_ATOMS]; 5],
        }
    }

    /// Atoms of each element slot.
    fn element_masks(&self, node: &Node) -> [u64; 9] {
        let mut m = [0u64; 9];
        for x in 0..node.n {
            m[self.slot_of_kind[node.kind[x] as usize]] |= 1u64 << x;
        }
        m
    }

    /// Complete-skeleton test for the required fragments, before any bond
    /// order is placed: each must embed in the skeleton with every fragment
    /// atom on an atom of its element whose free valence is at least the
    /// extra order it needs (the structure's bond orders only use free
    /// valence). Returns false, counting the cut, when one cannot.
    pub fn skeleton_fits(&mut self, node: &Node) -> bool {
        if self.bounds.require.is_empty() {
            return true;
        }
        let elem = self.element_masks(node);
        let b = Arc::clone(&self.bounds);
        for (i, f) in b.require.iter().enumerate() {
            let allowed: Vec<u64> = (0..f.atoms())
                .map(|q| {
                    let slot = f.elements[q].heavy_index().expect("heavy");
                    let mut m = elem[slot];
                    for x in bits(m) {
                        if node.free[x] < f.need[q] {
                            m &= !(1u64 << x);
                        }
                    }
                    m
                })
                .collect();
            let nb = &node.nb;
            if !f.embeds(&allowed, true, &|_, t| nb[t]) {
                self.cuts[b.require_at + i][0] += 1;
                return false;
            }
        }
        true
    }

    /// Complete-structure test, run on every bond-order assignment the
    /// generator would hand out (before the Kekulé-form check: every test
    /// here gives the same answer on all Kekulé forms of one compound, as H
    /// counts do not change and aromatic bonds are compared as aromatic).
    /// Exact: H counts within their intervals, carbon classes within
    /// theirs, every required fragment present, no forbidden one.
    pub fn accepts(&mut self, node: &Node, p: &Problem) -> bool {
        self.hydrogens_ok(node) && self.structure_ok(node, p)
    }

    /// The exact H-count part of [`Work::accepts`] (needs no bond orders
    /// written into the graph, only the final free valences).
    pub fn hydrogens_ok(&mut self, node: &Node) -> bool {
        let b = &self.bounds;
        if !b.exact.is_empty() {
            let mut hist = [[0u32; MAX_H + 2]; 9];
            for x in 0..node.n {
                let s = self.slot_of_kind[node.kind[x] as usize];
                hist[s][(node.free[x] as usize).min(MAX_H + 1)] += 1;
            }
            for (slot, lo, hi) in &b.exact {
                let h = &hist[*slot];
                if h[MAX_H + 1] > 0 || (0..=MAX_H).any(|k| h[k] < lo[k] || h[k] > hi[k]) {
                    self.cuts[0][2] += 1;
                    return false;
                }
            }
        }
        true
    }

    /// Forward check of the exact H counts during bond-order placement:
    /// the atoms of `done` take no further order, so their free valence is
    /// their final H count. Sound: if they already hold more atoms with h H
    /// than `hi[h]` allows (or more than MAX_H H), every completion fails
    /// [`Work::hydrogens_ok`], whatever the other atoms end with.
    pub fn finished_ok(&self, node: &Node, done: u64) -> bool {
        let b = &self.bounds;
        if b.exact.is_empty() || done == 0 {
            return true;
        }
        let mut hist = [[0u32; MAX_H + 2]; 9];
        for x in bits(done) {
            let s = self.slot_of_kind[node.kind[x] as usize];
            hist[s][(node.free[x] as usize).min(MAX_H + 1)] += 1;
        }
        b.exact.iter().all(|(slot, _, hi)| {
            let h = &hist[*slot];
            h[MAX_H + 1] == 0 && (0..=MAX_H).all(|k| h[k] <= hi[k])
        })
    }

    /// The rest of [`Work::accepts`]: carbon classes and fragments, on a
    /// structure whose bond orders are written into `node.g`.
    pub fn structure_ok(&mut self, node: &Node, p: &Problem) -> bool {
        let b = Arc::clone(&self.bounds);
        if b.classes.is_none() && b.require.is_empty() && b.forbid.is_empty() {
            return true;
        }
        self.perceive(node, p);
        if let Some(cc) = &b.classes {
            let counts = self.class_counts(node);
            let single = counts[CarbonClass::Sp3.index()] + counts[CarbonClass::Sp3Hetero.index()];
            if (0..6).any(|c| counts[c] < cc.lo[c] || counts[c] > cc.hi[c]) || single > cc.single_hi
            {
                self.cuts[b.classes_at][2] += 1;
                return false;
            }
        }
        let elem = self.element_masks(node);
        let kind_nb = &self.kind_nb;
        let adj = |k: u8, t: usize| kind_nb[k as usize][t];
        for (i, f) in b.require.iter().enumerate() {
            let allowed: Vec<u64> = (0..f.atoms())
                .map(|q| elem[f.elements[q].heavy_index().expect("heavy")])
                .collect();
            if !f.embeds(&allowed, false, &adj) {
                self.cuts[b.require_at + i][2] += 1;
                return false;
            }
        }
        for (i, f) in b.forbid.iter().enumerate() {
            let allowed: Vec<u64> = (0..f.atoms())
                .map(|q| elem[f.elements[q].heavy_index().expect("heavy")])
                .collect();
            if f.embeds(&allowed, false, &adj) {
                self.cuts[b.forbid_at + i][2] += 1;
                return false;
            }
        }
        true
    }

    /// Fill `kind_nb` from the structure's bond orders and its aromaticity.
    fn perceive(&mut self, node: &Node, p: &Problem) {
        let iso = Isomer {
            node,
            problem: p,
            auts: None,
            task: 0,
        };
        if self.flat.set_heavy_atoms(&iso) {
            self.rings.perceive_ring_bonds(&self.flat);
        }
        self.perceiver
            .perceive(&self.flat, &mut self.rings, &mut self.aromatic);
        let n = node.n;
        for x in 0..n {
            self.kind_nb[0][x] = node.nb[x];
            for k in 0..3 {
                self.kind_nb[k + 1][x] = node.g.adj[k][x];
            }
            self.kind_nb[AROMATIC as usize][x] = 0;
        }
        if self.aromatic.atom.iter().any(|&a| a) {
            for (e, &(a, b)) in self.flat.all_ends().iter().enumerate() {
                if self.aromatic.bond[e] {
                    let o = self.flat.order(e) as usize;
                    self.kind_nb[o][a] &= !(1u64 << b);
                    self.kind_nb[o][b] &= !(1u64 << a);
                    self.kind_nb[AROMATIC as usize][a] |= 1u64 << b;
                    self.kind_nb[AROMATIC as usize][b] |= 1u64 << a;
                }
            }
        }
    }

    /// How many carbons fall in each [`CarbonClass`] (after `perceive`).
    fn class_counts(&self, node: &Node) -> [u32; 6] {
        let mut out = [0u32; 6];
        let mut hetero = 0u64;
        let mut ons = 0u64;
        for x in 0..node.n {
            let e = Element::HEAVY[self.slot_of_kind[node.kind[x] as usize]];
            if e != Element::C {
                hetero |= 1u64 << x;
            }
            if matches!(e, Element::O | Element::S | Element::N) {
                ons |= 1u64 << x;
            }
        }
        for x in 0..node.n {
            if hetero >> x & 1 == 1 {
                continue;
            }
            let class = classify(
                self.kind_nb[2][x],
                self.kind_nb[3][x],
                self.kind_nb[AROMATIC as usize][x],
                node.nb[x],
                ons,
                hetero,
            );
            out[class.index()] += 1;
        }
        out
    }
}

/// The class of one carbon from its neighbour sets: non-aromatic double
/// and triple bonds, aromatic bonds, all neighbours; `ons` the O, S and N
/// atoms, `hetero` every non-carbon atom.
pub fn classify(
    double: u64,
    triple: u64,
    aromatic: u64,
    all: u64,
    ons: u64,
    hetero: u64,
) -> CarbonClass {
    if double & ons != 0 {
        CarbonClass::Carbonyl
    } else if triple != 0 {
        CarbonClass::Triple
    } else if double.count_ones() >= 2 {
        CarbonClass::Cumulated
    } else if double != 0 || aromatic != 0 {
        CarbonClass::Sp2
    } else if all & hetero != 0 {
        CarbonClass::Sp3Hetero
    } else {
        CarbonClass::Sp3
    }
}

impl Drop for Work {
    fn drop(&mut self) {
        self.bounds.record(&self.cuts);
    }
}
