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
//! The search prunes by the automorphisms it finds (McKay 1981: orbits at
//! the nodes on the path to the first leaf, and a jump back to that path when
//! a leaf repeats the first one), and the automorphisms found generate the
//! whole group, which is then listed in full: the canonical augmentation test
//! and the equivalent-H grouping need its orbits and its elements.

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

    /// Make this the graph [`CanonGraph::new`] would give for `n` vertices
    /// (colour 0, no edges), clearing only the rows the old and the new
    /// graph use: cheaper than a new graph when one is refilled often.
    pub fn clear(&mut self, n: usize) {
        assert!(
            n <= MAX_ATOMS,
            "CanonGraph holds at most {MAX_ATOMS} vertices"
        );
        let used = self.n.max(n);
        self.colour[..used].fill(0);
        for layer in &mut self.adj {
            layer[..used].fill(0);
        }
        self.n = n;
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
    /// The certificate of the best leaf so far (head, then relabelled rows).
    best: Vec<u64>,
    /// The certificate of the first leaf (automorphisms are found against it).
    zeta: Vec<u64>,
    cur: Vec<u64>,
    /// Best and first leaf labellings (position -> vertex).
    best_lab: [u8; MAX_ATOMS],
    zeta_lab: [u8; MAX_ATOMS],
    /// The vertices individualised on the way to the first leaf.
    zeta_seq: [u8; MAX_ATOMS],
    zeta_depth: usize,
    have_leaf: bool,
    /// Automorphisms found during the search (they generate the group).
    gens: Vec<[u8; MAX_ATOMS]>,
    /// The whole group, identity first (`perm[v]` = image of v), when
    /// listed (`listed`).
    group: Vec<[u8; MAX_ATOMS]>,
    /// The group as a product of transversals (a stabiliser chain along the
    /// first path's individualised vertices): level k's non-identity coset
    /// representatives are `chain[chain_ends[k]..chain_ends[k + 1]]`; every
    /// element is, once, t_last ∘ ... ∘ t_0 with t_k identity or from level k.
    chain: Vec<[u8; MAX_ATOMS]>,
    chain_ends: Vec<usize>,
    /// The group's order (product of the levels' sizes).
    size: usize,
    /// Groups larger than this are not listed by `run` (see
    /// [`Canonizer::set_list_limit`]).
    list_limit: usize,
    listed: bool,
    /// Work space of [`Canonizer::close_group`]: (orbit point, element).
    trans: Vec<(u8, [u8; MAX_ATOMS])>,
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
            zeta: Vec::new(),
            cur: Vec::new(),
            best_lab: [0; MAX_ATOMS],
            zeta_lab: [0; MAX_ATOMS],
            zeta_seq: [0; MAX_ATOMS],
            zeta_depth: 0,
            have_leaf: false,
            gens: Vec::new(),
            group: Vec::new(),
            chain: Vec::new(),
            chain_ends: Vec::new(),
            size: 1,
            list_limit: usize::MAX,
            listed: true,
            trans: Vec::new(),
            n: 0,
            used: [0; LABELS],
            nused: 0,
        }
    }
}

/// Returned by a search step that does not ask its callers to unwind.
const NO_JUMP: usize = usize::MAX;

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
        self.group.clear();
        self.listed = true;
        self.size = 0;
        self.chain.clear();
        self.chain_ends.clear();
        self.chain_ends.push(0);
        self.gens.clear();
        self.have_leaf = false;
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
        self.cur.clear();
        self.cur.push(mask);
        for i in 0..n {
            self.cur.push(g.colour[p.lab[i] as usize] as u64);
        }
        self.refine(g, &mut p, queue);
        let mut seq = [0u8; MAX_ATOMS];
        self.search(g, &p, 0, true, &mut seq);
        self.close_group();
    }

    /// Search below partition `p`, reached by individualising `seq[..depth]`
    /// (`first_path`: along the first children only). Returns the depth to
    /// unwind to, or [`NO_JUMP`].
    ///
    /// Automorphism pruning (McKay 1981): at a node on the path to the first
    /// leaf, a child whose vertex is in the orbit of an explored child under
    /// the automorphisms found that fix `seq[..depth]` would only repeat that
    /// subtree's certificates, mapped by an automorphism, so it is skipped.
    /// And a leaf equivalent to the first leaf proves the whole subtree it
    /// hangs from (below the last node it shares with the first path) to be
    /// an image of the explored first subtree: the search unwinds to that
    /// node. The automorphisms found still generate the whole group.
    fn search(
        &mut self,
        g: &CanonGraph,
        p: &Partition,
        depth: usize,
        first_path: bool,
        seq: &mut [u8; MAX_ATOMS],
    ) -> usize {
        let n = g.n;
        if p.cells == n {
            return self.leaf(g, p, depth, seq);
        }
        // Target: the first cell of more than one vertex.
        let mut s = 0;
        while p.end[s] as usize == s + 1 {
            s += 1;
        }
        let e = p.end[s] as usize;
        let mut explored = 0u64;
        for i in s..e {
            let w = p.lab[i];
            if first_path && i > s && self.orbit_meets(w, explored, &seq[..depth]) {
                continue;
            }
            explored |= 1u64 << w;
            let mut q = *p;
            // Individualise w: it becomes the cell {w} in front of the rest.
            q.lab.swap(s, i);
            q.end[s] = s as u8 + 1;
            q.end[s + 1] = e as u8;
            for &u in &q.lab[s + 1..e] {
                q.cell[u as usize] = s as u8 + 1;
            }
            q.cells += 1;
            self.refine(g, &mut q, 1u64 << s);
            seq[depth] = w;
            let jump = self.search(g, &q, depth + 1, first_path && i == s, seq);
            if jump < depth {
                return jump;
            }
        }
        NO_JUMP
    }

    /// Whether the orbit of `w` under the automorphisms found so far that fix
    /// every vertex of `fixed` meets the vertex set `explored`.
    fn orbit_meets(&self, w: u8, explored: u64, fixed: &[u8]) -> bool {
        let mut orbit = 1u64 << w;
        let mut frontier = orbit;
        while frontier != 0 {
            let mut next = 0u64;
            for gen in &self.gens {
                if fixed.iter().any(|&v| gen[v as usize] != v) {
                    continue;
                }
                let mut f = frontier;
                while f != 0 {
                    let v = f.trailing_zeros() as usize;
                    f &= f - 1;
                    next |= 1u64 << gen[v];
                }
            }
            frontier = next & !orbit;
            orbit |= next;
        }
        orbit & explored != 0
    }

    /// The group generated by the automorphisms found, listed in full, as a
    /// product of transversals along the path to the first leaf (the
    /// stabiliser chain of Sims' method): with v_i the i-th vertex
    /// individualised on that path and G_i the automorphisms fixing
    /// v_0..v_(i-1), the generators found that fix v_0..v_(i-1) generate G_i
    /// (McKay 1981), so G_i = U_i G_(i+1) with U_i one element per point of
    /// the orbit of v_i. Every element comes out once, with no membership test.
    fn close_group(&mut self) {
        let n = self.n;
        let mut id = [0u8; MAX_ATOMS];
        for (v, x) in id[..n].iter_mut().enumerate() {
            *x = v as u8;
        }
        self.chain.clear();
        self.chain_ends.clear();
        self.chain_ends.push(0);
        self.size = 1;
        if self.gens.is_empty() {
            self.group.push(id);
            self.listed = true;
            return;
        }
        let mut trans = std::mem::take(&mut self.trans);
        for i in (0..self.zeta_depth).rev() {
            let fixed = &self.zeta_seq[..i];
            let base = self.zeta_seq[i];
            trans.clear();
            trans.push((base, id));
            let mut seen = 1u64 << base;
            let mut k = 0;
            while k < trans.len() {
                let (w, u) = trans[k];
                for gen in &self.gens {
                    if fixed.iter().any(|&v| gen[v as usize] != v) {
                        continue;
                    }
                    let w2 = gen[w as usize];
                    if seen >> w2 & 1 == 1 {
                        continue;
                    }
                    seen |= 1u64 << w2;
                    let mut u2 = [0u8; MAX_ATOMS];
                    for v in 0..n {
                        u2[v] = gen[u[v] as usize];
                    }
                    trans.push((w2, u2));
                }
                k += 1;
            }
            self.chain.extend(trans[1..].iter().map(|t| t.1));
            self.chain_ends.push(self.chain.len());
            self.size = self.size.saturating_mul(trans.len());
        }
        self.trans = trans;
        self.listed = false;
        if self.size <= self.list_limit {
            self.list_group();
        }
    }

    /// List the whole group from the transversals, when `run` left it
    /// unlisted (a group above the list limit). The order of the list is
    /// the same either way.
    pub fn list_group(&mut self) {
        if self.listed {
            return;
        }
        let n = self.n;
        let mut id = [0u8; MAX_ATOMS];
        for (v, x) in id[..n].iter_mut().enumerate() {
            *x = v as u8;
        }
        self.group.clear();
        self.group.push(id);
        for k in 0..self.chain_ends.len() - 1 {
            let have = self.group.len();
            for t in &self.chain[self.chain_ends[k]..self.chain_ends[k + 1]] {
                for j in 0..have {
                    let e = self.group[j];
                    let mut f = [0u8; MAX_ATOMS];
                    for v in 0..n {
                        f[v] = t[e[v] as usize];
                    }
                    self.group.push(f);
                }
            }
        }
        self.listed = true;
    }

    /// Groups above `limit` elements are kept as transversals only (a few
    /// hundred bytes instead of 64 bytes an element): [`Canonizer::
    /// automorphisms`] then needs [`Canonizer::list_group`] first; orbits,
    /// the group's size and [`Canonizer::set_is_minimal`] work either way.
    pub fn set_list_limit(&mut self, limit: usize) {
        self.list_limit = limit;
    }

    /// Whether the group is listed (see [`Canonizer::set_list_limit`]).
    pub fn is_listed(&self) -> bool {
        self.listed
    }

    /// The group as transversals: (representatives, level ends); see the
    /// `chain` field. For [`set_is_minimal`].
    pub fn chain(&self) -> (&[[u8; MAX_ATOMS]], &[usize]) {
        (&self.chain, &self.chain_ends)
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

    /// A discrete partition: compare its certificate with the first and the
    /// best leaf's. Returns the depth to unwind to (see [`Canonizer::search`]).
    fn leaf(
        &mut self,
        g: &CanonGraph,
        p: &Partition,
        depth: usize,
        seq: &[u8; MAX_ATOMS],
    ) -> usize {
        let n = g.n;
        let mut pos = [0u8; MAX_ATOMS];
        for i in 0..n {
            pos[p.lab[i] as usize] = i as u8;
        }
        let head = n + 1;
        self.cur.truncate(head);
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
                self.cur.push(out);
            }
        }
        if !self.have_leaf {
            self.have_leaf = true;
            self.zeta.clone_from(&self.cur);
            self.best.clone_from(&self.cur);
            self.zeta_lab[..n].copy_from_slice(&p.lab[..n]);
            self.best_lab = self.zeta_lab;
            self.zeta_seq[..depth].copy_from_slice(&seq[..depth]);
            self.zeta_depth = depth;
            return NO_JUMP;
        }
        if self.cur == self.zeta {
            self.add_automorphism(&self.zeta_lab.clone(), &p.lab);
            return (0..depth.min(self.zeta_depth))
                .take_while(|&i| seq[i] == self.zeta_seq[i])
                .count();
        }
        match self.cur.as_slice().cmp(self.best.as_slice()) {
            std::cmp::Ordering::Equal => {
                self.add_automorphism(&self.best_lab.clone(), &p.lab);
            }
            std::cmp::Ordering::Less => {
                std::mem::swap(&mut self.best, &mut self.cur);
                self.cur.clear();
                self.cur.extend_from_slice(&self.best[..head]);
                self.best_lab[..n].copy_from_slice(&p.lab[..n]);
            }
            std::cmp::Ordering::Greater => {}
        }
        NO_JUMP
    }

    /// Record the automorphism taking leaf labelling `from` to `to`.
    fn add_automorphism(&mut self, from: &[u8; MAX_ATOMS], to: &[u8; MAX_ATOMS]) {
        let mut perm = [0u8; MAX_ATOMS];
        for i in 0..self.n {
            perm[from[i] as usize] = to[i];
        }
        self.gens.push(perm);
    }

    /// The certificate: equal for two graphs exactly when they are isomorphic
    /// (as coloured graphs). Valid after [`Canonizer::run`].
    pub fn certificate(&self) -> &[u64] {
        &self.best
    }

    /// Canonical order: position -> vertex, for one canonical labelling.
    pub fn order(&self) -> &[u8] {
        &self.best_lab[..self.n]
    }

    /// Canonical rank of every vertex (vertex -> position) for one canonical labelling.
    pub fn ranks(&self) -> Vec<usize> {
        let mut r = vec![0; self.n];
        for (i, &v) in self.order().iter().enumerate() {
            r[v as usize] = i;
        }
        r
    }

    /// The automorphisms, each as a vertex permutation `perm[v] = image of v`
    /// (the first is the identity). A group above the list limit must be
    /// listed first ([`Canonizer::list_group`]).
    pub fn automorphisms(&self) -> impl Iterator<Item = [u8; MAX_ATOMS]> + '_ {
        assert!(self.listed, "the group was not listed (list_group)");
        self.group.iter().copied()
    }

    /// Free the group's list when it holds more than `limit` elements (the
    /// work space otherwise keeps its largest size for the next call).
    pub fn release_large(&mut self, limit: usize) {
        if self.group.capacity() > limit {
            self.group = Vec::new();
        }
        if self.trans.capacity() > limit {
            self.trans = Vec::new();
        }
    }

    /// Size of the automorphism group.
    pub fn group_size(&self) -> usize {
        self.size
    }

    /// The automorphism orbit of vertex `v`, as a bitset (from the list, or
    /// closed under the generators when the group is not listed).
    pub fn orbit(&self, v: usize) -> u64 {
        assert!(v < self.n, "vertex in range");
        if self.listed {
            return self.group.iter().fold(0, |m, g| m | 1u64 << g[v]);
        }
        let mut orbit = 1u64 << v;
        loop {
            let mut next = orbit;
            for g in &self.gens {
                for x in super::bitset::bits(orbit) {
                    next |= 1u64 << g[x];
                }
            }
            if next == orbit {
                return orbit;
            }
            orbit = next;
        }
    }

    /// The orbit of the vertex at canonical position `p`.
    pub fn orbit_at(&self, p: usize) -> u64 {
        self.orbit(self.best_lab[p] as usize)
    }

    /// Orbit identifier per vertex: the smallest canonical position in its orbit.
    pub fn orbits(&self) -> Vec<usize> {
        let mut id = vec![usize::MAX; self.n];
        for p in 0..self.n {
            let v = self.best_lab[p] as usize;
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

/// Whether `set` is the smallest (as a bitset number) of its images under
/// the group given as transversals ([`Canonizer::chain`]): every product
/// of one representative (or the identity) per level is applied, level by
/// level, so no list of the group is ever held.
pub fn set_is_minimal(set: u64, chain: &[[u8; MAX_ATOMS]], ends: &[usize]) -> bool {
    fn image(set: u64, t: &[u8; MAX_ATOMS]) -> u64 {
        let mut out = 0u64;
        for x in super::bitset::bits(set) {
            out |= 1u64 << t[x];
        }
        out
    }
    fn walk(cur: u64, level: usize, set: u64, chain: &[[u8; MAX_ATOMS]], ends: &[usize]) -> bool {
        if level + 1 == ends.len() {
            return cur >= set;
        }
        // The identity of this level, then its representatives.
        walk(cur, level + 1, set, chain, ends)
            && chain[ends[level]..ends[level + 1]]
                .iter()
                .all(|t| walk(image(cur, t), level + 1, set, chain, ends))
    }
    walk(set, 0, set, chain, ends)
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
    fn clear_gives_a_new_graph() {
        let same =
            |a: &CanonGraph, b: &CanonGraph| a.n == b.n && a.colour == b.colour && a.adj == b.adj;
        let mut g = path(10);
        g.colour[7] = 3;
        g.set_edge(2, 9, 4);
        for n in [4, 12, 0, 64] {
            g.clear(n);
            assert!(same(&g, &CanonGraph::new(n)), "{n} vertices");
            if n > 1 {
                g.set_edge(0, n - 1, 2);
                g.colour[n - 1] = 5;
            }
        }
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
    fn an_unlisted_group_answers_as_the_listed_one() {
        // Highly symmetric trees (stars of stars, as in C30 alkanes) and a
        // cycle: with the list limit at 0 the group is kept as transversals;
        // size, orbits and the minimal-image test must equal what the full
        // list gives (the test below is checked against every subset of up
        // to three vertices by brute force over the list).
        let mut graphs = Vec::new();
        // A centre with 3 arms, each a carbon with 3 methyls (13 atoms).
        let mut g = CanonGraph::new(13);
        for arm in 0..3 {
            let a = 1 + arm * 4;
            g.set_edge(0, a, 1);
            for m in 1..4 {
                g.set_edge(a, a + m, 1);
            }
        }
        graphs.push(g);
        let mut ring = CanonGraph::new(8);
        for i in 0..8 {
            ring.set_edge(i, (i + 1) % 8, 1);
        }
        graphs.push(ring);
        graphs.push(path(7));
        for g in &graphs {
            let mut full = Canonizer::new();
            full.run(g);
            let mut lean = Canonizer::new();
            lean.set_list_limit(0);
            lean.run(g);
            assert!(!lean.is_listed());
            assert_eq!(lean.group_size(), full.group_size());
            for v in 0..g.n {
                assert_eq!(lean.orbit(v), full.orbit(v), "orbit of {v}");
            }
            let list: Vec<[u8; MAX_ATOMS]> = full.automorphisms().collect();
            let (reps, ends) = lean.chain();
            let mut checked = 0;
            for set in 1u64..(1u64 << g.n) {
                if set.count_ones() > 3 {
                    continue;
                }
                let brute = list.iter().all(|p| {
                    let mut img = 0u64;
                    for x in crate::chem::bitset::bits(set) {
                        img |= 1u64 << p[x];
                    }
                    img >= set
                });
                assert_eq!(set_is_minimal(set, reps, ends), brute, "set {set:b}");
                checked += brute as usize;
            }
            assert!(checked > 0);
            // Listed on demand, in the same order.
            lean.list_group();
            assert!(lean.automorphisms().eq(full.automorphisms()));
        }
        // The star of stars: 3! arms times (3!)^3 methyls = 1296.
        let mut c = Canonizer::new();
        c.run(&graphs[0]);
        assert_eq!(c.group_size(), 1296);
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
        for round in 0..600 {
            let n = 1 + round % 7;
            // Few colours and edge colours, varying density: many symmetric graphs.
            let colours = 1 + (round / 7) % 2;
            let density = 2 + (round / 14) % 4;
            let mut g = CanonGraph::new(n);
            for v in 0..n {
                g.colour[v] = (rng(&mut state) % colours as u64) as u32;
            }
            for a in 0..n {
                for b in a + 1..n {
                    let r = rng(&mut state) % 8;
                    if r < density as u64 {
                        g.set_edge(a, b, if r == 0 && round % 3 == 0 { 2 } else { 1 });
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

    #[test]
    fn larger_graphs_keep_certificate_and_group_under_relabelling() {
        // A canonical form must not depend on the numbering: for graphs too
        // big for brute force, random relabellings must give the same
        // certificate and group order, and every group element must be an
        // automorphism.
        let mut state = 0x1234_5678_9abc_def1u64;
        let mut c = Canonizer::new();
        let mut d = Canonizer::new();
        for round in 0..400 {
            let n = 8 + round % 9;
            let mut g = CanonGraph::new(n);
            // A random tree plus a few chords: sparse, often symmetric.
            for v in 1..n {
                g.set_edge(v, (rng(&mut state) % v as u64) as usize, 1);
            }
            for _ in 0..round % 4 {
                let a = (rng(&mut state) % n as u64) as usize;
                let b = (rng(&mut state) % n as u64) as usize;
                if a != b {
                    g.set_edge(a, b, 1);
                }
            }
            c.run(&g);
            for a in c.automorphisms() {
                assert!((0..n).all(
                    |v| (0..n).all(|u| g.label(v, u) == g.label(a[v] as usize, a[u] as usize))
                ));
            }
            for _ in 0..5 {
                let mut perm: Vec<usize> = (0..n).collect();
                for i in (1..n).rev() {
                    perm.swap(i, (rng(&mut state) % (i as u64 + 1)) as usize);
                }
                d.run(&permuted(&g, &perm));
                assert_eq!(c.certificate(), d.certificate());
                assert_eq!(c.group_size(), d.group_size());
            }
        }
    }

    #[test]
    fn symmetric_graphs_have_their_known_group_orders() {
        // Automorphism group orders (common practice, standard results):
        // Petersen graph 120, cube Q3 48, K4 24, K3,3 72, 8-cycle 16,
        // three disjoint edges 2^3 * 3! = 48.
        let build = |n: usize, edges: &[(usize, usize)]| {
            let mut g = CanonGraph::new(n);
            for &(a, b) in edges {
                g.set_edge(a, b, 1);
            }
            g
        };
        let petersen: Vec<(usize, usize)> = (0..5)
            .flat_map(|i| [(i, (i + 1) % 5), (i, i + 5), (i + 5, (i + 2) % 5 + 5)])
            .collect();
        let cube: Vec<(usize, usize)> = (0..8)
            .flat_map(|v| (0..3).map(move |b| (v, v ^ 1 << b)))
            .filter(|&(a, b)| a < b)
            .collect();
        let k4: Vec<(usize, usize)> = (0..4)
            .flat_map(|a| (a + 1..4).map(move |b| (a, b)))
            .collect();
        let k33: Vec<(usize, usize)> = (0..3).flat_map(|a| (3..6).map(move |b| (a, b))).collect();
        let c8: Vec<(usize, usize)> = (0..8).map(|i| (i, (i + 1) % 8)).collect();
        let cases = [
            (build(10, &petersen), 120),
            (build(8, &cube), 48),
            (build(4, &k4), 24),
            (build(6, &k33), 72),
            (build(8, &c8), 16),
            (build(6, &[(0, 1), (2, 3), (4, 5)]), 48),
        ];
        let mut c = Canonizer::new();
        for (g, order) in &cases {
            c.run(g);
            assert_eq!(c.group_size(), *order);
            assert_eq!(c.orbit(0).count_ones() as usize, g.n);
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
