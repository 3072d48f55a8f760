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

/// One ordered partition in the lab/ptn form of McKay's papers: `lab` lists
/// the vertices cell after cell; `start[i]` is true where a cell begins. A
/// cell is named by the position where it starts, which depends only on the
/// partition, so names are isomorphism-invariant.
#[derive(Clone, Copy)]
struct Partition {
    lab: [u8; MAX_ATOMS],
    start: [bool; MAX_ATOMS + 1],
    cells: usize,
}

impl Canonizer {
    pub fn new() -> Canonizer {
        Canonizer::default()
    }

    /// Compute the canonical labelling of `g`. Results are read with
    /// [`Canonizer::certificate`], [`Canonizer::order`], [`Canonizer::orbit`].
    pub fn run(&mut self, g: &CanonGraph) {
        let n = g.n;
        self.n = n;
        self.best.clear();
        self.leaves.clear();
        for l in 0..LABELS {
            self.labels_used[l] = g.adj[l][..n].iter().any(|&r| r != 0);
        }
        if n == 0 {
            return;
        }
        // Initial partition: vertices grouped by colour, cells in colour order.
        let mut p = Partition {
            lab: [0; MAX_ATOMS],
            start: [false; MAX_ATOMS + 1],
            cells: 0,
        };
        for v in 0..n {
            p.lab[v] = v as u8;
        }
        p.lab[..n].sort_unstable_by_key(|&v| (g.colour[v as usize], v));
        for i in 0..n {
            if i == 0 || g.colour[p.lab[i] as usize] != g.colour[p.lab[i - 1] as usize] {
                p.start[i] = true;
                p.cells += 1;
            }
        }
        p.start[n] = true;
        self.search(g, p);
    }

    fn search(&mut self, g: &CanonGraph, mut p: Partition) {
        let n = g.n;
        refine(g, &mut p);
        if p.cells == n {
            self.leaf(g, &p);
            return;
        }
        // Target: the first cell of more than one vertex.
        let s = (0..n)
            .find(|&i| p.start[i] && !p.start[i + 1])
            .expect("a non-discrete partition has a non-singleton cell");
        let e = (s + 1..=n).find(|&i| p.start[i]).expect("cells end");
        for i in s..e {
            let mut q = p;
            // Individualise lab[i]: it becomes the cell {v} in front of the rest.
            q.lab.swap(s, i);
            q.lab[s + 1..e].sort_unstable();
            q.start[s + 1] = true;
            q.cells += 1;
            self.search(g, q);
        }
    }

    fn leaf(&mut self, g: &CanonGraph, p: &Partition) {
        let n = g.n;
        let mut lab = [0u8; MAX_ATOMS];
        let mut pos = [0u8; MAX_ATOMS];
        for i in 0..n {
            let v = p.lab[i] as usize;
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

/// The sorted list of (cell, edge colour) over the neighbours of `v`, packed
/// into one number, a different number for each list: keys
/// (cell * LABELS + colour + 1, below 4096) descending, 12 bits each, at most 8;
/// lists of k keys fall in [4096^(k-1), 4096^k), so lengths never collide.
#[inline]
fn signature(g: &CanonGraph, v: usize, cell_of: &[u8; MAX_ATOMS], used: &[usize]) -> u128 {
    let mut keys = [0u16; 8];
    let mut k = 0;
    for &l in used {
        let mut row = g.adj[l][v];
        while row != 0 {
            let u = row.trailing_zeros() as usize;
            row &= row - 1;
            if k < 8 {
                keys[k] = cell_of[u] as u16 * LABELS as u16 + l as u16 + 1;
            }
            k += 1;
        }
    }
    debug_assert!(k <= 8, "vertex degree above 8");
    let keys = &mut keys[..k.min(8)];
    keys.sort_unstable_by(|a, b| b.cmp(a));
    let mut packed = 0u128;
    for &key in keys.iter() {
        packed = packed << 12 | key as u128;
    }
    packed
}

/// Refine `p` to the coarsest equitable partition finer than it (colour
/// refinement): each round gives every vertex the sorted list of (cell,
/// bond colour) of its neighbours, and splits every cell by that list, the
/// fragments in list order. Rounds repeat until no cell splits. Cells are
/// named by position, so the result depends only on the graph up to
/// isomorphism.
fn refine(g: &CanonGraph, p: &mut Partition) {
    let n = g.n;
    let mut cell_of = [0u8; MAX_ATOMS];
    let mut cs = 0;
    for i in 0..n {
        if p.start[i] {
            cs = i;
        }
        cell_of[p.lab[i] as usize] = cs as u8;
    }
    let mut sig = [0u128; MAX_ATOMS];
    let mut used_buf = [0usize; LABELS];
    let mut nused = 0;
    for l in 0..LABELS {
        if g.adj[l][..n].iter().any(|&r| r != 0) {
            used_buf[nused] = l;
            nused += 1;
        }
    }
    let used = &used_buf[..nused];
    loop {
        // Only vertices of non-singleton cells can be split.
        let mut s = 0;
        while s < n {
            let e = (s + 1..=n).find(|&i| p.start[i]).expect("cells end");
            if e - s > 1 {
                for &v in &p.lab[s..e] {
                    sig[v as usize] = signature(g, v as usize, &cell_of, used);
                }
            }
            s = e;
        }
        let mut changed = false;
        let mut s = 0;
        while s < n {
            let e = (s + 1..=n).find(|&i| p.start[i]).expect("cells end");
            if e - s > 1 {
                p.lab[s..e].sort_unstable_by_key(|&v| (sig[v as usize], v));
                for i in s + 1..e {
                    if sig[p.lab[i] as usize] != sig[p.lab[i - 1] as usize] {
                        p.start[i] = true;
                        p.cells += 1;
                        changed = true;
                    }
                }
            }
            s = e;
        }
        if !changed {
            return;
        }
        let mut cs = 0;
        for i in 0..n {
            if p.start[i] {
                cs = i;
            }
            cell_of[p.lab[i] as usize] = cs as u8;
        }
    }
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
