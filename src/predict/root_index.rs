//! Which library patterns can match at an atom: the index that lets the
//! predictor run the backtracking matcher only for patterns with a chance.
//!
//! The key of a root atom is what the predictor reads off the view in one
//! pass over the root's neighbours:
//!
//! - the root's own features: element (with the aromatic flag),
//!   hybridisation, implicit H count and heavy degree;
//! - the neighbours a pattern may use (all but the parent for a substituent
//!   class; all for an H environment): how many, and the set of bond kinds
//!   (single, double, triple, aromatic) that lead to them.
//!
//! Each key holds, in priority order, the patterns whose root term admits
//! the root's features ([`Pattern::root_degrees`]) and whose root children
//! can find neighbours with allowed bonds ([`Pattern::children_may_fit`]).
//! Both are necessary conditions for a match, so a key's list holds every
//! pattern that can match there, and the first match in it is the first
//! match of a scan over the whole library in priority order.
//!
//! The lists are built when the library loads (it loads on every command):
//! only atom keys that some pattern's root admits get a block, atom keys
//! with the same candidates share one, and each pattern's neighbour
//! condition is decided once per (count, kinds) pair, so building costs bit
//! tests, not pattern walks.

use super::pattern::{child_feature, Pattern};
use super::view::{View, MAX_DEGREE};

/// Element feature bits x hybridisation (0-3) x H count (0-7).
const ATOM_KEYS: usize = 18 * 4 * 8;
/// Usable neighbour count (0..=MAX_DEGREE) x bond-kind set (4 kinds).
const NEIGHBOUR_KEYS: usize = (MAX_DEGREE + 1) * 16;
const NO_BLOCK: u32 = u32::MAX;

fn atom_key(elem_bit: u8, hyb: u8, h: u8) -> usize {
    (elem_bit as usize * 4 + hyb as usize) * 8 + h.min(7) as usize
}

/// `kinds` holds bit `1 << kind` for kinds 1-4 (SINGLE..ARO).
fn neighbour_key(children: u8, kinds: u8) -> usize {
    children as usize * 16 + (kinds >> 1 & 0xf) as usize
}

/// Candidate patterns per root key, in priority order.
pub struct RootIndex {
    /// Per atom key: the first entry of its block in `spans`, or NO_BLOCK
    /// when no pattern's root admits such an atom.
    blocks: Vec<u32>,
    /// Per block, NEIGHBOUR_KEYS (start, end) ranges into `ids`.
    spans: Vec<(u32, u32)>,
    ids: Vec<u8>,
    /// 1 when the parent is excluded (substituent classes): the root's
    /// degree is then one more than its usable neighbours.
    parent_degree: u8,
}

impl RootIndex {
    /// Index `patterns` (in priority order; at most 256). `with_parent`:
    /// lookups name a parent atom that the pattern may not use.
    pub fn build(patterns: &[&Pattern], with_parent: bool) -> RootIndex {
        assert!(patterns.len() <= 256, "pattern ids are u8");
        let parent_degree = with_parent as u8;
        // Per pattern, the neighbour keys its root children may fit.
        let fits: Vec<u128> = patterns
            .iter()
            .map(|p| {
                let mut m = 0u128;
                for children in 0..=MAX_DEGREE as u8 {
                    for kinds in (0u8..16).map(|k| k << 1) {
                        if p.children_may_fit(children, kinds) {
                            m |= 1 << neighbour_key(children, kinds);
                        }
                    }
                }
                m
            })
            .collect();
        // Neighbour keys a lookup can produce: every present kind leads to at
        // least one neighbour, and the root's degree stays within the view's.
        let reachable: Vec<usize> = (0..NEIGHBOUR_KEYS)
            .filter(|&nk| {
                let (children, kinds) = ((nk / 16) as u32, (nk % 16) as u32);
                kinds.count_ones() <= children
                    && (kinds == 0) == (children == 0)
                    && children + parent_degree as u32 <= MAX_DEGREE as u32
            })
            .collect();
        let mut blocks = vec![NO_BLOCK; ATOM_KEYS];
        let mut spans = Vec::new();
        let mut ids = Vec::new();
        let mut base: Vec<(u8, u8)> = Vec::new();
        let mut built: Vec<(Vec<(u8, u8)>, u32)> = Vec::new();
        for elem_bit in 0..18u8 {
            // Patterns whose root admits the element at all.
            let with_elem: Vec<usize> = (0..patterns.len())
                .filter(|&i| patterns[i].root_elements() >> elem_bit & 1 == 1)
                .collect();
            if with_elem.is_empty() {
                continue;
            }
            for hyb in 0..4u8 {
                for h in 0..8u8 {
                    base.clear();
                    base.extend(with_elem.iter().filter_map(|&i| {
                        let d = patterns[i].root_degrees(elem_bit, hyb, h);
                        (d != 0).then_some((i as u8, d))
                    }));
                    if base.is_empty() {
                        continue;
                    }
                    // Atom keys with the same candidates and degrees share a block.
                    if let Some((_, b)) = built.iter().find(|(l, _)| *l == base) {
                        blocks[atom_key(elem_bit, hyb, h)] = *b;
                        continue;
                    }
                    let block = spans.len();
                    blocks[atom_key(elem_bit, hyb, h)] = block as u32;
                    built.push((base.clone(), block as u32));
                    spans.resize(block + NEIGHBOUR_KEYS, (0, 0));
                    for &nk in &reachable {
                        let children = (nk / 16) as u8;
                        let deg = children + parent_degree;
                        let start = ids.len() as u32;
                        for &(i, degrees) in &base {
                            if degrees >> deg & 1 == 1 && fits[i as usize] >> nk & 1 == 1 {
                                ids.push(i);
                            }
                        }
                        spans[block + nk] = (start, ids.len() as u32);
                    }
                }
            }
        }
        RootIndex {
            blocks,
            spans,
            ids,
            parent_degree,
        }
    }

    /// The first pattern, in priority order, that matches with its root on
    /// `root` (not using `parent`); `pattern(i)` is pattern `i` as indexed.
    #[inline]
    pub fn first_match<'p>(
        &self,
        v: &View,
        root: usize,
        parent: Option<usize>,
        pattern: impl Fn(usize) -> &'p Pattern,
    ) -> Option<usize> {
        debug_assert_eq!(parent.is_some(), self.parent_degree == 1);
        let block = self.blocks[atom_key(v.elem_bit[root], v.hyb[root], v.h[root])];
        if block == NO_BLOCK {
            return None;
        }
        let skip = parent.unwrap_or(usize::MAX);
        let (mut children, mut kinds, mut features) = (0u8, 0u8, 0u64);
        for k in 0..v.deg[root] as usize {
            let nb = v.nbr[root][k] as usize;
            if nb == skip {
                continue;
            }
            let kind = v.bond[root][k];
            children += 1;
            kinds |= 1 << kind;
            features |= child_feature(kind, v.elem_bit[nb]);
        }
        let (start, end) = self.spans[block as usize + neighbour_key(children, kinds)];
        self.ids[start as usize..end as usize]
            .iter()
            .map(|&i| i as usize)
            .find(|&i| {
                let p = pattern(i);
                p.children_may_match(features) && p.matches_indexed(v, root, parent)
            })
    }
}
