//! Ring perception on a [`Molecule`]: which atoms and bonds lie in a ring, the
//! set of relevant cycles, ring systems, and the smallest ring through a bond.
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

use super::molecule::Molecule;
use petgraph::visit::EdgeRef;

/// Upper bound on simple cycles listed before falling back to Horton's set.
const MAX_LISTED_CYCLES: usize = 20_000;
/// Upper bound on depth-first steps spent listing cycles.
const MAX_SEARCH_STEPS: usize = 2_000_000;

/// Ring perception result for one molecule. Atom indices are node indices,
/// bond indices are petgraph edge indices of [`Molecule::graph`].
#[derive(Clone, Debug, Default)]
pub struct RingInfo {
    /// The relevant cycles, each as atoms in ring order (starting at its
    /// lowest atom index), sorted by size, then by atom list.
    pub rings: Vec<Vec<usize>>,
    /// For each ring of [`RingInfo::rings`], its bonds: `ring_bonds[r][i]`
    /// joins `rings[r][i]` and `rings[r][i + 1]` (cyclically).
    pub ring_bonds: Vec<Vec<usize>>,
    /// Whether each atom lies on some cycle.
    pub atom_in_ring: Vec<bool>,
    /// Whether each bond lies on some cycle (is not a bridge).
    pub bond_in_ring: Vec<bool>,
    /// Size of the smallest cycle through each bond, 0 for a bond in no ring.
    pub smallest_bond_ring: Vec<usize>,
    /// Size of the smallest cycle through each atom, 0 for an acyclic atom.
    pub smallest_atom_ring: Vec<usize>,
    /// Ring systems: groups of ring indices joined by shared bonds (fused or
    /// bridged rings); spiro rings, which share only an atom, stay apart.
    pub systems: Vec<Vec<usize>>,
    /// True when the relevant-cycle search hit its limits and `rings` is one
    /// minimum cycle basis instead of the full set of relevant cycles.
    pub approximate: bool,
}

impl RingInfo {
    /// Number of rings in the ring set.
    pub fn ring_count(&self) -> usize {
        self.rings.len()
    }

    /// Whether bond `e` lies in a ring of fewer than `size` atoms.
    pub fn bond_in_ring_smaller_than(&self, e: usize, size: usize) -> bool {
        let s = self.smallest_bond_ring[e];
        s > 0 && s < size
    }
}

/// Adjacency list with edge indices: `adj[v]` holds `(neighbour, edge)`.
fn adjacency(mol: &Molecule) -> Vec<Vec<(usize, usize)>> {
    let mut adj = vec![Vec::new(); mol.atom_count()];
    for e in mol.graph.edge_references() {
        let (a, b) = (e.source().index(), e.target().index());
        adj[a].push((b, e.id().index()));
        adj[b].push((a, e.id().index()));
    }
    adj
}

/// Breadth-first distances from `s` over the allowed vertices and edges,
/// `usize::MAX` where unreachable.
fn bfs(
    adj: &[Vec<(usize, usize)>],
    s: usize,
    vertex_ok: impl Fn(usize) -> bool,
    edge_ok: impl Fn(usize) -> bool,
) -> Vec<usize> {
    let mut dist = vec![usize::MAX; adj.len()];
    let mut queue = std::collections::VecDeque::new();
    dist[s] = 0;
    queue.push_back(s);
    while let Some(v) = queue.pop_front() {
        for &(u, e) in &adj[v] {
            if dist[u] == usize::MAX && vertex_ok(u) && edge_ok(e) {
                dist[u] = dist[v] + 1;
                queue.push_back(u);
            }
        }
    }
    dist
}

/// Perceive rings: see the module documentation for the method.
pub fn ring_info(mol: &Molecule) -> RingInfo {
    let n = mol.atom_count();
    let m = mol.graph.edge_count();
    let adj = adjacency(mol);
    let ends: Vec<(usize, usize)> = mol
        .graph
        .edge_references()
        .map(|e| (e.source().index(), e.target().index()))
        .collect();

    // A bond is in a ring exactly when its ends stay connected without it;
    // the shortest such detour plus the bond is the smallest ring through it.
    let mut smallest_bond_ring = vec![0; m];
    for (e, &(a, b)) in ends.iter().enumerate() {
        let d = bfs(&adj, a, |_| true, |f| f != e)[b];
        if d != usize::MAX {
            smallest_bond_ring[e] = d + 1;
        }
    }
    let bond_in_ring: Vec<bool> = smallest_bond_ring.iter().map(|&s| s > 0).collect();
    let mut smallest_atom_ring = vec![0; n];
    for (e, &(a, b)) in ends.iter().enumerate() {
        let s = smallest_bond_ring[e];
        if s > 0 {
            for v in [a, b] {
                if smallest_atom_ring[v] == 0 || s < smallest_atom_ring[v] {
                    smallest_atom_ring[v] = s;
                }
            }
        }
    }
    let atom_in_ring: Vec<bool> = smallest_atom_ring.iter().map(|&s| s > 0).collect();

    // Cycle space dimension (cyclomatic number) E - V + components.
    let mut components = 0;
    let mut seen = vec![false; n];
    for s in 0..n {
        if !seen[s] {
            components += 1;
            for (v, d) in bfs(&adj, s, |_| true, |_| true).into_iter().enumerate() {
                if d != usize::MAX {
                    seen[v] = true;
                }
            }
        }
    }
    let dimension = m + components - n;

    let mut info = RingInfo {
        atom_in_ring,
        bond_in_ring,
        smallest_bond_ring,
        smallest_atom_ring,
        ..RingInfo::default()
    };
    if dimension == 0 {
        return info;
    }
    // Only ring bonds matter from here on.
    let ring_adj: Vec<Vec<(usize, usize)>> = adj
        .iter()
        .map(|l| {
            l.iter()
                .copied()
                .filter(|&(_, e)| info.bond_in_ring[e])
                .collect()
        })
        .collect();

    let cycles = match relevant_cycles(&ring_adj, m, dimension) {
        Some(c) => c,
        None => {
            info.approximate = true;
            horton_basis(&ring_adj, m, dimension)
        }
    };
    let mut rings: Vec<(Vec<usize>, Vec<usize>)> = cycles
        .into_iter()
        .map(|c| normalise_cycle(c, &ring_adj))
        .collect();
    rings.sort_by(|a, b| a.0.len().cmp(&b.0.len()).then_with(|| a.0.cmp(&b.0)));
    rings.dedup_by(|a, b| a.0 == b.0);
    for (atoms, bonds) in rings {
        info.rings.push(atoms);
        info.ring_bonds.push(bonds);
    }
    info.systems = ring_systems(&info.ring_bonds, m);
    info
}

/// A cycle as an edge-incidence vector over GF(2).
type EdgeSet = Vec<u64>;

fn edge_set(bonds: &[usize], m: usize) -> EdgeSet {
    let mut v = vec![0u64; m.div_ceil(64)];
    for &e in bonds {
        v[e / 64] |= 1 << (e % 64);
    }
    v
}

/// Gaussian elimination basis over GF(2), kept in echelon form by pivot bit.
#[derive(Default)]
struct Gf2Basis {
    rows: Vec<(usize, EdgeSet)>,
}

impl Gf2Basis {
    /// Reduce `v` by the basis; returns the remainder (zero when dependent).
    fn reduce(&self, mut v: EdgeSet) -> EdgeSet {
        for (pivot, row) in &self.rows {
            if v[pivot / 64] >> (pivot % 64) & 1 == 1 {
                for (x, y) in v.iter_mut().zip(row) {
                    *x ^= y;
                }
            }
        }
        v
    }

    fn is_independent(&self, v: &EdgeSet) -> bool {
        self.reduce(v.clone()).iter().any(|&w| w != 0)
    }

    /// Add `v` if independent; returns whether the rank grew.
    fn insert(&mut self, v: &EdgeSet) -> bool {
        let r = self.reduce(v.clone());
        match first_bit(&r) {
            Some(p) => {
                self.rows.push((p, r));
                true
            }
            None => false,
        }
    }

    fn rank(&self) -> usize {
        self.rows.len()
    }
}

fn first_bit(v: &EdgeSet) -> Option<usize> {
    v.iter()
        .enumerate()
        .find(|(_, &w)| w != 0)
        .map(|(i, &w)| i * 64 + w.trailing_zeros() as usize)
}

/// A cycle found by the search: atoms in order and the bonds between them.
struct Cycle {
    atoms: Vec<usize>,
    bonds: Vec<usize>,
}

/// All relevant cycles, or `None` when the search limits were hit.
fn relevant_cycles(adj: &[Vec<(usize, usize)>], m: usize, dimension: usize) -> Option<Vec<Cycle>> {
    let n = adj.len();
    let mut basis = Gf2Basis::default();
    let mut found = Vec::new();
    let mut listed = 0usize;
    let mut steps = 0usize;
    // Distances from each start within vertices >= start, for pruning.
    let dists: Vec<Vec<usize>> = (0..n).map(|s| bfs(adj, s, |v| v >= s, |_| true)).collect();
    for k in 3..=n {
        let mut of_length = Vec::new();
        for s in 0..n {
            if adj[s].len() < 2 {
                continue;
            }
            let mut path = vec![s];
            let mut path_bonds = Vec::new();
            let mut on_path = vec![false; n];
            on_path[s] = true;
            let ok = list_cycles(
                adj,
                &dists[s],
                k,
                &mut path,
                &mut path_bonds,
                &mut on_path,
                &mut of_length,
                &mut steps,
            );
            if !ok || of_length.len() + listed > MAX_LISTED_CYCLES {
                return None;
            }
        }
        listed += of_length.len();
        // Relevant: independent of all strictly shorter cycles (the basis
        // holds only those so far); add them to the basis afterwards.
        let mut relevant = Vec::new();
        for c in of_length {
            let v = edge_set(&c.bonds, m);
            if basis.is_independent(&v) {
                relevant.push((c, v));
            }
        }
        for (c, v) in relevant {
            basis.insert(&v);
            found.push(c);
        }
        if basis.rank() == dimension {
            return Some(found);
        }
    }
    Some(found)
}

/// Depth-first listing of the simple cycles of exactly `k` atoms whose lowest
/// atom is `path[0]`; each cycle is listed once (second atom < last atom).
/// Returns false when the step budget is exhausted.
#[allow(clippy::too_many_arguments)]
fn list_cycles(
    adj: &[Vec<(usize, usize)>],
    dist: &[usize],
    k: usize,
    path: &mut Vec<usize>,
    path_bonds: &mut Vec<usize>,
    on_path: &mut [bool],
    out: &mut Vec<Cycle>,
    steps: &mut usize,
) -> bool {
    *steps += 1;
    if *steps > MAX_SEARCH_STEPS {
        return false;
    }
    let s = path[0];
    let v = *path.last().expect("path starts at s");
    if path.len() == k {
        if path[1] < v {
            if let Some(&(_, e)) = adj[v].iter().find(|&&(u, _)| u == s) {
                let mut bonds = path_bonds.clone();
                bonds.push(e);
                out.push(Cycle {
                    atoms: path.clone(),
                    bonds,
                });
            }
        }
        return true;
    }
    let remaining = k - path.len(); // steps still to take after this one, plus the closing bond
    for &(u, e) in &adj[v] {
        if u <= s || on_path[u] || dist[u] == usize::MAX || dist[u] > remaining {
            continue;
        }
        path.push(u);
        path_bonds.push(e);
        on_path[u] = true;
        let ok = list_cycles(adj, dist, k, path, path_bonds, on_path, out, steps);
        on_path[u] = false;
        path.pop();
        path_bonds.pop();
        if !ok {
            return false;
        }
    }
    true
}

/// One minimum cycle basis from Horton's candidate cycles: for every vertex
/// `v` and bond x-y, the cycle (shortest path v..x) + x-y + (shortest path
/// y..v) when the two paths meet only at `v`; greedy by length over GF(2).
fn horton_basis(adj: &[Vec<(usize, usize)>], m: usize, dimension: usize) -> Vec<Cycle> {
    let n = adj.len();
    let mut candidates = Vec::new();
    for v in 0..n {
        if adj[v].is_empty() {
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
            for &(u, e) in &adj[x] {
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
            for &(y, e) in &adj[x] {
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
    let mut out = Vec::new();
    for c in candidates {
        if basis.insert(&edge_set(&c.bonds, m)) {
            out.push(c);
            if basis.rank() == dimension {
                break;
            }
        }
    }
    out
}

/// Rotate a cycle to start at its lowest atom, going towards the lower of
/// that atom's two ring neighbours, and recompute its bond list to match.
fn normalise_cycle(c: Cycle, adj: &[Vec<(usize, usize)>]) -> (Vec<usize>, Vec<usize>) {
    let k = c.atoms.len();
    let start = (0..k)
        .min_by_key(|&i| c.atoms[i])
        .expect("cycle is not empty");
    let fwd = c.atoms[(start + 1) % k];
    let back = c.atoms[(start + k - 1) % k];
    let atoms: Vec<usize> = if fwd < back {
        (0..k).map(|i| c.atoms[(start + i) % k]).collect()
    } else {
        (0..k).map(|i| c.atoms[(start + k - i) % k]).collect()
    };
    let bonds = (0..k)
        .map(|i| {
            let (a, b) = (atoms[i], atoms[(i + 1) % k]);
            adj[a]
                .iter()
                .find(|&&(u, _)| u == b)
                .map(|&(_, e)| e)
                .expect("consecutive ring atoms are bonded")
        })
        .collect();
    (atoms, bonds)
}

/// Group rings that share a bond, transitively; each group sorted.
fn ring_systems(ring_bonds: &[Vec<usize>], m: usize) -> Vec<Vec<usize>> {
    let r = ring_bonds.len();
    let mut parent: Vec<usize> = (0..r).collect();
    fn find(p: &mut [usize], x: usize) -> usize {
        let mut x = x;
        while p[x] != x {
            p[x] = p[p[x]];
            x = p[x];
        }
        x
    }
    let mut first_ring_of_bond = vec![usize::MAX; m];
    for (i, bonds) in ring_bonds.iter().enumerate() {
        for &e in bonds {
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
        assert!(r.rings.is_empty());
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
        assert_eq!(r.rings.len(), 2);
        assert!(r.rings.iter().all(|x| x.len() == 6));
        assert_eq!(r.systems, vec![vec![0, 1]]);
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
        assert_eq!(r.rings.len(), 3);
        // cubane: six 4-rings (common practice).
        let r = ring_info(&skeleton(8, &CUBANE));
        assert_eq!(r.rings.len(), 6);
        assert!(r.rings.iter().all(|x| x.len() == 4));
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
        assert_eq!(r.rings.len(), 2);
        assert_eq!(r.systems.len(), 2);
    }

    #[test]
    fn horton_fallback_gives_a_basis() {
        let m = skeleton(8, &CUBANE);
        let adj = adjacency(&m);
        let b = horton_basis(&adj, 12, 5);
        assert_eq!(b.len(), 5);
        assert!(b.iter().all(|c| c.atoms.len() == 4));
    }
}
