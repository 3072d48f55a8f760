//! Aromaticity perception by the Hückel 4n+2 rule over single rings and fused
//! ring systems.
//!
//! Why this exact model: isomer counts and canonical SMILES are checked
//! against RDKit, so the rule follows RDKit's default aromaticity model
//! (RDKit documentation, "The RDKit Book", section Aromaticity; RDKit source
//! `Code/GraphMol/Aromaticity.cpp`). For neutral molecules of C N O S P and
//! halogens it comes down to:
//!
//! * Each ring atom donates pi electrons: a carbon with a double bond in a
//!   ring 1; a carbon whose double bond leaves the ring system 1 if the
//!   partner is carbon, 0 if it is more electronegative (N, O, S, P: the
//!   carbonyl carbon of tropone or 2-pyridone); N or P with a ring double
//!   bond 1; N or P with three single bonds (counting H), O, and divalent S
//!   2. A triple bond counts 1.
//! * Atoms that cannot take part: more than three neighbours including H
//!   (sp3 carbon), a valence above the standard one (S(IV), S(VI), P(V)),
//!   two multiple bonds (allene-type), halogens.
//! * A candidate ring has only such atoms. Rings fused through a shared bond
//!   form a system; every connected combination of up to six rings of a
//!   system is tested, its electron count being the sum over the union of
//!   its atoms, and it is aromatic when that sum is 4n+2 with n >= 1, or
//!   exactly 2. A combination's atoms all become aromatic, and of its bonds
//!   those that lie in exactly one of its rings (so the central bond of
//!   azulene stays a plain single bond, as RDKit writes `c1ccc2cccc-2cc1`).
//!   Rings larger than 24 atoms are not fused with others; the tests stop
//!   once every candidate ring atom is aromatic.
//!
//! The ring set is the set of relevant cycles ([`super::rings`]), RDKit uses
//! its symmetrised SSSR; the two agree on the molecules the tests compare.
//! Bond orders never change: the result is a perception kept beside the
//! Kekulé graph. A triple bond in an aromatic ring (benzyne) keeps its order
//! and is not flagged aromatic, again as RDKit writes it (`c1ccccc#1`).

use super::element::Element;
use super::molecule::Molecule;
use super::rings::{ring_info, RingInfo};
use petgraph::visit::EdgeRef;

/// Largest ring that may be fused with others into an aromatic system
/// (RDKit's limit, chosen there to hold a porphyrin's outer ring).
const MAX_FUSED_RING_SIZE: usize = 24;
/// Largest number of rings combined into one Hückel test (RDKit's limit).
const MAX_FUSED_RINGS: usize = 6;

/// Aromaticity flags: `atom[i]` per node index, `bond[e]` per petgraph edge index.
#[derive(Clone, Debug, PartialEq, Eq, Default)]
pub struct Aromaticity {
    pub atom: Vec<bool>,
    pub bond: Vec<bool>,
}

impl Aromaticity {
    /// Whether any atom is aromatic.
    pub fn any(&self) -> bool {
        self.atom.iter().any(|&a| a)
    }
}

/// How many pi electrons an atom can give a ring.
#[derive(Copy, Clone, Debug, PartialEq, Eq)]
enum Donor {
    /// Cannot be part of an aromatic ring.
    None,
    /// In the ring with an empty p orbital (exocyclic C=O carbon): 0 electrons.
    Vacant,
    One,
    Two,
}

impl Donor {
    fn electrons(self) -> usize {
        match self {
            Donor::None | Donor::Vacant => 0,
            Donor::One => 1,
            Donor::Two => 2,
        }
    }
}

/// Valence-shell electrons of a main-group element.
fn outer_electrons(e: Element) -> i32 {
    match e {
        Element::H => 1,
        Element::C => 4,
        Element::N | Element::P => 5,
        Element::O | Element::S => 6,
        Element::F | Element::Cl | Element::Br | Element::I => 7,
    }
}

fn atomic_number(e: Element) -> i32 {
    match e {
        Element::H => 1,
        Element::C => 6,
        Element::N => 7,
        Element::O => 8,
        Element::F => 9,
        Element::P => 15,
        Element::S => 16,
        Element::Cl => 17,
        Element::Br => 35,
        Element::I => 53,
    }
}

/// RDKit's coarse electronegativity order: more valence electrons wins, then
/// the lighter element (so O, N, S, P all pull electrons from carbon).
fn more_electronegative(a: Element, b: Element) -> bool {
    let (ea, eb) = (outer_electrons(a), outer_electrons(b));
    ea > eb || (ea == eb && atomic_number(a) < atomic_number(b))
}

/// Per-atom facts the rule needs.
struct AtomState {
    donor: Donor,
    candidate: bool,
}

fn classify(mol: &Molecule, i: usize, bond_in_ring: &[bool]) -> AtomState {
    let atom = mol.atom(i);
    let none = AtomState {
        donor: Donor::None,
        candidate: false,
    };
    let dv = atom.element.valence() as i32;
    if dv <= 1 {
        return none;
    }
    let node = petgraph::graph::NodeIndex::new(i);
    let mut heavy_degree = 0i32;
    let mut bond_sum = 0i32;
    let mut multiple = 0;
    let mut exocyclic_multiple: Option<usize> = None;
    let mut cyclic_multiple = false;
    for e in mol.graph.edges(node) {
        heavy_degree += 1;
        let order = e.weight().order as i32;
        bond_sum += order;
        if order >= 2 {
            multiple += 1;
            let other = if e.source() == node {
                e.target()
            } else {
                e.source()
            };
            if bond_in_ring[e.id().index()] {
                cyclic_multiple = true;
            } else if exocyclic_multiple.is_none() {
                exocyclic_multiple = Some(other.index());
            }
        }
    }
    let degree = heavy_degree + atom.hydrogens as i32;
    if degree > 3 {
        return none;
    }
    let lone = outer_electrons(atom.element) - dv;
    let mut nelec = dv - degree + lone;
    if nelec > 1 && bond_sum - heavy_degree > 1 {
        // A triple bond gives the ring only one electron.
        nelec = 1;
    }
    let pulls = |j: usize| more_electronegative(mol.atom(j).element, atom.element);
    let donor = if nelec < 0 {
        Donor::None
    } else if nelec == 0 {
        if exocyclic_multiple.is_some() {
            Donor::Vacant
        } else if cyclic_multiple {
            Donor::One
        } else {
            Donor::None
        }
    } else if nelec == 1 {
        match exocyclic_multiple {
            Some(j) if pulls(j) => Donor::Vacant,
            Some(_) => Donor::One,
            None if multiple > 0 => Donor::One,
            None => Donor::None,
        }
    } else {
        if let Some(j) = exocyclic_multiple {
            if pulls(j) {
                nelec -= 1;
            }
        }
        if nelec % 2 == 1 {
            Donor::One
        } else {
            Donor::Two
        }
    };
    let candidate =
        donor != Donor::None && bond_sum + (atom.hydrogens as i32) <= dv && multiple <= 1;
    AtomState { donor, candidate }
}

/// Perceive aromatic atoms and bonds (ring perception included).
pub fn perceive(mol: &Molecule) -> Aromaticity {
    perceive_with_rings(mol, &ring_info(mol))
}

/// Perceive aromaticity with rings already perceived by [`ring_info`].
pub fn perceive_with_rings(mol: &Molecule, rings: &RingInfo) -> Aromaticity {
    let n = mol.atom_count();
    let m = mol.graph.edge_count();
    let mut arom = Aromaticity {
        atom: vec![false; n],
        bond: vec![false; m],
    };
    if rings.rings.is_empty() {
        return arom;
    }
    let mut state: Vec<Option<AtomState>> = (0..n).map(|_| None).collect();
    for ring in &rings.rings {
        for &a in ring {
            if state[a].is_none() {
                state[a] = Some(classify(mol, a, &rings.bond_in_ring));
            }
        }
    }
    let is_candidate = |a: usize| state[a].as_ref().is_some_and(|s| s.candidate);
    let electrons = |a: usize| state[a].as_ref().map_or(0, |s| s.donor.electrons());

    // Candidate rings: every atom can join an aromatic ring.
    let cand: Vec<usize> = (0..rings.rings.len())
        .filter(|&r| rings.rings[r].iter().all(|&a| is_candidate(a)))
        .collect();
    if cand.is_empty() {
        return arom;
    }
    let c = cand.len();
    let atoms_of = |k: usize| &rings.rings[cand[k]];
    let bonds_of = |k: usize| &rings.ring_bonds[cand[k]];
    // Candidate rings are neighbours when they share a bond and neither is
    // larger than MAX_FUSED_RING_SIZE.
    let mut neighbours = vec![Vec::new(); c];
    for i in 0..c {
        for j in i + 1..c {
            if atoms_of(i).len() > MAX_FUSED_RING_SIZE || atoms_of(j).len() > MAX_FUSED_RING_SIZE {
                continue;
            }
            // Rings count as fused only when they share exactly one bond: a
            // bridged pair (sharing two or more) is never one aromatic system.
            // This follows RDKit, whose ring neighbour map is built with an
            // overlap limit of one bond (from memory; confirmed by the C8H8O
            // count against RDKit in tests/enumerate_reference.rs).
            if bonds_of(i)
                .iter()
                .filter(|e| bonds_of(j).contains(e))
                .count()
                == 1
            {
                neighbours[i].push(j);
                neighbours[j].push(i);
            }
        }
    }
    let mut all_candidate_atoms: Vec<usize> =
        (0..c).flat_map(|k| atoms_of(k).iter().copied()).collect();
    all_candidate_atoms.sort_unstable();
    all_candidate_atoms.dedup();

    let mut system_done = vec![false; c];
    for start in 0..c {
        if system_done[start] {
            continue;
        }
        // The fused system containing `start`.
        let mut system = vec![start];
        system_done[start] = true;
        let mut i = 0;
        while i < system.len() {
            for &j in &neighbours[system[i]] {
                if !system_done[j] {
                    system_done[j] = true;
                    system.push(j);
                }
            }
            i += 1;
        }
        system.sort_unstable();
        let mut done_atoms = vec![false; n];
        let mut done_count = 0;
        let max_size = system.len().min(MAX_FUSED_RINGS);
        for size in 1..=max_size {
            if done_count == all_candidate_atoms.len() {
                break;
            }
            for combo in itertools::Itertools::combinations(system.iter().copied(), size) {
                if size > 1 && !connected(&combo, &neighbours) {
                    continue;
                }
                let mut union: Vec<usize> = combo
                    .iter()
                    .flat_map(|&k| atoms_of(k).iter().copied())
                    .collect();
                union.sort_unstable();
                union.dedup();
                let total: usize = union.iter().map(|&a| electrons(a)).sum();
                if !huckel(total) {
                    continue;
                }
                for &a in &union {
                    arom.atom[a] = true;
                    if !done_atoms[a] {
                        done_atoms[a] = true;
                        done_count += 1;
                    }
                }
                // Bonds in exactly one ring of the combination.
                let mut bonds: Vec<usize> = combo
                    .iter()
                    .flat_map(|&k| bonds_of(k).iter().copied())
                    .collect();
                bonds.sort_unstable();
                let mut i = 0;
                while i < bonds.len() {
                    let mut j = i;
                    while j < bonds.len() && bonds[j] == bonds[i] {
                        j += 1;
                    }
                    let e = bonds[i];
                    if j - i == 1 && mol.graph[petgraph::graph::EdgeIndex::new(e)].order <= 2 {
                        arom.bond[e] = true;
                    }
                    i = j;
                }
            }
        }
    }
    arom
}

/// The Hückel test on a pi electron count: 4n+2 with n >= 1, or 2 (RDKit
/// accepts a two-electron ring of any size, e.g. cyclopropenone).
fn huckel(total: usize) -> bool {
    (total >= 6 && (total - 2).is_multiple_of(4)) || total == 2
}

/// Whether the rings of `combo` are connected through shared bonds.
fn connected(combo: &[usize], neighbours: &[Vec<usize>]) -> bool {
    let mut reached = vec![combo[0]];
    let mut i = 0;
    while i < reached.len() {
        for &j in &neighbours[reached[i]] {
            if combo.contains(&j) && !reached.contains(&j) {
                reached.push(j);
            }
        }
        i += 1;
    }
    reached.len() == combo.len()
}
