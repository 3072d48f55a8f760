//! Fragments a structure must or must not contain (`--require SMILES`,
//! `--forbid SMILES`), and the substructure test behind them.
//!
//! The substructure sense (the one RDKit uses when a molecule read from
//! SMILES is the query of `HasSubstructMatch`; tests/reference/
//! check_constraints.py matches so):
//!
//! * Every fragment atom maps to a different atom of the structure with the
//!   same element; other atoms of the structure may be bonded anywhere.
//! * Every fragment bond maps to a bond between the images of its atoms,
//!   of the same kind: single, double, triple or aromatic, with aromaticity
//!   perceived on both sides by the same model (Hückel 4n+2 over rings and
//!   fused ring systems, RDKit's default). So `c1ccccc1` matches a benzene
//!   ring in any Kekulé form, and `C=C` never matches a bond of an aromatic
//!   ring. Extra bonds of the structure between mapped atoms are allowed.
//! * H on fragment atoms (implicit or written in brackets) are not
//!   compared. Each is an upper bound that every match satisfies anyway: the
//!   image atom has the fragment atom's bonds, so no more room for H.
//!   To ask for an exact H count, use `--attached-h`.

use crate::chem::aromaticity;
use crate::chem::smiles::parse_smiles;
use crate::chem::{Element, Formula};
use crate::error::{Error, Result};

/// Bond kinds as the matcher compares them.
pub const AROMATIC: u8 = 4;

/// A parsed fragment, ready for matching.
#[derive(Clone, Debug)]
pub struct Fragment {
    /// As the user wrote it.
    pub text: String,
    pub elements: Vec<Element>,
    /// (a, b, kind): kind 1-3 a bond order, [`AROMATIC`] an aromatic bond.
    pub bonds: Vec<(usize, usize, u8)>,
    /// Per atom, the extra bond order (beyond single bonds) its image must
    /// carry: the sum of (order - 1) over its non-aromatic bonds, and at
    /// least 1 for an aromatic carbon (an aromatic carbon of a neutral
    /// structure always has a double bond, in its ring or exocyclic).
    pub need: Vec<u8>,
    /// Atoms in the order the matcher places them (each after a neighbour).
    order: Vec<usize>,
    /// Per position of `order` after the first: the earlier atom it hangs
    /// on and the bond kind, then the other bonds back to earlier atoms.
    links: Vec<Vec<(usize, u8)>>,
}

impl Fragment {
    pub fn parse(text: &str, flag: &str) -> Result<Fragment> {
        let mol =
            parse_smiles(text).map_err(|e| Error::input(format!("{flag} \"{text}\": {e}")))?;
        let arom = aromaticity::perceive(&mol);
        let n = mol.atom_count();
        // An atom written aromatic (lower case) must be perceived aromatic:
        // otherwise the fragment would silently mean its Kekulé form (`cn`
        // read as C=N), where RDKit refuses it.
        let written = written_aromatic(text);
        let lost = if written.len() == n {
            written
                .iter()
                .zip(&arom.atom)
                .filter(|(w, a)| **w && !**a)
                .count()
        } else {
            written
                .iter()
                .filter(|&&w| w)
                .count()
                .saturating_sub(arom.atom.iter().filter(|&&a| a).count())
        };
        if lost > 0 {
            return Err(Error::input(format!(
                "{flag} \"{text}\": {lost} atoms written aromatic (lower case) lie on no aromatic ring; write aromatic atoms only in aromatic rings, e.g. c1ccccc1"
            )));
        }
        let elements: Vec<Element> = (0..n).map(|i| mol.atom(i).element).collect();
        let mut bonds = Vec::new();
        for e in mol.graph.edge_indices() {
            let (a, b) = mol.graph.edge_endpoints(e).expect("edge");
            let order = mol.graph[e].order;
            let kind = if arom.bond[e.index()] {
                AROMATIC
            } else {
                order
            };
            bonds.push((a.index(), b.index(), kind));
        }
        let mut need = vec![0u8; n];
        let mut aromatic = vec![false; n];
        for &(a, b, k) in &bonds {
            if k == AROMATIC {
                aromatic[a] = true;
                aromatic[b] = true;
            } else {
                need[a] += k - 1;
                need[b] += k - 1;
            }
        }
        for i in 0..n {
            if aromatic[i] && elements[i] == Element::C {
                need[i] = need[i].max(1);
            }
        }
        // Breadth-first order from atom 0 (a SMILES is one connected part).
        let mut order = vec![0usize];
        let mut placed = vec![false; n];
        placed[0] = true;
        let mut at = 0;
        while at < order.len() {
            let v = order[at];
            at += 1;
            for &(a, b, _) in &bonds {
                for (x, y) in [(a, b), (b, a)] {
                    if x == v && !placed[y] {
                        placed[y] = true;
                        order.push(y);
                    }
                }
            }
        }
        let pos: Vec<usize> = {
            let mut p = vec![0; n];
            for (i, &v) in order.iter().enumerate() {
                p[v] = i;
            }
            p
        };
        let mut links = vec![Vec::new(); n];
        for &(a, b, k) in &bonds {
            let (early, late) = if pos[a] < pos[b] { (a, b) } else { (b, a) };
            links[pos[late]].push((pos[early], k));
        }
        // The first link is the one to the earliest placed atom: the parent
        // in breadth-first order.
        for l in &mut links {
            l.sort_unstable();
        }
        Ok(Fragment {
            text: text.trim().to_string(),
            elements,
            bonds,
            need,
            order,
            links,
        })
    }

    pub fn atoms(&self) -> usize {
        self.elements.len()
    }

    /// Check, before any search, that a structure of `formula` could
    /// contain this fragment: enough atoms of each element, and enough
    /// unsaturation. The fragment's rings (bonds - atoms + 1) and pi bonds
    /// (one per non-aromatic extra order, and one per two aromatic carbons
    /// not already served by one) all appear in any structure containing
    /// it, so their sum may not pass the formula's DBE.
    pub fn fits(&self, formula: &Formula, dbe: i64) -> Result<()> {
        let heavy = formula.heavy_atoms() as usize;
        if self.atoms() > heavy {
            return Err(Error::input(format!(
                "--require {}: the fragment has {} heavy atoms, the formula {formula} only {heavy}",
                self.text,
                self.atoms()
            )));
        }
        for &e in Element::HEAVY.iter() {
            let want = self.elements.iter().filter(|&&x| x == e).count() as u32;
            if want > formula.count(e) {
                return Err(Error::input(format!(
                    "--require {}: the fragment has {want} {} atoms, the formula {formula} has {}",
                    self.text,
                    e.symbol(),
                    formula.count(e)
                )));
            }
        }
        let least = self.bonds.len() as i64 - self.atoms() as i64 + 1 + self.least_pi();
        if least > dbe {
            return Err(Error::input(format!(
                "--require {}: the fragment needs at least {least} rings and double bonds, the formula {formula} allows DBE = {dbe}",
                self.text
            )));
        }
        Ok(())
    }

    /// The fewest pi bonds a structure containing the fragment has: one per
    /// extra order of a non-aromatic bond, and one per two aromatic carbons
    /// that no such bond serves (each has a double bond of its own, which
    /// can serve at most two of them).
    pub fn least_pi(&self) -> i64 {
        let mut pi = 0i64;
        let mut has_aromatic = vec![false; self.atoms()];
        let mut nonarom_extra = vec![0u8; self.atoms()];
        for &(a, b, k) in &self.bonds {
            if k == AROMATIC {
                has_aromatic[a] = true;
                has_aromatic[b] = true;
            } else {
                pi += (k - 1) as i64;
                nonarom_extra[a] += k - 1;
                nonarom_extra[b] += k - 1;
            }
        }
        let lone = (0..self.atoms())
            .filter(|&i| has_aromatic[i] && self.elements[i] == Element::C && nonarom_extra[i] == 0)
            .count() as i64;
        pi + (lone + 1) / 2
    }

    /// Per element slot present in the fragment, the extra order each of
    /// its atoms of that element needs.
    pub fn needs(&self) -> Vec<(usize, Vec<u8>)> {
        let mut out: Vec<(usize, Vec<u8>)> = Vec::new();
        for (i, e) in self.elements.iter().enumerate() {
            let slot = e.heavy_index().expect("heavy atom");
            match out.iter_mut().find(|(s, _)| *s == slot) {
                Some((_, v)) => v.push(self.need[i]),
                None => out.push((slot, vec![self.need[i]])),
            }
        }
        out
    }

    /// Whether the fragment embeds: `allowed[i]` is the set of structure
    /// atoms fragment atom i may map to, `adj(kind, t)` the neighbours of
    /// structure atom t by a bond of that kind (kind 0: any bond).
    /// `any_kind` makes every bond kind 0 (the skeleton test).
    pub fn embeds(&self, allowed: &[u64], any_kind: bool, adj: &dyn Fn(u8, usize) -> u64) -> bool {
        let mut image = vec![0usize; self.atoms()];
        self.extend(0, 0, allowed, any_kind, adj, &mut image)
    }

    fn extend(
        &self,
        p: usize,
        used: u64,
        allowed: &[u64],
        any_kind: bool,
        adj: &dyn Fn(u8, usize) -> u64,
        image: &mut [usize],
    ) -> bool {
        if p == self.order.len() {
            return true;
        }
        let q = self.order[p];
        let mut cand = allowed[q] & !used;
        for &(e, k) in &self.links[p] {
            cand &= adj(if any_kind { 0 } else { k }, image[e]);
            if cand == 0 {
                return false;
            }
        }
        while cand != 0 {
            let t = cand.trailing_zeros() as usize;
            cand &= cand - 1;
            image[p] = t;
            if self.extend(p + 1, used | 1u64 << t, allowed, any_kind, adj, image) {
                return true;
            }
        }
        false
    }

    /// The fragment atom placed at matcher position `p` (for building the
    /// `allowed` masks by position).
    pub fn atom_at(&self, p: usize) -> usize {
        self.order[p]
    }
}

/// Per atom of a SMILES in the order written, whether it is written
/// aromatic (lower case, in brackets or not). Atoms are the bracket atoms
/// and the organic-subset symbols; everything else is skipped.
fn written_aromatic(text: &str) -> Vec<bool> {
    let b = text.trim().as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        match b[i] {
            b'[' => {
                let inner = b[i + 1..]
                    .iter()
                    .position(|&c| c == b']')
                    .map_or(b.len(), |p| i + 1 + p);
                let sym = b[i + 1..inner].iter().find(|c| c.is_ascii_alphabetic());
                out.push(sym.is_some_and(|c| c.is_ascii_lowercase()));
                i = inner + 1;
            }
            b'C' | b'B' if b.get(i + 1).is_some_and(|&c| c == b'l' || c == b'r') => {
                out.push(false);
                i += 2;
            }
            b'%' => i += 3,
            c if c.is_ascii_uppercase() => {
                out.push(false);
                i += 1;
            }
            b'c' | b'n' | b'o' | b's' | b'p' => {
                out.push(true);
                i += 1;
            }
            _ => i += 1,
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn kinds_and_needs_of_common_fragments() {
        let f = Fragment::parse("c1ccccc1", "--require").unwrap();
        assert_eq!(f.atoms(), 6);
        assert!(f.bonds.iter().all(|b| b.2 == AROMATIC));
        assert_eq!(f.need, vec![1; 6]);
        // Kekulé input is perceived aromatic too.
        let k = Fragment::parse("C1=CC=CC=C1", "--require").unwrap();
        assert!(k.bonds.iter().all(|b| b.2 == AROMATIC));
        let acid = Fragment::parse("C(=O)O", "--require").unwrap();
        assert_eq!(acid.need, vec![1, 1, 0]);
        assert!(Fragment::parse("cn", "--require").is_err());
        assert!(Fragment::parse("C1=CC=CC=C1cn", "--require").is_err());
        assert_eq!(
            written_aromatic("Clc1cc[nH]c1Br"),
            [false, true, true, true, true, true, false]
        );
        let pyrrole = Fragment::parse("c1cc[nH]c1", "--require").unwrap();
        let n = pyrrole
            .elements
            .iter()
            .position(|&e| e == Element::N)
            .unwrap();
        assert_eq!(pyrrole.need[n], 0);
    }

    #[test]
    fn fragments_too_large_for_the_formula_are_refused_with_numbers() {
        let benzene = Fragment::parse("c1ccccc1", "--require").unwrap();
        let f = Formula::parse("C5H10").unwrap();
        let e = benzene.fits(&f, 1).unwrap_err().to_string();
        assert!(e.contains("6 heavy atoms") && e.contains("only 5"), "{e}");
        // C6H12 has 6 carbons but DBE 1; a benzene ring needs 1 ring + 3 pi.
        let f = Formula::parse("C6H12").unwrap();
        let e = benzene.fits(&f, 1).unwrap_err().to_string();
        assert!(e.contains("at least 4") && e.contains("DBE = 1"), "{e}");
        let f = Formula::parse("C6H6").unwrap();
        assert!(benzene.fits(&f, 4).is_ok());
        let nitrile = Fragment::parse("C#N", "--require").unwrap();
        let e = nitrile
            .fits(&Formula::parse("C4H10O").unwrap(), 0)
            .unwrap_err()
            .to_string();
        assert!(e.contains("1 N atoms") && e.contains("has 0"), "{e}");
    }
}
