//! The `large-conjugated-ring` rule: a ring of [`LARGE_RING`] or more atoms,
//! every one of which carries a double or triple bond.
//!
//! "Ring" here is a *relevant cycle* (Plotkin, J. Chem. Doc. 1971, 11, 60;
//! Vismara, Electron. J. Combin. 1997, 4, R9; both from memory): a cycle of
//! the skeleton that is not the sum (over GF(2), as bond sets) of shorter
//! cycles. The relevant cycles are the union of all minimum cycle bases, so
//! the definition does not depend on which smallest set of smallest rings
//! one picks. A relevant cycle has no chord (a chord splits it into two
//! shorter cycles that sum to it). The perimeter of pyrene or
//! acenaphthylene is chordless but the sum of the six- and five-rings inside
//! it, and the ten-ring of 1,6-methano[10]annulene is the sum of its two
//! seven-rings: neither is relevant, both compounds are kept. [14]Annulene's
//! ring is relevant.
//!
//! Whether an atom carries a multiple bond is the same in every Kekulé form
//! of a structure (the forms differ in which bonds of the pi system are
//! double, not in which atoms have one), so the verdict is too.
//!
//! Finding them: per isomer, the atoms with a multiple bond are pruned to
//! the 2-core of the graph they induce (an atom of a ring of such atoms has
//! two neighbours in it); most isomers stop there, with fewer than
//! `LARGE_RING` atoms left. Otherwise the chordless cycles of at least
//! `LARGE_RING` atoms of that core are listed (induced paths from their
//! lowest atom) and each is tested for relevance against an echelon basis of
//! the skeleton's cycles, built once per skeleton from Horton's candidate
//! cycles (Horton, SIAM J. Comput. 1987, 16, 358, from memory): for a root
//! v, a breadth-first tree T_v and a bond x-y not in it, the cycle
//! T_v(x) + xy + T_v(y). Any cycle C of L bonds through v is the sum over
//! its bonds xy of T_v(x) + xy + T_v(y), each of at most L bonds (the tree
//! paths are no longer than the ways round C), and each such sum is a simple
//! cycle (the two tree paths part at their last common atom); so the
//! candidates of fewer than L bonds span every cycle of fewer than L bonds,
//! and C is relevant exactly when it is not in their span.

use super::super::generator::bits;
use super::super::Isomer;
use super::pi_doubles;
use crate::chem::canon::MAX_ATOMS;

/// Smallest ring the rule removes. Measured on the NMRShiftDB2 v2 dev
/// structures (README, rule table): their relevant rings in which every atom
/// carries a multiple bond have 7 atoms (tropones, tropolones, azulenes,
/// heptalenes; 32 structures) or 13 (one dehydro[13]annulenone), none 8 to
/// 12. So 8 costs no more dev structures than 9 and removes the
/// bicyclo[6.3.0]undecapentaenes and other 8-ring polyenes that led
/// real-size rankings; it also removes cyclooctatetraene, its benzo
/// derivatives and tetraphenylene, which are real but rare.
const LARGE_RING: usize = 8;

/// Bond sets as bit sets: a skeleton of at most `MAX_ATOMS` (64) atoms of
/// valence at most 8 has at most 256 bonds.
const WORDS: usize = 4;
type Bonds = [u64; WORDS];

fn top_bit(b: &Bonds) -> Option<usize> {
    (0..WORDS)
        .rev()
        .find(|&w| b[w] != 0)
        .map(|w| w * 64 + 63 - b[w].leading_zeros() as usize)
}

fn xor(a: &mut Bonds, b: &Bonds) {
    for w in 0..WORDS {
        a[w] ^= b[w];
    }
}

fn count(b: &Bonds) -> usize {
    b.iter().map(|w| w.count_ones() as usize).sum()
}

/// What the rule remembers of one skeleton.
pub(super) struct LargeRings {
    /// Whether `bond` and `basis` belong to the current skeleton.
    known: bool,
    /// Bond numbers: `bond[a * MAX_ATOMS + b]`.
    bond: Vec<u8>,
    /// The echelon basis of the cycle space, in order of insertion (by
    /// length): (vector, bonds of the candidate cycle it came from).
    basis: Vec<(Bonds, usize)>,
    /// Per pivot bit, 1 + the index into `basis` (0: none).
    pivot: [u16; 64 * WORDS],
    /// Verdicts already reached for this skeleton, by 2-core.
    verdicts: Vec<(u64, bool)>,
}

impl Default for LargeRings {
    fn default() -> LargeRings {
        LargeRings {
            known: false,
            bond: vec![0; MAX_ATOMS * MAX_ATOMS],
            basis: Vec::new(),
            pivot: [0; 64 * WORDS],
            verdicts: Vec::new(),
        }
    }
}

/// At most this many verdicts are kept per skeleton.
const VERDICTS: usize = 64;

impl LargeRings {
    /// Forget the skeleton (a new one comes).
    pub(super) fn reset(&mut self) {
        self.known = false;
        self.verdicts.clear();
    }

    /// Whether `iso` has a relevant cycle of at least `LARGE_RING` atoms in
    /// which every atom has a double or triple bond. The N=O of a
    /// charge-separated N-oxide is the single bond of [N+]-[O-] here (see
    /// [`pi_doubles`]).
    pub(super) fn flags(&mut self, iso: &Isomer) -> bool {
        let n = iso.atoms();
        if n < LARGE_RING {
            return false;
        }
        let nb = &iso.node.nb;
        let triple = &iso.node.g.adj[2];
        let mut core = 0u64;
        for x in 0..n {
            if triple[x] != 0 || pi_doubles(iso, x) != 0 {
                core |= 1u64 << x;
            }
        }
        // The 2-core of the induced graph.
        loop {
            let thin = bits(core)
                .filter(|&x| (nb[x] & core).count_ones() < 2)
                .fold(0u64, |m, x| m | 1u64 << x);
            if thin == 0 {
                break;
            }
            core &= !thin;
        }
        if (core.count_ones() as usize) < LARGE_RING {
            return false;
        }
        if let Some(&(_, v)) = self.verdicts.iter().find(|p| p.0 == core) {
            return v;
        }
        if !self.known {
            self.build(iso);
        }
        let verdict = self.any_relevant(nb, core);
        if self.verdicts.len() < VERDICTS {
            self.verdicts.push((core, verdict));
        }
        verdict
    }

    /// Number the bonds and build the echelon basis from Horton's
    /// candidates, shortest first.
    fn build(&mut self, iso: &Isomer) {
        let n = iso.atoms();
        let nb = &iso.node.nb;
        let mut bonds = 0usize;
        for a in 0..n {
            for b in bits(nb[a]).filter(|&b| b > a) {
                self.bond[a * MAX_ATOMS + b] = bonds as u8;
                self.bond[b * MAX_ATOMS + a] = bonds as u8;
                bonds += 1;
            }
        }
        debug_assert!(bonds <= 64 * WORDS);
        let mut candidates: Vec<(usize, Bonds)> = Vec::new();
        let mut parent = [usize::MAX; MAX_ATOMS];
        let mut depth = [0usize; MAX_ATOMS];
        for root in 0..n {
            // Breadth-first tree from the root (lowest-numbered parent first).
            parent[..n].fill(usize::MAX);
            parent[root] = root;
            depth[root] = 0;
            let mut frontier = 1u64 << root;
            let mut seen = frontier;
            let mut d = 0;
            while frontier != 0 {
                d += 1;
                let mut next = 0u64;
                for v in bits(frontier) {
                    for u in bits(nb[v] & !seen & !next) {
                        parent[u] = v;
                        depth[u] = d;
                        next |= 1u64 << u;
                    }
                }
                seen |= next;
                frontier = next;
            }
            for x in bits(seen) {
                for y in bits(nb[x] & seen).filter(|&y| y > x) {
                    if parent[x] == y || parent[y] == x {
                        continue;
                    }
                    let mut cycle: Bonds = [0; WORDS];
                    let mut set = |a: usize, b: usize| {
                        let i = self.bond[a * MAX_ATOMS + b] as usize;
                        cycle[i / 64] ^= 1u64 << (i % 64);
                    };
                    set(x, y);
                    let (mut a, mut b) = (x, y);
                    while a != b {
                        if depth[a] >= depth[b] {
                            set(a, parent[a]);
                            a = parent[a];
                        } else {
                            set(b, parent[b]);
                            b = parent[b];
                        }
                    }
                    candidates.push((count(&cycle), cycle));
                }
            }
        }
        candidates.sort_unstable();
        candidates.dedup();
        self.basis.clear();
        self.pivot = [0; 64 * WORDS];
        for (len, cycle) in candidates {
            let mut v = cycle;
            while let Some(p) = top_bit(&v) {
                match self.pivot[p] {
                    0 => {
                        self.basis.push((v, len));
                        self.pivot[p] = self.basis.len() as u16;
                        break;
                    }
                    i => xor(&mut v, &self.basis[i as usize - 1].0),
                }
            }
        }
        self.known = true;
    }

    /// Whether the cycle through `ring` (atoms in ring order) is not a sum
    /// of shorter cycles. The basis vectors that came from candidates of
    /// fewer bonds were inserted first and are in echelon form among
    /// themselves: reduce by them alone.
    fn relevant(&self, ring: &[usize]) -> bool {
        let len = ring.len();
        let mut v: Bonds = [0; WORDS];
        for (i, &a) in ring.iter().enumerate() {
            let b = ring[(i + 1) % len];
            let k = self.bond[a * MAX_ATOMS + b] as usize;
            v[k / 64] ^= 1u64 << (k % 64);
        }
        while let Some(p) = top_bit(&v) {
            match self.pivot[p] {
                0 => return true,
                i => {
                    let (row, from) = &self.basis[i as usize - 1];
                    if *from >= len {
                        return true;
                    }
                    xor(&mut v, row);
                }
            }
        }
        false
    }

    /// Whether the chordless cycles of at least `LARGE_RING` atoms within
    /// `core` include a relevant one. Induced paths s, v1, ..., vk from the
    /// lowest atom s: each new atom is bonded to no path atom but the last
    /// (and s, which closes the cycle; v1 < vk keeps one direction).
    fn any_relevant(&self, nb: &[u64; MAX_ATOMS], core: u64) -> bool {
        let mut path: Vec<usize> = Vec::with_capacity(64);
        for s in bits(core) {
            let allowed = core & !((2u64 << s) - 1);
            path.clear();
            path.push(s);
            // `blocked`: the path's atoms and the neighbours of its inner
            // atoms (all but s and the last).
            if self.extend(nb, allowed, s, 1u64 << s, &mut path) {
                return true;
            }
        }
        false
    }

    fn extend(
        &self,
        nb: &[u64; MAX_ATOMS],
        allowed: u64,
        s: usize,
        blocked: u64,
        path: &mut Vec<usize>,
    ) -> bool {
        let last = *path.last().expect("a path has its start");
        let inner = if path.len() >= 2 { nb[last] } else { 0 };
        for u in bits(nb[last] & allowed & !blocked) {
            if path.len() >= 2 && nb[u] >> s & 1 == 1 {
                if path[1] < u && path.len() + 1 >= LARGE_RING && {
                    path.push(u);
                    let r = self.relevant(path);
                    path.pop();
                    r
                } {
                    return true;
                }
                continue;
            }
            path.push(u);
            let found = self.extend(nb, allowed, s, blocked | inner | 1u64 << u, path);
            path.pop();
            if found {
                return true;
            }
        }
        false
    }
}
