//! Kekulé structures: placing the alternating double bonds of aromatic rings.
//!
//! Two jobs, one idea: the pi bonds of an aromatic system form a perfect
//! matching of the atoms that need a double bond, using only aromatic bonds.
//!
//! * [`kekulise`] finds one such matching for the SMILES reader (aromatic,
//!   lower-case input to Kekulé bond orders). It uses Edmonds' blossom
//!   algorithm (Edmonds, "Paths, trees, and flowers", Canad. J. Math. 17
//!   (1965) 449-467), so an impossible ring is reported in polynomial time
//!   instead of after an exponential search.
//! * [`kekule_structures`] lists every matching (all resonance forms), for the
//!   generator, which keeps one Kekulé form per aromatic compound. Listing is
//!   a backtracking search that always extends the atom with the fewest free
//!   partners; the number of forms grows quickly with ring count (naphthalene
//!   3, anthracene 4, pyrene 6), so it is meant for the small molecules the
//!   tool enumerates.

use super::aromaticity::Aromaticity;
use super::flat::FlatMolecule;
use super::molecule::Molecule;
use petgraph::graph::EdgeIndex;
use petgraph::visit::EdgeRef;

/// Atoms whose aromatic bonds carry one pi bond in `mol`'s Kekulé form: the
/// sum of orders over their aromatic bonds exceeds the count of those bonds.
pub fn pi_atoms(mol: &Molecule, arom: &Aromaticity) -> Vec<bool> {
    let mut out = Vec::new();
    pi_atoms_into(&FlatMolecule::from_molecule(mol), arom, &mut out);
    out
}

/// [`pi_atoms`] of a [`FlatMolecule`], into `out` (resized to its atoms).
pub fn pi_atoms_into(mol: &FlatMolecule, arom: &Aromaticity, out: &mut Vec<bool>) {
    out.clear();
    out.resize(mol.atom_count(), false);
    // Every aromatic bond adds its order minus one (never negative), so the
    // sum exceeds zero exactly when one of them is a double bond.
    for (e, &(a, b)) in mol.all_ends().iter().enumerate() {
        if arom.bond[e] && mol.order(e) > 1 {
            out[a] = true;
            out[b] = true;
        }
    }
}

/// Every bond-order assignment (indexed by edge) that differs from `mol`
/// only on aromatic bonds and keeps every atom's bond-order sum: all perfect
/// matchings of the pi atoms over the aromatic bonds. The input's own form
/// is among them. Order of the list: depth-first, deterministic for a given
/// graph numbering.
pub fn kekule_structures(mol: &Molecule, arom: &Aromaticity) -> Vec<Vec<u8>> {
    let base: Vec<u8> = mol.graph.edge_weights().map(|b| b.order).collect();
    let pi = pi_atoms(mol, arom);
    let n = mol.atom_count();
    // Candidate pi bonds per atom: aromatic bonds between two pi atoms.
    let mut adj: Vec<Vec<(usize, usize)>> = vec![Vec::new(); n];
    for e in mol.graph.edge_references() {
        let (a, b, id) = (e.source().index(), e.target().index(), e.id().index());
        if arom.bond[id] && pi[a] && pi[b] {
            adj[a].push((b, id));
            adj[b].push((a, id));
        }
    }
    let mut orders = base.clone();
    for (id, o) in orders.iter_mut().enumerate() {
        if arom.bond[id] {
            *o = 1;
        }
    }
    let mut matched: Vec<bool> = pi.iter().map(|&p| !p).collect();
    let mut out = Vec::new();
    enumerate_matchings(&adj, &mut matched, &mut orders, &mut out);
    out
}

fn enumerate_matchings(
    adj: &[Vec<(usize, usize)>],
    matched: &mut [bool],
    orders: &mut [u8],
    out: &mut Vec<Vec<u8>>,
) {
    // The unmatched atom with the fewest free partners; none left: a solution.
    let mut best: Option<(usize, usize)> = None;
    for v in 0..matched.len() {
        if matched[v] {
            continue;
        }
        let free = adj[v].iter().filter(|&&(u, _)| !matched[u]).count();
        if free == 0 {
            return;
        }
        if best.is_none_or(|(_, f)| free < f) {
            best = Some((v, free));
        }
    }
    let Some((v, _)) = best else {
        out.push(orders.to_vec());
        return;
    };
    matched[v] = true;
    for &(u, e) in &adj[v] {
        if matched[u] {
            continue;
        }
        matched[u] = true;
        orders[e] = 2;
        enumerate_matchings(adj, matched, orders, out);
        orders[e] = 1;
        matched[u] = false;
    }
    matched[v] = false;
}

/// Place double bonds on the aromatic bonds of `mol` (flagged in
/// `aromatic_bond`, per edge index) so that every atom flagged in `needs_pi`
/// gets exactly one; the other aromatic bonds become single. On failure
/// returns the atoms that could not be given a double bond (some atoms of
/// each impossible ring), leaving `mol` unchanged.
pub fn kekulise(
    mol: &mut Molecule,
    aromatic_bond: &[bool],
    needs_pi: &[bool],
) -> Result<(), Vec<usize>> {
    let n = mol.atom_count();
    let mut adj: Vec<Vec<usize>> = vec![Vec::new(); n];
    for e in mol.graph.edge_references() {
        let (a, b) = (e.source().index(), e.target().index());
        if aromatic_bond[e.id().index()] && needs_pi[a] && needs_pi[b] {
            adj[a].push(b);
            adj[b].push(a);
        }
    }
    let mate = maximum_matching(&adj);
    let unmatched: Vec<usize> = (0..n)
        .filter(|&v| needs_pi[v] && mate[v].is_none())
        .collect();
    if !unmatched.is_empty() {
        return Err(unmatched);
    }
    let edges: Vec<(EdgeIndex, usize, usize)> = mol
        .graph
        .edge_references()
        .map(|e| (e.id(), e.source().index(), e.target().index()))
        .collect();
    for (id, a, b) in edges {
        if aromatic_bond[id.index()] {
            mol.graph[id].order = if mate[a] == Some(b) { 2 } else { 1 };
        }
    }
    Ok(())
}

/// Maximum matching in a general graph (Edmonds' blossom algorithm with
/// breadth-first search for augmenting paths, O(V^3)).
fn maximum_matching(adj: &[Vec<usize>]) -> Vec<Option<usize>> {
    let n = adj.len();
    let mut mate: Vec<Option<usize>> = vec![None; n];
    // Greedy start: most atoms match at once.
    for v in 0..n {
        if mate[v].is_none() {
            if let Some(&u) = adj[v].iter().find(|&&u| mate[u].is_none()) {
                mate[v] = Some(u);
                mate[u] = Some(v);
            }
        }
    }
    for root in 0..n {
        if mate[root].is_none() && !adj[root].is_empty() {
            if let Some(end) = augmenting_path(adj, &mate, root) {
                let (mut to, parent) = end;
                // Flip the matching along the path ending at `to`.
                loop {
                    let pv = parent[to].expect("path vertex has a parent");
                    let next = mate[pv];
                    mate[to] = Some(pv);
                    mate[pv] = Some(to);
                    match next {
                        Some(x) => to = x,
                        None => break,
                    }
                }
            }
        }
    }
    mate
}

type PathEnd = (usize, Vec<Option<usize>>);

/// Search an augmenting path from the exposed vertex `root`; returns its far
/// end and the parent links to walk back.
fn augmenting_path(adj: &[Vec<usize>], mate: &[Option<usize>], root: usize) -> Option<PathEnd> {
    let n = adj.len();
    let mut used = vec![false; n];
    let mut parent: Vec<Option<usize>> = vec![None; n];
    let mut base: Vec<usize> = (0..n).collect();
    let mut queue = std::collections::VecDeque::new();
    used[root] = true;
    queue.push_back(root);
    while let Some(v) = queue.pop_front() {
        for &to in &adj[v] {
            if base[v] == base[to] || mate[v] == Some(to) {
                continue;
            }
            let to_is_outer = to == root || mate[to].is_some_and(|m| parent[m].is_some());
            if to_is_outer {
                // Odd cycle: contract the blossom onto its base.
                let cur = lowest_common_ancestor(mate, &base, &parent, v, to);
                let mut blossom = vec![false; n];
                mark_path(mate, &base, &mut parent, &mut blossom, v, cur, to);
                mark_path(mate, &base, &mut parent, &mut blossom, to, cur, v);
                for i in 0..n {
                    if blossom[base[i]] {
                        base[i] = cur;
                        if !used[i] {
                            used[i] = true;
                            queue.push_back(i);
                        }
                    }
                }
            } else if parent[to].is_none() {
                parent[to] = Some(v);
                match mate[to] {
                    None => return Some((to, parent)),
                    Some(m) => {
                        used[m] = true;
                        queue.push_back(m);
                    }
                }
            }
        }
    }
    None
}

fn lowest_common_ancestor(
    mate: &[Option<usize>],
    base: &[usize],
    parent: &[Option<usize>],
    mut a: usize,
    mut b: usize,
) -> usize {
    let mut seen = vec![false; mate.len()];
    loop {
        a = base[a];
        seen[a] = true;
        match mate[a] {
            None => break,
            Some(m) => match parent[m] {
                Some(p) => a = p,
                None => break,
            },
        }
    }
    loop {
        b = base[b];
        if seen[b] {
            return b;
        }
        let m = mate[b].expect("inner path vertex is matched");
        b = parent[m].expect("matched vertex on the tree has a parent");
    }
}

fn mark_path(
    mate: &[Option<usize>],
    base: &[usize],
    parent: &mut [Option<usize>],
    blossom: &mut [bool],
    mut v: usize,
    b: usize,
    mut child: usize,
) {
    while base[v] != b {
        let m = mate[v].expect("blossom path vertex is matched");
        blossom[base[v]] = true;
        blossom[base[m]] = true;
        parent[v] = Some(child);
        child = m;
        v = parent[m].expect("blossom path vertex has a parent");
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::Element;

    fn ring(n: usize) -> (Molecule, Vec<bool>) {
        let mut m = Molecule::new();
        let idx: Vec<_> = (0..n).map(|_| m.add_atom(Element::C, 1)).collect();
        for i in 0..n {
            m.add_bond(idx[i], idx[(i + 1) % n], 1);
        }
        (m, vec![true; n])
    }

    #[test]
    fn matching_finds_perfect_matchings_through_blossoms() {
        // A 5-cycle with a pendant: 6 vertices, perfect matching exists only
        // by augmenting through the odd cycle.
        let adj = vec![
            vec![1, 4, 5],
            vec![0, 2],
            vec![1, 3],
            vec![2, 4],
            vec![3, 0],
            vec![0],
        ];
        let mate = maximum_matching(&adj);
        assert!(mate.iter().all(|m| m.is_some()));
        let (mut benzene, needs) = ring(6);
        let all = vec![true; 6];
        kekulise(&mut benzene, &all, &needs).unwrap();
        assert!((0..6).all(|i| benzene.bond_order_sum(i) == 3));
        // Five pi atoms in a ring cannot all be paired.
        let (mut odd, needs) = ring(5);
        assert!(kekulise(&mut odd, &[true; 5], &needs).is_err());
    }

    #[test]
    fn benzene_has_two_kekule_structures() {
        let (mut benzene, needs) = ring(6);
        kekulise(&mut benzene, &[true; 6], &needs).unwrap();
        let arom = Aromaticity {
            atom: vec![true; 6],
            bond: vec![true; 6],
        };
        let forms = kekule_structures(&benzene, &arom);
        assert_eq!(forms.len(), 2);
        let own: Vec<u8> = benzene.graph.edge_weights().map(|b| b.order).collect();
        assert!(forms.contains(&own));
    }
}
