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
    /// The carbon-type caps the bond-order stage can test ([`PiCaps`]);
    /// `None` without carbon types.
    pub pi_caps: Option<PiCaps>,
    pi: PiState,
    /// Bit k set: kind k is carbon.
    carbon_kinds: u64,
    /// For [`Work::carbons_fit`]: per H count h and extra order x, the
    /// most carbons with h H and x (from the carbon types per H count),
    /// and per h the most carbons with h H; `None` when neither bounds
    /// anything.
    carbon_hx: Option<([[u32; 3]; MAX_H + 1], [u32; MAX_H + 1])>,
    /// For [`Work::saturated_ok`]: the most carbons without H of the sp3
    /// and of the sp3-hetero class; `None` without types per H count.
    saturated_caps: Option<(u32, u32)>,
}

/// Carbon-type bounds that hold for every partial bond-order assignment,
/// because the class a carbon has once it holds a triple bond, two double
/// bonds or a double bond to O is final: orders only rise, a carbon has
/// room for no further multiple bond, and none of those bonds is aromatic
/// (an exocyclic C=O never is; an atom with two multiple bonds is never an
/// aromaticity candidate, src/chem/aromaticity.rs, as in RDKit's model).
#[derive(Clone, Copy, Debug)]
pub struct PiCaps {
    /// Most carbons with a triple bond ([`CarbonClass::Triple`]).
    triple: u32,
    /// Most carbons with two double bonds to C ([`CarbonClass::Cumulated`]).
    cumulated: u32,
    /// Most carbons with a double bond to O (a part of
    /// [`CarbonClass::Carbonyl`]; C=N and C=S may be aromatic, C=O never).
    oxo: u32,
    /// Most carbons with any raised order (the classes other than sp3 and
    /// sp3-hetero, at most carbons - their lower bounds).
    pi: u32,
    /// Most carbons left with single bonds only (sp3 and sp3-hetero).
    single: u32,
    /// Per attached-H count, the most finished carbons of each kind: with
    /// a triple bond, cumulated, with C=O, single bonds only, and any other
    /// raised bond (sp2, or a C=N / C=S carbonyl); from
    /// [`super::ClassCounts::hi_by_h`].
    by_h: Option<[[u32; MAX_H + 1]; 5]>,
}

/// Per partial assignment: raised bonds per atom, and the carbons counted
/// against each cap.
#[derive(Clone, Debug)]
struct PiState {
    raised: [u8; MAX_ATOMS],
    /// Of those, the bonds to O, S or N, and to O alone.
    raised_ons: [u8; MAX_ATOMS],
    raised_o: [u8; MAX_ATOMS],
    /// Triple bonds per atom.
    tripled: [u8; MAX_ATOMS],
    triple: u32,
    cumulated: u32,
    oxo: u32,
    pi: u32,
}

/// The kinds of a finished carbon that [`PiCaps::by_h`] bounds, by index.
const KIND_TRIPLE: usize = 0;
const KIND_CUMULATED: usize = 1;
const KIND_OXO: usize = 2;
const KIND_SINGLE: usize = 3;
const KIND_OTHER: usize = 4;

impl PiState {
    /// Carbon v has two raised bonds (two double bonds: a triple bond
    /// leaves room for no other), none to O, S or N.
    fn cumulated(&self, v: usize) -> bool {
        self.raised[v] == 2 && self.raised_ons[v] == 0
    }

    /// Carbon v's kind ([`KIND_TRIPLE`] ...), final once no later bond of
    /// it can rise.
    fn kind(&self, v: usize) -> usize {
        if self.tripled[v] > 0 {
            KIND_TRIPLE
        } else if self.cumulated(v) {
            KIND_CUMULATED
        } else if self.raised_o[v] > 0 {
            KIND_OXO
        } else if self.raised[v] == 0 {
            KIND_SINGLE
        } else {
            KIND_OTHER
        }
    }
}

impl Default for PiState {
    fn default() -> PiState {
        PiState {
            raised: [0; MAX_ATOMS],
            raised_ons: [0; MAX_ATOMS],
            raised_o: [0; MAX_ATOMS],
            tripled: [0; MAX_ATOMS],
            triple: 0,
            cumulated: 0,
            oxo: 0,
            pi: 0,
        }
    }
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
            pi_caps: None,
            pi: PiState::default(),
            carbon_kinds: p
                .kinds
                .iter()
                .enumerate()
                .filter(|(_, k)| k.element == Element::C)
                .fold(0u64, |m, (i, _)| m | 1 << i),
            carbon_hx: None,
            saturated_caps: None,
        }
        .with_caps(p)
    }

    fn with_caps(mut self, p: &Problem) -> Work {
        let c_slot = Element::C.heavy_index().expect("carbon is heavy");
        let h_hi = self
            .bounds
            .exact
            .iter()
            .find(|e| e.0 == c_slot)
            .map(|e| e.2);
        let by_h = self.bounds.classes.as_ref().and_then(|cc| cc.hi_by_h);
        let carbons: u32 = p
            .kinds
            .iter()
            .zip(&p.counts)
            .filter(|(k, _)| k.element == Element::C)
            .map(|(_, &n)| n as u32)
            .sum();
        // Caps that every carbon fits under cannot cut: no test then.
        self.saturated_caps = by_h
            .map(|t| {
                (
                    t[CarbonClass::Sp3.index()][0],
                    t[CarbonClass::Sp3Hetero.index()][0],
                )
            })
            .filter(|&(plain, hetero)| plain < carbons || hetero < carbons);
        if h_hi.is_some() || by_h.is_some() {
            let mut caps = [[u32::MAX; 3]; MAX_H + 1];
            if let Some(t) = by_h {
                let at = |c: CarbonClass, h: usize| t[c.index()][h];
                for (h, row) in caps.iter_mut().enumerate() {
                    row[0] = at(CarbonClass::Sp3, h).saturating_add(at(CarbonClass::Sp3Hetero, h));
                    row[1] = at(CarbonClass::Sp2, h).saturating_add(at(CarbonClass::Carbonyl, h));
                    row[2] = at(CarbonClass::Triple, h)
                        .saturating_add(at(CarbonClass::Cumulated, h))
                        .saturating_add(at(CarbonClass::Carbonyl, h));
                }
            }
            self.carbon_hx = Some((caps, h_hi.unwrap_or([u32::MAX; MAX_H + 1])));
        }
        self.pi_caps = self.bounds.classes.as_ref().map(|cc| {
            let hi = |c: CarbonClass| cc.hi[c.index()];
            let single_lo = cc.single_least();
            PiCaps {
                triple: hi(CarbonClass::Triple),
                cumulated: hi(CarbonClass::Cumulated),
                oxo: hi(CarbonClass::Carbonyl),
                pi: carbons.saturating_sub(single_lo),
                single: (hi(CarbonClass::Sp3) as u64 + hi(CarbonClass::Sp3Hetero) as u64)
                    .min(cc.single_hi as u64)
                    .min(u32::MAX as u64) as u32,
                by_h: cc.hi_by_h.map(|t| {
                    let at = |c: CarbonClass| t[c.index()];
                    let sum = |a: [u32; MAX_H + 1], b: [u32; MAX_H + 1]| {
                        std::array::from_fn(|h| a[h].saturating_add(b[h]))
                    };
                    // Indexed by KIND_TRIPLE, KIND_CUMULATED, KIND_OXO,
                    // KIND_SINGLE, KIND_OTHER.
                    [
                        at(CarbonClass::Triple),
                        at(CarbonClass::Cumulated),
                        at(CarbonClass::Carbonyl),
                        sum(at(CarbonClass::Sp3), at(CarbonClass::Sp3Hetero)),
                        sum(at(CarbonClass::Sp2), at(CarbonClass::Carbonyl)),
                    ]
                }),
            }
        });
        self
    }

    /// Start the bond-order stage of a skeleton: no bond raised yet.
    pub fn pi_start(&mut self) {
        self.pi = PiState::default();
    }

    /// Raise the bond a-b by `x` (1: to double, 2: to triple) in the
    /// class tally; false when a cap of [`PiCaps`] is exceeded (the tally
    /// is updated either way; [`Work::pi_lower`] undoes it).
    pub fn pi_raise(&mut self, node: &Node, a: usize, b: usize, x: u8) -> bool {
        let Some(caps) = self.pi_caps else {
            return true;
        };
        self.pi_step(node, a, b, x, true);
        self.pi.triple <= caps.triple
            && self.pi.cumulated <= caps.cumulated
            && self.pi.oxo <= caps.oxo
            && self.pi.pi <= caps.pi
    }

    /// Undo [`Work::pi_raise`] of the same bond.
    pub fn pi_lower(&mut self, node: &Node, a: usize, b: usize, x: u8) {
        if self.pi_caps.is_some() {
            self.pi_step(node, a, b, x, false);
        }
    }

    /// Add (`up`) or remove the raise of bond a-b by `x` to the tally.
    fn pi_step(&mut self, node: &Node, a: usize, b: usize, x: u8, up: bool) {
        for (v, u) in [(a, b), (b, a)] {
            if self.element(node, v) != Element::C {
                continue;
            }
            let partner = self.element(node, u);
            let to_ons = matches!(partner, Element::O | Element::S | Element::N);
            let st = &mut self.pi;
            let to_o = partner == Element::O;
            let (pi0, cum0, oxo0) = (st.raised[v] > 0, st.cumulated(v), st.raised_o[v] > 0);
            if up {
                st.raised[v] += 1;
                st.raised_ons[v] += u8::from(to_ons);
                st.raised_o[v] += u8::from(to_o);
            } else {
                st.raised[v] -= 1;
                st.raised_ons[v] -= u8::from(to_ons);
                st.raised_o[v] -= u8::from(to_o);
            }
            let (pi1, cum1, oxo1) = (st.raised[v] > 0, st.cumulated(v), st.raised_o[v] > 0);
            let step = |n: &mut u32, before: bool, after: bool| {
                if after && !before {
                    *n += 1;
                } else if before && !after {
                    *n -= 1;
                }
            };
            step(&mut st.pi, pi0, pi1);
            step(&mut st.cumulated, cum0, cum1);
            step(&mut st.oxo, oxo0, oxo1);
            if x == 2 {
                step(&mut st.triple, !up, up);
                if up {
                    st.tripled[v] += 1;
                } else {
                    st.tripled[v] -= 1;
                }
            }
        }
    }

    /// Whether the carbons in `done` (no later bond can rise) are within
    /// the caps: those that kept single bonds only, and every kind per H
    /// count.
    pub fn pi_done_ok(&self, node: &Node, done: u64) -> bool {
        let Some(caps) = self.pi_caps else {
            return true;
        };
        let mut kinds = [[0u32; MAX_H + 1]; 5];
        for v in bits(done) {
            if self.element(node, v) == Element::C {
                kinds[self.pi.kind(v)][(node.free[v] as usize).min(MAX_H)] += 1;
            }
        }
        kinds[KIND_SINGLE].iter().sum::<u32>() <= caps.single
            && caps
                .by_h
                .is_none_or(|t| (0..5).all(|k| (0..=MAX_H).all(|h| kinds[k][h] <= t[k][h])))
    }

    fn element(&self, node: &Node, v: usize) -> Element {
        Element::HEAVY[self.slot_of_kind[node.kind[v] as usize]]
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

    /// Tests of a complete skeleton's free valence (valence less degree)
    /// summed per element, which the bond orders turn into H and extra
    /// orders: an element's atoms end with exactly its H, so their free
    /// valence must hold at least the fewest H they may carry
    /// ([`super::Bounds::h_sums`]), and the elements without H counts at
    /// least what the formula's H leave for them; and the carbons' extra
    /// orders (their free valence less their H) may not pass what the
    /// carbon types allow ([`super::Bounds::carbon_pi_hi`]). A cut is
    /// charged to the H counts, or for the last test to the carbon types.
    pub fn totals_fit(&mut self, node: &Node) -> bool {
        let b = &self.bounds;
        if b.h_sums.is_empty() && b.carbon_pi_hi.is_none() {
            return true;
        }
        let mut free = [0i64; 9];
        for a in 0..node.n {
            free[self.slot_of_kind[node.kind[a] as usize]] += node.free[a] as i64;
        }
        let (mut listed_free, mut listed_most) = (0i64, 0i64);
        for &(slot, least, most) in &b.h_sums {
            if free[slot] < least as i64 {
                self.cuts[0][0] += 1;
                return false;
            }
            listed_free += free[slot];
            listed_most = listed_most.saturating_add(most as i64);
        }
        if !b.h_sums.is_empty() {
            let rest: i64 = free.iter().sum::<i64>() - listed_free;
            if rest < b.h_total as i64 - listed_most {
                self.cuts[0][0] += 1;
                return false;
            }
        }
        if let Some(hi) = b.carbon_pi_hi {
            let c = Element::C.heavy_index().expect("carbon is heavy");
            // The most H the carbons may carry: their own bound, else the
            // formula's.
            let carbon_h = match b.h_sums.iter().find(|t| t.0 == c) {
                Some(&(_, _, most)) => most as i64,
                None => b.h_total as i64,
            };
            if free[c] - carbon_h > hi {
                let at = b.classes_at;
                self.cuts[at][0] += 1;
                return false;
            }
        }
        true
    }

    /// A test of every skeleton node: a carbon whose skeleton free valence
    /// is 0 has four single bonds and no H for good (its degree cannot
    /// grow), and its class is fixed by its neighbours: sp3-hetero with a
    /// neighbour other than C, sp3 without. So such carbons may not
    /// outnumber the sp3 (sp3-hetero) carbons without H that the 13C lines
    /// allow ([`super::ClassCounts::hi_by_h`]). Sound at every node, as
    /// free valences only fall and a saturated atom keeps its neighbours.
    pub fn saturated_ok(&self, node: &Node) -> bool {
        let Some((plain_cap, hetero_cap)) = self.saturated_caps else {
            return true;
        };
        let mut other = 0u64;
        for a in 0..node.n {
            if self.carbon_kinds >> node.kind[a] & 1 == 0 {
                other |= 1 << a;
            }
        }
        let (mut plain, mut hetero) = (0u32, 0u32);
        for a in 0..node.n {
            if node.free[a] == 0 && self.carbon_kinds >> node.kind[a] & 1 == 1 {
                if node.nb[a] & other == 0 {
                    plain += 1;
                } else {
                    hetero += 1;
                }
            }
        }
        plain <= plain_cap && hetero <= hetero_cap
    }

    /// Whether the carbons of a complete skeleton can take H counts and
    /// extra orders that the bounds allow. A carbon with skeleton free
    /// valence f ends with h H and extra order x = f - h, where x is 0, 1
    /// or 2 (a carbon has at most a triple bond or two double bonds), and
    /// the carbon types per H count bound how many carbons have each (h,
    /// x): x = 0 the sp3 classes, x = 1 sp2 and carbonyl, x = 2 triple,
    /// cumulated and carbonyl (O=C=C). So the carbons, grouped by f, must
    /// fit into the H counts through those pairs: a transportation problem
    /// whose largest flow (augmenting paths, Ford & Fulkerson 1956) must
    /// place every carbon. A cut is charged to the carbon types, or to the
    /// H counts without them.
    pub fn carbons_fit(&mut self, node: &Node) -> bool {
        let Some((caps, h_hi)) = self.carbon_hx else {
            return true;
        };
        let mut by_free = [0u32; MAX_H + 1];
        let mut carbons = 0u32;
        for a in 0..node.n {
            if self.carbon_kinds >> node.kind[a] & 1 == 1 {
                by_free[(node.free[a] as usize).min(MAX_H)] += 1;
                carbons += 1;
            }
        }
        // Residual capacities: source -> f (by_free), f -> h (caps, for
        // h <= f <= h + 2), h -> sink (h_hi); flows kept per f -> h edge.
        let mut flow = [[0u32; MAX_H + 1]; MAX_H + 1];
        let mut into_h = [0u32; MAX_H + 1];
        let mut out_f = [0u32; MAX_H + 1];
        let cap = |f: usize, h: usize| -> u32 {
            if h <= f && f <= h + 2 {
                caps[h][f - h]
            } else {
                0
            }
        };
        let mut total = 0u32;
        loop {
            // Breadth-first search over f and h nodes for a path source ->
            // f -> h (-> f' -> h' ...) -> sink in the residual graph.
            let mut prev_f = [usize::MAX; MAX_H + 1]; // h reached from f
            let mut prev_h = [usize::MAX; MAX_H + 1]; // f reached back from h
            let mut seen_f = [false; MAX_H + 1];
            // Each f enters the queue at most once.
            let mut queue = [0usize; MAX_H + 1];
            let mut len = 0;
            for f in 0..=MAX_H {
                if out_f[f] < by_free[f] {
                    seen_f[f] = true;
                    queue[len] = f;
                    len += 1;
                }
            }
            let mut end = None;
            let mut qi = 0;
            while qi < len && end.is_none() {
                let f = queue[qi];
                qi += 1;
                for h in 0..=MAX_H {
                    if prev_f[h] != usize::MAX || flow[f][h] >= cap(f, h) {
                        continue;
                    }
                    prev_f[h] = f;
                    if into_h[h] < h_hi[h] {
                        end = Some(h);
                        break;
                    }
                    for f2 in 0..=MAX_H {
                        if !seen_f[f2] && flow[f2][h] > 0 {
                            seen_f[f2] = true;
                            prev_h[f2] = h;
                            queue[len] = f2;
                            len += 1;
                        }
                    }
                }
            }
            let Some(mut h) = end else { break };
            into_h[h] += 1;
            loop {
                let f = prev_f[h];
                flow[f][h] += 1;
                match prev_h[f] {
                    usize::MAX => {
                        out_f[f] += 1;
                        break;
                    }
                    h0 => {
                        flow[f][h0] -= 1;
                        h = h0;
                    }
                }
            }
            total += 1;
            if total == carbons {
                return true;
            }
        }
        if total >= carbons {
            return true;
        }
        let at = if self.bounds.classes.is_some() {
            self.bounds.classes_at
        } else {
            0
        };
        self.cuts[at][0] += 1;
        false
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
        if b.classes.is_none() && b.require.is_empty() && b.forbid.is_empty() && b.exclude.is_none()
        {
            return true;
        }
        self.perceive(node, p);
        let mut earlier = false;
        if b.classes.is_some() || b.exclude.is_some() {
            let (counts, by_h) = self.class_counts(node);
            // Carbons with two units of extra order (4 - bonds - H = 2).
            let pi2 = (0..node.n)
                .filter(|&a| {
                    self.carbon_kinds >> node.kind[a] & 1 == 1 && node.deg[a] + node.free[a] == 2
                })
                .count() as u32;
            if let Some(cc) = &b.classes {
                if !cc.admits(&counts, &by_h, pi2) {
                    self.cuts[b.classes_at][2] += 1;
                    return false;
                }
            }
            // Tested last, after the fragments: what the earlier stage
            // listed is counted only when it passes everything else.
            earlier = b
                .exclude
                .as_ref()
                .is_some_and(|t| t.admits(&counts, &by_h, pi2));
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
        if earlier {
            self.cuts[b.exclude_at][2] += 1;
            return false;
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
    /// Carbons per class, and per class and H count (a carbon's free
    /// valence, its H count here, is at most 4 = [`MAX_H`]).
    fn class_counts(&self, node: &Node) -> ([u32; 6], [[u32; MAX_H + 1]; 6]) {
        let mut out = [0u32; 6];
        let mut by_h = [[0u32; MAX_H + 1]; 6];
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
            by_h[class.index()][(node.free[x] as usize).min(MAX_H)] += 1;
        }
        (out, by_h)
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
