//! A molecule as flat arrays: the form ring perception, aromaticity
//! perception and the SMILES writer read.
//!
//! Why a second form beside [`Molecule`]: those three steps run once per
//! isomer when `isomerank isomers` prints canonical SMILES, and reading
//! petgraph's linked edge lists (and building a graph per isomer) cost more
//! than the steps themselves. A [`FlatMolecule`] is refilled in place, so a
//! caller that keeps one (see [`crate::chem::smiles::SmilesWriter`]) does not
//! allocate per molecule once its buffers have grown.
//!
//! Bond numbering is part of the contract: filled from a [`Molecule`], bond
//! `e` is petgraph edge `e`; filled from any other [`HeavyAtoms`] (the
//! generator's compact isomer), the bonds are numbered by their lower atom,
//! then by the other atom, which is the order in which
//! `enumerate::Isomer::molecule` adds them. Each atom's neighbour list is in
//! bond order, as the algorithms have always read it.

use super::element::Element;
use super::molecule::{HeavyAtoms, Molecule};
use petgraph::visit::EdgeRef;

/// Heavy atoms with implicit H counts, bonds with Kekulé orders, and each
/// atom's neighbours as one slice of (neighbour, bond).
#[derive(Clone, Debug, Default)]
pub struct FlatMolecule {
    element: Vec<Element>,
    hydrogens: Vec<u8>,
    /// Bond e joins `ends[e].0` and `ends[e].1`.
    ends: Vec<(usize, usize)>,
    order: Vec<u8>,
    /// Neighbours of atom v: `adj[start[v]..start[v + 1]]`.
    start: Vec<usize>,
    adj: Vec<(usize, usize)>,
    /// The skeleton the neighbour lists were built for (atom count and
    /// bond ends), when they were built.
    indexed: Option<(usize, Vec<(usize, usize)>)>,
}

impl FlatMolecule {
    /// The flat form of `mol`, bonds numbered as its petgraph edges.
    pub fn from_molecule(mol: &Molecule) -> FlatMolecule {
        let mut f = FlatMolecule::default();
        f.set_molecule(mol);
        f
    }

    /// Refill from `mol`, bonds numbered as its petgraph edges. Returns
    /// whether the skeleton (atom count and bond ends, in their numbering)
    /// differs from the previous fill's.
    pub fn set_molecule(&mut self, mol: &Molecule) -> bool {
        self.clear();
        for a in mol.graph.node_weights() {
            self.element.push(a.element);
            self.hydrogens.push(a.hydrogens);
        }
        for e in mol.graph.edge_references() {
            self.ends.push((e.source().index(), e.target().index()));
            self.order.push(e.weight().order);
        }
        self.index()
    }

    /// Refill from any heavy-atom graph, bonds numbered by their lower atom,
    /// then by the other atom. Returns whether the skeleton (atom count and
    /// bond ends) differs from the previous fill's.
    pub fn set_heavy_atoms(&mut self, mol: &impl HeavyAtoms) -> bool {
        self.clear();
        let n = mol.atom_count();
        for i in 0..n {
            self.element.push(mol.element_of(i));
            self.hydrogens.push(mol.hydrogens_of(i));
        }
        for a in 0..n {
            if let Some(masks) = mol.neighbour_masks(a) {
                // One bitset per order, read in ascending atom order.
                let above = if a == 63 { 0 } else { u64::MAX << (a + 1) };
                let mut all = (masks[0] | masks[1] | masks[2]) & above;
                while all != 0 {
                    let b = all.trailing_zeros() as usize;
                    all &= all - 1;
                    let order = (0..3)
                        .find(|&k| masks[k] >> b & 1 == 1)
                        .expect("b is in a mask");
                    self.ends.push((a, b));
                    self.order.push(order as u8 + 1);
                }
            } else {
                let first = self.ends.len();
                let (ends, order) = (&mut self.ends, &mut self.order);
                mol.each_neighbour(a, &mut |b, o| {
                    if b > a {
                        ends.push((a, b));
                        order.push(o);
                    }
                });
                // Ascending partner order, orders kept with their bonds.
                let k = self.ends.len() - first;
                for i in 1..k {
                    let mut j = first + i;
                    while j > first && self.ends[j - 1].1 > self.ends[j].1 {
                        self.ends.swap(j - 1, j);
                        self.order.swap(j - 1, j);
                        j -= 1;
                    }
                }
            }
        }
        self.index()
    }

    fn clear(&mut self) {
        self.element.clear();
        self.hydrogens.clear();
        self.ends.clear();
        self.order.clear();
    }

    /// Build the neighbour lists from `ends` (each in bond order), unless
    /// they were built for this skeleton already; returns whether the
    /// skeleton is new.
    fn index(&mut self) -> bool {
        let n = self.element.len();
        if let Some((atoms, ends)) = &self.indexed {
            if *atoms == n && *ends == self.ends {
                return false;
            }
        }
        let (atoms, ends) = self.indexed.get_or_insert_with(Default::default);
        *atoms = n;
        ends.clear();
        ends.extend_from_slice(&self.ends);
        self.start.resize(n + 1, 0);
        self.start.fill(0);
        for &(a, b) in &self.ends {
            self.start[a + 1] += 1;
            self.start[b + 1] += 1;
        }
        for v in 0..n {
            self.start[v + 1] += self.start[v];
        }
        self.adj.resize(2 * self.ends.len(), (0, 0));
        // `start[v]` is used as the fill cursor, then restored.
        for (e, &(a, b)) in self.ends.iter().enumerate() {
            self.adj[self.start[a]] = (b, e);
            self.start[a] += 1;
            self.adj[self.start[b]] = (a, e);
            self.start[b] += 1;
        }
        for v in (1..=n).rev() {
            self.start[v] = self.start[v - 1];
        }
        if n > 0 {
            self.start[0] = 0;
        }
        true
    }

    pub fn atom_count(&self) -> usize {
        self.element.len()
    }

    pub fn bond_count(&self) -> usize {
        self.ends.len()
    }

    pub fn element(&self, i: usize) -> Element {
        self.element[i]
    }

    pub fn hydrogens(&self, i: usize) -> u8 {
        self.hydrogens[i]
    }

    /// The atoms bond `e` joins.
    pub fn ends(&self, e: usize) -> (usize, usize) {
        self.ends[e]
    }

    /// Every bond's atoms, by bond number: the skeleton, which is all that
    /// ring perception reads.
    pub fn all_ends(&self) -> &[(usize, usize)] {
        &self.ends
    }

    /// Kekulé order (1-3) of bond `e`.
    pub fn order(&self, e: usize) -> u8 {
        self.order[e]
    }

    /// Neighbours of atom `v` as (atom, bond), in bond order.
    pub fn neighbours(&self, v: usize) -> &[(usize, usize)] {
        &self.adj[self.start[v]..self.start[v + 1]]
    }

    /// Where atom `v`'s neighbours lie in the list of every atom's
    /// neighbours (two entries per bond, atom after atom), for callers that
    /// keep a table aligned with it.
    pub fn neighbour_range(&self, v: usize) -> std::ops::Range<usize> {
        self.start[v]..self.start[v + 1]
    }

    /// Number of neighbours of atom `v`.
    pub fn degree(&self, v: usize) -> usize {
        self.start[v + 1] - self.start[v]
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::smiles::parse_smiles;

    #[test]
    fn molecule_numbering_and_neighbour_order_are_petgraph_s() {
        let m = parse_smiles("CC(=O)OC1CC1").unwrap();
        let f = FlatMolecule::from_molecule(&m);
        assert_eq!(f.atom_count(), m.atom_count());
        assert_eq!(f.bond_count(), m.graph.edge_count());
        for e in m.graph.edge_references() {
            let i = e.id().index();
            assert_eq!(f.ends(i), (e.source().index(), e.target().index()));
            assert_eq!(f.order(i), e.weight().order);
        }
        for v in 0..m.atom_count() {
            let bonds: Vec<usize> = f.neighbours(v).iter().map(|&(_, e)| e).collect();
            let mut sorted = bonds.clone();
            sorted.sort_unstable();
            assert_eq!(bonds, sorted, "neighbours of {v} in bond order");
            assert_eq!(f.degree(v), m.neighbours(v).count());
            for &(u, e) in f.neighbours(v) {
                assert_eq!(m.bond_order(u, v), f.order(e));
            }
        }
    }

    #[test]
    fn heavy_atoms_numbering_is_by_lower_atom_then_partner() {
        // Edges added out of order; the heavy-atom fill sorts them.
        let m = parse_smiles("C1CC(=O)C=C1N").unwrap();
        let mut f = FlatMolecule::default();
        f.set_heavy_atoms(&m);
        let ends = f.all_ends().to_vec();
        let mut sorted = ends.clone();
        sorted.sort_unstable();
        assert_eq!(ends, sorted);
        assert!(ends.iter().all(|&(a, b)| a < b));
        for (e, &(a, b)) in ends.iter().enumerate() {
            assert_eq!(f.order(e), m.bond_order(a, b));
        }
        for v in 0..m.atom_count() {
            assert_eq!(f.element(v), m.atom(v).element);
            assert_eq!(f.hydrogens(v), m.atom(v).hydrogens);
        }
    }

    #[test]
    fn refills_say_when_the_skeleton_changes_and_keep_correct_lists() {
        // Propane's chain beside a methane: propane's bonds, one more atom.
        let mut apart = parse_smiles("CCC").unwrap();
        apart.add_atom(crate::chem::Element::C, 4);
        let mut f = FlatMolecule::default();
        // (SMILES, whether the skeleton differs from the one before)
        let steps = [
            ("C=CC", true),
            ("CC=C", false), // same bonds, other orders
            ("CC(C)C", true),
            ("CCC", true),
            ("CCC.C", true),
            ("CCC.C", false),
            ("C1CC1", true),
        ];
        for (s, changed) in steps {
            let m = match s {
                "CCC.C" => apart.clone(),
                _ => parse_smiles(s).unwrap(),
            };
            assert_eq!(f.set_molecule(&m), changed, "{s}");
            let fresh = FlatMolecule::from_molecule(&m);
            assert_eq!(f.all_ends(), fresh.all_ends(), "{s}");
            for v in 0..m.atom_count() {
                assert_eq!(f.neighbours(v), fresh.neighbours(v), "{s} atom {v}");
                assert_eq!(f.neighbour_range(v), fresh.neighbour_range(v), "{s}");
            }
            for e in 0..m.graph.edge_count() {
                assert_eq!(f.order(e), fresh.order(e), "{s}");
            }
        }
    }
}
