//! Splitting one assignment problem ([`super::assign`]) into independent
//! parts before the search: most (group, multiplet) pairs of a long
//! spectrum can be shown absent from every assignment that beats a known
//! one, and once they are set aside the groups and multiplets fall into
//! small connected parts that are solved one by one.
//!
//! A pair (g, j) is set aside when either test holds:
//!
//! 1. **Dominance.** Taking g off multiplet j (to no multiplet) changes j's
//!    term by at most D_j = max(empty_j, integral_j(h_min) - overlap_j):
//!    when g was alone there, the term drops from integral_j(h_g) >= 0 to
//!    empty_j; when others stay, the overlap falls by overlap_j and the
//!    integral rises by at most integral_j(h_min) (the term falls with H up
//!    to the observed integral and rises beyond it, and the others keep at
//!    least h_min H). So when pair(g, j) > unassigned_g + D_j, every
//!    assignment using the pair costs more than the same one with g left
//!    out, and no optimum uses it.
//! 2. **Reduced-cost fixing** against the root bound (the bound the search
//!    starts from, `assign::root_bound`: every group on its cheapest option
//!    plus, per multiplet, the cheaper of staying empty and the least extra
//!    a group pays to go there). With g forced onto j the same argument
//!    gives root - min(empty_j, extra_j) + pair(g, j) - cheapest_g; when that
//!    reaches the cost of a known assignment, no assignment using the pair
//!    is cheaper than it. This is the classical use of reduced costs against
//!    an incumbent to fix variables in branch and bound (Dantzig, Fulkerson
//!    & Johnson, Operations Research 1954, 2, 393; from memory).
//!
//! The known assignment is the best of three heuristics (each group on its
//! cheapest option, the marginal one, local search from the better). When
//! the largest part then still holds more than [`RETRY_ABOVE`] groups, the
//! cheapest one-to-one assignment over the listed pairs
//! ([`super::matching`]), improved by the local search, replaces it when
//! cheaper and the fixing runs again: a chain of groups each predicted one
//! line off needs a cyclic shift that the local search cannot make.
//!
//! The pairs of the known assignment itself are always kept, so it stays
//! feasible. Every assignment cheaper than it then uses kept pairs only,
//! so the optimum over kept pairs is the optimum. The kept pairs make a
//! bipartite graph of groups and multiplets; its connected components
//! (union-find: Galler & Fischer, CACM 1964, 7, 301) share no kept pair, so
//! the optimum is the sum of each component's optimum (the cost is
//! separable per group plus per multiplet, and a component holds its
//! multiplets' every group). A group with no kept pair stays unassigned; a
//! multiplet with none stays empty.
//!
//! Each component goes through the search on its own numbers, starting
//! from the known assignment on it as its incumbent ([`Split::known_on`]);
//! the combined assignment is evaluated once on the whole problem, so the cost
//! does not depend on how the parts were summed. The split is skipped (the
//! caller searches the whole problem) when one component would hold every
//! group.

use super::assign::{improve, marginal, refill, Costs, CostsRef, Local, Targets, NONE};
use super::matching::Matching;

/// Relative margin by which a test must hold before a pair is set aside
/// (against rounding in the sums that compare).
const MARGIN: f64 = 1e-9;

/// When the largest part holds more groups than this, the cheapest
/// one-to-one assignment ([`super::matching`]) is tried as a better known
/// assignment (parts this small search in a few dozen nodes anyway).
const RETRY_ABOVE: usize = 8;

/// The split's buffers, kept between calls.
#[derive(Clone, Debug, Default)]
pub(crate) struct Split {
    /// Union-find parents: groups 0..g, multiplets g..g + m.
    parent: Vec<u32>,
    /// Per multiplet: its share of the root bound, the cheaper of staying
    /// empty and the least extra a group pays to go there instead of to its
    /// cheapest option.
    open: Vec<f64>,
    /// Per multiplet: D_j of the dominance test.
    slack: Vec<f64>,
    /// Per node: its component's index (after `label`).
    part: Vec<u32>,
    /// Component c's groups are `groups[group_start[c]..group_start[c + 1]]`
    /// (ascending), and likewise its multiplets.
    group_start: Vec<u32>,
    groups: Vec<u32>,
    line_start: Vec<u32>,
    lines: Vec<u32>,
    /// Scratch of the counting sort.
    fill: Vec<u32>,
    /// Per group, the multiplets the dominance test leaves:
    /// `list[start[g]..start[g + 1]]`.
    start: Vec<u32>,
    list: Vec<u16>,
    /// `allowed[g * m + j]`: j is in group g's list.
    allowed: Vec<bool>,
    /// The best known assignment, and scratch of the heuristics.
    known: Vec<u16>,
    trial: Vec<u16>,
    order: Vec<usize>,
    h: Vec<u32>,
    k: Vec<u32>,
    /// The current part's numbers.
    costs: Costs,
    matching: Matching,
}

/// `from` at the indices `of`, into `v`.
fn pick<T: Copy>(v: &mut Vec<T>, of: &[u32], from: &[T]) {
    v.clear();
    v.extend(of.iter().map(|&x| from[x as usize]));
}

fn find(parent: &mut [u32], mut x: u32) -> u32 {
    while parent[x as usize] != x {
        let p = parent[x as usize];
        parent[x as usize] = parent[p as usize];
        x = p;
    }
    x
}

impl Split {
    /// Set pairs aside (the dominance test, then reduced-cost fixing
    /// against the best of three assignments found on the pairs left: each
    /// group on its cheapest option, the marginal one, and the better of
    /// the two after local search) and label the components; `cheapest` is
    /// each group's cheapest option, `extra` per multiplet the least extra
    /// a group pays to go there instead, `root` the root bound and `local`
    /// the heuristics' scratch. Returns the
    /// number of components, or `None` when one of them holds every group.
    pub fn parts(
        &mut self,
        c: &CostsRef,
        cheapest: &[f64],
        extra: &[f64],
        root: f64,
        local: &mut Local,
    ) -> Option<usize> {
        let (g, m) = (c.groups, c.multiplets);
        if g < 2 || m == 0 {
            return None;
        }
        let h_min = c.hydrogens.iter().copied().min().unwrap_or(0);
        self.open.clear();
        self.open.extend((0..m).map(|j| c.empty[j].min(extra[j])));
        self.slack.clear();
        self.slack.extend((0..m).map(|j| {
            let fill = c.integral(j, h_min) - c.overlap[j];
            c.empty[j].max(fill)
        }));
        // Dominance: per group the multiplets it may take, and its
        // cheapest option (the search's first: lowest index among equals,
        // none last).
        self.start.clear();
        self.start.reserve(g + 1);
        self.start.push(0);
        self.list.clear();
        self.list.reserve(g * m);
        refill(&mut self.known, g, NONE);
        refill(&mut self.allowed, g * m, false);
        for (gi, &least) in cheapest.iter().enumerate() {
            let row = &c.pair[gi * m..(gi + 1) * m];
            let dominated = c.unassigned[gi] + MARGIN * (1.0 + c.unassigned[gi].abs());
            for (j, &p) in row.iter().enumerate() {
                if p <= dominated + self.slack[j] {
                    self.list.push(j as u16);
                    self.allowed[gi * m + j] = true;
                }
            }
            // The cheapest option costs `least` (the least of the
            // unassigned cost and the row): the first multiplet at that
            // cost, else none.
            self.known[gi] = row
                .iter()
                .position(|&p| p == least)
                .map_or(NONE, |j| j as u16);
            self.start.push(self.list.len() as u32);
        }
        let targets = Targets::Listed {
            start: &self.start,
            lines: &self.list,
            allowed: &self.allowed,
            m,
        };
        refill(&mut self.h, m, 0);
        refill(&mut self.k, m, 0);
        let mut known_cost = c.evaluate_in(&self.known, &mut self.h, &mut self.k);
        // Groups by H, larger first, ties by index: a counting sort by H
        // (a comparison sort of 30 groups cost more than the marginal
        // heuristic itself reads).
        let h_max = c.hydrogens.iter().copied().max().unwrap_or(0) as usize;
        self.order.clear();
        if h_max < 64 {
            let mut first = [0u32; 65];
            for &h in c.hydrogens {
                first[h_max - h as usize + 1] += 1;
            }
            for x in 1..=h_max {
                first[x + 1] += first[x];
            }
            self.order.resize(g, 0);
            for (gi, &h) in c.hydrogens.iter().enumerate() {
                let slot = &mut first[h_max - h as usize];
                self.order[*slot as usize] = gi;
                *slot += 1;
            }
        } else {
            self.order.extend(0..g);
            self.order
                .sort_by(|&a, &b| c.hydrogens[b].cmp(&c.hydrogens[a]).then(a.cmp(&b)));
        }
        refill(&mut self.trial, g, NONE);
        refill(&mut self.h, m, 0);
        refill(&mut self.k, m, 0);
        marginal(
            c,
            &self.order,
            targets,
            &mut self.h,
            &mut self.k,
            &mut self.trial,
            local,
        );
        refill(&mut self.h, m, 0);
        refill(&mut self.k, m, 0);
        let cost = c.evaluate_in(&self.trial, &mut self.h, &mut self.k);
        if cost < known_cost {
            self.known.copy_from_slice(&self.trial);
            known_cost = cost;
        }
        self.trial.copy_from_slice(&self.known);
        refill(&mut self.h, m, 0);
        refill(&mut self.k, m, 0);
        let cost = improve(c, &mut self.trial, &mut self.h, &mut self.k, targets, local);
        if cost < known_cost {
            self.known.copy_from_slice(&self.trial);
            known_cost = cost;
        }
        let mut parts = self.label(c, cheapest, root, known_cost);
        if self.largest(parts) > RETRY_ABOVE {
            // One large part: the heuristics may have missed a chain of
            // groups each one line off; the cheapest one-to-one assignment
            // (then the local search) is a second chance at a known
            // assignment good enough to cut the part.
            let mut trial = std::mem::take(&mut self.trial);
            self.matching.solve(c, &self.start, &self.list, &mut trial);
            refill(&mut self.h, m, 0);
            refill(&mut self.k, m, 0);
            let targets = Targets::Listed {
                start: &self.start,
                lines: &self.list,
                allowed: &self.allowed,
                m,
            };
            let cost = improve(c, &mut trial, &mut self.h, &mut self.k, targets, local);
            if cost < known_cost {
                self.known.copy_from_slice(&trial);
                known_cost = cost;
                parts = self.label(c, cheapest, root, known_cost);
            }
            self.trial = trial;
        }
        if (0..g).all(|x| self.part[x] == 0) {
            return None;
        }
        let counting =
            |start: &mut Vec<u32>, out: &mut Vec<u32>, fill: &mut Vec<u32>, of: &[u32]| {
                refill(start, parts + 1, 0);
                for &p in of {
                    start[p as usize + 1] += 1;
                }
                for p in 0..parts {
                    start[p + 1] += start[p];
                }
                fill.clear();
                fill.extend_from_slice(&start[..parts]);
                refill(out, of.len(), 0);
                for (x, &p) in of.iter().enumerate() {
                    out[fill[p as usize] as usize] = x as u32;
                    fill[p as usize] += 1;
                }
            };
        let (of_groups, of_lines) = self.part.split_at(g);
        counting(
            &mut self.group_start,
            &mut self.groups,
            &mut self.fill,
            of_groups,
        );
        counting(
            &mut self.line_start,
            &mut self.lines,
            &mut self.fill,
            of_lines,
        );
        Some(parts)
    }

    /// Reduced-cost fixing on the listed pairs against an assignment of
    /// cost `known_cost` (its own pairs stay), and the components of the
    /// pairs kept (`part` per node); returns their number.
    fn label(&mut self, c: &CostsRef, cheapest: &[f64], root: f64, known_cost: f64) -> usize {
        let (g, m) = (c.groups, c.multiplets);
        // Reduced-cost fixing on the pairs left; the known assignment's
        // own pairs stay.
        self.parent.clear();
        self.parent.extend(0..(g + m) as u32);
        let known_cost = known_cost + MARGIN * (1.0 + known_cost.abs());
        for (gi, &least) in cheapest.iter().enumerate() {
            let fixed = root - least;
            for &j in &self.list[self.start[gi] as usize..self.start[gi + 1] as usize] {
                let ju = j as usize;
                let p = c.pair[gi * m + ju];
                if self.known[gi] == j || fixed - self.open[ju] + p < known_cost {
                    let a = find(&mut self.parent, gi as u32);
                    let b = find(&mut self.parent, (g + ju) as u32);
                    if a != b {
                        self.parent[a.max(b) as usize] = a.min(b);
                    }
                }
            }
        }
        // Components numbered by their first node (a group, or a multiplet
        // no group reaches), groups and multiplets listed ascending.
        refill(&mut self.part, g + m, u32::MAX);
        let mut parts = 0u32;
        for x in 0..g + m {
            let r = find(&mut self.parent, x as u32) as usize;
            if self.part[r] == u32::MAX {
                self.part[r] = parts;
                parts += 1;
            }
            self.part[x] = self.part[r];
        }
        parts as usize
    }

    /// The most groups in one component (after `label`).
    fn largest(&mut self, parts: usize) -> usize {
        refill(&mut self.fill, parts, 0);
        for &p in &self.part[..self.known.len()] {
            self.fill[p as usize] += 1;
        }
        self.fill.iter().copied().max().unwrap_or(0) as usize
    }

    /// The known assignment (per group: a multiplet or [`NONE`]), after
    /// `parts`.
    pub fn known(&self) -> &[u16] {
        &self.known
    }

    /// Component `p`'s groups and multiplets (indices into the whole
    /// problem, ascending).
    pub fn members(&self, p: usize) -> (&[u32], &[u32]) {
        let gs = &self.groups[self.group_start[p] as usize..self.group_start[p + 1] as usize];
        let ls = &self.lines[self.line_start[p] as usize..self.line_start[p + 1] as usize];
        (gs, ls)
    }

    /// The known assignment on component `p` (after `parts`), in the
    /// part's own indices (its groups and multiplets in [`Self::members`]
    /// order), into `out`. The known assignment's pairs are always kept,
    /// so each of its multiplets is in its group's component.
    pub fn known_on(&self, p: usize, out: &mut Vec<u16>) {
        let (gs, ls) = self.members(p);
        out.clear();
        out.extend(gs.iter().map(|&x| match self.known[x as usize] {
            NONE => NONE,
            j => ls.binary_search(&u32::from(j)).map_or(NONE, |i| i as u16),
        }));
    }

    /// Component `p`'s share of the root bound: its groups' cheapest
    /// options and, per multiplet, the cheaper of staying empty and the
    /// least extra of a group going there.
    pub fn lower(&self, cheapest: &[f64], p: usize) -> f64 {
        let (gs, ls) = self.members(p);
        gs.iter().map(|&x| cheapest[x as usize]).sum::<f64>()
            + ls.iter().map(|&j| self.open[j as usize]).sum::<f64>()
    }

    /// Room in the part buffers for parts of up to `g` groups and `m`
    /// multiplets (each buffer then allocates once).
    pub fn reserve_parts(&mut self, g: usize, m: usize) {
        let part = &mut self.costs;
        part.pair.reserve((g * m).saturating_sub(part.pair.len()));
        part.unassigned
            .reserve(g.saturating_sub(part.unassigned.len()));
        part.hydrogens
            .reserve(g.saturating_sub(part.hydrogens.len()));
        part.observed_h
            .reserve(m.saturating_sub(part.observed_h.len()));
        part.empty.reserve(m.saturating_sub(part.empty.len()));
        part.overlap.reserve(m.saturating_sub(part.overlap.len()));
    }

    /// Copy component `p`'s numbers into the part buffers and view them.
    pub fn view<'s>(&'s mut self, c: &CostsRef, p: usize) -> CostsRef<'s> {
        let (g0, g1) = (
            self.group_start[p] as usize,
            self.group_start[p + 1] as usize,
        );
        let (l0, l1) = (self.line_start[p] as usize, self.line_start[p + 1] as usize);
        let m = c.multiplets;
        let (groups, lines) = (&self.groups[g0..g1], &self.lines[l0..l1]);
        let part = &mut self.costs;
        part.groups = g1 - g0;
        part.multiplets = l1 - l0;
        part.pair.clear();
        part.pair.reserve(groups.len() * lines.len());
        for &gi in groups {
            let row = &c.pair[gi as usize * m..];
            part.pair.extend(lines.iter().map(|&j| row[j as usize]));
        }
        pick(&mut part.unassigned, groups, c.unassigned);
        pick(&mut part.hydrogens, groups, c.hydrogens);
        pick(&mut part.observed_h, lines, c.observed_h);
        pick(&mut part.empty, lines, c.empty);
        pick(&mut part.overlap, lines, c.overlap);
        part.abs_sigma = c.abs_sigma;
        part.rel_sigma = c.rel_sigma;
        part.view()
    }
}
