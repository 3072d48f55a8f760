//! Rooted substructure patterns: the small language in which
//! `fragment-library/` names substituent classes and H environments, and the
//! matcher that tests them against a candidate molecule.
//!
//! The language is a tree-shaped subset of SMARTS notation (Daylight's SMARTS
//! theory manual; an open notation), read so that the FIRST atom is the root:
//! the atom a substituent is attached by, or the atom that carries the H.
//!
//! ```text
//! atom      C N O S P F Cl Br I     that element, not aromatic
//!           c n o s p               that element, aromatic
//!           a  A  *                 any aromatic / any non-aromatic / any atom
//!           [ ... ]                 bracket atom: primitives joined by `;` (and),
//!                                   alternatives separated by `,` (or, binds looser)
//! primitive element as above, #6 (atomic number), Hn (exactly n implicit H),
//!           Dn (n heavy neighbours), ^1 ^2 ^3 (sp, sp2, sp3), R (in a ring),
//!           any primitive prefixed with ! (not)
//! bond      - single  = double  # triple  : aromatic  ~ any;
//!           none written: single or aromatic
//! branch    ( ... )
//! ```
//!
//! Examples: `OC=O` acyloxy (root O, bonded to a C that carries =O);
//! `[CH1](=O)a` aryl aldehyde H; `[Cl,Br]` chlorine or bromine.
//! No ring closures: every pattern is a tree, so matching is a small
//! backtracking search over at most a handful of atoms, with no allocation.
//!
//! Patterns are compiled once when the library loads ([`Pattern::parse`]);
//! [`Pattern::matches`] runs per candidate on the precomputed [`View`].

use super::view::{View, ARO, DOUBLE, SINGLE, TRIPLE};
use crate::chem::Element;

/// Largest number of atoms in one pattern (keeps the matcher allocation-free).
pub const MAX_PATTERN_ATOMS: usize = 12;

/// One conjunction of atom primitives, as bit masks over precomputed atom
/// features (see [`View`]): all must hold.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
struct Term {
    /// Allowed (element, aromatic) pairs: bit `2 * heavy_index + aromatic`.
    elem: u32,
    /// Allowed implicit H counts: bit n.
    h: u8,
    /// Allowed heavy-atom degrees: bit n.
    deg: u8,
    /// Allowed hybridisations: bit 1 sp, bit 2 sp2, bit 3 sp3.
    hyb: u8,
    /// Ring membership: bit 0 not in ring, bit 1 in ring.
    ring: u8,
}

const ALL_ELEM: u32 = (1 << 18) - 1;

impl Term {
    const ANY: Term = Term {
        elem: ALL_ELEM,
        h: 0xff,
        deg: 0xff,
        hyb: 0xff,
        ring: 0b11,
    };

    fn holds(&self, v: &View, atom: usize) -> bool {
        self.elem >> v.elem_bit[atom] & 1 == 1
            && self.h >> v.h[atom].min(7) & 1 == 1
            && self.deg >> v.deg[atom].min(7) & 1 == 1
            && self.hyb >> v.hyb[atom] & 1 == 1
            && self.ring >> (v.in_ring(atom) as u8) & 1 == 1
    }
}

#[derive(Clone, Copy, Debug)]
struct Node {
    /// Alternatives (or); each a conjunction.
    terms: [Term; 4],
    nterms: u8,
    /// Allowed bond kinds to the parent node (bit per kind), unused for the root.
    bond: u8,
    /// Index of the parent node (nodes are stored parents first).
    parent: u8,
}

/// A compiled rooted pattern.
#[derive(Clone, Debug)]
pub struct Pattern {
    nodes: Vec<Node>,
    text: String,
    /// Per root child of the pattern (the first [`MAX_CHILD_NEEDS`]), the
    /// [`child_feature`] bits of the root neighbours it could be matched to:
    /// a quick necessary condition tested before backtracking.
    child_needs: [u64; MAX_CHILD_NEEDS],
    n_child_needs: u8,
    /// The root is one conjunction with no ring primitive: an index key
    /// (element, hybridisation, H count, degree) that passed
    /// [`Pattern::root_degrees`] settles the root atom, and the matcher need
    /// not test it again.
    root_settled_by_key: bool,
}

/// Root children whose neighbour features a pattern remembers for the quick check.
const MAX_CHILD_NEEDS: usize = 4;

/// The feature bit of a neighbour reached by a bond of `kind` (SINGLE..ARO)
/// with element feature `elem_bit`, for [`Pattern::children_may_match`]:
/// one bit per (kind, element) pair, except that an aromatic bond shares
/// the bit of the aromatic element with its non-aromatic namesake (the only
/// atoms on aromatic bonds are aromatic), so that all fit in 63 bits. Only
/// the union of bits is compared, so a shared bit can only let a pattern
/// through, never turn one away.
#[inline]
pub fn child_feature(kind: u8, elem_bit: u8) -> u64 {
    let bit = if kind == ARO {
        3 * 18 + (elem_bit >> 1) as u32
    } else {
        (kind as u32 - 1) * 18 + elem_bit as u32
    };
    1u64 << bit
}

impl Pattern {
    /// Compile pattern text; the error names the character position.
    pub fn parse(text: &str) -> Result<Pattern, String> {
        let mut p = Parser {
            s: text.as_bytes(),
            i: 0,
            nodes: Vec::new(),
        };
        p.chain(None)?;
        if p.i != p.s.len() {
            return Err(format!(
                "unexpected '{}' at character {} of pattern \"{text}\"",
                p.s[p.i] as char,
                p.i + 1
            ));
        }
        if p.nodes.is_empty() {
            return Err(format!("empty pattern \"{text}\""));
        }
        let nodes = p.nodes;
        let mut child_needs = [0u64; MAX_CHILD_NEEDS];
        let mut n_child_needs = 0;
        for n in nodes[1..].iter().filter(|n| n.parent == 0) {
            if n_child_needs == MAX_CHILD_NEEDS {
                break;
            }
            child_needs[n_child_needs] = node_features(n);
            n_child_needs += 1;
        }
        let r = &nodes[0];
        let root_settled_by_key = r.nterms == 1 && r.terms[0].ring == 0b11;
        Ok(Pattern {
            nodes,
            text: text.to_string(),
            child_needs,
            n_child_needs: n_child_needs as u8,
            root_settled_by_key,
        })
    }

    pub fn text(&self) -> &str {
        &self.text
    }

    /// Element feature bits (see [`elem_bit`]) the root may have.
    pub fn root_elements(&self) -> u32 {
        let r = &self.nodes[0];
        r.terms[..r.nterms as usize]
            .iter()
            .fold(0, |a, t| a | t.elem)
    }

    /// Heavy degrees (bit n) the root may have on an atom with this element
    /// feature bit, hybridisation and H count; 0 when the root cannot match
    /// such an atom. Together with [`Pattern::children_may_fit`], the exact
    /// root test the index keys on.
    pub fn root_degrees(&self, elem_bit: u8, hyb: u8, h: u8) -> u8 {
        let r = &self.nodes[0];
        r.terms[..r.nterms as usize]
            .iter()
            .filter(|t| {
                t.elem >> elem_bit & 1 == 1 && t.hyb >> hyb & 1 == 1 && t.h >> h.min(7) & 1 == 1
            })
            .fold(0, |a, t| a | t.deg)
    }

    /// Could the pattern's root children find partners among `children`
    /// usable neighbours of the root, whose bond kinds are the set `kinds`
    /// (bit `1 << kind`)? A necessary condition, used to build the index.
    pub fn children_may_fit(&self, children: u8, kinds: u8) -> bool {
        // Each root child needs its own neighbour, reached by an allowed bond.
        let mut bonds = [0u8; MAX_PATTERN_ATOMS];
        let mut m = 0;
        for n in self.nodes[1..].iter().filter(|n| n.parent == 0) {
            if n.bond & kinds == 0 {
                return false;
            }
            bonds[m] = n.bond & kinds;
            m += 1;
        }
        if m > children as usize {
            return false;
        }
        // Hall's condition, with each present kind on at most
        // children - (kinds present) + 1 neighbours: any set of root children
        // needs at least as many neighbours as its allowed kinds can offer.
        let cap = (children + 1).saturating_sub(kinds.count_ones() as u8) as u32;
        if m > 1 && m <= 8 {
            for set in 1u32..1 << m {
                let allowed = (0..m)
                    .filter(|&j| set >> j & 1 == 1)
                    .fold(0u8, |a, j| a | bonds[j]);
                if set.count_ones() > allowed.count_ones() * cap {
                    return false;
                }
            }
        }
        true
    }

    /// Quick necessary condition on the root's neighbours: `features` is the
    /// union of [`child_feature`] over the neighbours the pattern may use.
    #[inline]
    pub fn children_may_match(&self, features: u64) -> bool {
        self.child_needs[..self.n_child_needs as usize]
            .iter()
            .all(|&need| need & features != 0)
    }

    /// [`Pattern::matches`] for a pattern taken from an index list whose key
    /// `root` passed [`Pattern::root_degrees`]: skips what the key settled.
    #[inline]
    pub fn matches_indexed(&self, v: &View, root: usize, parent: Option<usize>) -> bool {
        if !self.root_settled_by_key && !node_holds(&self.nodes[0], v, root) {
            return false;
        }
        self.nodes.len() == 1 || self.match_below_root(v, root, parent)
    }

    /// Does the pattern match with its root on `root`? `parent`, when given,
    /// is the atom the substituent hangs from: it is excluded from the match,
    /// so the pattern sees only the substituent side.
    pub fn matches(&self, v: &View, root: usize, parent: Option<usize>) -> bool {
        node_holds(&self.nodes[0], v, root) && self.match_below_root(v, root, parent)
    }

    /// The rest of the pattern, its root already placed on `root`.
    #[inline]
    fn match_below_root(&self, v: &View, root: usize, parent: Option<usize>) -> bool {
        let mut used: u64 = 1u64 << root;
        if let Some(p) = parent {
            used |= 1u64 << p;
        }
        let mut assigned = [0u8; MAX_PATTERN_ATOMS];
        assigned[0] = root as u8;
        self.assign(v, 1, &mut assigned, used)
    }

    fn assign(
        &self,
        v: &View,
        i: usize,
        assigned: &mut [u8; MAX_PATTERN_ATOMS],
        used: u64,
    ) -> bool {
        if i == self.nodes.len() {
            return true;
        }
        let node = &self.nodes[i];
        let at = assigned[node.parent as usize] as usize;
        for k in 0..v.deg[at] as usize {
            let nb = v.nbr[at][k] as usize;
            if used >> nb & 1 == 1 || node.bond >> v.bond[at][k] & 1 == 0 {
                continue;
            }
            if !node_holds(node, v, nb) {
                continue;
            }
            assigned[i] = nb as u8;
            if self.assign(v, i + 1, assigned, used | 1u64 << nb) {
                return true;
            }
        }
        false
    }
}

/// The [`child_feature`] bits a neighbour matching node `n` could have.
fn node_features(n: &Node) -> u64 {
    let elems = n.terms[..n.nterms as usize]
        .iter()
        .fold(0u32, |a, t| a | t.elem);
    let mut out = 0u64;
    for kind in [SINGLE, DOUBLE, TRIPLE, ARO] {
        if n.bond >> kind & 1 == 1 {
            for e in 0..18u8 {
                if elems >> e & 1 == 1 {
                    out |= child_feature(kind, e);
                }
            }
        }
    }
    out
}

#[inline]
fn node_holds(n: &Node, v: &View, atom: usize) -> bool {
    n.terms[..n.nterms as usize]
        .iter()
        .any(|t| t.holds(v, atom))
}

struct Parser<'a> {
    s: &'a [u8],
    i: usize,
    nodes: Vec<Node>,
}

const DEFAULT_BOND: u8 = 1 << SINGLE | 1 << ARO;

impl Parser<'_> {
    fn err(&self, what: &str) -> String {
        format!(
            "{what} at character {} of pattern \"{}\"",
            self.i + 1,
            String::from_utf8_lossy(self.s)
        )
    }

    fn peek(&self) -> Option<u8> {
        self.s.get(self.i).copied()
    }

    /// A chain: atom (bond? (branch | atom))* ; attaches to `parent`.
    fn chain(&mut self, parent: Option<(u8, u8)>) -> Result<(), String> {
        let mut prev = self.atom(parent)?;
        loop {
            match self.peek() {
                Some(b'(') => {
                    self.i += 1;
                    let bond = self.bond();
                    self.chain(Some((prev, bond)))?;
                    if self.peek() != Some(b')') {
                        return Err(self.err("missing ')'"));
                    }
                    self.i += 1;
                }
                Some(b')') | None => return Ok(()),
                _ => {
                    let bond = self.bond();
                    prev = self.atom(Some((prev, bond)))?;
                }
            }
        }
    }

    fn bond(&mut self) -> u8 {
        let b = match self.peek() {
            Some(b'-') => 1 << SINGLE,
            Some(b'=') => 1 << DOUBLE,
            Some(b'#') => 1 << TRIPLE,
            Some(b':') => 1 << ARO,
            Some(b'~') => 1 << SINGLE | 1 << DOUBLE | 1 << TRIPLE | 1 << ARO,
            _ => return DEFAULT_BOND,
        };
        self.i += 1;
        b
    }

    fn atom(&mut self, parent: Option<(u8, u8)>) -> Result<u8, String> {
        if self.nodes.len() == MAX_PATTERN_ATOMS {
            return Err(self.err(&format!("more than {MAX_PATTERN_ATOMS} atoms")));
        }
        let (terms, nterms) = match self.peek() {
            Some(b'[') => {
                self.i += 1;
                let r = self.bracket()?;
                if self.peek() != Some(b']') {
                    return Err(self.err("missing ']'"));
                }
                self.i += 1;
                r
            }
            Some(_) => {
                let t = self.bare()?;
                ([t, Term::ANY, Term::ANY, Term::ANY], 1)
            }
            None => return Err(self.err("an atom is missing")),
        };
        let (parent, bond) = parent.unwrap_or((0, DEFAULT_BOND));
        self.nodes.push(Node {
            terms,
            nterms,
            bond,
            parent,
        });
        Ok((self.nodes.len() - 1) as u8)
    }

    /// An element symbol or a, A, *; returns the element mask.
    fn symbol(&mut self) -> Option<u32> {
        let rest = &self.s[self.i..];
        let two = |a: &[u8]| rest.starts_with(a);
        let (mask, len) = if two(b"Cl") {
            (elem_mask(Element::Cl, false), 2)
        } else if two(b"Br") {
            (elem_mask(Element::Br, false), 2)
        } else {
            let m = match rest.first()? {
                b'C' => elem_mask(Element::C, false),
                b'N' => elem_mask(Element::N, false),
                b'O' => elem_mask(Element::O, false),
                b'S' => elem_mask(Element::S, false),
                b'P' => elem_mask(Element::P, false),
                b'F' => elem_mask(Element::F, false),
                b'I' => elem_mask(Element::I, false),
                b'c' => elem_mask(Element::C, true),
                b'n' => elem_mask(Element::N, true),
                b'o' => elem_mask(Element::O, true),
                b's' => elem_mask(Element::S, true),
                b'p' => elem_mask(Element::P, true),
                b'a' => ALL_ELEM & 0xAAAAAAAA,
                b'A' => ALL_ELEM & 0x55555555,
                b'*' => ALL_ELEM,
                _ => return None,
            };
            (m, 1)
        };
        self.i += len;
        Some(mask)
    }

    fn bare(&mut self) -> Result<Term, String> {
        match self.symbol() {
            Some(elem) => Ok(Term { elem, ..Term::ANY }),
            None => Err(self.err("expected an atom")),
        }
    }

    fn bracket(&mut self) -> Result<([Term; 4], u8), String> {
        let mut out = [Term::ANY; 4];
        let mut n = 0;
        loop {
            if n == 4 {
                return Err(self.err("more than 4 alternatives"));
            }
            out[n] = self.conjunction()?;
            n += 1;
            if self.peek() == Some(b',') {
                self.i += 1;
                continue;
            }
            return Ok((out, n as u8));
        }
    }

    fn conjunction(&mut self) -> Result<Term, String> {
        let mut t = Term::ANY;
        let mut any = false;
        loop {
            match self.peek() {
                Some(b']') | Some(b',') | None => {
                    if !any {
                        return Err(self.err("empty atom primitive"));
                    }
                    return Ok(t);
                }
                Some(b';') => {
                    self.i += 1;
                    continue;
                }
                _ => {}
            }
            let neg = if self.peek() == Some(b'!') {
                self.i += 1;
                true
            } else {
                false
            };
            self.primitive(&mut t, neg)?;
            any = true;
        }
    }

    fn number(&mut self) -> Option<u32> {
        let start = self.i;
        while self.peek().is_some_and(|c| c.is_ascii_digit()) {
            self.i += 1;
        }
        std::str::from_utf8(&self.s[start..self.i])
            .ok()?
            .parse()
            .ok()
    }

    fn primitive(&mut self, t: &mut Term, neg: bool) -> Result<(), String> {
        fn apply8(field: &mut u8, bits: u8, neg: bool) {
            *field &= if neg { !bits } else { bits };
        }
        match self.peek() {
            Some(b'H') => {
                self.i += 1;
                let n = self.number().unwrap_or(1).min(7);
                apply8(&mut t.h, 1 << n, neg);
            }
            Some(b'D') => {
                self.i += 1;
                let n = self.number().ok_or_else(|| self.err("D needs a number"))?;
                apply8(&mut t.deg, 1 << n.min(7), neg);
            }
            Some(b'^') => {
                self.i += 1;
                let n = self.number().ok_or_else(|| self.err("^ needs 1, 2 or 3"))?;
                if !(1..=3).contains(&n) {
                    return Err(self.err("^ needs 1, 2 or 3"));
                }
                apply8(&mut t.hyb, 1 << n, neg);
            }
            Some(b'R') => {
                self.i += 1;
                apply8(&mut t.ring, 0b10, neg);
            }
            Some(b'#') => {
                self.i += 1;
                let z = self
                    .number()
                    .ok_or_else(|| self.err("# needs an atomic number"))?;
                let e = match z {
                    6 => Element::C,
                    7 => Element::N,
                    8 => Element::O,
                    9 => Element::F,
                    15 => Element::P,
                    16 => Element::S,
                    17 => Element::Cl,
                    35 => Element::Br,
                    53 => Element::I,
                    _ => return Err(self.err("unknown atomic number")),
                };
                let m = elem_mask(e, false) | elem_mask(e, true);
                t.elem &= if neg { !m } else { m };
            }
            _ => {
                let m = self
                    .symbol()
                    .ok_or_else(|| self.err("unknown atom primitive"))?;
                t.elem &= if neg { !m } else { m };
            }
        }
        Ok(())
    }
}

fn elem_mask(e: Element, aromatic: bool) -> u32 {
    let i = e.heavy_index().expect("heavy element");
    1 << (2 * i + aromatic as usize)
}

/// Feature bit of an atom for the element mask (used by [`View`]).
pub fn elem_bit(e: Element, aromatic: bool) -> u8 {
    (2 * e.heavy_index().unwrap_or(0) + aromatic as usize) as u8
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::Molecule;

    fn ethyl_acetate() -> Molecule {
        // CH3-C(=O)-O-CH2-CH3, atoms 0..5, carbonyl O is atom 2.
        let mut m = Molecule::new();
        let c0 = m.add_atom(Element::C, 3);
        let c1 = m.add_atom(Element::C, 0);
        let o2 = m.add_atom(Element::O, 0);
        let o3 = m.add_atom(Element::O, 0);
        let c4 = m.add_atom(Element::C, 2);
        let c5 = m.add_atom(Element::C, 3);
        m.add_bond(c0, c1, 1);
        m.add_bond(c1, o2, 2);
        m.add_bond(c1, o3, 1);
        m.add_bond(o3, c4, 1);
        m.add_bond(c4, c5, 1);
        m
    }

    #[test]
    fn rooted_matching_excludes_the_parent() {
        let m = ethyl_acetate();
        let v = View::new(&m).unwrap();
        let acyloxy = Pattern::parse("OC=O").unwrap();
        let ester_c = Pattern::parse("C(=O)O").unwrap();
        // Seen from the CH2 (atom 4), O3 is an acyloxy substituent.
        assert!(acyloxy.matches(&v, 3, Some(4)));
        // Seen from the carbonyl C, O3 leads back only to CH2: not acyloxy.
        assert!(!acyloxy.matches(&v, 3, Some(1)));
        // Seen from CH3 (atom 0), C1 is an alkoxycarbonyl group.
        assert!(ester_c.matches(&v, 1, Some(0)));
        assert!(!ester_c.matches(&v, 1, Some(3)));
        let ch2 = Pattern::parse("[CH2;^3][CH3]").unwrap();
        assert!(ch2.matches(&v, 4, Some(3)));
        assert!(!Pattern::parse("[CH3,Cl]").unwrap().matches(&v, 4, None));
        assert!(Pattern::parse("[!O;#6]").unwrap().matches(&v, 4, None));
    }

    #[test]
    fn errors_name_the_position() {
        let e = Pattern::parse("C(=O").unwrap_err();
        assert!(e.contains("missing ')'"), "{e}");
        let e = Pattern::parse("C[Xx]").unwrap_err();
        assert!(e.contains("character 3"), "{e}");
    }
}
