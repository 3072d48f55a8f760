//! Canonical SMILES writer.
//!
//! Method: perceive aromaticity, label the graph canonically
//! ([`crate::chem::canon`]: vertex colour from element, H count and aromatic
//! flag; edge colour from bond order, 4 for an aromatic bond), then write a
//! depth-first traversal from the lowest-ranked atom of least degree, taking
//! neighbours in rank order. Every choice the writer makes depends only on
//! the canonical ranks and the coloured graph, so two inputs that are the
//! same compound (any atom order, any Kekulé form) give the same string.
//!
//! Output conventions (OpenSMILES, and what RDKit writes): aromatic atoms in
//! lower case with aromatic bonds left implicit; an explicit `-` for a single
//! bond between two aromatic atoms that is not aromatic (biphenyl, the
//! central bond of azulene); brackets only when the implicit-hydrogen rule
//! would give another H count (`[nH]`, `[SH4]`); ring-closure digits reused
//! lowest first, the bond symbol written at the closing digit.
//!
//! A pentavalent N with a double bond to an O (the generator's form of
//! nitro groups and N-oxides) is written charge-separated, as chemists'
//! toolkits write it: that O becomes `[O-]` on a single bond and the N
//! `[N+]` (`[n+]` in an aromatic ring), e.g. `C[N+](=O)[O-]`,
//! `[O-][n+]1ccccc1`. Where the N has two such O, the one of higher
//! canonical rank takes the charge, so the string stays canonical.

use crate::chem::aromaticity::{Aromaticity, Perceiver};
use crate::chem::canon::{CanonGraph, Canonizer, MAX_ATOMS};
use crate::chem::element::Element;
use crate::chem::flat::FlatMolecule;
use crate::chem::kekule::pi_atoms_into;
use crate::chem::molecule::{HeavyAtoms, Molecule};
use crate::chem::rings::RingInfo;
use std::cell::RefCell;

/// The coloured graph for canonical labelling. Vertex colour packs the
/// element ([`crate::chem::Element::HEAVY`] index), the H count and, with
/// `arom`, the aromatic flag; edge colour is the bond order, or 4 for an
/// aromatic bond when `arom` is given (so all Kekulé forms give one graph).
/// Panics above [`MAX_ATOMS`] atoms, like [`CanonGraph::new`].
pub fn canon_graph(mol: &Molecule, arom: Option<&Aromaticity>) -> CanonGraph {
    let mut g = CanonGraph::new(mol.atom_count());
    fill_canon_graph(&FlatMolecule::from_molecule(mol), arom, &mut g);
    g
}

/// [`canon_graph`] of a [`FlatMolecule`], into `g`.
fn fill_canon_graph(mol: &FlatMolecule, arom: Option<&Aromaticity>, g: &mut CanonGraph) {
    g.clear(mol.atom_count());
    for i in 0..mol.atom_count() {
        let element = mol.element(i).heavy_index().unwrap_or(Element::HEAVY.len()) as u32;
        let aromatic = arom.is_some_and(|x| x.atom[i]) as u32;
        g.colour[i] = element << 16 | (mol.hydrogens(i) as u32) << 8 | aromatic;
    }
    for (e, &(a, b)) in mol.all_ends().iter().enumerate() {
        let label = match arom {
            Some(x) if x.bond[e] => 4,
            _ => mol.order(e),
        };
        g.set_edge(a, b, label);
    }
}

/// Canonical SMILES of `mol`: the same string for every numbering and Kekulé
/// form of one compound. Molecules above [`MAX_ATOMS`] heavy atoms are
/// written in input order instead (a valid SMILES, but not canonical).
/// Uses this thread's [`SmilesWriter`].
pub fn canonical_smiles(mol: &Molecule) -> String {
    with_writer(|w| w.canonical(mol).to_owned())
}

/// Write `mol` as SMILES, traversing by `ranks` (lower first; one distinct
/// rank per atom). Aromatic atoms and bonds follow `arom`. Disconnected
/// molecules are written as parts joined by `.`.
pub fn write_smiles(mol: &Molecule, arom: &Aromaticity, ranks: &[usize]) -> String {
    let mut by_rank: Vec<usize> = (0..mol.atom_count()).collect();
    by_rank.sort_by_key(|&v| ranks[v]);
    let mut out = String::new();
    Traversal::default().write(
        &FlatMolecule::from_molecule(mol),
        arom,
        ranks,
        &by_rank,
        &mut out,
    );
    out
}

thread_local! {
    static WRITER: RefCell<SmilesWriter> = RefCell::new(SmilesWriter::new());
}

/// Run `f` on this thread's [`SmilesWriter`] (a fresh one if it is in use).
pub fn with_writer<R>(f: impl FnOnce(&mut SmilesWriter) -> R) -> R {
    WRITER.with(|w| match w.try_borrow_mut() {
        Ok(mut w) => f(&mut w),
        Err(_) => f(&mut SmilesWriter::new()),
    })
}

/// Canonical SMILES writer that keeps its work space between molecules:
/// once its buffers have grown it allocates nothing per molecule, and it
/// perceives rings again only when the skeleton (atom count and bonds, in
/// their numbering) differs from the last one's, as it does not between the
/// bond-order assignments of one skeleton that the isomer generator emits
/// one after another. Of the rings it perceives the ring bonds per
/// skeleton, and lists the ring set (the costly part) only when aromaticity
/// needs it, at most once per skeleton. Every entry point runs the same
/// steps: rings, aromaticity, canonical labelling, traversal.
pub struct SmilesWriter {
    mol: FlatMolecule,
    /// Ring bonds (and, once aromaticity needed it, the ring set) of the
    /// skeleton `mol` holds.
    rings: RingInfo,
    perceiver: Perceiver,
    arom: Aromaticity,
    canon: Canonizer,
    graph: Box<CanonGraph>,
    /// Canonical rank of each atom, and the atoms by rank.
    ranks: Vec<usize>,
    by_rank: Vec<usize>,
    traversal: Traversal,
    out: String,
}

impl Default for SmilesWriter {
    fn default() -> Self {
        SmilesWriter::new()
    }
}

impl SmilesWriter {
    pub fn new() -> SmilesWriter {
        SmilesWriter {
            mol: FlatMolecule::default(),
            rings: RingInfo::default(),
            perceiver: Perceiver::default(),
            arom: Aromaticity::default(),
            canon: Canonizer::new(),
            graph: Box::new(CanonGraph::new(0)),
            ranks: Vec::new(),
            by_rank: Vec::new(),
            traversal: Traversal::default(),
            out: String::new(),
        }
    }

    /// Canonical SMILES of `mol` (see [`canonical_smiles`]), valid until the
    /// next call.
    pub fn canonical(&mut self, mol: &Molecule) -> &str {
        let new_skeleton = self.mol.set_molecule(mol);
        self.write_current(new_skeleton)
    }

    /// Canonical SMILES of any heavy-atom graph, such as the generator's
    /// compact isomers (no [`Molecule`] is built); the same string
    /// [`canonical_smiles`] gives for the same structure.
    pub fn canonical_heavy_atoms(&mut self, mol: &impl HeavyAtoms) -> &str {
        let new_skeleton = self.mol.set_heavy_atoms(mol);
        self.write_current(new_skeleton)
    }

    fn write_current(&mut self, new_skeleton: bool) -> &str {
        let mol = &self.mol;
        let n = mol.atom_count();
        if new_skeleton {
            self.rings.perceive_ring_bonds(mol);
        }
        self.perceiver
            .perceive(mol, &mut self.rings, &mut self.arom);
        self.by_rank.clear();
        if n <= MAX_ATOMS {
            fill_canon_graph(mol, Some(&self.arom), &mut self.graph);
            self.canon.run(&self.graph);
            self.by_rank
                .extend(self.canon.order().iter().map(|&v| v as usize));
        } else {
            self.by_rank.extend(0..n);
        }
        self.ranks.clear();
        self.ranks.resize(n, 0);
        for (i, &v) in self.by_rank.iter().enumerate() {
            self.ranks[v] = i;
        }
        self.out.clear();
        self.traversal
            .write(mol, &self.arom, &self.ranks, &self.by_rank, &mut self.out);
        &self.out
    }
}

/// A step of the writing pass: an atom (with the bond it is reached by) or
/// a branch parenthesis.
#[derive(Clone, Copy, Debug)]
enum Task {
    Atom(usize, Option<usize>),
    Paren(char),
}

/// [`Traversal::parent_bond`] of an atom not reached yet, and of a root.
const NOT_REACHED: usize = usize::MAX;
const ROOT: usize = usize::MAX - 1;
/// [`Traversal::bond_role`] values.
const UNSEEN: u8 = 0;
const TREE: u8 = 1;
const CLOSURE: u8 = 2;

/// A ring closure: opened at the ancestor with `digit`, closed at the
/// descendant.
#[derive(Clone, Copy, Debug)]
struct Closure {
    ancestor: usize,
    descendant: usize,
    bond: usize,
    digit: u32,
}

/// Work space of the depth-first writing pass.
#[derive(Clone, Debug, Default)]
struct Traversal {
    pi: Vec<bool>,
    /// Neighbours (atom, bond) of each atom in rank order, each atom's at
    /// the positions of its list in the molecule
    /// ([`FlatMolecule::neighbour_range`]).
    nbrs: Vec<(usize, usize)>,
    /// Fill position in each atom's list.
    cursor: Vec<usize>,
    /// The tree bond by which each atom was reached, [`ROOT`], or
    /// [`NOT_REACHED`]; an atom's tree children are the neighbours reached
    /// through their bond to it.
    parent_bond: Vec<usize>,
    /// Per bond: [`UNSEEN`], [`TREE`] or [`CLOSURE`].
    bond_role: Vec<u8>,
    /// Ring closures in the order the depth-first pass found them.
    closures: Vec<Closure>,
    digits_used: Vec<bool>,
    /// Depth-first stack of (atom, next neighbour position).
    stack: Vec<(usize, usize)>,
    tasks: Vec<Task>,
    /// Formal charge of each atom (charge-separated N-oxide groups only).
    charge: Vec<i8>,
    /// Bonds written single though their order is 2 (the N-O of such a
    /// group).
    demoted: Vec<bool>,
}

impl Traversal {
    /// Write `mol` as SMILES into `out`, traversing by `ranks` (see
    /// [`write_smiles`]); `by_rank` lists the atoms in rank order.
    fn write(
        &mut self,
        mol: &FlatMolecule,
        arom: &Aromaticity,
        ranks: &[usize],
        by_rank: &[usize],
        out: &mut String,
    ) {
        let n = mol.atom_count();
        let m = mol.bond_count();
        pi_atoms_into(mol, arom, &mut self.pi);
        // Neighbours of each atom in rank order (ties, which distinct ranks
        // never have, in bond order): a counting sort, walking the atoms in
        // rank order and dealing each one out to its neighbours' lists.
        reset(&mut self.nbrs, 2 * m, (0, 0));
        self.cursor.clear();
        self.cursor
            .extend((0..n).map(|v| mol.neighbour_range(v).start));
        for &u in by_rank {
            for &(v, e) in mol.neighbours(u) {
                self.nbrs[self.cursor[v]] = (u, e);
                self.cursor[v] += 1;
            }
        }
        self.charge_separate(mol, ranks);
        reset(&mut self.parent_bond, n, NOT_REACHED);
        reset(&mut self.bond_role, m, UNSEEN);
        self.closures.clear();
        self.digits_used.clear();
        // Connected parts in the order of their lowest-ranked atom of least
        // degree, each written from that atom: with distinct ranks, the
        // least atom not yet written is the least of its own part, and
        // planning a part reaches all of it.
        let mut first = true;
        while let Some(root) = (0..n)
            .filter(|&v| self.parent_bond[v] == NOT_REACHED)
            .min_by_key(|&v| (mol.degree(v), ranks[v], v))
        {
            self.plan(mol, root);
            if !first {
                out.push('.');
            }
            first = false;
            self.emit(mol, arom, root, out);
        }
    }

    /// Charges for the charge-separated form: each N whose bond orders and
    /// H add up to 5 takes +1, and of its O neighbours on a double bond the
    /// one of highest rank takes -1 and a single bond.
    fn charge_separate(&mut self, mol: &FlatMolecule, ranks: &[usize]) {
        let n = mol.atom_count();
        reset(&mut self.charge, n, 0);
        reset(&mut self.demoted, mol.bond_count(), false);
        for v in 0..n {
            if mol.element(v) != Element::N {
                continue;
            }
            let nbrs = mol.neighbours(v);
            let valence: u32 = nbrs.iter().map(|&(_, e)| mol.order(e) as u32).sum::<u32>()
                + mol.hydrogens(v) as u32;
            if valence != 5 {
                continue;
            }
            let oxo = nbrs
                .iter()
                .filter(|&&(u, e)| mol.element(u) == Element::O && mol.order(e) == 2)
                .max_by_key(|&&(u, _)| ranks[u]);
            if let Some(&(u, e)) = oxo {
                self.charge[v] = 1;
                self.charge[u] = -1;
                self.demoted[e] = true;
            }
        }
    }

    /// Depth-first pass from `root` (iterative, so long chains cannot
    /// overflow the stack): tree bonds and ring closures.
    fn plan(&mut self, mol: &FlatMolecule, root: usize) {
        self.parent_bond[root] = ROOT;
        self.stack.clear();
        self.stack.push((root, mol.neighbour_range(root).start));
        while let Some(top) = self.stack.last_mut() {
            let (v, pos) = *top;
            if pos == mol.neighbour_range(v).end {
                self.stack.pop();
                continue;
            }
            top.1 += 1;
            let (u, e) = self.nbrs[pos];
            if self.parent_bond[u] == NOT_REACHED {
                self.parent_bond[u] = e;
                self.bond_role[e] = TREE;
                self.stack.push((u, mol.neighbour_range(u).start));
            } else if self.bond_role[e] == UNSEEN {
                // A back edge to an ancestor u, found from descendant v.
                self.bond_role[e] = CLOSURE;
                self.closures.push(Closure {
                    ancestor: u,
                    descendant: v,
                    bond: e,
                    digit: 0,
                });
            }
        }
    }

    /// Write the part rooted at `root` (iterative: a stack of tasks).
    fn emit(&mut self, mol: &FlatMolecule, arom: &Aromaticity, root: usize, out: &mut String) {
        self.tasks.clear();
        self.tasks.push(Task::Atom(root, None));
        while let Some(t) = self.tasks.pop() {
            match t {
                Task::Paren(c) => out.push(c),
                Task::Atom(v, from) => {
                    if let Some(e) = from {
                        push_bond_symbol(out, mol, arom, &self.demoted, e);
                    }
                    self.atom_symbol(mol, arom, v, out);
                    if self
                        .closures
                        .iter()
                        .any(|c| c.ancestor == v || c.descendant == v)
                    {
                        self.ring_digits(mol, arom, v, out);
                    }
                    // Tree children in rank order: the last continues the
                    // chain, the others are branches. Pushed in reverse (the
                    // last child first) so the first branch is written first.
                    let mut last = true;
                    for i in mol.neighbour_range(v).rev() {
                        let (u, e) = self.nbrs[i];
                        if self.parent_bond[u] != e {
                            continue;
                        }
                        if last {
                            self.tasks.push(Task::Atom(u, Some(e)));
                            last = false;
                        } else {
                            self.tasks.push(Task::Paren(')'));
                            self.tasks.push(Task::Atom(u, Some(e)));
                            self.tasks.push(Task::Paren('('));
                        }
                    }
                }
            }
        }
    }

    /// Ring-closure digits at `v`: first those it closes, then those it
    /// opens (lowest free digit first), each in the order found.
    fn ring_digits(&mut self, mol: &FlatMolecule, arom: &Aromaticity, v: usize, out: &mut String) {
        let Traversal {
            closures,
            digits_used,
            demoted,
            ..
        } = self;
        for c in closures.iter().filter(|c| c.descendant == v) {
            push_bond_symbol(out, mol, arom, demoted, c.bond);
            push_digit(out, c.digit);
            digits_used[c.digit as usize] = false;
        }
        for c in closures.iter_mut().filter(|c| c.ancestor == v) {
            let d = match digits_used.iter().skip(1).position(|&u| !u) {
                Some(p) => p + 1,
                None => {
                    if digits_used.is_empty() {
                        digits_used.push(true); // digit 0 is never used
                    }
                    digits_used.push(false);
                    digits_used.len() - 1
                }
            };
            digits_used[d] = true;
            c.digit = d as u32;
            push_digit(out, c.digit);
        }
    }

    /// Element symbol, in brackets when the reader's implicit-hydrogen rule
    /// would not give this atom's H count.
    fn atom_symbol(&self, mol: &FlatMolecule, arom: &Aromaticity, v: usize, out: &mut String) {
        let element = mol.element(v);
        let hydrogens = mol.hydrogens(v);
        let aromatic = arom.atom[v];
        // ASCII; only the first letter changes case when aromatic.
        let sym = element.symbol().as_bytes();
        let push_symbol = |out: &mut String| {
            let first = if aromatic {
                sym[0].to_ascii_lowercase()
            } else {
                sym[0]
            };
            out.push(first as char);
            if let Some(&second) = sym.get(1) {
                out.push(second as char);
            }
        };
        // Bond count as a reader sees it: aromatic bonds once.
        let mut written = 0u32;
        for &(_, e) in mol.neighbours(v) {
            written += if arom.bond[e] { 1 } else { mol.order(e) as u32 };
        }
        let allowed = element.valences(true);
        let implicit = allowed.iter().find(|&&x| x as u32 >= written).map(|&x| {
            let x = x as u32;
            let pi = aromatic && x > written;
            (x - written - pi as u32, pi)
        });
        let organic = matches!(
            element,
            Element::C
                | Element::N
                | Element::O
                | Element::S
                | Element::P
                | Element::F
                | Element::Cl
                | Element::Br
                | Element::I
        );
        let needs_pi = aromatic && self.pi[v];
        let charge = self.charge[v];
        if charge == 0 && organic && implicit == Some((hydrogens as u32, needs_pi)) {
            push_symbol(out);
            return;
        }
        out.push('[');
        push_symbol(out);
        match hydrogens {
            0 => {}
            1 => out.push('H'),
            h => {
                out.push('H');
                push_number(out, h as u32);
            }
        }
        match charge {
            1 => out.push('+'),
            -1 => out.push('-'),
            _ => {}
        }
        out.push(']');
    }
}

/// The bond symbol of bond `e`, when it needs one.
fn push_bond_symbol(
    out: &mut String,
    mol: &FlatMolecule,
    arom: &Aromaticity,
    demoted: &[bool],
    e: usize,
) {
    if arom.bond[e] {
        return;
    }
    let (a, b) = mol.ends(e);
    match if demoted[e] { 1 } else { mol.order(e) } {
        2 => out.push('='),
        3 => out.push('#'),
        _ if arom.atom[a] && arom.atom[b] => out.push('-'),
        _ => {}
    }
}

/// Resize `v` to `len` items, all `value`.
fn reset<T: Copy>(v: &mut Vec<T>, len: usize, value: T) {
    v.clear();
    v.resize(len, value);
}

fn push_number(out: &mut String, mut x: u32) {
    let mut buf = [0u8; 10];
    let mut i = buf.len();
    loop {
        i -= 1;
        buf[i] = b'0' + (x % 10) as u8;
        x /= 10;
        if x == 0 {
            break;
        }
    }
    out.push_str(std::str::from_utf8(&buf[i..]).expect("ASCII digits"));
}

fn push_digit(out: &mut String, d: u32) {
    if d < 10 {
        out.push(char::from_digit(d, 10).expect("digit"));
    } else if d < 100 {
        out.push('%');
        push_number(out, d);
    } else {
        out.push_str("%(");
        push_number(out, d);
        out.push(')');
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::smiles::parse_smiles;

    fn canon(s: &str) -> String {
        canonical_smiles(&parse_smiles(s).unwrap())
    }

    #[test]
    fn same_compound_same_string() {
        assert_eq!(canon("OCC"), canon("CCO"));
        assert_eq!(canon("C1=CC=CC=C1C"), canon("Cc1ccccc1"));
        assert_eq!(canon("CC1=C(C)C=CC=C1"), canon("CC1=CC=CC=C1C"));
        assert_ne!(canon("CCO"), canon("COC"));
    }

    #[test]
    fn aromatic_conventions() {
        assert_eq!(canon("C1=CC=CC=C1"), "c1ccccc1");
        assert_eq!(canon("C1=CNC=C1"), canon("c1ccc[nH]1"));
        assert!(canon("C1=CNC=C1").contains("[nH]"));
        assert!(canon("C1=CC=C(C=C1)C1=CC=CC=C1").contains('-'));
        assert_eq!(canon("C"), "C");
        assert_eq!(canon("[SH4]"), "[SH4]");
    }

    #[test]
    fn large_molecules_are_written_without_panicking() {
        // Above MAX_ATOMS the writer keeps input order: still a valid SMILES.
        let chain = "C".repeat(100);
        let s = canon(&chain);
        assert_eq!(s, chain);
        let rings: String = (0..30).map(|_| "C1CC1").collect::<Vec<_>>().join("");
        let m = parse_smiles(&rings).unwrap();
        let back = parse_smiles(&canonical_smiles(&m)).unwrap();
        assert_eq!(back.formula(), m.formula());
    }

    #[test]
    fn many_ring_closures_reuse_digits() {
        // Cubane needs several ring closures open at once.
        let s = canon("C12C3C4C1C5C2C3C45");
        let back = parse_smiles(&s).unwrap();
        assert_eq!(back.graph.edge_count(), 12);
        assert_eq!(canon(&s), s);
    }

    #[test]
    fn a_reused_writer_gives_what_a_fresh_one_gives() {
        // The writer keeps ring perception per skeleton and lists the ring
        // set lazily; neither may leak from one molecule into the next.
        // Isomers come out skeleton by skeleton (the compact path, through
        // this thread's writer); the same molecules are then fed to one
        // writer in an order that changes skeleton at every step.
        for text in ["C7H8", "C5H5N", "C6H4O2"] {
            let formula = crate::chem::Formula::parse(text).unwrap();
            let found = std::sync::Mutex::new(Vec::new());
            crate::enumerate::for_each_ordered(
                &formula,
                &Default::default(),
                |iso| {
                    found.lock().unwrap().push((iso.molecule(), iso.smiles()));
                    Some(())
                },
                |_| true,
                &mut |_| {},
            )
            .unwrap();
            let found = found.into_inner().unwrap();
            assert!(found.len() > 100, "{text}");
            let fresh: Vec<String> = found
                .iter()
                .map(|(m, _)| SmilesWriter::new().canonical(m).to_string())
                .collect();
            for ((_, compact), want) in found.iter().zip(&fresh) {
                assert_eq!(compact, want, "{text}");
            }
            let mut reused = SmilesWriter::new();
            let k = found.len();
            for i in 0..k {
                // 0, k-1, 1, k-2, ...
                let j = if i % 2 == 0 { i / 2 } else { k - 1 - i / 2 };
                assert_eq!(reused.canonical(&found[j].0), fresh[j], "{text}");
            }
        }
    }
}
