//! The per-candidate working view the predictor reads: fixed-size neighbour
//! tables, bond kinds, hybridisation, smallest ring per atom and aromatic
//! flags, computed once per molecule with no heap allocation.
//!
//! Why a view and not the petgraph molecule: prediction is the inner loop of
//! ranking millions of candidates; the pattern matcher and the increment rules
//! touch neighbours many times per molecule, and flat arrays indexed by atom
//! are several times cheaper than graph iteration.
//!
//! Aromaticity here is the perception prediction needs, decided on the Kekulé
//! bond orders the molecule stores (Hückel rule, 4n+2 pi electrons, applied
//! to 5- and 6-membered rings; E. Hückel, Z. Phys. 1931, 70, 204):
//! - a 6-ring of C/N atoms is aromatic when every ring atom has its double
//!   bond to an atom of a 6-ring of the same kind (benzene, pyridine, and the
//!   rings of fused systems such as naphthalene, whatever the Kekulé form);
//! - a 5-ring is aromatic when four ring atoms have double bonds inside the
//!   ring or to an aromatic 6-ring atom, and the fifth is O, S, or N with
//!   three single bonds (furan, thiophene, pyrrole, azoles, indole);
//! - the N=O of an N-oxide (pentavalent N, `[n+][O-]` as written) is not
//!   counted as the N's double bond, so pyridine N-oxide is aromatic.

use crate::chem::{Element, HeavyAtoms, Molecule};

/// Largest molecule the view (and the canonical labelling behind it) holds.
pub const MAX_ATOMS: usize = 64;
/// Most heavy neighbours of one atom (S with expanded valence 6).
pub const MAX_DEGREE: usize = 6;

/// Bond kinds as stored in [`View::bond`].
pub const SINGLE: u8 = 1;
pub const DOUBLE: u8 = 2;
pub const TRIPLE: u8 = 3;
pub const ARO: u8 = 4;

/// Most rings remembered per molecule (smallest cycle through each ring bond).
const MAX_RINGS: usize = 32;

#[derive(Clone)]
pub struct View {
    pub n: usize,
    pub element: [Element; MAX_ATOMS],
    pub h: [u8; MAX_ATOMS],
    pub deg: [u8; MAX_ATOMS],
    pub nbr: [[u8; MAX_DEGREE]; MAX_ATOMS],
    /// Bond kind to each neighbour (SINGLE, DOUBLE, TRIPLE or ARO).
    pub bond: [[u8; MAX_DEGREE]; MAX_ATOMS],
    /// Kekulé bond order to each neighbour (1-3), kept beside the kind.
    pub order: [[u8; MAX_DEGREE]; MAX_ATOMS],
    /// 1 sp, 2 sp2 (incl. aromatic), 3 sp3.
    pub hyb: [u8; MAX_ATOMS],
    /// Element-and-aromaticity feature bit for the pattern matcher.
    pub elem_bit: [u8; MAX_ATOMS],
    pub adj: [u64; MAX_ATOMS],
    pub aromatic: u64,
    /// Atoms that are not carbon.
    pub hetero: u64,
    /// Atoms on at least one ring.
    pub ring_atoms: u64,
    /// Smallest ring through each atom, 0 when acyclic.
    pub ring_size: [u8; MAX_ATOMS],
    /// Smallest cycle through each ring bond (deduplicated), as atom bitsets.
    pub rings: [u64; MAX_RINGS],
    /// Cyclic atom order of each ring of at most 8 atoms (for ring distances).
    ring_order: [[u8; 8]; MAX_RINGS],
    pub nrings: usize,
    /// Smallest aromatic ring of each atom (index into `rings`, 255 none).
    aro_ring: [u8; MAX_ATOMS],
    /// The adjacency the ring tables were computed for (`ring_key_n` atoms;
    /// `usize::MAX`: none). Ring perception depends on the skeleton alone,
    /// and a generator hands over all bond-order assignments of one
    /// skeleton in a row, so consecutive candidates usually share it.
    ring_key: [u64; MAX_ATOMS],
    ring_key_n: usize,
}

impl View {
    /// An empty view, to be filled with [`View::fill`].
    pub fn empty() -> View {
        View {
            n: 0,
            element: [Element::C; MAX_ATOMS],
            h: [0; MAX_ATOMS],
            deg: [0; MAX_ATOMS],
            nbr: [[0; MAX_DEGREE]; MAX_ATOMS],
            bond: [[0; MAX_DEGREE]; MAX_ATOMS],
            order: [[0; MAX_DEGREE]; MAX_ATOMS],
            hyb: [3; MAX_ATOMS],
            elem_bit: [0; MAX_ATOMS],
            adj: [0; MAX_ATOMS],
            aromatic: 0,
            hetero: 0,
            ring_atoms: 0,
            ring_size: [0; MAX_ATOMS],
            rings: [0; MAX_RINGS],
            ring_order: [[0; 8]; MAX_RINGS],
            nrings: 0,
            aro_ring: [u8::MAX; MAX_ATOMS],
            ring_key: [0; MAX_ATOMS],
            ring_key_n: usize::MAX,
        }
    }

    /// Build the view; an error names what the view cannot hold.
    pub fn new(mol: &Molecule) -> Result<View, String> {
        let mut v = View::empty();
        v.fill(mol)?;
        Ok(v)
    }

    /// Refill this view for `mol` (reusing the storage: no allocation, and
    /// only the first n entries of each table are written).
    pub fn fill(&mut self, mol: &(impl HeavyAtoms + ?Sized)) -> Result<(), String> {
        let n = mol.atom_count();
        if n > MAX_ATOMS {
            return Err(format!(
                "the molecule has {n} heavy atoms; prediction handles at most {MAX_ATOMS}"
            ));
        }
        let v = self;
        v.n = n;
        v.aromatic = 0;
        v.hetero = 0;
        for i in 0..n {
            v.deg[i] = 0;
            v.adj[i] = 0;
            v.aro_ring[i] = u8::MAX;
        }
        let mut edges = 0usize;
        for i in 0..n {
            let element = mol.element_of(i);
            if element == Element::H {
                return Err(format!(
                    "atom {} is an explicit hydrogen; hydrogens must be implicit counts",
                    i + 1
                ));
            }
            v.element[i] = element;
            v.h[i] = mol.hydrogens_of(i);
            if element != Element::C {
                v.hetero |= 1u64 << i;
            }
            if let Some(masks) = mol.neighbour_masks(i) {
                // Bitsets per bond order: no callback per neighbour.
                for (l, &m) in masks.iter().enumerate() {
                    for j in bits(m) {
                        let d = v.deg[i] as usize;
                        if d == MAX_DEGREE || j >= n {
                            return Err(format!(
                                "atom {} has more than {MAX_DEGREE} neighbours or a bond out of range",
                                i + 1
                            ));
                        }
                        v.push_neighbour(i, j, l as u8 + 1);
                        edges += 1;
                    }
                }
                continue;
            }
            let mut bad: Option<String> = None;
            mol.each_neighbour(i, &mut |j, order| {
                let d = v.deg[i] as usize;
                if bad.is_some() {
                    return;
                }
                if d == MAX_DEGREE {
                    bad = Some(format!(
                        "atom {} has more than {MAX_DEGREE} neighbours",
                        i + 1
                    ));
                    return;
                }
                if !(1..=3).contains(&order) || j >= n {
                    bad = Some(format!("bond {}-{} has order {order}", i + 1, j + 1));
                    return;
                }
                v.push_neighbour(i, j, order);
                edges += 1;
            });
            if let Some(e) = bad {
                return Err(e);
            }
        }
        let edges = edges / 2;
        // Cyclomatic number: no ring work at all for acyclic candidates.
        if edges + 1 > n {
            if v.ring_key_n != n || v.ring_key[..n] != v.adj[..n] {
                v.ring_atoms = 0;
                v.nrings = 0;
                v.ring_size[..n].fill(0);
                v.find_rings();
                v.ring_key[..n].copy_from_slice(&v.adj[..n]);
                v.ring_key_n = n;
            }
            v.perceive_aromatic();
        } else {
            v.ring_atoms = 0;
            v.nrings = 0;
            v.ring_size[..n].fill(0);
            v.ring_key_n = usize::MAX;
        }
        for i in 0..n {
            let mut doubles = 0;
            let mut triple = false;
            for k in 0..v.deg[i] as usize {
                match v.order[i][k] {
                    2 => doubles += 1,
                    3 => triple = true,
                    _ => {}
                }
            }
            let aro = v.is_aromatic(i);
            v.hyb[i] = if triple || doubles >= 2 {
                1
            } else if doubles == 1 || aro {
                2
            } else {
                3
            };
            v.elem_bit[i] = super::pattern::elem_bit(v.element[i], aro);
        }
        Ok(())
    }

    /// Record `j` as the next neighbour of `i`, over a bond of `order`
    /// (the caller has checked that `i` has room for it).
    fn push_neighbour(&mut self, i: usize, j: usize, order: u8) {
        let d = self.deg[i] as usize;
        self.nbr[i][d] = j as u8;
        self.order[i][d] = order;
        self.bond[i][d] = order;
        self.deg[i] += 1;
        self.adj[i] |= 1u64 << j;
    }

    pub fn is_aromatic(&self, i: usize) -> bool {
        self.aromatic >> i & 1 == 1
    }

    pub fn in_ring(&self, i: usize) -> bool {
        self.ring_atoms >> i & 1 == 1
    }

    /// Bond kind between two atoms, 0 when not bonded.
    pub fn bond_between(&self, a: usize, b: usize) -> u8 {
        for k in 0..self.deg[a] as usize {
            if self.nbr[a][k] as usize == b {
                return self.bond[a][k];
            }
        }
        0
    }

    /// Neighbours of `a` as (atom, bond kind).
    pub fn neighbours(&self, a: usize) -> impl Iterator<Item = (usize, u8)> + '_ {
        (0..self.deg[a] as usize).map(move |k| (self.nbr[a][k] as usize, self.bond[a][k]))
    }

    /// The smallest aromatic ring containing `a`, as an atom bitset.
    pub fn aromatic_ring_of(&self, a: usize) -> Option<u64> {
        match self.aro_ring[a] {
            u8::MAX => None,
            i => Some(self.rings[i as usize]),
        }
    }

    fn ring_is_aromatic(&self, r: u64) -> bool {
        // Every bond of the ring aromatic.
        let mut m = r;
        while m != 0 {
            let a = m.trailing_zeros() as usize;
            m &= m - 1;
            let ring_nbrs = (0..self.deg[a] as usize)
                .filter(|&k| r >> self.nbr[a][k] & 1 == 1 && self.bond[a][k] == ARO)
                .count();
            if ring_nbrs != 2 {
                return false;
            }
        }
        true
    }

    /// The atoms reachable from `from` without passing through `cut` (the
    /// branch hanging from `cut` at `from`, `from` included, `cut` not).
    pub fn branch(&self, from: usize, cut: usize) -> u64 {
        let mut seen = 1u64 << cut | 1u64 << from;
        let mut front = 1u64 << from;
        while front != 0 {
            let mut next = 0;
            for x in bits(front) {
                next |= self.adj[x];
            }
            next &= !seen;
            seen |= next;
            front = next;
        }
        seen & !(1u64 << cut)
    }

    /// The size of the smallest ring through the bond a-b (None: no ring
    /// bond). Unlike a look at `rings`, which hold one ring basis of several
    /// possible in a polycycle, this does not depend on the atom numbering.
    pub fn smallest_ring_through(&self, a: usize, b: usize) -> Option<usize> {
        let mut level = self.adj[a] & !(1u64 << b);
        let mut seen = level | 1u64 << a | 1u64 << b;
        let mut steps = 1;
        while level != 0 {
            if level & self.adj[b] != 0 {
                return Some(steps + 2);
            }
            let mut next = 0u64;
            for x in bits(level) {
                next |= self.adj[x];
            }
            level = next & !seen;
            seen |= level;
            steps += 1;
        }
        None
    }

    /// Ring distance (bonds along the ring) between two atoms of ring `r`.
    pub fn ring_distance(&self, r: u64, a: usize, b: usize) -> usize {
        let size = r.count_ones() as usize;
        if size <= 8 {
            if let Some(i) = self.rings[..self.nrings].iter().position(|&x| x == r) {
                let ord = &self.ring_order[i][..size];
                let pa = ord.iter().position(|&x| x as usize == a);
                let pb = ord.iter().position(|&x| x as usize == b);
                if let (Some(pa), Some(pb)) = (pa, pb) {
                    let d = pa.abs_diff(pb);
                    return d.min(size - d);
                }
            }
        }
        // Breadth-first walk restricted to the ring.
        let mut seen = 1u64 << a;
        let mut front = 1u64 << a;
        let mut d = 0;
        while front >> b & 1 == 0 {
            let mut next = 0u64;
            let mut m = front;
            while m != 0 {
                let x = m.trailing_zeros() as usize;
                m &= m - 1;
                next |= self.adj[x] & r;
            }
            next &= !seen;
            if next == 0 {
                return usize::MAX;
            }
            seen |= next;
            front = next;
            d += 1;
        }
        d
    }

    /// For every ring bond, every smallest cycle through it: breadth-first
    /// search from one end with the bond removed gives the distance of each
    /// atom, and every shortest path back from the other end closes one
    /// such cycle. The union over all bonds is the same set whatever the
    /// atom order (one cycle per bond, chosen by the search order, would
    /// not be: in fused and bridged systems ring sizes and ring-based rules
    /// would then depend on how the input was written).
    fn find_rings(&mut self) {
        let n = self.n;
        let mut queue = [0u8; MAX_ATOMS];
        let mut dist = [u8::MAX; MAX_ATOMS];
        // The 2-core: strip atoms with at most one neighbour left until none
        // remain; only core atoms can lie on a ring, and the searches below
        // never wander into side chains.
        let mut core: u64 = if n == 64 { u64::MAX } else { (1u64 << n) - 1 };
        loop {
            let leaves = bits(core)
                .filter(|&a| (self.adj[a] & core).count_ones() <= 1)
                .fold(0u64, |m, a| m | 1u64 << a);
            if leaves == 0 {
                break;
            }
            core &= !leaves;
        }
        for u in bits(core) {
            for k in 0..self.deg[u] as usize {
                let w = self.nbr[u][k] as usize;
                if w < u || core >> w & 1 == 0 {
                    continue;
                }
                // Distances from u without the edge u-w, up to w's.
                for x in bits(core) {
                    dist[x] = u8::MAX;
                }
                dist[u] = 0;
                let (mut head, mut tail) = (0, 1);
                queue[0] = u as u8;
                while head < tail && dist[w] == u8::MAX {
                    let x = queue[head] as usize;
                    head += 1;
                    let mut m = self.adj[x] & core;
                    if x == u {
                        m &= !(1u64 << w);
                    }
                    for y in bits(m) {
                        if dist[y] == u8::MAX {
                            dist[y] = dist[x] + 1;
                            queue[tail] = y as u8;
                            tail += 1;
                        }
                    }
                }
                if dist[w] == u8::MAX {
                    continue;
                }
                // Every shortest path w -> u, walked back by distance.
                let mut path = [0u8; MAX_ATOMS];
                path[0] = w as u8;
                let mut budget = 256;
                self.shortest_cycles(u, &dist, &mut path, 1, &mut budget);
            }
        }
    }

    /// Extend `path` (from the bond's far end, distances from `u` falling by
    /// one per step) back to `u` in every way, recording each closed cycle.
    /// `budget` caps the paths walked per bond: cage graphs can have very
    /// many shortest paths, and past [`MAX_RINGS`] rings (or the cap) the
    /// tables are incomplete anyway (then, and only then, which rings are
    /// kept may depend on the atom order).
    fn shortest_cycles(
        &mut self,
        u: usize,
        dist: &[u8; MAX_ATOMS],
        path: &mut [u8; MAX_ATOMS],
        len: usize,
        budget: &mut u32,
    ) {
        let last = path[len - 1] as usize;
        if last == u {
            self.record_ring(&path[..len]);
            *budget = budget.saturating_sub(1);
            return;
        }
        if self.nrings == MAX_RINGS || *budget == 0 {
            return;
        }
        // Distances fall by one per step, so the removed edge w-u (which
        // would jump from dist[w] >= 2 to 0) is never taken.
        let want = dist[last] - 1;
        for y in bits(self.adj[last]) {
            if dist[y] == want {
                path[len] = y as u8;
                self.shortest_cycles(u, dist, path, len + 1, budget);
            }
        }
    }

    /// Record one cycle given in cyclic order (deduplicated).
    fn record_ring(&mut self, order: &[u8]) {
        let cycle = order.iter().fold(0u64, |m, &a| m | 1u64 << a);
        let size = order.len() as u8;
        self.ring_atoms |= cycle;
        for &a in order {
            let a = a as usize;
            if self.ring_size[a] == 0 || size < self.ring_size[a] {
                self.ring_size[a] = size;
            }
        }
        if self.rings[..self.nrings].contains(&cycle) || self.nrings == MAX_RINGS {
            return;
        }
        self.rings[self.nrings] = cycle;
        if order.len() <= 8 {
            self.ring_order[self.nrings][..order.len()].copy_from_slice(order);
        }
        self.nrings += 1;
    }

    /// Double-bond partner of `a`, if it has exactly one double bond.
    fn double_partner(&self, a: usize) -> Option<usize> {
        let mut p = None;
        // The N=O of an N-oxide ([n+][O-], built as pentavalent N) leaves
        // the ring N its ring double bond, as in pyridine.
        let oxide = self.element[a] == Element::N
            && (0..self.deg[a] as usize)
                .map(|k| self.order[a][k] as u32)
                .sum::<u32>()
                + self.h[a] as u32
                == 5;
        for k in 0..self.deg[a] as usize {
            let b = self.nbr[a][k] as usize;
            if oxide && self.order[a][k] == 2 && self.element[b] == Element::O {
                continue;
            }
            match self.order[a][k] {
                2 if p.is_none() => p = Some(self.nbr[a][k] as usize),
                2 | 3 => return None,
                _ => {}
            }
        }
        p
    }

    fn perceive_aromatic(&mut self) {
        // Six-membered rings of C/N atoms each with one double bond.
        let mut six = [0u64; MAX_RINGS];
        let mut nsix = 0;
        let mut cand = 0u64;
        for &r in &self.rings[..self.nrings] {
            if r.count_ones() != 6 {
                continue;
            }
            let ok = bits(r).all(|a| {
                matches!(self.element[a], Element::C | Element::N)
                    && self.double_partner(a).is_some()
            });
            if ok {
                six[nsix] = r;
                nsix += 1;
                cand |= r;
            }
        }
        // Keep rings whose double bonds stay inside the candidate system;
        // repeat because dropping one ring can disqualify a neighbour.
        let mut aro6 = 0u64;
        loop {
            let mut next = 0u64;
            for &r in &six[..nsix] {
                if bits(r).all(|a| self.double_partner(a).is_some_and(|p| cand >> p & 1 == 1)) {
                    next |= r;
                }
            }
            if next == cand {
                aro6 = next;
                break;
            }
            cand = next;
            if cand == 0 {
                break;
            }
        }
        let mut arom_rings = 0u64; // bitset over ring indices
        for (i, &r) in self.rings[..self.nrings].iter().enumerate() {
            if r.count_ones() == 6 && r & aro6 == r && six[..nsix].contains(&r) {
                arom_rings |= 1 << i;
            }
        }
        // Five-membered rings.
        for (i, &r) in self.rings[..self.nrings].iter().enumerate() {
            if r.count_ones() != 5 {
                continue;
            }
            let mut pi = 0;
            let mut donor = 0;
            for a in bits(r) {
                match self.double_partner(a) {
                    Some(p) if r >> p & 1 == 1 || aro6 >> p & 1 == 1 => pi += 1,
                    Some(_) => {}
                    None => {
                        let lone_pair = match self.element[a] {
                            Element::O | Element::S => self.deg[a] + self.h[a] == 2,
                            Element::N => {
                                self.deg[a] + self.h[a] == 3
                                    && (0..self.deg[a] as usize).all(|k| self.order[a][k] == 1)
                            }
                            _ => false,
                        };
                        if lone_pair {
                            donor += 1;
                        }
                    }
                }
            }
            if pi == 4 && donor == 1 {
                arom_rings |= 1 << i;
            }
        }
        if arom_rings == 0 {
            // Nothing aromatic: bond kinds stay the Kekulé orders.
            return;
        }
        for (i, &r) in self.rings[..self.nrings].iter().enumerate() {
            if arom_rings >> i & 1 == 1 {
                self.aromatic |= r;
            }
        }
        // Smallest aromatic ring per atom, among rings all of whose bonds
        // are aromatic (set below).
        let mut best = [u8::MAX; MAX_ATOMS];
        // Bonds between two atoms of one aromatic ring become aromatic.
        for a in 0..self.n {
            for k in 0..self.deg[a] as usize {
                let b = self.nbr[a][k] as usize;
                let shared = self.rings[..self.nrings]
                    .iter()
                    .enumerate()
                    .any(|(i, &r)| arom_rings >> i & 1 == 1 && r >> a & 1 == 1 && r >> b & 1 == 1);
                if shared {
                    self.bond[a][k] = ARO;
                }
            }
        }
        for (i, &r) in self.rings[..self.nrings].iter().enumerate() {
            if arom_rings >> i & 1 == 0 || !self.ring_is_aromatic(r) {
                continue;
            }
            for a in bits(r) {
                if best[a] == u8::MAX || r.count_ones() < self.rings[best[a] as usize].count_ones()
                {
                    best[a] = i as u8;
                }
            }
        }
        self.aro_ring = best;
    }
}

pub use crate::chem::bitset::bits;

#[cfg(test)]
mod tests {
    use super::*;

    pub(crate) fn ring(elements: &[(Element, u8)], doubles: &[usize]) -> Molecule {
        let mut m = Molecule::new();
        let ids: Vec<_> = elements.iter().map(|&(e, h)| m.add_atom(e, h)).collect();
        for i in 0..ids.len() {
            let j = (i + 1) % ids.len();
            let o = if doubles.contains(&i) { 2 } else { 1 };
            m.add_bond(ids[i], ids[j], o);
        }
        m
    }

    #[test]
    fn benzene_furan_and_cyclohexene() {
        // Hückel rule (common practice): benzene and furan aromatic, cyclohexene not.
        let benzene = ring(&[(Element::C, 1); 6], &[0, 2, 4]);
        let v = View::new(&benzene).unwrap();
        assert_eq!(v.aromatic, 0b111111);
        assert_eq!(v.ring_size[3], 6);
        let furan = ring(
            &[
                (Element::O, 0),
                (Element::C, 1),
                (Element::C, 1),
                (Element::C, 1),
                (Element::C, 1),
            ],
            &[1, 3],
        );
        assert_eq!(View::new(&furan).unwrap().aromatic, 0b11111);
        let cyclohexene = ring(
            &[
                (Element::C, 1),
                (Element::C, 1),
                (Element::C, 2),
                (Element::C, 2),
                (Element::C, 2),
                (Element::C, 2),
            ],
            &[0],
        );
        let v = View::new(&cyclohexene).unwrap();
        assert_eq!(v.aromatic, 0);
        assert_eq!(v.hyb[0], 2);
        assert_eq!(v.hyb[3], 3);
    }
}
