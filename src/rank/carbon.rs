//! Expected number of 13C signals: the number of symmetry classes of carbon
//! atoms, i.e. the automorphism orbits of the molecular graph (topological
//! equivalence, as for equivalent H) restricted to carbon. Aromatic bonds are
//! one edge colour so that the Kekulé form does not break the symmetry of a
//! benzene ring.

use crate::chem::aromaticity::perceive;
use crate::chem::canon::{Canonizer, MAX_ATOMS};
use crate::chem::smiles::canon_graph;
use crate::chem::{Element, Molecule};

/// Number of carbon symmetry classes (13C signals expected with broadband
/// decoupling, ignoring accidental overlap). Above the canonical labeller's
/// atom limit every carbon counts as its own class.
pub fn carbon_signals(mol: &Molecule) -> usize {
    carbon_classes(mol).len()
}

/// One carbon atom of each carbon symmetry class (the lowest numbered), in
/// atom order; the classes of [`carbon_signals`].
pub fn carbon_classes(mol: &Molecule) -> Vec<usize> {
    let n = mol.atom_count();
    let carbons = (0..n).filter(|&i| mol.atom(i).element == Element::C);
    if n > MAX_ATOMS {
        return carbons.collect();
    }
    let arom = perceive(mol);
    let mut c = Canonizer::new();
    c.run(&canon_graph(mol, Some(&arom)));
    let orbits = c.orbits();
    let mut seen = Vec::new();
    carbons
        .filter(|&i| {
            let new = !seen.contains(&orbits[i]);
            seen.push(orbits[i]);
            new
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::smiles::parse_smiles;

    #[test]
    fn carbon_classes_of_simple_compounds() {
        // 13C signal counts (common practice): toluene 5, p-xylene 3,
        // o-xylene 4, ethyl acetate 4, tert-butanol 2, benzene 1.
        for (smiles, n) in [
            ("Cc1ccccc1", 5),
            ("Cc1ccc(C)cc1", 3),
            ("Cc1ccccc1C", 4),
            ("CCOC(C)=O", 4),
            ("CC(C)(C)O", 2),
            ("c1ccccc1", 1),
        ] {
            let m = parse_smiles(smiles).unwrap();
            assert_eq!(carbon_signals(&m), n, "{smiles}");
        }
    }
}
