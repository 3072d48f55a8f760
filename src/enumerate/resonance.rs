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
use crate::chem::rings::{ring_info, RingInfo};
use crate::chem::{aromaticity, kekule, Molecule};

/// Cheap exact test: another Kekulé structure with the same atoms' bond-order
/// sums exists only along a cycle whose bonds alternate double and single
/// (swapping them along the cycle gives the other structure). Depth-first
/// search for such a cycle through each double bond.
fn may_have_alternatives(node: &Node) -> bool {
    for a in 0..node.n {
        for b in bits(node.nb[a]) {
            if b > a && node.order(a, b) == 2 && alternating_path(node, a, b, 1u64 << a | 1u64 << b)
            {
                return true;
            }
        }
    }
    false
}

/// From `v`, reached by a double bond, is there a single bond then a double
/// bond, and so on, back to `target` ending with a single bond into it?
fn alternating_path(node: &Node, target: usize, v: usize, seen: u64) -> bool {
    for u in bits(node.nb[v]) {
        if node.order(v, u) != 1 {
            continue;
        }
        if u == target {
            if seen.count_ones() >= 4 {
                return true;
            }
            continue;
        }
        if seen >> u & 1 == 1 {
            continue;
        }
        for w in bits(node.nb[u]) {
            if w != v
                && seen >> w & 1 == 0
                && node.order(u, w) == 2
                && alternating_path(node, target, w, seen | 1u64 << u | 1u64 << w)
            {
                return true;
            }
        }
    }
    false
}

/// Work space for [`is_representative`]: the canonical labelling, and the ring
/// perception of the last skeleton seen. All bond-order assignments of one
/// skeleton come out of the generator one after another and share their
/// rings, and ring perception is the costly step, so it runs once per
/// skeleton. (`Isomer::molecule` numbers the bonds of one skeleton the same
/// way every time, so the cached edge indices stay valid.)
#[derive(Default)]
pub struct Workspace {
    pub canon: Canonizer,
    skeleton: Vec<u64>,
    rings: Option<RingInfo>,
}

/// Whether `node` (a complete isomer, as molecule `mol` when built) is the
/// representative Kekulé structure of its compound.
pub fn is_representative(
    node: &Node,
    molecule: impl FnOnce() -> Molecule,
    ws: &mut Workspace,
) -> bool {
    if !may_have_alternatives(node) {
        return true;
    }
    let mol = molecule();
    if ws.rings.is_none() || ws.skeleton.as_slice() != &node.nb[..node.n] {
        ws.skeleton.clear();
        ws.skeleton.extend_from_slice(&node.nb[..node.n]);
        ws.rings = Some(ring_info(&mol));
    }
    let rings = ws.rings.as_mut().expect("rings computed above");
    let arom = aromaticity::perceive_with_rings(&mol, rings);
    let canon = &mut ws.canon;
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
