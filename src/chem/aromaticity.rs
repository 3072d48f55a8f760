//! Aromaticity perception by the Hückel 4n+2 rule over single rings and fused
//! ring systems.
//!
//! Why this exact model: isomer counts and canonical SMILES are checked
//! against RDKit, so the rule follows RDKit's default aromaticity model as
//! its source implements it (`Code/GraphMol/Aromaticity.cpp`, 2022 form).
//! For neutral molecules of C N O S P and
//! halogens it comes down to:
//!
//! * Each ring atom donates pi electrons: a carbon with a double bond in a
//!   ring 1; a carbon whose double bond leaves the ring system 1 if the
//!   partner is carbon, 0 if it is more electronegative (N, O, S, P: the
//!   carbonyl carbon of tropone or 2-pyridone); N or P with a ring double
//!   bond 1; N or P with three single bonds (counting H), O, and divalent S
//!   2. A triple bond counts 1.
//! * A pentavalent N with a double bond to O (the generator's form of an
//!   N-oxide, `[n+]([O-])` as written) counts as the charged N RDKit sees:
//!   with a ring double bond it gives 1 electron, as pyridine's N does.
//! * Atoms that cannot take part: more than three neighbours including H
//!   (sp3 carbon), a valence above the standard one (S(IV), S(VI), P(V)),
//!   two multiple bonds (allene-type), halogens.
//! * A candidate ring has only such atoms. Rings fused through exactly one
//!   shared bond form a system (bridged rings sharing two or more bonds do
//!   not fuse); every connected combination of up to six rings of a system
//!   is tested, its electron count being the sum over the atoms that lie in
//!   one or two of its rings, and it is aromatic when that sum is 4n+2 with
//!   n >= 1, or exactly 2. Of an aromatic combination's bonds, those in
//!   exactly one of its rings become aromatic, with their atoms (so the
//!   central bond of azulene stays a plain single bond, as RDKit writes
//!   `c1ccc2cccc-2cc1`). Rings larger than 24 atoms are not fused with
//!   others; a system's tests stop once each of its bonds has been covered.
//!
//! The ring set is the set of relevant cycles ([`super::rings`]), RDKit uses
//! its symmetrised SSSR; the two agree on the molecules the tests compare.
//! Bond orders never change: the result is a perception kept beside the
//! Kekulé graph. A triple bond in an aromatic ring (benzyne) keeps its order
//! and is not flagged aromatic, again as RDKit writes it (`c1ccccc#1`).

use super::element::Element;
use super::flat::FlatMolecule;
use super::molecule::Molecule;
use super::rings::RingInfo;

/// Largest ring that may be fused with others into an aromatic system
/// (RDKit's limit, chosen there to hold a porphyrin's outer ring).
const MAX_FUSED_RING_SIZE: usize = 24;
/// Largest number of rings combined into one Hückel test (RDKit's limit).
const MAX_FUSED_RINGS: usize = 6;
/// Ring systems with more rings than this are tested one and two rings at a
/// time only (RDKit's limit; larger combinations would take too long).
const MAX_SYSTEM_FOR_TRIPLES: usize = 300;

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

/// RDKit's coarse electronegativity order: more valence electrons wins, then
/// the lighter element (so O, N, S, P all pull electrons from carbon).
fn more_electronegative(a: Element, b: Element) -> bool {
    let (ea, eb) = (outer_electrons(a), outer_electrons(b));
    ea > eb || (ea == eb && a.atomic_number() < b.atomic_number())
}

/// Per-atom facts the rule needs.
#[derive(Copy, Clone, Debug)]
struct AtomState {
    donor: Donor,
    candidate: bool,
}

fn classify(mol: &FlatMolecule, i: usize, bond_in_ring: &[bool]) -> AtomState {
    let element = mol.element(i);
    let hydrogens = mol.hydrogens(i);
    let none = AtomState {
        donor: Donor::None,
        candidate: false,
    };
    let dv = element.valence() as i32;
    if dv <= 1 {
        return none;
    }
    let mut heavy_degree = 0i32;
    let mut bond_sum = 0i32;
    let mut multiple = 0;
    let mut exocyclic_multiple: Option<usize> = None;
    let mut cyclic_multiple = false;
    // (Which exocyclic multiple bond is seen first matters only for an atom
    // with two, and such an atom is never a candidate.)
    for &(other, e) in mol.neighbours(i) {
        heavy_degree += 1;
        let order = mol.order(e) as i32;
        bond_sum += order;
        if order >= 2 {
            multiple += 1;
            if bond_in_ring[e] {
                cyclic_multiple = true;
            } else if exocyclic_multiple.is_none() {
                exocyclic_multiple = Some(other);
            }
        }
    }
    let degree = heavy_degree + hydrogens as i32;
    if degree > 3 {
        return none;
    }
    if element == Element::N && bond_sum + hydrogens as i32 == 5 {
        // [n+]([O-]): the N=O is the charge-separated N-O single bond, so
        // the atom is a cationic N with its ring double bond (1 electron)
        // and no other multiple bond.
        let oxo = mol
            .neighbours(i)
            .iter()
            .any(|&(o, e)| mol.element(o) == Element::O && mol.order(e) == 2 && !bond_in_ring[e]);
        return if oxo && cyclic_multiple && multiple == 2 {
            AtomState {
                donor: Donor::One,
                candidate: true,
            }
        } else {
            none
        };
    }
    let lone = outer_electrons(element) - dv;
    let mut nelec = dv - degree + lone;
    if nelec > 1 && bond_sum - heavy_degree > 1 {
        // A triple bond gives the ring only one electron.
        nelec = 1;
    }
    let pulls = |j: usize| more_electronegative(mol.element(j), element);
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
    let candidate = donor != Donor::None && bond_sum + (hydrogens as i32) <= dv && multiple <= 1;
    AtomState { donor, candidate }
}

/// Perceive aromatic atoms and bonds (ring perception included).
pub fn perceive(mol: &Molecule) -> Aromaticity {
    let flat = FlatMolecule::from_molecule(mol);
    let mut rings = RingInfo::default();
    rings.perceive_ring_bonds(&flat);
    let mut arom = Aromaticity::default();
    Perceiver::default().perceive(&flat, &mut rings, &mut arom);
    arom
}

/// Perceive aromaticity with rings already perceived by
/// [`super::rings::ring_info`] (or only their ring bonds: the ring set is
/// then listed here, when it is needed).
pub fn perceive_with_rings(mol: &Molecule, rings: &mut RingInfo) -> Aromaticity {
    let mut arom = Aromaticity::default();
    Perceiver::default().perceive(&FlatMolecule::from_molecule(mol), rings, &mut arom);
    arom
}

/// Work space of aromaticity perception, kept between molecules so that
/// perceiving allocates nothing once its buffers have grown.
#[derive(Clone, Debug, Default)]
pub struct Perceiver {
    state: Vec<Option<AtomState>>,
    /// Candidate rings (indices into the ring set).
    cand: Vec<usize>,
    /// Per candidate ring, its fused neighbours (only the first `cand.len()`
    /// lists are in use).
    neighbours: Vec<Vec<usize>>,
    system_done: Vec<bool>,
    system: Vec<usize>,
    system_bonds: Vec<usize>,
    done_bond: Vec<bool>,
    ring_count_of_atom: Vec<usize>,
    ring_count_of_bond: Vec<usize>,
    subsets: Subsets,
    /// Union-find parents over the atoms (the test for a candidate cycle).
    parent: Vec<usize>,
}

impl Perceiver {
    /// Perceive the aromatic atoms and bonds of `mol` into `arom` (resized
    /// to the molecule). `rings` holds at least the ring bonds of `mol`
    /// ([`RingInfo::perceive_ring_bonds`]); its ring set is listed here
    /// when a ring could be aromatic, which needs a cycle of candidate
    /// atoms over ring bonds (without one, no ring is a candidate).
    pub fn perceive(&mut self, mol: &FlatMolecule, rings: &mut RingInfo, arom: &mut Aromaticity) {
        let n = mol.atom_count();
        let m = mol.bond_count();
        arom.atom.clear();
        arom.atom.resize(n, false);
        arom.bond.clear();
        arom.bond.resize(m, false);
        // The atoms of the ring set are the atoms on a cycle: the ring set
        // spans the cycle space, so each ring bond lies on one of its rings.
        let state = &mut self.state;
        state.clear();
        state.resize(n, None);
        for a in (0..n).filter(|&a| rings.atom_in_ring[a]) {
            state[a] = Some(classify(mol, a, &rings.bond_in_ring));
        }
        let is_candidate = |a: usize| state[a].as_ref().is_some_and(|s| s.candidate);
        if !candidate_cycle(mol, &rings.bond_in_ring, is_candidate, &mut self.parent) {
            return;
        }
        rings.perceive_cycles();
        let rings = &*rings;
        let electrons = |a: usize| state[a].as_ref().map_or(0, |s| s.donor.electrons());

        // Candidate rings: every atom can join an aromatic ring.
        self.cand.clear();
        self.cand.extend(
            (0..rings.ring_count()).filter(|&r| rings.ring(r).iter().all(|&a| is_candidate(a))),
        );
        if self.cand.is_empty() {
            return;
        }
        let cand = &self.cand;
        let c = cand.len();
        let atoms_of = |k: usize| rings.ring(cand[k]);
        let bonds_of = |k: usize| rings.ring_bonds(cand[k]);
        // Candidate rings are neighbours when they share exactly one bond
        // (ortho fusion) and neither is larger than MAX_FUSED_RING_SIZE;
        // rings sharing two or more bonds (bridged cages) are not fused for
        // this purpose.
        if self.neighbours.len() < c {
            self.neighbours.resize_with(c, Vec::new);
        }
        for l in &mut self.neighbours[..c] {
            l.clear();
        }
        let neighbours = &mut self.neighbours[..c];
        for i in 0..c {
            for j in i + 1..c {
                if atoms_of(i).len() > MAX_FUSED_RING_SIZE
                    || atoms_of(j).len() > MAX_FUSED_RING_SIZE
                {
                    continue;
                }
                let shared = bonds_of(i)
                    .iter()
                    .filter(|e| bonds_of(j).contains(e))
                    .count();
                if shared == 1 {
                    neighbours[i].push(j);
                    neighbours[j].push(i);
                }
            }
        }
        let neighbours = &self.neighbours[..c];

        let system_done = &mut self.system_done;
        system_done.clear();
        system_done.resize(c, false);
        let ring_count_of_atom = &mut self.ring_count_of_atom;
        ring_count_of_atom.clear();
        ring_count_of_atom.resize(n, 0);
        let ring_count_of_bond = &mut self.ring_count_of_bond;
        ring_count_of_bond.clear();
        ring_count_of_bond.resize(m, 0);
        let (system, system_bonds, done_bond) = (
            &mut self.system,
            &mut self.system_bonds,
            &mut self.done_bond,
        );
        for start in 0..c {
            if system_done[start] {
                continue;
            }
            // The fused system containing `start`.
            system.clear();
            system.push(start);
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
            system_bonds.clear();
            system_bonds.extend(system.iter().flat_map(|&k| bonds_of(k).iter().copied()));
            system_bonds.sort_unstable();
            system_bonds.dedup();
            done_bond.clear();
            done_bond.resize(m, false);
            let mut done_count = 0;
            let max_size = system.len().min(MAX_FUSED_RINGS);
            for size in 1..=max_size {
                if done_count >= system_bonds.len()
                    || (size > 2 && system.len() > MAX_SYSTEM_FOR_TRIPLES)
                {
                    break;
                }
                self.subsets.list(system, neighbours, size);
                for combo in self.subsets.out.chunks(size) {
                    // Electrons of the atoms in one or two rings of the
                    // combination (an atom buried in three rings, like the
                    // centre of acepentalene, gives none).
                    for &k in combo {
                        for &a in atoms_of(k) {
                            ring_count_of_atom[a] += 1;
                        }
                        for &e in bonds_of(k) {
                            ring_count_of_bond[e] += 1;
                        }
                    }
                    let mut total = 0;
                    for &k in combo {
                        for &a in atoms_of(k) {
                            let cnt = ring_count_of_atom[a];
                            if cnt == 1 || cnt == 2 {
                                total += electrons(a);
                                // Count each atom once.
                                ring_count_of_atom[a] += 100;
                            }
                        }
                    }
                    if huckel(total) {
                        // Bonds in exactly one ring of the combination; single
                        // and double ones become aromatic with their atoms.
                        for &k in combo {
                            for &e in bonds_of(k) {
                                if ring_count_of_bond[e] != 1 {
                                    continue;
                                }
                                if !done_bond[e] {
                                    done_bond[e] = true;
                                    done_count += 1;
                                }
                                if mol.order(e) <= 2 {
                                    arom.bond[e] = true;
                                    let (a, b) = mol.ends(e);
                                    arom.atom[a] = true;
                                    arom.atom[b] = true;
                                }
                            }
                        }
                    }
                    for &k in combo {
                        for &a in atoms_of(k) {
                            ring_count_of_atom[a] = 0;
                        }
                        for &e in bonds_of(k) {
                            ring_count_of_bond[e] = 0;
                        }
                    }
                }
            }
        }
    }
}

/// Whether the ring bonds between candidate atoms close a cycle: a ring all
/// of whose atoms are candidates is such a cycle, so without one no ring is
/// a candidate. Union-find over the atoms (`parent` is work space).
fn candidate_cycle(
    mol: &FlatMolecule,
    bond_in_ring: &[bool],
    is_candidate: impl Fn(usize) -> bool,
    parent: &mut Vec<usize>,
) -> bool {
    parent.clear();
    parent.extend(0..mol.atom_count());
    let root = |parent: &mut Vec<usize>, mut x: usize| {
        while parent[x] != x {
            parent[x] = parent[parent[x]];
            x = parent[x];
        }
        x
    };
    for (e, &(a, b)) in mol.all_ends().iter().enumerate() {
        if bond_in_ring[e] && is_candidate(a) && is_candidate(b) {
            let (ra, rb) = (root(parent, a), root(parent, b));
            if ra == rb {
                return true;
            }
            parent[ra] = rb;
        }
    }
    false
}

/// The Hückel test on a pi electron count: 4n+2 with n >= 1, or 2 (RDKit
/// accepts a two-electron ring of any size, e.g. cyclopropenone).
fn huckel(total: usize) -> bool {
    (total >= 6 && (total - 2).is_multiple_of(4)) || total == 2
}

/// Every connected set of `size` rings of a system (rings joined when they
/// are neighbours), each once. The ESU enumeration of Wernicke ("Efficient
/// detection of network motifs", IEEE/ACM TCBB 3 (2006) 347-359): grow a set
/// from its lowest ring, only ever adding rings above it that are new
/// neighbours of the set. RDKit tests all ring combinations and skips the
/// unconnected ones; listing only connected ones gives the same result
/// without the combinatorial cost on large fused systems.
#[derive(Clone, Debug, Default)]
struct Subsets {
    /// The sets found, `size` rings each, end to end.
    out: Vec<usize>,
    sub: Vec<usize>,
    /// The extension set at each depth of the search.
    ext: Vec<Vec<usize>>,
}

impl Subsets {
    fn list(&mut self, system: &[usize], neighbours: &[Vec<usize>], size: usize) {
        self.out.clear();
        if self.ext.len() < size + 1 {
            self.ext.resize_with(size + 1, Vec::new);
        }
        for &v in system {
            self.ext[0].clear();
            self.ext[0].extend(neighbours[v].iter().copied().filter(|&u| u > v));
            self.sub.clear();
            self.sub.push(v);
            self.extend(0, v, size, neighbours);
        }
    }

    fn extend(&mut self, depth: usize, root: usize, size: usize, neighbours: &[Vec<usize>]) {
        if self.sub.len() == size {
            self.out.extend_from_slice(&self.sub);
            return;
        }
        while let Some(w) = self.ext[depth].pop() {
            // New extension: the current one plus w's exclusive neighbours
            // (not in the set and not adjacent to it), above the root.
            let (this, deeper) = self.ext.split_at_mut(depth + 1);
            let next = &mut deeper[0];
            next.clear();
            next.extend_from_slice(&this[depth]);
            let sub = &self.sub;
            for &u in &neighbours[w] {
                if u > root
                    && !sub.contains(&u)
                    && !next.contains(&u)
                    && u != w
                    && !sub.iter().any(|&x| neighbours[x].contains(&u))
                {
                    next.push(u);
                }
            }
            self.sub.push(w);
            self.extend(depth + 1, root, size, neighbours);
            self.sub.pop();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Brute force: all `size`-subsets that are connected.
    fn brute(system: &[usize], neighbours: &[Vec<usize>], size: usize) -> Vec<Vec<usize>> {
        let mut out = Vec::new();
        for combo in itertools::Itertools::combinations(system.iter().copied(), size) {
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
            if reached.len() == combo.len() {
                out.push(combo);
            }
        }
        out
    }

    #[test]
    fn connected_subsets_match_brute_force() {
        // A ring-adjacency graph with a cycle, a branch and a pendant.
        let edges = [
            (0, 1),
            (1, 2),
            (2, 3),
            (3, 0),
            (2, 4),
            (4, 5),
            (5, 6),
            (4, 6),
            (6, 7),
        ];
        let mut neighbours = vec![Vec::new(); 8];
        for &(a, b) in &edges {
            neighbours[a].push(b);
            neighbours[b].push(a);
        }
        let system: Vec<usize> = (0..8).collect();
        // One work space for every size, as perception uses it.
        let mut subsets = Subsets::default();
        for size in 1..=6 {
            subsets.list(&system, &neighbours, size);
            let mut fast: Vec<Vec<usize>> = subsets
                .out
                .chunks(size)
                .map(|v| {
                    let mut v = v.to_vec();
                    v.sort_unstable();
                    v
                })
                .collect();
            fast.sort();
            let before = fast.len();
            fast.dedup();
            assert_eq!(before, fast.len(), "each subset once");
            assert_eq!(fast, brute(&system, &neighbours, size), "size {size}");
        }
    }

    #[test]
    fn large_fused_systems_finish() {
        // A linear acene of 40 rings: every atom aromatic, and quick because
        // only connected ring sets are tried.
        let k = 40;
        let r = |i: usize| {
            if i < 10 {
                i.to_string()
            } else {
                format!("%{i}")
            }
        };
        let mut s = String::from("c1ccc");
        for i in 2..=k {
            s.push_str(&r(i));
            s.push_str("cc");
        }
        s.push_str("cc");
        for i in (2..=k).rev() {
            s.push('c');
            s.push_str(&r(i));
            s.push('c');
        }
        s.push('1');
        let m = crate::chem::smiles::parse_smiles(&s).unwrap();
        assert_eq!(m.atom_count(), 4 * k + 2);
        let start = std::time::Instant::now();
        let a = perceive(&m);
        assert!(start.elapsed().as_secs() < 5);
        assert_eq!(a.atom.iter().filter(|&&x| x).count(), m.atom_count());
    }

    #[test]
    fn every_ring_of_candidates_closes_a_candidate_cycle() {
        // The test that lets perception skip the ring set must never miss
        // a ring whose atoms are all candidates: checked against the full
        // ring set on every isomer of formulas with aromatic, antiaromatic
        // and cross-conjugated rings.
        let (mut with_ring, mut without_cycle) = (0, 0);
        let mut parent = Vec::new();
        for text in ["C6H6", "C5H5N", "C4H4O", "C8H8", "C7H6O", "C6H4O2"] {
            for m in crate::enumerate::molecules_of(text) {
                let flat = FlatMolecule::from_molecule(&m);
                let mut rings = RingInfo::default();
                rings.perceive(&flat);
                let candidate: Vec<bool> = (0..flat.atom_count())
                    .map(|a| {
                        rings.atom_in_ring[a] && classify(&flat, a, &rings.bond_in_ring).candidate
                    })
                    .collect();
                let ring_of_candidates = rings.rings().any(|r| r.iter().all(|&a| candidate[a]));
                let cycle =
                    candidate_cycle(&flat, &rings.bond_in_ring, |a| candidate[a], &mut parent);
                assert!(cycle || !ring_of_candidates, "{text}: {:?}", rings.ring(0));
                with_ring += ring_of_candidates as usize;
                without_cycle += !cycle as usize;
            }
        }
        // Both outcomes occur, so the check above has cases to fail on.
        assert!(
            with_ring > 1000 && without_cycle > 1000,
            "{with_ring} {without_cycle}"
        );
    }
}
