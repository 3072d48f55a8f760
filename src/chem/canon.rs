//! Canonical labelling of small vertex- and edge-coloured graphs by
//! individualisation and refinement.
//!
//! Method: the partition-refinement scheme of McKay, "Practical graph
//! isomorphism", Congr. Numer. 30 (1981) 45-87, in the form described by
//! McKay & Piperno, J. Symbolic Comput. 60 (2014) 94-112: refine an ordered
//! partition to the coarsest equitable one (here by counting neighbours of each
//! edge colour in each splitter cell), individualise each vertex of the first
//! non-singleton cell in turn, and take as canonical the discrete leaf whose
//! relabelled graph (the certificate) is lexicographically smallest.
//!
//! Why hand-written rather than nauty through FFI: molecules in the generator's
//! hot path have at most a few dozen atoms, and rebuilding nauty's dense
//! representation with bond orders encoded as extra layers costs more than a
//! bitset refinement of a 10-atom graph (see DEVELOPERS.md for the measurement).
//! The search explores every leaf (no automorphism pruning). That keeps the
//! code short and gives the full automorphism group for free: the leaves with
//! the best certificate are exactly the images of one of them under the group,
//! which yields the orbits that the canonical augmentation test and the
//! equivalent-H grouping need. The cost is |Aut| leaves, small for molecules.

/// Largest number of vertices a [`CanonGraph`] can hold (one `u64` bitset row).
pub const MAX_ATOMS: usize = 64;
/// Number of edge colours (1..=LABELS); bond orders 1-3 and an aromatic bond 4.
pub const LABELS: usize = 4;

/// A graph of at most [`MAX_ATOMS`] vertices with a colour per vertex and a
/// colour (1..=[`LABELS`]) per edge, stored as one bitset layer per edge colour.
#[derive(Clone)]
pub struct CanonGraph {
    pub n: usize,
    pub colour: [u32; MAX_ATOMS],
    /// `adj[l][v]` has bit `u` set when the edge v-u has colour `l + 1`.
    pub adj: [[u64; MAX_ATOMS]; LABELS],
}

impl CanonGraph {
    pub fn new(n: usize) -> CanonGraph {
        assert!(
            n <= MAX_ATOMS,
            "CanonGraph holds at most {MAX_ATOMS} vertices"
        );
        CanonGraph {
            n,
            colour: [0; MAX_ATOMS],
            adj: [[0; MAX_ATOMS]; LABELS],
        }
    }

    /// Set the edge a-b to colour `label` (1..=LABELS), or remove it with 0.
    pub fn set_edge(&mut self, a: usize, b: usize, label: u8) {
        for l in 0..LABELS {
            self.adj[l][a] &= !(1u64 << b);
            self.adj[l][b] &= !(1u64 << a);
        }
        if label > 0 {
            let l = label as usize - 1;
            self.adj[l][a] |= 1u64 << b;
            self.adj[l][b] |= 1u64 << a;
        }
    }

    /// Colour of the edge a-b, 0 when absent.
    pub fn label(&self, a: usize, b: usize) -> u8 {
        for l in 0..LABELS {
            if self.adj[l][a] >> b & 1 == 1 {
                return l as u8 + 1;
            }
        }
        0
    }

    /// All neighbours of `v`, whatever the edge colour.
    pub fn neighbours(&self, v: usize) -> u64 {
        let mut m = 0;
        for l in 0..LABELS {
            m |= self.adj[l][v];
        }
        m
    }
}

/// Reusable working storage for canonical labelling (no allocation per call
/// once warmed up).
#[derive(Default)]
pub struct Canonizer {
    best: Vec<u64>,
    cur: Vec<u64>,
    /// Every leaf labelling (position -> vertex) that reaches the best certificate.
    leaves: Vec<[u8; MAX_ATOMS]>,
    n: usize,
    labels_used: [bool; LABELS],
}

/// One ordered partition: cells as vertex bitsets, in order.
#[derive(Clone, Copy)]
struct Partition {
    cells: [u64; MAX_ATOMS],
    len: usize,
}

impl Canonizer {
    pub fn new() -> Canonizer {
        Canonizer::default()
    }

    /// Compute the canonical labelling of `g`. Results are read with
    /// [`Canonizer::certificate`], [`Canonizer::order`], [`Canonizer::orbit`].
    pub fn run(&mut self, g: &CanonGraph) {
        self.n = g.n;
        self.best.clear();
        self.leaves.clear();
        for l in 0..LABELS {
            self.labels_used[l] = g.adj[l][..g.n].iter().any(|&r| r != 0);
        }
        if g.n == 0 {
            return;
        }
        // Initial partition: vertices grouped by colour, cells in colour order.
        let mut idx: Vec<usize> = (0..g.n).collect();
        idx.sort_by_key(|&v| g.colour[v]);
        let mut p = Partition {
            cells: [0; MAX_ATOMS],
            len: 0,
        };
        let mut prev = None;
        for &v in &idx {
            if prev != Some(g.colour[v]) {
                p.len += 1;
                prev = Some(g.colour[v]);
            }
            p.cells[p.len - 1] |= 1u64 << v;
        }
        self.search(g, p);
    }

    fn search(&mut self, g: &CanonGraph, mut p: Partition) {
        refine(g, &mut p, &self.labels_used);
        if p.len == g.n {
            self.leaf(g, &p);
            return;
        }
        let t = (0..p.len)
            .find(|&i| p.cells[i].count_ones() > 1)
            .expect("a non-discrete partition has a non-singleton cell");
        let target = p.cells[t];
        let mut rest = target;
        while rest != 0 {
            let v = rest.trailing_zeros() as usize;
            rest &= rest - 1;
            let mut q = p;
            // Individualise v: {v} first, then the rest of its cell.
            q.cells.copy_within(t + 1..q.len, t + 2);
            q.cells[t] = 1u64 << v;
            q.cells[t + 1] = target & !(1u64 << v);
            q.len += 1;
            self.search(g, q);
        }
    }

    fn leaf(&mut self, g: &CanonGraph, p: &Partition) {
        let n = g.n;
        let mut lab = [0u8; MAX_ATOMS];
        let mut pos = [0u8; MAX_ATOMS];
        for i in 0..n {
            let v = p.cells[i].trailing_zeros() as usize;
            lab[i] = v as u8;
            pos[v] = i as u8;
        }
        self.cur.clear();
        for i in 0..n {
            self.cur.push(g.colour[lab[i] as usize] as u64);
        }
        for i in 0..n {
            let v = lab[i] as usize;
            for l in 0..LABELS {
                if !self.labels_used[l] {
                    continue;
                }
                let mut row = g.adj[l][v];
                let mut out = 0u64;
                while row != 0 {
                    let u = row.trailing_zeros() as usize;
                    row &= row - 1;
                    out |= 1u64 << pos[u];
                }
                self.cur.push(out);
            }
        }
        use std::cmp::Ordering;
        let ord = if self.best.is_empty() {
            Ordering::Less
        } else {
            self.cur.as_slice().cmp(self.best.as_slice())
        };
        match ord {
            Ordering::Less => {
                std::mem::swap(&mut self.best, &mut self.cur);
                self.leaves.clear();
                self.leaves.push(lab);
            }
            Ordering::Equal => self.leaves.push(lab),
            Ordering::Greater => {}
        }
    }

    /// The certificate: equal for two graphs exactly when they are isomorphic
    /// (as coloured graphs). Valid after [`Canonizer::run`].
    pub fn certificate(&self) -> &[u64] {
        &self.best
    }

    /// Canonical order: position -> vertex, for one canonical labelling.
    pub fn order(&self) -> &[u8] {
        &self.leaves[0][..self.n]
    }

    /// Canonical rank of every vertex (vertex -> position) for one canonical labelling.
    pub fn ranks(&self) -> Vec<usize> {
        let mut r = vec![0; self.n];
        for (i, &v) in self.order().iter().enumerate() {
            r[v as usize] = i;
        }
        r
    }

    /// The automorphisms found, each as a vertex permutation `perm[v] = image of v`
    /// (the first is the identity).
    pub fn automorphisms(&self) -> impl Iterator<Item = [u8; MAX_ATOMS]> + '_ {
        let first = &self.leaves[0];
        self.leaves.iter().map(move |l| {
            let mut perm = [0u8; MAX_ATOMS];
            for p in 0..self.n {
                perm[first[p] as usize] = l[p];
            }
            perm
        })
    }

    /// Size of the automorphism group.
    pub fn group_size(&self) -> usize {
        self.leaves.len()
    }

    /// The automorphism orbit of vertex `v`, as a bitset.
    pub fn orbit(&self, v: usize) -> u64 {
        let p = self.leaves[0][..self.n]
            .iter()
            .position(|&x| x as usize == v)
            .expect("vertex in range");
        self.orbit_at(p)
    }

    /// The orbit of the vertex at canonical position `p`.
    pub fn orbit_at(&self, p: usize) -> u64 {
        self.leaves.iter().fold(0, |m, l| m | 1u64 << l[p])
    }

    /// Orbit identifier per vertex: the smallest canonical position in its orbit.
    pub fn orbits(&self) -> Vec<usize> {
        let mut id = vec![usize::MAX; self.n];
        for p in 0..self.n {
            let v = self.leaves[0][p] as usize;
            if id[v] != usize::MAX {
                continue;
            }
            let mut m = self.orbit_at(p);
            while m != 0 {
                let u = m.trailing_zeros() as usize;
                m &= m - 1;
                id[u] = p;
            }
        }
        id
    }
}

/// Refine `p` to the coarsest equitable partition finer than it: every cell is
/// split by the number of neighbours, per edge colour, that its vertices have
/// in each cell. Fragments keep their place and are ordered by that number, so
/// the result depends only on the graph up to isomorphism.
fn refine(g: &CanonGraph, p: &mut Partition, used: &[bool; LABELS]) {
    loop {
        let mut changed = false;
        let mut si = 0;
        while si < p.len {
            let splitter = p.cells[si];
            for l in 0..LABELS {
                if !used[l] {
                    continue;
                }
                let mut ci = 0;
                while ci < p.len {
                    let c = p.cells[ci];
                    if c & (c - 1) == 0 {
                        ci += 1;
                        continue;
                    }
                    let k = split(g, p, ci, splitter, l);
                    if k > 1 {
                        changed = true;
                    }
                    ci += k;
                }
            }
            si += 1;
        }
        if !changed {
            return;
        }
    }
}

/// Split cell `ci` of `p` by the count of colour-`l` neighbours in `splitter`;
/// returns the number of fragments now standing where the cell stood.
fn split(g: &CanonGraph, p: &mut Partition, ci: usize, splitter: u64, l: usize) -> usize {
    let c = p.cells[ci];
    let mut counts = [0u8; MAX_ATOMS];
    let (mut lo, mut hi) = (u32::MAX, 0u32);
    let mut m = c;
    while m != 0 {
        let v = m.trailing_zeros() as usize;
        m &= m - 1;
        let k = (g.adj[l][v] & splitter).count_ones();
        counts[v] = k as u8;
        lo = lo.min(k);
        hi = hi.max(k);
    }
    if lo == hi {
        return 1;
    }
    let mut frags = [0u64; MAX_ATOMS];
    let mut nf = 0;
    for val in lo..=hi {
        let mut f = 0u64;
        let mut m = c;
        while m != 0 {
            let v = m.trailing_zeros() as usize;
            m &= m - 1;
            if counts[v] as u32 == val {
                f |= 1u64 << v;
            }
        }
        if f != 0 {
            frags[nf] = f;
            nf += 1;
        }
    }
    p.cells.copy_within(ci + 1..p.len, ci + nf);
    p.cells[ci..ci + nf].copy_from_slice(&frags[..nf]);
    p.len += nf - 1;
    nf
}

#[cfg(test)]
mod tests {
    use super::*;

    fn path(n: usize) -> CanonGraph {
        let mut g = CanonGraph::new(n);
        for i in 1..n {
            g.set_edge(i - 1, i, 1);
        }
        g
    }

    #[test]
    fn isomorphic_graphs_share_a_certificate() {
        let mut a = path(5);
        a.set_edge(1, 2, 2);
        // The same graph numbered backwards.
        let mut b = path(5);
        b.set_edge(2, 3, 2);
        let mut c1 = Canonizer::new();
        c1.run(&a);
        let mut c2 = Canonizer::new();
        c2.run(&b);
        assert_eq!(c1.certificate(), c2.certificate());
        // Moving the double bond to the chain end is another graph.
        let mut d = path(5);
        d.set_edge(0, 1, 2);
        c2.run(&d);
        assert_ne!(c1.certificate(), c2.certificate());
    }

    #[test]
    fn automorphism_group_sizes() {
        // Group orders of simple graphs (common practice): path P5 has 2,
        // the star K1,4 has 4! = 24, the 6-cycle has 12 (dihedral group D6).
        let mut c = Canonizer::new();
        c.run(&path(5));
        assert_eq!(c.group_size(), 2);
        let mut star = CanonGraph::new(5);
        for i in 1..5 {
            star.set_edge(0, i, 1);
        }
        c.run(&star);
        assert_eq!(c.group_size(), 24);
        assert_eq!(c.orbit(1).count_ones(), 4);
        let mut ring = path(6);
        ring.set_edge(5, 0, 1);
        c.run(&ring);
        assert_eq!(c.group_size(), 12);
        assert_eq!(c.orbits(), vec![0; 6]);
    }
}
