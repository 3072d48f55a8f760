//! The line bound of the assignment search ([`super::assign`]): a Lagrangian
//! relaxation of the constraints "every group is placed exactly once (on one
//! multiplet or nowhere)", priced with one multiplier pi_g per group.
//!
//! With those constraints priced, the problem falls apart per multiplet:
//! multiplet j picks any subset S of the groups still to place and pays its
//! exact term f_j(H0 + h(S), k0 + |S|) plus, per group in S, pair(g, j) -
//! pi_g; each group may also take its unassigned cost un_g - pi_g, and every
//! group adds pi_g. A group may thus sit on several multiplets or on none
//! in the relaxed problem, but each multiplet's term is exact, so the bound
//! sees both what the Lagrangian bound over H (module `assign`, item 3)
//! cannot (a second group on a full line, two groups wanting one line) and
//! the integral deficit. Every multiplier vector gives a lower bound
//! (Lagrangian relaxation: Held & Karp, Math. Programming 1971, 1, 6; Fisher,
//! Management Science 1981, 27, 1). This is the relaxation of the
//! generalized assignment problem that drops the assignment constraints and
//! keeps one knapsack per agent (Fisher, Jaikumar & Van Wassenhove,
//! Management Science 1986, 32, 1095; from memory); here a multiplet's
//! "knapsack" is an exact minimum over subsets by the H they add up to, a
//! 0/1 knapsack table (Bellman, Dynamic Programming, 1957) per multiplet and
//! depth of the search:
//!
//! `table[j][d][x]` = least sum of pair(g, j) - pi_g + overlap_j over the
//! subsets of the groups at depth >= d whose H add up to x.
//!
//! A search node at depth d with H0_j and k0_j already on multiplet j then
//! costs, beyond what the placed groups paid,
//!
//! `sum_{depth >= d} (pi_g + min(0, un_g - pi_g))`
//! `+ sum_j min_x (table[j][d][x] + f_j(H0_j + x, k0_j + [x > 0]) - overlap_j [x > 0])`
//!
//! in O(M x H) per node (the overlap of every group beyond the first is in
//! the table's per-group overlap_j). Groups with no H would make x = 0
//! ambiguous; the bound is not used when one occurs.
//!
//! The multipliers are chosen once per instance on the root problem by
//! subgradient ascent with the step of Held, Wolfe & Crowder (Math.
//! Programming 1974, 6, 62): step = theta (best known cost - bound) /
//! |subgradient|^2, theta halved after a few steps without progress. The
//! relaxed solution of each step, made feasible (a group kept on its first
//! multiplet, left out when on none) is offered to the search as an
//! incumbent.

use super::assign::{refill, CostsRef, NONE};

/// Subgradient steps at most, the first theta, and the steps without
/// progress after which theta is halved.
const STEPS: usize = 60;
const FIRST_THETA: f64 = 2.0;
const PATIENCE: usize = 4;

/// The bound's tables for one instance.
#[derive(Clone, Debug, Default)]
pub(crate) struct LineBound {
    pub ready: bool,
    /// The bound at the root, when prepared there (for the tests).
    pub root: Option<f64>,
    /// Total H + 1.
    width: usize,
    /// Groups + 1 (the depths of the table).
    depths: usize,
    /// Multiplier per depth of the search order.
    pi: Vec<f64>,
    best_pi: Vec<f64>,
    /// `base[d]`: sum over depth >= d of pi + min(0, un - pi).
    base: Vec<f64>,
    /// `table[(j * depths + d) * width + x]` (module doc).
    table: Vec<f64>,
    /// `integral[j * width + h]`: the integral term of multiplet j at h H.
    integral: Vec<f64>,
    /// Per depth: multiplets (and the unassigned option) using the group in
    /// the relaxed solution.
    used: Vec<i32>,
    /// The relaxed solution made feasible, per group.
    relaxed: Vec<u16>,
    /// Added to every bound: the tests raise it to check that they catch a
    /// bound above the optimum.
    #[cfg(test)]
    pub raise: f64,
}

/// What the search knows when it prepares the bound.
pub(crate) struct Order<'a> {
    /// Groups in search order.
    pub order: &'a [usize],
    /// `suffix_h[d]`: H of the groups at depth >= d.
    pub suffix_h: &'a [u32],
    /// Cheapest option per depth (the first multipliers).
    pub cheapest: &'a [f64],
}

impl LineBound {
    /// Whether the bound applies (every group holds at least one H).
    pub fn applies(c: &CostsRef) -> bool {
        c.hydrogens.iter().all(|&h| h > 0)
    }

    /// Choose the multipliers and fill the tables. `offer` takes a feasible
    /// assignment (per group) and returns the best known cost after it.
    pub fn prepare(
        &mut self,
        c: &CostsRef,
        o: &Order,
        mut best: f64,
        offer: &mut dyn FnMut(&[u16]) -> f64,
    ) {
        let (g, m) = (c.groups, c.multiplets);
        let total = o.suffix_h[0] as usize;
        self.width = total + 1;
        self.depths = g + 1;
        let w = self.width;
        refill(&mut self.integral, m * w, 0.0);
        for j in 0..m {
            for h in 0..w {
                self.integral[j * w + h] = c.integral(j, h as u32);
            }
        }
        refill(&mut self.table, m * self.depths * w, f64::INFINITY);
        refill(&mut self.base, g + 1, 0.0);
        self.pi.clear();
        self.pi.extend_from_slice(o.cheapest);
        self.best_pi.clone_from(&self.pi);
        refill(&mut self.used, g, 0);
        refill(&mut self.relaxed, g, NONE);
        let mut best_value = f64::NEG_INFINITY;
        let mut theta = FIRST_THETA;
        let mut stale = 0;
        for _ in 0..STEPS {
            self.fill(c, o);
            let value = self.bound(c, 0, &[], &[], total as u32);
            if value > best_value {
                best_value = value;
                self.best_pi.clone_from(&self.pi);
                stale = 0;
            } else {
                stale += 1;
                if stale >= PATIENCE {
                    theta /= 2.0;
                    stale = 0;
                    if theta < FIRST_THETA / 16.0 {
                        // No progress over four halvings: stop paying.
                        break;
                    }
                }
            }
            if value >= best - 1e-9 * (1.0 + best.abs()) {
                break;
            }
            // The relaxed solution: uses per group and a feasible copy.
            self.relaxed_solution(c, o, total);
            best = best.min(offer(&self.relaxed));
            let norm: f64 = self.used.iter().map(|&u| ((1 - u) * (1 - u)) as f64).sum();
            if norm == 0.0 {
                // Every group used once: the relaxed solution is feasible
                // and its cost is the bound, so nothing can be cheaper.
                break;
            }
            let step = theta * (best - value).max(0.0) / norm;
            for d in 0..g {
                self.pi[d] += step * (1 - self.used[d]) as f64;
            }
        }
        self.pi.clone_from(&self.best_pi);
        self.fill(c, o);
        self.ready = true;
    }

    /// The tables for the current multipliers.
    fn fill(&mut self, c: &CostsRef, o: &Order) {
        let (g, m) = (c.groups, c.multiplets);
        let (w, depths) = (self.width, self.depths);
        self.base[g] = 0.0;
        for d in (0..g).rev() {
            let gi = o.order[d];
            let pi = self.pi[d];
            self.base[d] = self.base[d + 1] + pi + (c.unassigned[gi] - pi).min(0.0);
        }
        for j in 0..m {
            let at = j * depths;
            let last = (at + g) * w;
            self.table[last..last + w].fill(f64::INFINITY);
            self.table[last] = 0.0;
            for d in (0..g).rev() {
                let gi = o.order[d];
                let h = c.hydrogens[gi] as usize;
                let r = c.pair[gi * m + j] - self.pi[d] + c.overlap[j];
                let reach = o.suffix_h[d] as usize;
                let (lower, upper) = self.table.split_at_mut((at + d + 1) * w);
                let next = &upper[..w];
                let this = &mut lower[(at + d) * w..];
                for x in 0..=reach {
                    let keep = next[x];
                    this[x] = if x >= h {
                        keep.min(next[x - h] + r)
                    } else {
                        keep
                    };
                }
                for v in this[reach + 1..w].iter_mut() {
                    *v = f64::INFINITY;
                }
            }
        }
    }

    /// Multiplet j's least term at depth `d` holding `h0` H in `k0` groups,
    /// with `reach` H still to place; and the x that gives it.
    fn line(
        &self,
        c: &CostsRef,
        j: usize,
        d: usize,
        h0: u32,
        k0: u32,
        reach: usize,
    ) -> (f64, usize) {
        let w = self.width;
        let row = &self.table[(j * self.depths + d) * w..][..reach + 1];
        let integral = &self.integral[j * w + h0 as usize..];
        let fixed = c.overlap[j] * (k0 as f64 - 1.0);
        let mut best = (f64::INFINITY, 0);
        for (x, &t) in row.iter().enumerate() {
            let v = if x == 0 && k0 == 0 {
                c.empty[j]
            } else {
                t + integral[x] + fixed
            };
            if v < best.0 {
                best = (v, x);
            }
        }
        best
    }

    /// The bound on the cost of any completion from depth `d`, without what
    /// the placed groups paid; `h`, `k` per multiplet (empty slices: none
    /// placed).
    /// Multiplet j's term in [`LineBound::bound`].
    pub fn term(&self, c: &CostsRef, j: usize, d: usize, h0: u32, k0: u32, reach: u32) -> f64 {
        self.line(c, j, d, h0, k0, reach as usize).0
    }

    /// The part of [`LineBound::bound`] that is not per multiplet (with the
    /// tests' raise).
    pub fn base(&self, d: usize) -> f64 {
        #[cfg(test)]
        {
            self.base[d] + self.raise
        }
        #[cfg(not(test))]
        {
            self.base[d]
        }
    }

    pub fn bound(&self, c: &CostsRef, d: usize, h: &[u32], k: &[u32], reach: u32) -> f64 {
        let mut total = self.base(d);
        for j in 0..c.multiplets {
            let (h0, k0) = if h.is_empty() { (0, 0) } else { (h[j], k[j]) };
            total += self.line(c, j, d, h0, k0, reach as usize).0;
        }
        total
    }

    /// The root relaxation's choices: `used` per depth, and `relaxed` per
    /// group (first multiplet that takes it, else unassigned).
    fn relaxed_solution(&mut self, c: &CostsRef, o: &Order, total: usize) {
        let (g, m) = (c.groups, c.multiplets);
        let w = self.width;
        for d in 0..g {
            let gi = o.order[d];
            self.used[d] = (c.unassigned[gi] < self.pi[d]) as i32;
            self.relaxed[gi] = NONE;
        }
        for j in 0..m {
            let (_, mut x) = self.line(c, j, 0, 0, 0, total);
            let at = j * self.depths;
            for d in 0..g {
                if x == 0 {
                    break;
                }
                let here = self.table[(at + d) * w + x];
                if here < self.table[(at + d + 1) * w + x] {
                    let gi = o.order[d];
                    self.used[d] += 1;
                    if self.relaxed[gi] == NONE {
                        self.relaxed[gi] = j as u16;
                    }
                    x -= c.hydrogens[gi] as usize;
                }
            }
        }
    }
}
