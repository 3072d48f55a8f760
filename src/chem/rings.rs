//! Ring perception on a [`Molecule`] (read as a [`FlatMolecule`]): which atoms
//! and bonds lie in a ring, the set of relevant cycles, ring systems, and the
//! smallest ring through a bond.
//!
//! Method: the ring set is the set of *relevant cycles* (Vismara, "Union of all
//! the minimum cycle bases in a graph", Electron. J. Combin. 4 (1997) #R9): a
//! cycle is relevant when it is not a sum (symmetric difference of edge sets)
//! of strictly shorter cycles. It is the union of every smallest set of
//! smallest rings (SSSR), so unlike one SSSR it does not depend on atom order:
//! bicyclo[2.2.2]octane gets its three six-membered rings, cubane its six
//! four-membered ones. Aromaticity needs exactly this property, because the
//! canonical SMILES must not change with the input order.
//!
//! Why enumeration: relevant cycles are found here by listing simple cycles in
//! order of length (a depth-first search pruned by breadth-first distances)
//! and keeping those independent, over GF(2), of all shorter ones; the listing
//! stops as soon as the cycles found span the cycle space. Molecules of the
//! size the tool handles have few short cycles, so this is fast and simple.
//! Should a pathological input have too many cycles, the search falls back to
//! Horton's candidate set (Horton, SIAM J. Comput. 16 (1987) 358-366), which
//! yields one minimum cycle basis in polynomial time.
//!
//! Cost: the result depends on the skeleton alone, so a caller that meets one
//! skeleton many times (every bond-order assignment of it) keeps one
//! [`RingInfo`] and perceives again only when the bonds change; perceiving
//! again reuses the value's buffers, so nothing is allocated per molecule.

use super::flat::FlatMolecule;
use super::molecule::Molecule;

/// Upper bound on simple cycles listed before falling back to Horton's set.
const MAX_LISTED_CYCLES: usize = 20_000;
/// Upper bound on depth-first steps spent listing cycles.
const MAX_SEARCH_STEPS: usize = 2_000_000;

/// Ring perception result for one molecule. Atom indices are node indices,
/// bond indices are petgraph edge indices of [`Molecule::graph`] (bond
/// numbers of the [`FlatMolecule`] perceived).
///
/// A `RingInfo` can be perceived again for another molecule
/// ([`RingInfo::perceive`]); it keeps its buffers, so a caller that holds
/// one does not allocate per molecule once they have grown.
#[derive(Clone, Debug, Default)]
pub struct RingInfo {
    /// The relevant cycles' atoms, ring after ring (see [`RingInfo::ring`]).
    atoms: Vec<usize>,
    /// Their bonds, aligned with `atoms` (see [`RingInfo::ring_bonds`]).
    bonds: Vec<usize>,
    /// Ring r is `atoms[start[r]..start[r + 1]]`.
    start: Vec<usize>,
    /// Whether each atom lies on some cycle.
    pub atom_in_ring: Vec<bool>,
    /// Whether each bond lies on some cycle (is not a bridge).
    pub bond_in_ring: Vec<bool>,
    /// Size of the smallest cycle through each bond, 0 for a bond in no ring.
    pub smallest_bond_ring: Vec<usize>,
    /// Size of the smallest cycle through each atom, 0 for an acyclic atom.
    pub smallest_atom_ring: Vec<usize>,
    /// True when the relevant-cycle search hit its limits and the rings are
    /// one minimum cycle basis instead of the full set of relevant cycles.
    pub approximate: bool,
    /// Whether the ring set (`atoms`, `bonds`, `start`) is listed.
    cycles_perceived: bool,
    /// Cycle space dimension of the molecule perceived.
    dimension: usize,
    work: Work,
}

impl RingInfo {
    /// Number of rings in the ring set (0 until it is listed: see
    /// [`RingInfo::perceive_ring_bonds`]).
    pub fn ring_count(&self) -> usize {
        self.start.len().saturating_sub(1)
    }

    /// Ring `r` of the relevant cycles, as atoms in ring order starting at
    /// its lowest atom, towards the lower of that atom's two ring
    /// neighbours. Rings are sorted by size, then by atom list.
    pub fn ring(&self, r: usize) -> &[usize] {
        &self.atoms[self.start[r]..self.start[r + 1]]
    }

    /// The bonds of ring `r`: `ring_bonds(r)[i]` joins `ring(r)[i]` and
    /// `ring(r)[i + 1]` (cyclically).
    pub fn ring_bonds(&self, r: usize) -> &[usize] {
        &self.bonds[self.start[r]..self.start[r + 1]]
    }

    /// Every ring, in order (see [`RingInfo::ring`]).
    pub fn rings(&self) -> impl Iterator<Item = &[usize]> + '_ {
        (0..self.ring_count()).map(|r| self.ring(r))
    }

    /// Whether bond `e` lies in a ring of fewer than `size` atoms.
    pub fn bond_in_ring_smaller_than(&self, e: usize, size: usize) -> bool {
        let s = self.smallest_bond_ring[e];
        s > 0 && s < size
    }

    /// Ring systems: groups of ring indices joined by shared bonds (fused
    /// or bridged rings), each sorted; spiro rings, which share only an
    /// atom, stay apart.
    pub fn systems(&self) -> Vec<Vec<usize>> {
        let r = self.ring_count();
        let mut parent: Vec<usize> = (0..r).collect();
        fn find(p: &mut [usize], x: usize) -> usize {
            let mut x = x;
            while p[x] != x {
                p[x] = p[p[x]];
                x = p[x];
            }
            x
        }
        let mut first_ring_of_bond = vec![usize::MAX; self.bond_in_ring.len()];
        for i in 0..r {
            for &e in self.ring_bonds(i) {
                if first_ring_of_bond[e] == usize::MAX {
                    first_ring_of_bond[e] = i;
                } else {
                    let (a, b) = (
                        find(&mut parent, i),
                        find(&mut parent, first_ring_of_bond[e]),
                    );
                    parent[a.max(b)] = a.min(b);
                }
            }
        }
        let mut groups: Vec<Vec<usize>> = Vec::new();
        let mut group_of_root = vec![usize::MAX; r];
        for i in 0..r {
            let root = find(&mut parent, i);
            if group_of_root[root] == usize::MAX {
                group_of_root[root] = groups.len();
                groups.push(Vec::new());
            }
            groups[group_of_root[root]].push(i);
        }
        groups
    }

    /// Perceive the rings of `mol` into this value, reusing its buffers:
    /// see the module documentation for the method. What comes out depends
    /// only on the atom count and [`FlatMolecule::all_ends`].
    pub fn perceive(&mut self, mol: &FlatMolecule) {
        self.perceive_ring_bonds(mol);
        self.perceive_cycles();
    }

    /// The first half of [`RingInfo::perceive`]: which atoms and bonds lie
    /// in a ring and the smallest ring through each. The ring set stays
    /// empty until [`RingInfo::perceive_cycles`] (for the same molecule)
    /// lists it: a caller that often needs no ring set (aromaticity, when
    /// no cycle of candidate atoms exists) saves its cost, the larger part.
    pub fn perceive_ring_bonds(&mut self, mol: &FlatMolecule) {
        let n = mol.atom_count();
        let m = mol.bond_count();
        let w = &mut self.work;
        self.atoms.clear();
        self.bonds.clear();
        self.start.clear();
        self.start.push(0);
        self.approximate = false;
        self.cycles_perceived = false;

        // Which bonds lie on a cycle, and the cycle space dimension
        // (cyclomatic number) E - V + components.
        let components = mark_ring_bonds(mol, &mut self.bond_in_ring, w);
        let dimension = m + components - n;
        self.dimension = dimension;
        // Only ring bonds matter from here on.
        w.ring_adj.fill(mol, &self.bond_in_ring);

        // The shortest detour between the ends of a ring bond, plus the
        // bond, is the smallest ring through it; a detour lies on a cycle,
        // so the ring bonds hold it.
        w.dist.resize(n, usize::MAX);
        self.smallest_bond_ring.clear();
        self.smallest_bond_ring.resize(m, 0);
        for e in (0..m).filter(|&e| self.bond_in_ring[e]) {
            let (a, b) = mol.ends(e);
            let adj = &w.ring_adj;
            let d = bfs(
                |v| adj.of(v),
                a,
                Some(b),
                |_| true,
                |f| f != e,
                &mut w.dist,
                &mut w.queue,
            );
            debug_assert!(d != usize::MAX, "a ring bond has a detour");
            self.smallest_bond_ring[e] = d + 1;
        }
        self.smallest_atom_ring.clear();
        self.smallest_atom_ring.resize(n, 0);
        for e in 0..m {
            let s = self.smallest_bond_ring[e];
            if s > 0 {
                let (a, b) = mol.ends(e);
                for v in [a, b] {
                    let r = &mut self.smallest_atom_ring[v];
                    if *r == 0 || s < *r {
                        *r = s;
                    }
                }
            }
        }
        self.atom_in_ring.clear();
        self.atom_in_ring
            .extend(self.smallest_atom_ring.iter().map(|&s| s > 0));
    }

    /// Whether the ring set is listed: after [`RingInfo::perceive`], or
    /// [`RingInfo::perceive_cycles`] following
    /// [`RingInfo::perceive_ring_bonds`].
    pub fn cycles_perceived(&self) -> bool {
        self.cycles_perceived
    }

    /// The second half of [`RingInfo::perceive`]: the ring set of the
    /// molecule last given to [`RingInfo::perceive_ring_bonds`]. Does
    /// nothing when it is already listed.
    pub fn perceive_cycles(&mut self) {
        if self.cycles_perceived {
            return;
        }
        self.cycles_perceived = true;
        let (m, dimension) = (self.bond_in_ring.len(), self.dimension);
        if dimension == 0 {
            return;
        }
        let w = &mut self.work;
        w.found.clear();
        if !relevant_cycles(m, dimension, w) {
            self.approximate = true;
            w.found.clear();
            for c in horton_basis(&w.ring_adj, m, dimension) {
                w.found.push(&c.atoms, &c.bonds);
            }
        }
        // Normalise, sort by size then atom list, drop repeats.
        w.norm.clear();
        for c in 0..w.found.len() {
            let atoms = w.found.atoms(c);
            normalise_cycle(atoms, &w.ring_adj, &mut w.norm);
        }
        w.perm.clear();
        w.perm.extend(0..w.norm.len());
        let norm = &w.norm;
        w.perm.sort_by(|&x, &y| {
            let (a, b) = (norm.atoms(x), norm.atoms(y));
            a.len().cmp(&b.len()).then_with(|| a.cmp(b))
        });
        for (i, &c) in w.perm.iter().enumerate() {
            if i > 0 && norm.atoms(w.perm[i - 1]) == norm.atoms(c) {
                continue;
            }
            self.atoms.extend_from_slice(norm.atoms(c));
            self.bonds.extend_from_slice(norm.bonds(c));
            self.start.push(self.atoms.len());
        }
    }
}

/// Perceive rings: see the module documentation for the method.
pub fn ring_info(mol: &Molecule) -> RingInfo {
    let mut info = RingInfo::default();
    info.perceive(&FlatMolecule::from_molecule(mol));
    info
}

/// Work space of [`RingInfo::perceive`], kept between molecules.
#[derive(Clone, Debug, Default)]
struct Work {
    dist: Vec<usize>,
    queue: Vec<usize>,
    /// Depth-first discovery times and low points, and the pass's stack.
    disc: Vec<usize>,
    low: Vec<usize>,
    frames: Vec<(usize, usize, usize)>,
    ring_adj: Adjacency,
    /// `dists[s * n + v]`: distance from s to v within atoms >= s.
    dists: Vec<usize>,
    path: Vec<usize>,
    path_bonds: Vec<usize>,
    on_path: Vec<bool>,
    /// Cycles of the length being listed.
    of_length: Cycles,
    relevant: Vec<bool>,
    basis: Gf2Basis,
    row: Vec<u64>,
    /// Relevant cycles found, as listed.
    found: Cycles,
    /// The same, normalised.
    norm: Cycles,
    perm: Vec<usize>,
}

/// Neighbour lists (neighbour, bond) of the ring bonds only, each atom's in
/// bond order.
#[derive(Clone, Debug, Default)]
struct Adjacency {
    start: Vec<usize>,
    list: Vec<(usize, usize)>,
}

impl Adjacency {
    fn fill(&mut self, mol: &FlatMolecule, bond_ok: &[bool]) {
        self.start.clear();
        self.list.clear();
        self.start.push(0);
        for v in 0..mol.atom_count() {
            self.list.extend(
                mol.neighbours(v)
                    .iter()
                    .copied()
                    .filter(|&(_, e)| bond_ok[e]),
            );
            self.start.push(self.list.len());
        }
    }

    fn len(&self) -> usize {
        self.start.len() - 1
    }

    fn of(&self, v: usize) -> &[(usize, usize)] {
        &self.list[self.start[v]..self.start[v + 1]]
    }
}

/// A list of cycles, each as atoms in order and the bonds between them
/// (bond i after atom i), stored end to end.
#[derive(Clone, Debug, Default)]
struct Cycles {
    atoms: Vec<usize>,
    bonds: Vec<usize>,
    /// Cycle c is `atoms[start[c]..start[c + 1]]`; empty before the first push.
    start: Vec<usize>,
}

impl Cycles {
    fn clear(&mut self) {
        self.atoms.clear();
        self.bonds.clear();
        self.start.clear();
    }

    fn len(&self) -> usize {
        self.start.len().saturating_sub(1)
    }

    fn push(&mut self, atoms: &[usize], bonds: &[usize]) {
        if self.start.is_empty() {
            self.start.push(0);
        }
        self.atoms.extend_from_slice(atoms);
        self.bonds.extend_from_slice(bonds);
        self.start.push(self.atoms.len());
    }

    fn atoms(&self, c: usize) -> &[usize] {
        &self.atoms[self.start[c]..self.start[c + 1]]
    }

    fn bonds(&self, c: usize) -> &[usize] {
        &self.bonds[self.start[c]..self.start[c + 1]]
    }
}

/// Breadth-first distances from `s` over the allowed vertices and edges
/// into `dist` (`usize::MAX` where unreachable; `dist.len()` atoms). With a
/// `target`, stops once its distance is known and returns it; otherwise
/// returns `usize::MAX`.
fn bfs<'a>(
    neighbours: impl Fn(usize) -> &'a [(usize, usize)],
    s: usize,
    target: Option<usize>,
    vertex_ok: impl Fn(usize) -> bool,
    edge_ok: impl Fn(usize) -> bool,
    dist: &mut [usize],
    queue: &mut Vec<usize>,
) -> usize {
    dist.fill(usize::MAX);
    queue.clear();
    dist[s] = 0;
    queue.push(s);
    let mut head = 0;
    while head < queue.len() {
        let v = queue[head];
        head += 1;
        for &(u, e) in neighbours(v) {
            if dist[u] == usize::MAX && vertex_ok(u) && edge_ok(e) {
                dist[u] = dist[v] + 1;
                if target == Some(u) {
                    return dist[u];
                }
                queue.push(u);
            }
        }
    }
    usize::MAX
}

/// Mark in `in_ring` (resized to the bonds) the bonds that lie on a cycle,
/// that is, are not bridges, and return the number of connected
/// components. One depth-first pass comparing each tree bond's lower end's
/// low point with the upper end's discovery time (Tarjan, "Depth-first
/// search and linear graph algorithms", SIAM J. Comput. 1 (1972) 146-160).
fn mark_ring_bonds(mol: &FlatMolecule, in_ring: &mut Vec<bool>, w: &mut Work) -> usize {
    let n = mol.atom_count();
    in_ring.clear();
    in_ring.resize(mol.bond_count(), false);
    w.disc.clear();
    w.disc.resize(n, usize::MAX);
    w.low.clear();
    w.low.resize(n, 0);
    let mut time = 0;
    let mut components = 0;
    for root in 0..n {
        if w.disc[root] != usize::MAX {
            continue;
        }
        components += 1;
        w.disc[root] = time;
        w.low[root] = time;
        time += 1;
        // (atom, bond it was reached by, next neighbour index)
        w.frames.clear();
        w.frames.push((root, usize::MAX, 0));
        while let Some(top) = w.frames.last_mut() {
            let (v, via, i) = *top;
            if let Some(&(u, e)) = mol.neighbours(v).get(i) {
                top.2 += 1;
                if e == via {
                    continue;
                }
                if w.disc[u] == usize::MAX {
                    w.disc[u] = time;
                    w.low[u] = time;
                    time += 1;
                    w.frames.push((u, e, 0));
                } else {
                    // A bond closing a cycle.
                    in_ring[e] = true;
                    w.low[v] = w.low[v].min(w.disc[u]);
                }
            } else {
                w.frames.pop();
                if let Some(&(parent, _, _)) = w.frames.last() {
                    w.low[parent] = w.low[parent].min(w.low[v]);
                    // The tree bond to v is a bridge unless v's subtree
                    // reaches back to `parent` or above.
                    in_ring[via] = w.low[v] <= w.disc[parent];
                }
            }
        }
    }
    components
}

/// Gaussian elimination basis over GF(2) of cycles as edge-incidence
/// vectors (`words` u64 per row), kept in echelon form by pivot bit.
#[derive(Clone, Debug, Default)]
struct Gf2Basis {
    words: usize,
    rows: Vec<u64>,
    pivots: Vec<usize>,
}

impl Gf2Basis {
    fn reset(&mut self, m: usize) {
        self.words = m.div_ceil(64);
        self.rows.clear();
        self.pivots.clear();
    }

    /// Reduce `v` by the basis in place (zero when dependent).
    fn reduce(&self, v: &mut [u64]) {
        for (i, &pivot) in self.pivots.iter().enumerate() {
            if v[pivot / 64] >> (pivot % 64) & 1 == 1 {
                let row = &self.rows[i * self.words..(i + 1) * self.words];
                for (x, y) in v.iter_mut().zip(row) {
                    *x ^= y;
                }
            }
        }
    }

    /// Add `v` if independent (`v` is reduced in place); returns whether the
    /// rank grew.
    fn insert(&mut self, v: &mut [u64]) -> bool {
        self.reduce(v);
        match first_bit(v) {
            Some(p) => {
                self.rows.extend_from_slice(v);
                self.pivots.push(p);
                true
            }
            None => false,
        }
    }

    fn rank(&self) -> usize {
        self.pivots.len()
    }
}

/// The edge-incidence vector of `bonds` into `v` (`words` long).
fn edge_set(bonds: &[usize], words: usize, v: &mut Vec<u64>) {
    v.clear();
    v.resize(words, 0);
    for &e in bonds {
        v[e / 64] |= 1 << (e % 64);
    }
}

fn first_bit(v: &[u64]) -> Option<usize> {
    v.iter()
        .enumerate()
        .find(|(_, &w)| w != 0)
        .map(|(i, &w)| i * 64 + w.trailing_zeros() as usize)
}

/// A cycle found by Horton's method: atoms in order and the bonds between
/// them.
struct Cycle {
    atoms: Vec<usize>,
    bonds: Vec<usize>,
}

/// All relevant cycles over `w.ring_adj` into `w.found`; false when the
/// search limits were hit.
fn relevant_cycles(m: usize, dimension: usize, w: &mut Work) -> bool {
    let adj = &w.ring_adj;
    let n = adj.len();
    w.basis.reset(m);
    let words = w.basis.words;
    let mut listed = 0usize;
    let mut steps = 0usize;
    // Distances from each start within vertices >= start, for pruning.
    w.dists.clear();
    w.dists.resize(n * n, usize::MAX);
    for s in 0..n {
        bfs(
            |v| adj.of(v),
            s,
            None,
            |v| v >= s,
            |_| true,
            &mut w.dists[s * n..(s + 1) * n],
            &mut w.queue,
        );
    }
    w.on_path.clear();
    w.on_path.resize(n, false);
    for k in 3..=n {
        w.of_length.clear();
        for s in 0..n {
            if adj.of(s).len() < 2 {
                continue;
            }
            w.path.clear();
            w.path.push(s);
            w.path_bonds.clear();
            w.on_path[s] = true;
            let ok = CycleSearch {
                adj,
                dist: &w.dists[s * n..(s + 1) * n],
                k,
                path: &mut w.path,
                path_bonds: &mut w.path_bonds,
                on_path: &mut w.on_path,
                out: &mut w.of_length,
                steps: &mut steps,
            }
            .extend();
            w.on_path[s] = false;
            if !ok || w.of_length.len() + listed > MAX_LISTED_CYCLES {
                return false;
            }
        }
        let count = w.of_length.len();
        listed += count;
        // Relevant: independent of all strictly shorter cycles (the basis
        // holds only those so far); add them to the basis afterwards.
        w.relevant.clear();
        for c in 0..count {
            edge_set(w.of_length.bonds(c), words, &mut w.row);
            w.basis.reduce(&mut w.row);
            w.relevant.push(w.row.iter().any(|&x| x != 0));
        }
        for c in 0..count {
            if w.relevant[c] {
                edge_set(w.of_length.bonds(c), words, &mut w.row);
                w.basis.insert(&mut w.row);
                w.found.push(w.of_length.atoms(c), w.of_length.bonds(c));
            }
        }
        if w.basis.rank() == dimension {
            return true;
        }
    }
    true
}

/// Depth-first listing of the simple cycles of exactly `k` atoms whose
/// lowest atom is `path[0]`; each cycle is listed once (second atom < last
/// atom). Every node of the search counts one step against
/// [`MAX_SEARCH_STEPS`].
struct CycleSearch<'a> {
    adj: &'a Adjacency,
    /// Distances from `path[0]` within atoms above it.
    dist: &'a [usize],
    k: usize,
    path: &'a mut Vec<usize>,
    path_bonds: &'a mut Vec<usize>,
    on_path: &'a mut [bool],
    out: &'a mut Cycles,
    steps: &'a mut usize,
}

impl CycleSearch<'_> {
    /// Extend the path; false when the step budget is exhausted.
    fn extend(&mut self) -> bool {
        *self.steps += 1;
        if *self.steps > MAX_SEARCH_STEPS {
            return false;
        }
        let adj = self.adj;
        let s = self.path[0];
        let v = *self.path.last().expect("path starts at s");
        if self.path.len() == self.k {
            if self.path[1] < v {
                if let Some(&(_, e)) = adj.of(v).iter().find(|&&(u, _)| u == s) {
                    self.path_bonds.push(e);
                    self.out.push(self.path, self.path_bonds);
                    self.path_bonds.pop();
                }
            }
            return true;
        }
        // Steps still to take after this one, plus the closing bond (an
        // unreachable atom's distance, usize::MAX, is above it too).
        let remaining = self.k - self.path.len();
        for &(u, e) in adj.of(v) {
            if u <= s || self.on_path[u] || self.dist[u] > remaining {
                continue;
            }
            self.path.push(u);
            self.path_bonds.push(e);
            self.on_path[u] = true;
            let ok = self.extend();
            self.on_path[u] = false;
            self.path.pop();
            self.path_bonds.pop();
            if !ok {
                return false;
            }
        }
        true
    }
}

/// One minimum cycle basis from Horton's candidate cycles: for every vertex
/// `v` and bond x-y, the cycle (shortest path v..x) + x-y + (shortest path
/// y..v) when the two paths meet only at `v`; greedy by length over GF(2).
/// (The fallback for pathological inputs; it allocates freely.)
fn horton_basis(adj: &Adjacency, m: usize, dimension: usize) -> Vec<Cycle> {
    let n = adj.len();
    let mut candidates = Vec::new();
    for v in 0..n {
        if adj.of(v).is_empty() {
            continue;
        }
        // Shortest-path tree from v.
        let mut parent = vec![usize::MAX; n];
        let mut parent_bond = vec![usize::MAX; n];
        let mut dist = vec![usize::MAX; n];
        let mut queue = std::collections::VecDeque::new();
        dist[v] = 0;
        queue.push_back(v);
        while let Some(x) = queue.pop_front() {
            for &(u, e) in adj.of(x) {
                if dist[u] == usize::MAX {
                    dist[u] = dist[x] + 1;
                    parent[u] = x;
                    parent_bond[u] = e;
                    queue.push_back(u);
                }
            }
        }
        let path_to = |mut x: usize| {
            let mut atoms = vec![x];
            let mut bonds = Vec::new();
            while x != v {
                bonds.push(parent_bond[x]);
                x = parent[x];
                atoms.push(x);
            }
            (atoms, bonds)
        };
        for x in 0..n {
            for &(y, e) in adj.of(x) {
                if x >= y || dist[x] == usize::MAX || parent_bond[x] == e || parent_bond[y] == e {
                    continue;
                }
                let (px, bx) = path_to(x);
                let (py, by) = path_to(y);
                let shared = px.iter().filter(|a| py.contains(a)).count();
                if shared != 1 {
                    continue;
                }
                // v .. x, then y .. v back.
                let mut atoms: Vec<usize> = px.iter().rev().copied().collect();
                let mut bonds: Vec<usize> = bx.iter().rev().copied().collect();
                bonds.push(e);
                atoms.extend(py.iter().take(py.len() - 1));
                bonds.extend(by.iter());
                candidates.push(Cycle { atoms, bonds });
            }
        }
    }
    candidates.sort_by_key(|c| c.atoms.len());
    let mut basis = Gf2Basis::default();
    basis.reset(m);
    let mut row = Vec::new();
    let mut out = Vec::new();
    for c in candidates {
        edge_set(&c.bonds, basis.words, &mut row);
        if basis.insert(&mut row) {
            out.push(c);
            if basis.rank() == dimension {
                break;
            }
        }
    }
    out
}

/// Rotate a cycle to start at its lowest atom, going towards the lower of
/// that atom's two ring neighbours, recompute its bond list to match, and
/// append both to `out`.
fn normalise_cycle(atoms: &[usize], adj: &Adjacency, out: &mut Cycles) {
    let k = atoms.len();
    let start = (0..k)
        .min_by_key(|&i| atoms[i])
        .expect("cycle is not empty");
    let fwd = atoms[(start + 1) % k];
    let back = atoms[(start + k - 1) % k];
    if out.start.is_empty() {
        out.start.push(0);
    }
    let first = out.atoms.len();
    if fwd < back {
        out.atoms.extend((0..k).map(|i| atoms[(start + i) % k]));
    } else {
        out.atoms.extend((0..k).map(|i| atoms[(start + k - i) % k]));
    }
    for i in 0..k {
        let (a, b) = (out.atoms[first + i], out.atoms[first + (i + 1) % k]);
        let e = adj
            .of(a)
            .iter()
            .find(|&&(u, _)| u == b)
            .map(|&(_, e)| e)
            .expect("consecutive ring atoms are bonded");
        out.bonds.push(e);
    }
    out.start.push(out.atoms.len());
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::Element;

    /// Build a carbon skeleton from bonds (all single, H ignored).
    fn skeleton(n: usize, bonds: &[(usize, usize)]) -> Molecule {
        let mut m = Molecule::new();
        let idx: Vec<_> = (0..n).map(|_| m.add_atom(Element::C, 0)).collect();
        for &(a, b) in bonds {
            m.add_bond(idx[a], idx[b], 1);
        }
        m
    }

    #[test]
    fn chain_has_no_rings() {
        let r = ring_info(&skeleton(4, &[(0, 1), (1, 2), (2, 3)]));
        assert_eq!(r.ring_count(), 0);
        assert!(r.bond_in_ring.iter().all(|&b| !b));
    }

    #[test]
    fn naphthalene_skeleton_has_two_six_rings_in_one_system() {
        // Ring counts of bicyclo[4.4.0]decane (common practice): two 6-rings,
        // the 10-ring envelope is their sum and so not relevant.
        let r = ring_info(&skeleton(
            10,
            &[
                (0, 1),
                (1, 2),
                (2, 3),
                (3, 4),
                (4, 5),
                (5, 0),
                (4, 6),
                (6, 7),
                (7, 8),
                (8, 9),
                (9, 5),
            ],
        ));
        assert_eq!(r.ring_count(), 2);
        assert!(r.rings().all(|x| x.len() == 6));
        assert_eq!(r.systems(), vec![vec![0, 1]]);
        assert_eq!(r.smallest_bond_ring[10], 6);
    }

    #[test]
    fn bicyclooctane_and_cubane_keep_all_symmetric_rings() {
        // bicyclo[2.2.2]octane: three 6-rings (common practice).
        let r = ring_info(&skeleton(
            8,
            &[
                (0, 1),
                (1, 2),
                (2, 3),
                (3, 4),
                (4, 5),
                (5, 0),
                (0, 6),
                (6, 7),
                (7, 3),
            ],
        ));
        assert_eq!(r.ring_count(), 3);
        // cubane: six 4-rings (common practice).
        let r = ring_info(&skeleton(8, &CUBANE));
        assert_eq!(r.ring_count(), 6);
        assert!(r.rings().all(|x| x.len() == 4));
    }

    /// The bonds of cubane's carbon cube.
    const CUBANE: [(usize, usize); 12] = [
        (0, 1),
        (1, 2),
        (2, 3),
        (3, 0),
        (4, 5),
        (5, 6),
        (6, 7),
        (7, 4),
        (0, 4),
        (1, 5),
        (2, 6),
        (3, 7),
    ];

    #[test]
    fn spiro_rings_are_separate_systems() {
        // spiro[2.2]pentane
        let r = ring_info(&skeleton(
            5,
            &[(0, 1), (1, 2), (2, 0), (0, 3), (3, 4), (4, 0)],
        ));
        assert_eq!(r.ring_count(), 2);
        assert_eq!(r.systems().len(), 2);
    }

    #[test]
    fn horton_fallback_gives_a_basis() {
        let m = FlatMolecule::from_molecule(&skeleton(8, &CUBANE));
        let mut adj = Adjacency::default();
        adj.fill(&m, &[true; 12]);
        let b = horton_basis(&adj, 12, 5);
        assert_eq!(b.len(), 5);
        assert!(b.iter().all(|c| c.atoms.len() == 4));
    }

    #[test]
    fn perceiving_again_gives_what_a_fresh_value_gives() {
        // One RingInfo reused over molecules of falling and rising size must
        // keep nothing of the one before.
        let inputs = [
            "C12C3C4C1C5C2C3C45",
            "CCCC",
            "C1CC2CCC1CC2",
            "c1ccc2ccccc2c1",
            "C1CC1C1CC1",
            "C",
            "C1CCC2(CC1)CCC2",
        ];
        let mut reused = RingInfo::default();
        for s in inputs {
            let mol = crate::chem::smiles::parse_smiles(s).unwrap();
            reused.perceive(&FlatMolecule::from_molecule(&mol));
            let fresh = ring_info(&mol);
            let rings = |r: &RingInfo| -> Vec<(Vec<usize>, Vec<usize>)> {
                (0..r.ring_count())
                    .map(|i| (r.ring(i).to_vec(), r.ring_bonds(i).to_vec()))
                    .collect()
            };
            assert_eq!(rings(&reused), rings(&fresh), "{s}");
            assert_eq!(reused.atom_in_ring, fresh.atom_in_ring, "{s}");
            assert_eq!(reused.bond_in_ring, fresh.bond_in_ring, "{s}");
            assert_eq!(reused.smallest_bond_ring, fresh.smallest_bond_ring, "{s}");
            assert_eq!(reused.smallest_atom_ring, fresh.smallest_atom_ring, "{s}");
            assert_eq!(reused.systems(), fresh.systems(), "{s}");
            assert_eq!(reused.approximate, fresh.approximate, "{s}");
        }
    }

    /// Smallest ring through each bond by its definition: the shortest path
    /// between its ends over the whole molecule without it, plus the bond
    /// (0 when there is none).
    fn smallest_rings_by_definition(m: &Molecule) -> Vec<usize> {
        let f = FlatMolecule::from_molecule(m);
        let (mut dist, mut queue) = (vec![0; f.atom_count()], Vec::new());
        (0..f.bond_count())
            .map(|e| {
                let (a, b) = f.ends(e);
                let d = bfs(
                    |v| f.neighbours(v),
                    a,
                    Some(b),
                    |_| true,
                    |x| x != e,
                    &mut dist,
                    &mut queue,
                );
                if d == usize::MAX {
                    0
                } else {
                    d + 1
                }
            })
            .collect()
    }

    #[test]
    fn ring_bonds_and_smallest_rings_follow_their_definition() {
        // Every isomer of formulas rich in fused, bridged and spiro cages
        // (C8H8 holds cubane, C6H6 prismane), perceived with one reused
        // RingInfo as the SMILES writer does.
        let mut reused = RingInfo::default();
        let mut checked = 0;
        for text in ["C8H8", "C6H6", "C5H4O", "C4H4N2"] {
            for m in crate::enumerate::molecules_of(text) {
                reused.perceive(&FlatMolecule::from_molecule(&m));
                let want = smallest_rings_by_definition(&m);
                assert_eq!(reused.smallest_bond_ring, want, "{text}");
                let in_ring: Vec<bool> = want.iter().map(|&s| s > 0).collect();
                assert_eq!(reused.bond_in_ring, in_ring, "{text}");
                checked += 1;
            }
        }
        assert!(checked > 5000, "{checked} isomers checked");
    }
}
