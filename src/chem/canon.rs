//! Canonical labelling of small vertex- and edge-coloured graphs by
//! individualisation and refinement.
//!
//! Method: the partition-refinement scheme of McKay, "Practical graph
//! isomorphism", Congr. Numer. 30 (1981) 45-87, in the form described by
//! McKay & Piperno, J. Symbolic Comput. 60 (2014) 94-112: refine an ordered
//! partition to the coarsest equitable one, individualise each vertex of the
//! first non-singleton cell in turn, and take as canonical the discrete leaf
//! whose relabelled graph (the certificate) is lexicographically smallest.
//!
//! Refinement follows McKay's splitter queue: a cell W taken from the queue
//! splits every cell X by the number of neighbours (per edge colour) that each
//! vertex of X has in W; the fragments of a split cell join the queue, all but
//! one largest fragment when X itself was not waiting (counts against X are
//! then known to be equal, so its last fragment tells nothing new). Only the
//! cells that hold a neighbour of W are looked at, and the counts come from
//! walking W's adjacency rows (no popcount: the default x86-64 target has no
//! POPCNT instruction). After individualising v in an equitable partition, {v} alone
//! is the queue. Every choice (queue order: lowest cell position first;
//! fragment order: ascending count) depends only on positions and counts, so
//! the result commutes with relabelling, as a canonical form needs.
//!
//! Why hand-written rather than nauty through FFI: molecules in the generator's
//! hot path have at most a few dozen atoms, and rebuilding nauty's dense
//! representation with bond orders encoded as extra layers costs more than a
//! bitset refinement of a 10-atom graph (see DEVELOPERS.md for the measurement).
//! The search explores every leaf (no automorphism pruning). That keeps the
//! code short and gives the full automorphism group for free: the leaves with
//! the best certificate are exactly the images of one of them under the group,
//! which yields the orbits that the canonical augmentation test and the
//! equivalent-H grouping need. The cost is at least |Aut| leaves, small for
//! molecules.

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
pub struct Canonizer {
    best: Vec<u64>,
    cur: Vec<u64>,
    /// Every leaf labelling (position -> vertex) that reaches the best certificate.
    leaves: Vec<[u8; MAX_ATOMS]>,
    n: usize,
    /// Edge colours present (indices into `CanonGraph::adj`).
    used: [usize; LABELS],
    nused: usize,
}

/// One ordered partition in the lab/ptn form of McKay's papers: `lab` lists
/// the vertices cell after cell. A cell is named by the position where it
/// starts, which depends only on the partition, so names are
/// isomorphism-invariant.
#[derive(Clone, Copy)]
struct Partition {
    lab: [u8; MAX_ATOMS],
    /// At the start position of a cell: one past its last position.
    end: [u8; MAX_ATOMS],
    /// Vertex -> start position of its cell.
    cell: [u8; MAX_ATOMS],
    cells: usize,
}

impl Default for Canonizer {
    fn default() -> Canonizer {
        Canonizer {
            best: Vec::new(),
            cur: Vec::new(),
            leaves: Vec::new(),
            n: 0,
            used: [0; LABELS],
            nused: 0,
        }
    }
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
        self.nused = 0;
        let mut mask = 0u64;
        for l in 0..LABELS {
            if g.adj[l][..n].iter().any(|&r| r != 0) {
                self.used[self.nused] = l;
                self.nused += 1;
                mask |= 1 << l;
            }
        }
        if n == 0 {
            return;
        }
        // Initial partition: vertices grouped by colour and then by degree
        // per edge colour (what a first refinement round would find), cells
        // in that order.
        let mut p = Partition {
            lab: [0; MAX_ATOMS],
            end: [0; MAX_ATOMS],
            cell: [0; MAX_ATOMS],
            cells: 0,
        };
        let mut key = [0u64; MAX_ATOMS];
        for (v, key) in key[..n].iter_mut().enumerate() {
            p.lab[v] = v as u8;
            let mut k = (g.colour[v] as u64) << 32;
            for (j, &l) in self.used[..self.nused].iter().enumerate() {
                let mut r = g.adj[l][v];
                let mut d = 0u64;
                while r != 0 {
                    r &= r - 1;
                    d += 1;
                }
                k |= d << (8 * j);
            }
            *key = k;
        }
        p.lab[..n].sort_unstable_by_key(|&v| key[v as usize]);
        let mut queue = 0u64;
        let mut s = 0;
        for i in 1..=n {
            if i == n || key[p.lab[i] as usize] != key[p.lab[s] as usize] {
                p.end[s] = i as u8;
                for &v in &p.lab[s..i] {
                    p.cell[v as usize] = s as u8;
                }
                p.cells += 1;
                queue |= 1u64 << s;
                s = i;
            }
        }
        // The certificate opens with the edge colours used and the vertex
        // colours in canonical order (the same for every leaf of one graph).
        self.best.push(mask);
        for i in 0..n {
            self.best.push(g.colour[p.lab[i] as usize] as u64);
        }
        self.refine(g, &mut p, queue);
        self.search(g, &p);
    }

    fn search(&mut self, g: &CanonGraph, p: &Partition) {
        let n = g.n;
        if p.cells == n {
            self.leaf(g, p);
            return;
        }
        // Target: the first cell of more than one vertex.
        let mut s = 0;
        while p.end[s] as usize == s + 1 {
            s += 1;
        }
        let e = p.end[s] as usize;
        for i in s..e {
            let mut q = *p;
            // Individualise p.lab[i]: it becomes the cell {v} in front of the rest.
            q.lab.swap(s, i);
            q.end[s] = s as u8 + 1;
            q.end[s + 1] = e as u8;
            for &u in &q.lab[s + 1..e] {
                q.cell[u as usize] = s as u8 + 1;
            }
            q.cells += 1;
            self.refine(g, &mut q, 1u64 << s);
            self.search(g, &q);
        }
    }

    /// Refine `p` with the cells whose start positions are set in `queue` as
    /// the first splitters (see the module comment).
    fn refine(&self, g: &CanonGraph, p: &mut Partition, mut queue: u64) {
        let n = g.n;
        let used = &self.used[..self.nused];
        // key[x]: neighbours of x in the splitter, 8 bits per edge colour;
        // zero outside the splitter's neighbourhood (reset after each use).
        let mut key = [0u32; MAX_ATOMS];
        while queue != 0 && p.cells < n {
            let w = queue.trailing_zeros() as usize;
            queue &= queue - 1;
            let we = p.end[w] as usize;
            let mut reach = 0u64;
            for &u in &p.lab[w..we] {
                for (j, &l) in used.iter().enumerate() {
                    let mut r = g.adj[l][u as usize];
                    reach |= r;
                    while r != 0 {
                        let x = r.trailing_zeros() as usize;
                        r &= r - 1;
                        key[x] += 1 << (8 * j);
                    }
                }
            }
            // Cells (by start) holding a neighbour of W, not singletons.
            let mut touched = 0u64;
            let mut r = reach;
            while r != 0 {
                let u = r.trailing_zeros() as usize;
                r &= r - 1;
                let c = p.cell[u] as usize;
                if p.end[c] as usize > c + 1 {
                    touched |= 1u64 << c;
                }
            }
            while touched != 0 {
                let s = touched.trailing_zeros() as usize;
                touched &= touched - 1;
                let e = p.end[s] as usize;
                let k0 = key[p.lab[s] as usize];
                let same = p.lab[s + 1..e].iter().all(|&x| key[x as usize] == k0);
                if same {
                    continue;
                }
                // Insertion sort of the cell by key (cells are small).
                for i in s + 1..e {
                    let x = p.lab[i];
                    let kx = key[x as usize];
                    let mut j = i;
                    while j > s && key[p.lab[j - 1] as usize] > kx {
                        p.lab[j] = p.lab[j - 1];
                        j -= 1;
                    }
                    p.lab[j] = x;
                }
                let was_queued = queue >> s & 1 == 1;
                let (mut big, mut big_len) = (s, 0);
                let mut f = s;
                for i in s + 1..=e {
                    if i == e || key[p.lab[i] as usize] != key[p.lab[f] as usize] {
                        p.end[f] = i as u8;
                        if f != s {
                            for &u in &p.lab[f..i] {
                                p.cell[u as usize] = f as u8;
                            }
                            p.cells += 1;
                        }
                        queue |= 1u64 << f;
                        if i - f > big_len {
                            big = f;
                            big_len = i - f;
                        }
                        f = i;
                    }
                }
                if !was_queued {
                    queue &= !(1u64 << big);
                }
                if p.cells == n {
                    return;
                }
            }
            let mut r = reach;
            while r != 0 {
                key[r.trailing_zeros() as usize] = 0;
                r &= r - 1;
            }
        }
    }

    fn leaf(&mut self, g: &CanonGraph, p: &Partition) {
        let n = g.n;
        let mut pos = [0u8; MAX_ATOMS];
        for i in 0..n {
            pos[p.lab[i] as usize] = i as u8;
        }
        let head = n + 1;
        let first = self.leaves.is_empty();
        if first {
            self.best.truncate(head);
        }
        // Relabelled rows, compared with the best as they are made: a leaf
        // that turns out greater is dropped at its first differing row.
        use std::cmp::Ordering;
        let mut ord = if first {
            Ordering::Less
        } else {
            Ordering::Equal
        };
        self.cur.clear();
        let mut idx = head;
        for i in 0..n {
            let v = p.lab[i] as usize;
            for &l in &self.used[..self.nused] {
                let mut row = g.adj[l][v];
                let mut out = 0u64;
                while row != 0 {
                    let u = row.trailing_zeros() as usize;
                    row &= row - 1;
                    out |= 1u64 << pos[u];
                }
                match ord {
                    Ordering::Equal => {
                        let b = self.best[idx];
                        if out > b {
                            return;
                        }
                        if out < b {
                            ord = Ordering::Less;
                            self.cur.extend_from_slice(&self.best[..idx]);
                        }
                    }
                    Ordering::Less => {}
                    Ordering::Greater => unreachable!(),
                }
                if ord == Ordering::Less {
                    self.cur.push(out);
                }
                idx += 1;
            }
        }
        let mut lab = [0u8; MAX_ATOMS];
        lab[..n].copy_from_slice(&p.lab[..n]);
        match ord {
            Ordering::Less => {
                if first {
                    self.best.extend_from_slice(&self.cur);
                } else {
                    std::mem::swap(&mut self.best, &mut self.cur);
                }
                self.leaves.clear();
                self.leaves.push(lab);
            }
            _ => self.leaves.push(lab),
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
    /// A small deterministic generator (xorshift) for test graphs.
    fn rng(state: &mut u64) -> u64 {
        *state ^= *state << 13;
        *state ^= *state >> 7;
        *state ^= *state << 17;
        *state
    }

    fn permuted(g: &CanonGraph, perm: &[usize]) -> CanonGraph {
        let mut h = CanonGraph::new(g.n);
        for v in 0..g.n {
            h.colour[perm[v]] = g.colour[v];
            for u in 0..g.n {
                let l = g.label(v, u);
                if l > 0 {
                    h.set_edge(perm[v], perm[u], l);
                }
            }
        }
        h
    }

    #[test]
    fn certificate_is_invariant_and_group_is_complete() {
        // Checked against brute force: every permutation of up to 6 vertices
        // is tried as an automorphism, and random relabellings must give the
        // same certificate.
        let mut state = 0x9e3779b97f4a7c15u64;
        let mut c = Canonizer::new();
        let mut d = Canonizer::new();
        for round in 0..300 {
            let n = 1 + round % 6;
            let mut g = CanonGraph::new(n);
            for v in 0..n {
                g.colour[v] = (rng(&mut state) % 2) as u32;
            }
            for a in 0..n {
                for b in a + 1..n {
                    let r = rng(&mut state) % 6;
                    if r < 3 {
                        g.set_edge(a, b, if r == 0 { 2 } else { 1 });
                    }
                }
            }
            c.run(&g);
            let mut perm: Vec<usize> = (0..n).collect();
            for i in (1..n).rev() {
                perm.swap(i, (rng(&mut state) % (i as u64 + 1)) as usize);
            }
            d.run(&permuted(&g, &perm));
            assert_eq!(c.certificate(), d.certificate());
            let mut count = 0;
            let mut all: Vec<usize> = (0..n).collect();
            permutations(&mut all, 0, &mut |p| {
                let ok = (0..n).all(|v| {
                    g.colour[p[v]] == g.colour[v]
                        && (0..n).all(|u| g.label(v, u) == g.label(p[v], p[u]))
                });
                count += ok as usize;
            });
            assert_eq!(c.group_size(), count);
            for a in c.automorphisms() {
                assert!((0..n).all(
                    |v| (0..n).all(|u| g.label(v, u) == g.label(a[v] as usize, a[u] as usize))
                ));
            }
        }
    }

    fn permutations(a: &mut Vec<usize>, k: usize, f: &mut dyn FnMut(&[usize])) {
        if k == a.len() {
            f(a);
            return;
        }
        for i in k..a.len() {
            a.swap(k, i);
            permutations(a, k + 1, f);
            a.swap(k, i);
        }
    }
}
