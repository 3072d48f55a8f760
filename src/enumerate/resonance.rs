//! One Kekulé structure per aromatic compound.
//!
//! The generator produces bond-order multigraphs, and the Kekulé structures of
//! one aromatic system are different multigraphs (the two of o-xylene are not
//! isomorphic), but they are one compound. For each complete isomer whose
//! aromatic system (as `chem::aromaticity` perceives it) admits other Kekulé
//! structures, all of them are listed (`chem::kekule`), each is given its
//! canonical certificate, and the isomer is kept only when its own certificate
//! is the smallest. Every Kekulé form of the compound is generated, so exactly
//! one survives, and no table of seen structures is needed.

use super::generator::{bits, Node};
use crate::chem::canon::Canonizer;
use crate::chem::{aromaticity, kekule, Molecule};

/// Cheap test: an alternative Kekulé structure needs a cycle of alternating
/// single and double bonds, so at least two double bonds between atoms that
/// both have two or more neighbours.
fn may_have_alternatives(node: &Node) -> bool {
    let mut doubles = 0;
    for a in 0..node.n {
        if node.deg[a] < 2 {
            continue;
        }
        for b in bits(node.nb[a]) {
            if b > a && node.deg[b] >= 2 && node.order(a, b) == 2 {
                doubles += 1;
                if doubles >= 2 {
                    return true;
                }
            }
        }
    }
    false
}

/// Whether `node` (a complete isomer, as molecule `mol` when built) is the
/// representative Kekulé structure of its compound.
pub fn is_representative(
    node: &Node,
    molecule: impl FnOnce() -> Molecule,
    canon: &mut Canonizer,
) -> bool {
    if !may_have_alternatives(node) {
        return true;
    }
    let mol = molecule();
    let arom = aromaticity::perceive(&mol);
    if !arom.any() {
        return true;
    }
    let forms = kekule::kekule_structures(&mol, &arom);
    if forms.len() <= 1 {
        return true;
    }
    canon.run(&node.g);
    let own = canon.certificate().to_vec();
    let mut g = node.g.clone();
    for orders in &forms {
        for e in mol.graph.edge_indices() {
            let (a, b) = mol.graph.edge_endpoints(e).expect("edge exists");
            g.set_edge(a.index(), b.index(), orders[e.index()]);
        }
        canon.run(&g);
        if canon.certificate() < own.as_slice() {
            return false;
        }
    }
    true
}
