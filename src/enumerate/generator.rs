//! The isomer generator: canonical augmentation by vertex addition.
//!
//! Method: B. D. McKay, "Isomorph-free exhaustive generation", J. Algorithms 26
//! (1998) 306-324. Every molecule graph G of n heavy atoms has one *canonical
//! deletion*: a vertex chosen by a rule that depends only on G up to
//! isomorphism, whose removal leaves a connected graph (the parent). A search
//! tree that adds one atom at a time keeps a child only when the atom just added
//! is (up to an automorphism) the child's canonical deletion, and tries the
//! attachments of the new atom only up to the automorphisms of the parent. By
//! induction each isomorphism class appears exactly once, with no global table
//! of what has been seen: memory is flat in the number of isomers.
//!
//! The canonical deletion rule. Among the non-cut vertices, prefer (1) the
//! element of highest deletion priority (halogens, then O, S, N, P, C), then
//! (2) the lowest degree, then (3) the lowest bond-order sum; among the
//! vertices still tied, the one at the highest position of the canonical
//! labelling (see `chem::canon`). The cheap parts (1)-(3) decide most children
//! without a canonical labelling and also prune the attachments tried: a
//! non-cut atom of the parent that would beat the new atom must be among the
//! atoms the new one bonds to, otherwise the child can only be rejected.
//!
//! Pruning by unsaturation. With B the total bond order the formula fixes, a
//! partial graph of k atoms and bond sum b has "excess" b - (k - 1) (rings plus
//! pi bonds so far). Excess never decreases as atoms are added, and atom r can
//! raise it by at most valence(r) - 1, so a node survives only while
//! excess <= DBE <= excess + sum over the atoms still to add of (valence - 1).
//!
//! The hot path works on [`Node`], a compact bitset graph; the general
//! molecule type is built only for the isomers that come out.

use crate::chem::canon::{CanonGraph, Canonizer, MAX_ATOMS};
use crate::chem::Element;

/// Most distinct atom kinds (element with a valence) one formula can use.
pub const MAX_KINDS: usize = 16;

/// An element with one valence: the colour of a vertex in the generator.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Kind {
    pub element: Element,
    pub valence: u8,
    /// Smallest bond-order sum this valence allows (an expanded-valence S(IV)
    /// must use at least 3 of its 4 bonds, or it would be plain S(II)).
    pub min_bond_sum: u8,
    /// Deletion priority: higher is deleted first (so added last).
    pub priority: u8,
}

impl Kind {
    pub fn new(element: Element, valence: u8) -> Kind {
        let priority = match element {
            Element::F | Element::Cl | Element::Br | Element::I => 5,
            Element::O => 4,
            Element::S => 3,
            Element::N => 2,
            Element::P => 1,
            Element::C | Element::H => 0,
        };
        let lower = element
            .valences(true)
            .iter()
            .copied()
            .filter(|&v| v < valence)
            .max();
        Kind {
            element,
            valence,
            min_bond_sum: lower.map(|v| v + 1).unwrap_or(0),
            priority,
        }
    }
}

/// One generation task: how many atoms of each kind, and the target excess.
#[derive(Clone, Debug)]
pub struct Problem {
    pub kinds: Vec<Kind>,
    pub counts: Vec<u8>,
    /// Heavy atoms in all.
    pub atoms: usize,
    /// Rings plus pi bonds the complete molecule must have.
    pub dbe: i32,
}

/// A partial (or complete) molecule in the generator's compact form.
#[derive(Clone)]
pub struct Node {
    /// Vertex colour = kind index; edge colour = bond order.
    pub g: CanonGraph,
    pub n: usize,
    pub kind: [u8; MAX_ATOMS],
    /// Valence not yet used by bonds (the implicit H of a complete molecule).
    pub free: [u8; MAX_ATOMS],
    pub deg: [u8; MAX_ATOMS],
    /// Neighbours of each vertex, any bond order.
    pub nb: [u64; MAX_ATOMS],
    /// Bond-order sum minus (n - 1).
    pub excess: i32,
    pub remaining: [u8; MAX_KINDS],
    /// Sum over remaining atoms of (valence - 1): how much excess they can add.
    pub room: i32,
    /// Sum of `free` over the atoms present.
    pub free_total: i32,
}

impl Node {
    /// Bond order between two vertices (0 when not bonded).
    pub fn order(&self, a: usize, b: usize) -> u8 {
        self.g.label(a, b)
    }

    fn bond_sum(&self, p: &Problem, x: usize) -> u8 {
        p.kinds[self.kind[x] as usize].valence - self.free[x]
    }

    /// Deletion preference of vertex x: higher is deleted first.
    fn key(&self, p: &Problem, x: usize) -> u32 {
        let k = &p.kinds[self.kind[x] as usize];
        (k.priority as u32) << 16
            | (255 - self.deg[x] as u32) << 8
            | (255 - self.bond_sum(p, x) as u32)
    }

    pub fn add_vertex(&mut self, p: &Problem, k: usize, attach: &[(usize, u8)]) {
        let v = self.n;
        let val = p.kinds[k].valence;
        self.g.n = v + 1;
        self.g.colour[v] = k as u32;
        self.kind[v] = k as u8;
        self.nb[v] = 0;
        let mut sum = 0;
        for &(x, o) in attach {
            self.g.set_edge(v, x, o);
            self.nb[v] |= 1u64 << x;
            self.nb[x] |= 1u64 << v;
            self.free[x] -= o;
            self.deg[x] += 1;
            sum += o;
        }
        self.free[v] = val - sum;
        self.free_total += val as i32 - 2 * sum as i32;
        self.deg[v] = attach.len() as u8;
        self.excess += sum as i32 - 1;
        self.remaining[k] -= 1;
        self.room -= val as i32 - 1;
        self.n = v + 1;
    }

    fn remove_last(&mut self, p: &Problem, k: usize, attach: &[(usize, u8)]) {
        let v = self.n - 1;
        let val = p.kinds[k].valence;
        let mut sum = 0;
        for &(x, o) in attach {
            self.g.set_edge(v, x, 0);
            self.nb[x] &= !(1u64 << v);
            self.free[x] += o;
            self.deg[x] -= 1;
            sum += o;
        }
        self.nb[v] = 0;
        self.free_total -= val as i32 - 2 * sum as i32;
        self.excess -= sum as i32 - 1;
        self.remaining[k] += 1;
        self.room += val as i32 - 1;
        self.n = v;
        self.g.n = v;
        let _ = val;
    }

    /// Whether removing x leaves the graph connected.
    fn non_cut(&self, x: usize) -> bool {
        let n = self.n;
        if n <= 2 {
            return true;
        }
        let all = (if n == 64 { !0u64 } else { (1u64 << n) - 1 }) & !(1u64 << x);
        let start = all & all.wrapping_neg();
        let (mut seen, mut frontier) = (start, start);
        while frontier != 0 {
            let mut next = 0u64;
            let mut f = frontier;
            while f != 0 {
                let v = f.trailing_zeros() as usize;
                f &= f - 1;
                next |= self.nb[v];
            }
            next &= all & !seen;
            seen |= next;
            frontier = next;
        }
        seen == all
    }

    /// Whether the complete molecule uses every atom's valence within its bounds.
    fn valences_complete(&self, p: &Problem) -> bool {
        (0..self.n).all(|x| self.bond_sum(p, x) >= p.kinds[self.kind[x] as usize].min_bond_sum)
    }
}

/// The root nodes: one single-atom node per kind present (in kind order).
pub fn roots(p: &Problem) -> Vec<Node> {
    (0..p.kinds.len())
        .filter(|&k| p.counts[k] > 0)
        .map(|k| root(p, k))
        .collect()
}

/// The single-atom node of kind `k`.
pub fn root(p: &Problem, k: usize) -> Node {
    let room_all: i32 = p
        .kinds
        .iter()
        .zip(&p.counts)
        .map(|(k, &c)| (k.valence as i32 - 1) * c as i32)
        .sum();
    let kind = p.kinds[k];
    let mut node = Node {
        g: CanonGraph::new(1),
        n: 1,
        kind: [0; MAX_ATOMS],
        free: [0; MAX_ATOMS],
        deg: [0; MAX_ATOMS],
        nb: [0; MAX_ATOMS],
        excess: 0,
        remaining: [0; MAX_KINDS],
        room: room_all - (kind.valence as i32 - 1),
        free_total: kind.valence as i32,
    };
    node.g.colour[0] = k as u32;
    node.kind[0] = k as u8;
    node.free[0] = kind.valence;
    node.remaining[..p.counts.len()].copy_from_slice(&p.counts);
    node.remaining[k] -= 1;
    node
}

/// Depth-first generation below given nodes, with reusable work space.
pub struct Generator<'p> {
    p: &'p Problem,
    canon: Vec<Canonizer>,
    auts: Vec<Vec<[u8; MAX_ATOMS]>>,
}

/// What a search step hands to its sink: a node at the depth limit.
pub type Sink<'a> = dyn FnMut(&Node) + 'a;

impl<'p> Generator<'p> {
    pub fn new(p: &'p Problem) -> Generator<'p> {
        Generator {
            p,
            canon: (0..=p.atoms + 1).map(|_| Canonizer::new()).collect(),
            auts: vec![Vec::new(); p.atoms + 2],
        }
    }

    /// Visit every accepted descendant of `node` (itself included) that has
    /// `limit` atoms; complete molecules (limit = all atoms) are visited only
    /// when all valence bounds hold. `node` itself must already be accepted.
    pub fn search(&mut self, node: &mut Node, limit: usize, sink: &mut Sink<'_>) {
        self.dfs(node, limit, false, sink)
    }

    fn dfs(&mut self, node: &mut Node, limit: usize, canon_fresh: bool, sink: &mut Sink<'_>) {
        let p = self.p;
        if node.n == limit {
            if limit < p.atoms || node.valences_complete(p) {
                sink(node);
            }
            return;
        }
        let n = node.n;
        // The parent's automorphisms: attachments are tried only up to them.
        if !canon_fresh {
            self.canon[n].run(&node.g);
        }
        let mut auts = std::mem::take(&mut self.auts[n]);
        auts.clear();
        if self.canon[n].group_size() > 1 {
            auts.extend(self.canon[n].automorphisms().skip(1));
        }
        // Non-cut vertices of the parent and their deletion keys, best first.
        let mut keyed = [(0u32, 0u8); MAX_ATOMS];
        let mut nkeyed = 0;
        let mut noncut_mask = 0u64;
        for x in 0..n {
            if node.non_cut(x) {
                keyed[nkeyed] = (node.key(p, x), x as u8);
                nkeyed += 1;
                noncut_mask |= 1u64 << x;
            }
        }
        keyed[..nkeyed].sort_unstable_by(|a, b| b.cmp(a));
        let mut ctx = ChildCtx {
            keyed,
            nkeyed,
            noncut_mask,
            auts,
            attach: Vec::with_capacity(8),
            sum_min: 0,
            sum_max: 0,
        };
        for k in 0..p.kinds.len() {
            if node.remaining[k] == 0 {
                continue;
            }
            let kind = p.kinds[k];
            // Bond-order sums of the new atom that keep the unsaturation
            // reachable: excess + sum - 1 within [dbe - room', dbe].
            let room = node.room - (kind.valence as i32 - 1);
            let lo = (p.dbe - room - node.excess + 1).max(1);
            let hi = (p.dbe - node.excess + 1).min(kind.valence as i32);
            if lo > hi {
                continue;
            }
            ctx.sum_min = lo as u8;
            ctx.sum_max = hi as u8;
            let max_deg = (kind.valence as usize).min(n).min(hi as usize);
            for d in 1..=max_deg {
                // Best key the new atom can have with d bonds (all single).
                let best = (kind.priority as u32) << 16 | (255 - d as u32) << 8 | (255 - d as u32);
                let mut must = 0u64;
                for &(key, x) in &ctx.keyed[..ctx.nkeyed] {
                    if key <= best {
                        break;
                    }
                    must |= 1u64 << x;
                }
                if must.count_ones() as usize > d {
                    continue;
                }
                if bits(must).any(|x| node.free[x] == 0) {
                    continue;
                }
                let mut others = [0u8; MAX_ATOMS];
                let mut nothers = 0;
                for x in 0..n {
                    if must >> x & 1 == 0 && node.free[x] > 0 {
                        others[nothers] = x as u8;
                        nothers += 1;
                    }
                }
                let extra = d - must.count_ones() as usize;
                if extra > nothers {
                    continue;
                }
                self.choose(
                    node,
                    k,
                    limit,
                    &mut ctx,
                    &others[..nothers],
                    0,
                    extra,
                    must,
                    sink,
                );
            }
        }
        self.auts[n] = ctx.auts;
    }

    /// Choose `extra` more attachment atoms from `others[from..]`, then orders.
    #[allow(clippy::too_many_arguments)]
    fn choose(
        &mut self,
        node: &mut Node,
        k: usize,
        limit: usize,
        ctx: &mut ChildCtx,
        others: &[u8],
        from: usize,
        extra: usize,
        chosen: u64,
        sink: &mut Sink<'_>,
    ) {
        if extra == 0 {
            let mut set = [0u8; 8];
            let mut len = 0;
            for x in bits(chosen) {
                set[len] = x as u8;
                len += 1;
            }
            ctx.attach.clear();
            self.orders(node, k, limit, ctx, &set[..len], 0, 0, sink);
            return;
        }
        for i in from..others.len() {
            if others.len() - i < extra {
                break;
            }
            let c = chosen | 1u64 << others[i];
            self.choose(node, k, limit, ctx, others, i + 1, extra - 1, c, sink);
        }
    }

    /// Give each chosen atom a bond order (1-3) within both atoms' valences
    /// and the new atom's allowed bond-order sum.
    #[allow(clippy::too_many_arguments)]
    fn orders(
        &mut self,
        node: &mut Node,
        k: usize,
        limit: usize,
        ctx: &mut ChildCtx,
        set: &[u8],
        i: usize,
        sum: u8,
        sink: &mut Sink<'_>,
    ) {
        if i == set.len() {
            if sum >= ctx.sum_min {
                self.try_child(node, k, limit, ctx, sum, sink);
            }
            return;
        }
        let x = set[i] as usize;
        // Each later atom needs at least order 1.
        let left = (set.len() - i - 1) as u8;
        if sum + 1 + left > ctx.sum_max {
            return;
        }
        let top = node.free[x].min(3).min(ctx.sum_max - sum - left);
        for o in 1..=top {
            ctx.attach.push((x, o));
            self.orders(node, k, limit, ctx, set, i + 1, sum + o, sink);
            ctx.attach.pop();
        }
    }

    fn try_child(
        &mut self,
        node: &mut Node,
        k: usize,
        limit: usize,
        ctx: &mut ChildCtx,
        sum: u8,
        sink: &mut Sink<'_>,
    ) {
        let p = self.p;
        let kind = p.kinds[k];
        let d = ctx.attach.len();
        let key_v = (kind.priority as u32) << 16 | (255 - d as u32) << 8 | (255 - sum as u32);
        let mut attached = 0u64;
        for &(x, _) in &ctx.attach {
            attached |= 1u64 << x;
        }
        // A non-cut parent atom left unattached keeps its key and stays non-cut.
        for &(key, x) in &ctx.keyed[..ctx.nkeyed] {
            if key <= key_v {
                break;
            }
            if attached >> x & 1 == 0 {
                return;
            }
        }
        // (The unsaturation bounds hold: `orders` keeps sum in range.)
        let free_total: i32 = node.free_total - 2 * sum as i32 + kind.valence as i32;
        let last = node.n + 1 == p.atoms;
        if !last && free_total < 1 {
            return;
        }
        // Only one attachment per orbit of the parent's automorphism group.
        if !ctx.auts.is_empty() && !attachment_is_minimal(node.n, &ctx.attach, &ctx.auts) {
            return;
        }
        let attach = std::mem::take(&mut ctx.attach);
        node.add_vertex(p, k, &attach);
        if let Some(fresh) = self.accept(node, key_v, attached, ctx.noncut_mask) {
            self.dfs(node, limit, fresh, sink);
        }
        node.remove_last(p, k, &attach);
        ctx.attach = attach;
    }

    /// Is the newest vertex the canonical deletion of `node`? Returns
    /// `Some(canon_ran)` when accepted (whether `canon[node.n]` now holds the
    /// child's labelling), `None` when rejected.
    fn accept(
        &mut self,
        node: &Node,
        key_v: u32,
        attached: u64,
        parent_noncut: u64,
    ) -> Option<bool> {
        let p = self.p;
        let v = node.n - 1;
        let mut ties = 1u64 << v;
        for x in 0..v {
            let kx = node.key(p, x);
            if kx < key_v {
                continue;
            }
            // Above key_v only attached atoms and former cut vertices remain
            // (try_child ruled out the rest); any of them now non-cut wins.
            if kx > key_v {
                if node.non_cut(x) {
                    return None;
                }
            } else if attached >> x & 1 == 0 && ctx_noncut(parent_noncut, x) || node.non_cut(x) {
                ties |= 1u64 << x;
            }
        }
        if ties.count_ones() == 1 {
            return Some(false);
        }
        let c = &mut self.canon[node.n];
        c.run(&node.g);
        let order = c.order();
        let pos_w = (0..node.n)
            .rev()
            .find(|&i| ties >> order[i] & 1 == 1)
            .expect("the tie set is not empty");
        if c.orbit_at(pos_w) >> v & 1 == 1 {
            Some(true)
        } else {
            None
        }
    }
}

#[inline]
fn ctx_noncut(mask: u64, x: usize) -> bool {
    mask >> x & 1 == 1
}

struct ChildCtx {
    /// Non-cut vertices of the parent with their keys, best first.
    keyed: [(u32, u8); MAX_ATOMS],
    nkeyed: usize,
    /// Allowed bond-order sums of the new atom.
    sum_min: u8,
    sum_max: u8,
    /// Non-cut vertices of the parent (they stay non-cut when left unattached).
    noncut_mask: u64,
    auts: Vec<[u8; MAX_ATOMS]>,
    attach: Vec<(usize, u8)>,
}

/// Whether the attachment (order per parent vertex) is the lexicographically
/// smallest of its images under the parent's automorphisms.
fn attachment_is_minimal(n: usize, attach: &[(usize, u8)], auts: &[[u8; MAX_ATOMS]]) -> bool {
    let mut a = [0u8; MAX_ATOMS];
    for &(x, o) in attach {
        a[x] = o;
    }
    for g in auts {
        let mut b = [0u8; MAX_ATOMS];
        for &(x, o) in attach {
            b[g[x] as usize] = o;
        }
        // Compare b with a over vertices 0..n; reject when an image is smaller.
        // "Smaller" means: at the first differing vertex, the image has the larger
        // order. Any fixed total order works; this one favours early vertices.
        for i in 0..n {
            if a[i] != b[i] {
                if b[i] > a[i] {
                    return false;
                }
                break;
            }
        }
    }
    true
}

/// Iterate the set bits of a mask.
pub fn bits(mut m: u64) -> impl Iterator<Item = usize> {
    std::iter::from_fn(move || {
        if m == 0 {
            None
        } else {
            let i = m.trailing_zeros() as usize;
            m &= m - 1;
            Some(i)
        }
    })
}
