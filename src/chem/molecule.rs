//! The molecule model: a plain-data undirected graph of heavy atoms (petgraph),
//! hydrogens implicit as a count on each atom.
//!
//! Bond orders are always stored in a Kekulé form (1, 2 or 3). Aromaticity is a
//! perception result kept beside the graph (see [`super::aromaticity`]), never a
//! bond order, so that every algorithm sees one representation. Perception and
//! algorithms live in their own files, not as methods grown onto this type.

use super::element::Element;
use super::formula::Formula;
use petgraph::graph::{NodeIndex, UnGraph};

#[derive(Copy, Clone, Debug, PartialEq, Eq, Hash)]
pub struct Atom {
    pub element: Element,
    /// Implicit hydrogens on this atom.
    pub hydrogens: u8,
}

#[derive(Copy, Clone, Debug, PartialEq, Eq, Hash)]
pub struct Bond {
    /// Kekulé bond order: 1, 2 or 3.
    pub order: u8,
}

/// Read access to a heavy-atom graph with implicit hydrogens: what
/// prediction needs of a structure. [`Molecule`] has it, and so does the
/// generator's compact isomer (`enumerate::Isomer`), so that a ranking can
/// predict every candidate without building a molecule for it.
pub trait HeavyAtoms {
    fn atom_count(&self) -> usize;
    fn element_of(&self, i: usize) -> Element;
    fn hydrogens_of(&self, i: usize) -> u8;
    /// Call `f(neighbour, bond order)` for each neighbour of atom `i`.
    fn each_neighbour(&self, i: usize, f: &mut dyn FnMut(usize, u8));
    /// The neighbours of atom `i` as one bitset per bond order (single,
    /// double, triple), when the graph stores them so (then this is the
    /// cheap way to read them; atoms 0-63 only).
    fn neighbour_masks(&self, _i: usize) -> Option<[u64; 3]> {
        None
    }
}

impl HeavyAtoms for Molecule {
    fn atom_count(&self) -> usize {
        self.graph.node_count()
    }
    fn element_of(&self, i: usize) -> Element {
        self.atom(i).element
    }
    fn hydrogens_of(&self, i: usize) -> u8 {
        self.atom(i).hydrogens
    }
    fn each_neighbour(&self, i: usize, f: &mut dyn FnMut(usize, u8)) {
        for (j, o) in self.neighbours(i) {
            f(j, o);
        }
    }
}

/// A neutral molecule: heavy atoms as nodes, bonds as edges.
#[derive(Clone, Debug, Default)]
pub struct Molecule {
    pub graph: UnGraph<Atom, Bond>,
}

impl Molecule {
    pub fn new() -> Molecule {
        Molecule {
            graph: UnGraph::default(),
        }
    }

    pub fn add_atom(&mut self, element: Element, hydrogens: u8) -> NodeIndex {
        self.graph.add_node(Atom { element, hydrogens })
    }

    pub fn add_bond(&mut self, a: NodeIndex, b: NodeIndex, order: u8) {
        self.graph.add_edge(a, b, Bond { order });
    }

    pub fn atom_count(&self) -> usize {
        self.graph.node_count()
    }

    pub fn atom(&self, i: usize) -> Atom {
        self.graph[NodeIndex::new(i)]
    }

    /// Neighbours of atom `i` with the bond order, in edge order.
    pub fn neighbours(&self, i: usize) -> impl Iterator<Item = (usize, u8)> + '_ {
        self.graph.edges(NodeIndex::new(i)).map(move |e| {
            use petgraph::visit::EdgeRef;
            let other = if e.source().index() == i {
                e.target().index()
            } else {
                e.source().index()
            };
            (other, e.weight().order)
        })
    }

    /// Sum of bond orders at atom `i` (not counting hydrogens).
    pub fn bond_order_sum(&self, i: usize) -> u8 {
        self.neighbours(i).map(|(_, o)| o).sum()
    }

    /// The charge-separated form of the N(V) groups (nitro, N-oxides, built
    /// as an N whose bond orders and H add up to 5): that N takes +1 and one
    /// O on a double bond to it (the highest-numbered) takes -1, the bond
    /// between them drawn or written single. Returns each atom's formal
    /// charge and the (N, O) pairs whose bond becomes single.
    pub fn charge_separation(&self) -> (Vec<i8>, Vec<(usize, usize)>) {
        let n = self.atom_count();
        let mut charge = vec![0i8; n];
        let mut single = Vec::new();
        for v in 0..n {
            let atom = self.atom(v);
            if atom.element != Element::N
                || self.bond_order_sum(v) as u32 + atom.hydrogens as u32 != 5
            {
                continue;
            }
            let oxo = self
                .neighbours(v)
                .filter(|&(u, o)| o == 2 && self.atom(u).element == Element::O)
                .map(|(u, _)| u)
                .max();
            if let Some(u) = oxo {
                charge[v] = 1;
                charge[u] = -1;
                single.push((v, u));
            }
        }
        (charge, single)
    }

    /// Bond order between atoms `a` and `b`, 0 when not bonded.
    pub fn bond_order(&self, a: usize, b: usize) -> u8 {
        self.graph
            .find_edge(NodeIndex::new(a), NodeIndex::new(b))
            .map(|e| self.graph[e].order)
            .unwrap_or(0)
    }

    pub fn formula(&self) -> Formula {
        let mut f = Formula::default();
        for a in self.graph.node_weights() {
            f.add(a.element, 1);
            f.add(Element::H, a.hydrogens as u32);
        }
        f
    }

    pub fn total_hydrogens(&self) -> u32 {
        self.graph.node_weights().map(|a| a.hydrogens as u32).sum()
    }
}
