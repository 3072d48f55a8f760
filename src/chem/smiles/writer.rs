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

use crate::chem::aromaticity::{perceive, Aromaticity};
use crate::chem::canon::{CanonGraph, Canonizer, MAX_ATOMS};
use crate::chem::kekule::pi_atoms;
use crate::chem::molecule::Molecule;
use petgraph::graph::NodeIndex;
use petgraph::visit::EdgeRef;

/// The coloured graph for canonical labelling. Vertex colour packs the
/// element ([`crate::chem::Element::HEAVY`] index), the H count and, with
/// `arom`, the aromatic flag; edge colour is the bond order, or 4 for an
/// aromatic bond when `arom` is given (so all Kekulé forms give one graph).
/// Panics above [`MAX_ATOMS`] atoms, like [`CanonGraph::new`].
pub fn canon_graph(mol: &Molecule, arom: Option<&Aromaticity>) -> CanonGraph {
    let mut g = CanonGraph::new(mol.atom_count());
    for (i, a) in mol.graph.node_weights().enumerate() {
        let element = a.element.heavy_index().unwrap_or(Element::HEAVY.len()) as u32;
        let aromatic = arom.is_some_and(|x| x.atom[i]) as u32;
        g.colour[i] = element << 16 | (a.hydrogens as u32) << 8 | aromatic;
    }
    for e in mol.graph.edge_references() {
        let label = match arom {
            Some(x) if x.bond[e.id().index()] => 4,
            _ => e.weight().order,
        };
        g.set_edge(e.source().index(), e.target().index(), label);
    }
    g
}

use crate::chem::element::Element;

/// Canonical SMILES of `mol`: the same string for every numbering and Kekulé
/// form of one compound. Molecules above [`MAX_ATOMS`] heavy atoms are
/// written in input order instead (a valid SMILES, but not canonical).
pub fn canonical_smiles(mol: &Molecule) -> String {
    let arom = perceive(mol);
    let n = mol.atom_count();
    let ranks: Vec<usize> = if n <= MAX_ATOMS {
        let mut c = Canonizer::new();
        c.run(&canon_graph(mol, Some(&arom)));
        c.ranks()
    } else {
        (0..n).collect()
    };
    write_smiles(mol, &arom, &ranks)
}

/// Write `mol` as SMILES, traversing by `ranks` (lower first; one distinct
/// rank per atom). Aromatic atoms and bonds follow `arom`. Disconnected
/// molecules are written as parts joined by `.`.
pub fn write_smiles(mol: &Molecule, arom: &Aromaticity, ranks: &[usize]) -> String {
    let n = mol.atom_count();
    let pi = pi_atoms(mol, arom);
    // Neighbours of each atom (atom, edge) in rank order.
    let mut nbrs: Vec<Vec<(usize, usize)>> = vec![Vec::new(); n];
    for e in mol.graph.edge_references() {
        let (a, b, id) = (e.source().index(), e.target().index(), e.id().index());
        nbrs[a].push((b, id));
        nbrs[b].push((a, id));
    }
    for l in &mut nbrs {
        l.sort_by_key(|&(u, _)| ranks[u]);
    }
    let mut w = Writer {
        mol,
        arom,
        pi: &pi,
        nbrs: &nbrs,
        visited: vec![false; n],
        tree_edge: vec![false; mol.graph.edge_count()],
        seen_back: vec![false; mol.graph.edge_count()],
        children: vec![Vec::new(); n],
        opens: vec![Vec::new(); n],
        closes: vec![Vec::new(); n],
        digit_of_edge: vec![0; mol.graph.edge_count()],
        digits_used: Vec::new(),
        out: String::new(),
    };
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by_key(|&v| (nbrs[v].len(), ranks[v]));
    let mut in_part = vec![false; n];
    let mut first = true;
    for &start in &order {
        if in_part[start] {
            continue;
        }
        // The connected part holding `start`; its root is the lowest-ranked
        // atom of least degree.
        let mut part = vec![start];
        in_part[start] = true;
        let mut k = 0;
        while k < part.len() {
            for &(u, _) in &nbrs[part[k]] {
                if !in_part[u] {
                    in_part[u] = true;
                    part.push(u);
                }
            }
            k += 1;
        }
        let root = *part
            .iter()
            .min_by_key(|&&v| (nbrs[v].len(), ranks[v]))
            .expect("part holds start");
        w.plan(root);
        if !first {
            w.out.push('.');
        }
        first = false;
        w.write(root);
    }
    w.out
}

struct Writer<'a> {
    mol: &'a Molecule,
    arom: &'a Aromaticity,
    pi: &'a [bool],
    nbrs: &'a [Vec<(usize, usize)>],
    visited: Vec<bool>,
    tree_edge: Vec<bool>,
    seen_back: Vec<bool>,
    /// Depth-first tree children (atom, edge) in rank order.
    children: Vec<Vec<(usize, usize)>>,
    /// Ring closures opened at an atom: (partner, edge), in partner rank order.
    opens: Vec<Vec<(usize, usize)>>,
    /// Ring closures closed at an atom: (partner, edge).
    closes: Vec<Vec<(usize, usize)>>,
    digit_of_edge: Vec<u32>,
    digits_used: Vec<bool>,
    out: String,
}

impl Writer<'_> {
    /// Depth-first pass from `root` (iterative, so long chains cannot
    /// overflow the stack): tree children and ring closures.
    fn plan(&mut self, root: usize) {
        self.visited[root] = true;
        // Stack of (atom, next neighbour position).
        let mut stack = vec![(root, 0usize)];
        while let Some(&mut (v, ref mut pos)) = stack.last_mut() {
            if *pos == self.nbrs[v].len() {
                stack.pop();
                continue;
            }
            let (u, e) = self.nbrs[v][*pos];
            *pos += 1;
            if !self.visited[u] {
                self.visited[u] = true;
                self.tree_edge[e] = true;
                self.children[v].push((u, e));
                stack.push((u, 0));
            } else if !self.tree_edge[e] && !self.seen_back[e] {
                // A back edge to an ancestor u, found from descendant v.
                self.seen_back[e] = true;
                self.opens[u].push((v, e));
                self.closes[v].push((u, e));
            }
        }
    }

    fn write(&mut self, root: usize) {
        // Iterative writer: a stack of tasks.
        enum Task {
            Atom(usize, Option<usize>),
            Text(&'static str),
        }
        let mut tasks = vec![Task::Atom(root, None)];
        while let Some(t) = tasks.pop() {
            match t {
                Task::Text(s) => self.out.push_str(s),
                Task::Atom(v, from) => {
                    if let Some(e) = from {
                        let s = self.bond_symbol(e);
                        self.out.push_str(s);
                    }
                    self.atom_symbol(v);
                    self.ring_digits(v);
                    let kids = self.children[v].clone();
                    // Last child continues the chain; others are branches.
                    // Push in reverse so the first branch is written first.
                    for (k, &(u, e)) in kids.iter().enumerate().rev() {
                        if k + 1 == kids.len() {
                            tasks.push(Task::Atom(u, Some(e)));
                        } else {
                            tasks.push(Task::Text(")"));
                            tasks.push(Task::Atom(u, Some(e)));
                            tasks.push(Task::Text("("));
                        }
                    }
                }
            }
        }
    }

    fn ring_digits(&mut self, v: usize) {
        let closes = self.closes[v].clone();
        for (_, e) in closes {
            let d = self.digit_of_edge[e];
            let s = self.bond_symbol(e);
            self.out.push_str(s);
            push_digit(&mut self.out, d);
            self.digits_used[d as usize] = false;
        }
        let opens = self.opens[v].clone();
        for (_, e) in opens {
            let d = match self.digits_used.iter().skip(1).position(|&u| !u) {
                Some(p) => p + 1,
                None => {
                    if self.digits_used.is_empty() {
                        self.digits_used.push(true); // digit 0 is never used
                    }
                    self.digits_used.push(false);
                    self.digits_used.len() - 1
                }
            };
            self.digits_used[d] = true;
            self.digit_of_edge[e] = d as u32;
            push_digit(&mut self.out, d as u32);
        }
    }

    fn bond_symbol(&self, e: usize) -> &'static str {
        if self.arom.bond[e] {
            return "";
        }
        let edge = petgraph::graph::EdgeIndex::new(e);
        let (a, b) = self.mol.graph.edge_endpoints(edge).expect("edge exists");
        match self.mol.graph[edge].order {
            2 => "=",
            3 => "#",
            _ if self.arom.atom[a.index()] && self.arom.atom[b.index()] => "-",
            _ => "",
        }
    }

    /// Element symbol, in brackets when the reader's implicit-hydrogen rule
    /// would not give this atom's H count.
    fn atom_symbol(&mut self, v: usize) {
        let atom = self.mol.atom(v);
        let aromatic = self.arom.atom[v];
        let sym = atom.element.symbol();
        let text = if aromatic {
            sym.to_ascii_lowercase()
        } else {
            sym.to_string()
        };
        // Bond count as a reader sees it: aromatic bonds once.
        let node = NodeIndex::new(v);
        let written: u32 = self
            .mol
            .graph
            .edges(node)
            .map(|e| {
                if self.arom.bond[e.id().index()] {
                    1
                } else {
                    e.weight().order as u32
                }
            })
            .sum();
        let allowed = atom.element.valences(true);
        let implicit = allowed.iter().find(|&&x| x as u32 >= written).map(|&x| {
            let x = x as u32;
            let pi = aromatic && x > written;
            (x - written - pi as u32, pi)
        });
        let organic = matches!(
            atom.element,
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
        if organic && implicit == Some((atom.hydrogens as u32, needs_pi)) {
            self.out.push_str(&text);
            return;
        }
        self.out.push('[');
        self.out.push_str(&text);
        match atom.hydrogens {
            0 => {}
            1 => self.out.push('H'),
            h => {
                self.out.push('H');
                self.out.push_str(&h.to_string());
            }
        }
        self.out.push(']');
    }
}

fn push_digit(out: &mut String, d: u32) {
    if d < 10 {
        out.push(char::from_digit(d, 10).expect("digit"));
    } else if d < 100 {
        out.push('%');
        out.push_str(&d.to_string());
    } else {
        out.push_str(&format!("%({d})"));
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
}
