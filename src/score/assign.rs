//! Exact best assignment of predicted groups to observed multiplets, by
//! depth-first branch and bound.
//!
//! The problem: each of G predicted groups goes to one of M observed
//! multiplets or to none; several groups may share one multiplet (overlap).
//! The cost is separable per group (shift, multiplicity, J, or the
//! unassigned penalty) plus a per-multiplet term that depends on the set of
//! groups it holds (integral mismatch of their H sum, overlap, or the
//! unexplained penalty when empty). The per-multiplet term couples the
//! groups, so a greedy choice per group is not optimal; an assignment
//! problem solver (Hungarian method) does not apply because assignments are
//! many-to-one with a non-linear integral term.
//!
//! Branch and bound (Land & Doig, Econometrica 1960, 28, 497) over groups in
//! a fixed order, each group's options tried cheapest first. The bound at a
//! node adds to the cost so far:
//! - the cheapest option of every group still to place (their separable part);
//! - for each multiplet already holding groups: its overlap cost and, when it
//!   already holds more H than observed, its integral cost (the H sum only
//!   grows, and the integral cost grows with it past the observed value);
//! - for each multiplet still empty: the cheaper of staying empty (its
//!   unexplained cost) and the least extra any group still to place would
//!   pay to go there instead of to its own cheapest option (each group fills
//!   at most one multiplet, so these extras add up without double counting);
//! - the deficit bound: multiplets holding fewer H than observed need
//!   D H more in total, the groups left carry R H, so at least D - R H stay
//!   missing; with quadratic costs the cheapest way to spread them is
//!   proportional to sigma^2, giving (D - R)^2 / (2 sum sigma^2).
//!
//! Every term is a valid lower bound, so the search returns the exact optimum.
//! A cutoff (the current k-th best cost of the ranking) makes the search
//! return nothing as soon as no assignment can beat it.

/// Marker for "no observed multiplet".
pub const NONE: u16 = u16::MAX;

/// The numbers the search needs, precomputed for one candidate.
pub struct Costs {
    pub groups: usize,
    pub multiplets: usize,
    /// `pair[g * multiplets + j]`: separable cost of group g on multiplet j.
    pub pair: Vec<f64>,
    /// Cost of leaving group g unassigned.
    pub unassigned: Vec<f64>,
    pub hydrogens: Vec<u32>,
    /// Observed H of multiplet j (None: no integral given).
    pub observed_h: Vec<Option<f64>>,
    /// Cost of multiplet j when it holds no group.
    pub empty: Vec<f64>,
    /// Cost per group beyond the first in multiplet j.
    pub overlap: Vec<f64>,
    pub abs_sigma: f64,
    pub rel_sigma: f64,
}

/// The same numbers borrowed: what the search reads. Lets a caller keep the
/// spectrum-constant arrays once per ranking and the per-candidate ones in
/// reused buffers.
#[derive(Clone, Copy)]
pub struct CostsRef<'c> {
    pub groups: usize,
    pub multiplets: usize,
    pub pair: &'c [f64],
    pub unassigned: &'c [f64],
    pub hydrogens: &'c [u32],
    pub observed_h: &'c [Option<f64>],
    pub empty: &'c [f64],
    pub overlap: &'c [f64],
    pub abs_sigma: f64,
    pub rel_sigma: f64,
}

impl Costs {
    pub fn view(&self) -> CostsRef<'_> {
        CostsRef {
            groups: self.groups,
            multiplets: self.multiplets,
            pair: &self.pair,
            unassigned: &self.unassigned,
            hydrogens: &self.hydrogens,
            observed_h: &self.observed_h,
            empty: &self.empty,
            overlap: &self.overlap,
            abs_sigma: self.abs_sigma,
            rel_sigma: self.rel_sigma,
        }
    }

    /// Final cost of multiplet j holding k groups with h H.
    pub fn multiplet(&self, j: usize, h: u32, k: u32) -> f64 {
        self.view().multiplet(j, h, k)
    }

    /// Total cost of a complete assignment (group -> multiplet or NONE).
    pub fn evaluate(&self, choice: &[u16]) -> f64 {
        let m = self.multiplets;
        self.view()
            .evaluate_in(choice, &mut vec![0u32; m], &mut vec![0u32; m])
    }
}

impl CostsRef<'_> {
    fn integral(&self, j: usize, h: u32) -> f64 {
        match self.observed_h[j] {
            Some(i) => {
                let h = h as f64;
                let s = self.abs_sigma + self.rel_sigma * i.max(h);
                (i - h) * (i - h) / (2.0 * s * s)
            }
            None => 0.0,
        }
    }

    /// Final cost of multiplet j holding k groups with h H.
    pub fn multiplet(&self, j: usize, h: u32, k: u32) -> f64 {
        if k == 0 {
            self.empty[j]
        } else {
            self.integral(j, h) + self.overlap[j] * (k - 1) as f64
        }
    }

    /// Total cost of a complete assignment; `h` and `k` are zeroed scratch
    /// of length `multiplets` (left dirty).
    fn evaluate_in(&self, choice: &[u16], h: &mut [u32], k: &mut [u32]) -> f64 {
        let m = self.multiplets;
        let mut total = 0.0;
        for (g, &j) in choice.iter().enumerate() {
            if j == NONE {
                total += self.unassigned[g];
            } else {
                let j = j as usize;
                total += self.pair[g * m + j];
                h[j] += self.hydrogens[g];
                k[j] += 1;
            }
        }
        total + (0..m).map(|j| self.multiplet(j, h[j], k[j])).sum::<f64>()
    }
}

/// The optimum: its cost and, per group, the multiplet index or [`NONE`].
#[derive(Clone, Debug, PartialEq)]
pub struct Solution {
    pub cost: f64,
    pub choice: Vec<u16>,
    /// Search nodes visited (for benchmarks).
    pub nodes: u64,
}

/// Buffers of one search, kept between calls so that scoring a stream of
/// candidates allocates nothing once they have grown to the largest size.
#[derive(Clone, Debug, Default)]
pub struct Workspace {
    min_choice: Vec<f64>,
    order: Vec<usize>,
    /// Options of the group at depth d: `options[d * (m + 1)..][..m + 1]`.
    options: Vec<(f64, u16)>,
    greedy: Vec<u16>,
    suffix_min: Vec<f64>,
    suffix_h: Vec<u32>,
    suffix_extra: Vec<f64>,
    sigma2: Vec<f64>,
    h: Vec<u32>,
    k: Vec<u32>,
    current: Vec<u16>,
    best_choice: Vec<u16>,
    nodes: u64,
}

impl Workspace {
    /// Per group, the multiplet or [`NONE`] of the last successful
    /// [`solve_in`].
    pub fn choice(&self) -> &[u16] {
        &self.best_choice
    }

    /// Search nodes of the last [`solve_in`].
    pub fn nodes(&self) -> u64 {
        self.nodes
    }
}

fn refill<T: Copy>(v: &mut Vec<T>, n: usize, x: T) {
    v.clear();
    v.resize(n, x);
}

/// The root bound: every group on its cheapest option, plus per multiplet the
/// cheaper of staying empty and the least extra a group pays to go there.
/// Fills `min_choice` with each group's cheapest option.
pub fn root_bound(c: &CostsRef, min_choice: &mut Vec<f64>) -> f64 {
    let (g, m) = (c.groups, c.multiplets);
    min_choice.clear();
    min_choice.extend((0..g).map(|gi| {
        c.pair[gi * m..(gi + 1) * m]
            .iter()
            .fold(c.unassigned[gi], |a, &b| a.min(b))
    }));
    min_choice.iter().sum::<f64>()
        + (0..m)
            .map(|j| {
                let extra = (0..g)
                    .map(|gi| c.pair[gi * m + j] - min_choice[gi])
                    .fold(f64::INFINITY, f64::min);
                c.empty[j].min(extra)
            })
            .sum::<f64>()
}

struct Search<'a> {
    c: &'a CostsRef<'a>,
    order: &'a [usize],
    /// Options per depth: (separable cost, multiplet or NONE), cheapest first.
    options: &'a [(f64, u16)],
    stride: usize,
    suffix_min: &'a [f64],
    suffix_h: &'a [u32],
    /// `suffix_extra[d * m + j]`: least extra cost (over its cheapest option)
    /// for any group at depth >= d to go to multiplet j.
    suffix_extra: &'a [f64],
    sigma2: &'a [f64],
    h: &'a mut [u32],
    k: &'a mut [u32],
    current: &'a mut [u16],
    best: f64,
    best_choice: &'a mut [u16],
    found: bool,
    nodes: u64,
    /// Existence mode: stop at the first assignment below the cutoff.
    first_only: bool,
    /// Give up (set `stop`) beyond this many nodes.
    max_nodes: u64,
    stop: bool,
}

/// Find the cheapest assignment whose cost is below `cutoff`
/// (`f64::INFINITY` for no cutoff). `None` when none is.
pub fn solve(c: &Costs, cutoff: f64) -> Option<Solution> {
    let mut ws = Workspace::default();
    let cost = solve_in(&c.view(), cutoff, &mut ws)?;
    Some(Solution {
        cost,
        choice: ws.best_choice,
        nodes: ws.nodes,
    })
}

/// [`solve`] in reused buffers: the cost, with the assignment left in
/// [`Workspace::choice`].
pub fn solve_in(c: &CostsRef, cutoff: f64, ws: &mut Workspace) -> Option<f64> {
    match run(c, cutoff, ws, false, u64::MAX) {
        Outcome::Below(cost) => Some(cost),
        _ => None,
    }
}

/// Whether some assignment may cost less than `cutoff`: the same search,
/// stopped at the first assignment below the cutoff, and giving up with
/// `true` ("not ruled out") after `max_nodes` nodes. `false` only when the
/// whole search found nothing below the cutoff.
pub fn may_reach_below(c: &CostsRef, cutoff: f64, ws: &mut Workspace, max_nodes: u64) -> bool {
    !matches!(run(c, cutoff, ws, true, max_nodes), Outcome::Nothing)
}

enum Outcome {
    /// The best (or, in existence mode, the first) cost below the cutoff.
    Below(f64),
    Nothing,
    GaveUp,
}

fn run(c: &CostsRef, cutoff: f64, ws: &mut Workspace, first_only: bool, max_nodes: u64) -> Outcome {
    let (g, m) = (c.groups, c.multiplets);
    ws.nodes = 0;
    // Cheap root bound first: most candidates of a large enumeration are
    // hopeless and leave here before any sorting or search.
    let root = root_bound(c, &mut ws.min_choice);
    if root >= cutoff {
        return Outcome::Nothing;
    }
    let Workspace {
        min_choice,
        order,
        options,
        greedy,
        suffix_min,
        suffix_h,
        suffix_extra,
        sigma2,
        h,
        k,
        current,
        best_choice,
        nodes,
    } = ws;
    // Larger groups first: they decide the integrals; ties by index. The
    // comparison is a total order without ties, so the unstable sort (no
    // allocation) gives the same order as a stable one.
    order.clear();
    order.extend(0..g);
    order.sort_unstable_by(|&a, &b| c.hydrogens[b].cmp(&c.hydrogens[a]).then(a.cmp(&b)));
    // Separable options of each group (in search order), cheapest first.
    let stride = m + 1;
    options.clear();
    for &gi in order.iter() {
        let from = options.len();
        options.extend((0..m).map(|j| (c.pair[gi * m + j], j as u16)));
        options.push((c.unassigned[gi], NONE));
        options[from..].sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    }
    // Greedy incumbent: each group on its cheapest option.
    refill(greedy, g, NONE);
    for (d, &gi) in order.iter().enumerate() {
        greedy[gi] = options[d * stride].1;
    }
    refill(h, m, 0);
    refill(k, m, 0);
    let greedy_cost = c.evaluate_in(greedy, h, k);
    if first_only && greedy_cost < cutoff {
        return Outcome::Below(greedy_cost);
    }
    refill(h, m, 0);
    refill(k, m, 0);
    refill(suffix_min, g + 1, 0.0);
    refill(suffix_h, g + 1, 0);
    for d in (0..g).rev() {
        suffix_min[d] = suffix_min[d + 1] + options[d * stride].0;
        suffix_h[d] = suffix_h[d + 1] + c.hydrogens[order[d]];
    }
    refill(suffix_extra, (g + 1) * m, f64::INFINITY);
    for d in (0..g).rev() {
        let gi = order[d];
        for j in 0..m {
            let extra = c.pair[gi * m + j] - min_choice[gi];
            suffix_extra[d * m + j] = suffix_extra[(d + 1) * m + j].min(extra);
        }
    }
    sigma2.clear();
    sigma2.extend((0..m).map(|j| {
        let i = c.observed_h[j].unwrap_or(0.0);
        let s = c.abs_sigma + c.rel_sigma * i;
        s * s
    }));
    refill(best_choice, g, NONE);
    let (best, found) = if greedy_cost < cutoff {
        best_choice.copy_from_slice(greedy);
        (greedy_cost, true)
    } else {
        (cutoff, false)
    };
    refill(current, g, NONE);
    let mut s = Search {
        c,
        order,
        options,
        stride,
        suffix_min,
        suffix_h,
        suffix_extra,
        sigma2,
        h,
        k,
        current,
        best,
        best_choice,
        found,
        nodes: 0,
        first_only,
        max_nodes,
        stop: false,
    };
    s.dfs(0, 0.0);
    *nodes = s.nodes;
    if s.found {
        Outcome::Below(s.best)
    } else if s.stop {
        Outcome::GaveUp
    } else {
        Outcome::Nothing
    }
}

impl Search<'_> {
    /// Lower bound on the multiplet terms of any completion when the groups
    /// from depth `next` on are still to place.
    fn multiplet_bound(&self, next: usize) -> f64 {
        let c = self.c;
        let m = c.multiplets;
        let remaining = self.suffix_h[next];
        let mut bound = 0.0;
        let mut deficit = 0.0;
        let mut sigma2 = 0.0;
        for j in 0..m {
            let k = self.k[j];
            if k == 0 {
                bound += c.empty[j].min(self.suffix_extra[next * m + j]);
                continue;
            }
            bound += c.overlap[j] * (k - 1) as f64;
            if let Some(i) = c.observed_h[j] {
                let h = self.h[j] as f64;
                if h > i {
                    bound += c.integral(j, self.h[j]);
                } else {
                    deficit += i - h;
                    sigma2 += self.sigma2[j];
                }
            }
        }
        let unfilled = deficit - remaining as f64;
        if unfilled > 0.0 && sigma2 > 0.0 {
            bound += unfilled * unfilled / (2.0 * sigma2);
        }
        bound
    }

    fn dfs(&mut self, d: usize, partial: f64) {
        self.nodes += 1;
        if self.nodes > self.max_nodes {
            self.stop = true;
            return;
        }
        let c = self.c;
        if d == self.order.len() {
            let total = partial
                + (0..c.multiplets)
                    .map(|j| c.multiplet(j, self.h[j], self.k[j]))
                    .sum::<f64>();
            if total < self.best {
                self.best = total;
                self.found = true;
                for (depth, &g) in self.order.iter().enumerate() {
                    self.best_choice[g] = self.current[depth];
                }
                self.stop = self.first_only;
            }
            return;
        }
        let g = self.order[d];
        let hg = c.hydrogens[g];
        for oi in 0..self.stride {
            let (cost, j) = self.options[d * self.stride + oi];
            let base = partial + cost + self.suffix_min[d + 1];
            if base >= self.best {
                // Options are sorted: every later one is at least as dear.
                break;
            }
            if j != NONE {
                self.h[j as usize] += hg;
                self.k[j as usize] += 1;
            }
            if base + self.multiplet_bound(d + 1) < self.best {
                self.current[d] = j;
                self.dfs(d + 1, partial + cost);
                if self.stop {
                    return;
                }
            }
            if j != NONE {
                self.h[j as usize] -= hg;
                self.k[j as usize] -= 1;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::score::testgen::rng;

    /// Exhaustive reference: every one of (M+1)^G assignments.
    fn brute(c: &Costs) -> f64 {
        let (g, m) = (c.groups, c.multiplets);
        let mut best = f64::INFINITY;
        let mut choice = vec![0u16; g];
        let total = (m + 1).pow(g as u32);
        for mut code in 0..total {
            for x in choice.iter_mut() {
                let v = code % (m + 1);
                code /= m + 1;
                *x = if v == m { NONE } else { v as u16 };
            }
            best = best.min(c.evaluate(&choice));
        }
        best
    }

    #[test]
    fn branch_and_bound_equals_exhaustive_search() {
        let mut st = 0x9e3779b97f4a7c15u64;
        for _ in 0..300 {
            let g = 1 + (rng(&mut st) * 5.0) as usize;
            let m = 1 + (rng(&mut st) * 4.0) as usize;
            let c = Costs {
                groups: g,
                multiplets: m,
                pair: (0..g * m).map(|_| rng(&mut st) * 6.0).collect(),
                unassigned: (0..g).map(|_| 1.0 + rng(&mut st) * 6.0).collect(),
                hydrogens: (0..g).map(|_| 1 + (rng(&mut st) * 3.0) as u32).collect(),
                observed_h: (0..m)
                    .map(|_| {
                        let x = rng(&mut st);
                        (x > 0.1).then(|| 1.0 + (x * 5.0).floor())
                    })
                    .collect(),
                empty: (0..m).map(|_| 2.0 + rng(&mut st) * 5.0).collect(),
                overlap: (0..m).map(|_| rng(&mut st) * 2.0).collect(),
                abs_sigma: 0.25,
                rel_sigma: 0.06,
            };
            let exact = brute(&c);
            let s = solve(&c, f64::INFINITY).unwrap();
            assert!((s.cost - exact).abs() < 1e-9, "{} vs {exact}", s.cost);
            assert!((c.evaluate(&s.choice) - s.cost).abs() < 1e-9);
            // With a cutoff below the optimum nothing is returned.
            assert!(solve(&c, exact - 1e-6).is_none());
            // The existence search agrees, and gives up only with "maybe".
            let mut ws = Workspace::default();
            assert!(may_reach_below(&c.view(), exact + 1e-6, &mut ws, u64::MAX));
            assert!(!may_reach_below(&c.view(), exact - 1e-6, &mut ws, u64::MAX));
            assert!(may_reach_below(&c.view(), exact + 1e-6, &mut ws, 1));
        }
    }

    #[test]
    fn overlap_beats_greedy_when_integrals_demand_it() {
        // Two 1H groups both closest to a 2H multiplet 0; multiplet 1 (1H) is
        // a little further from both. Greedy puts both on 0 (fits 2H);
        // a 3rd 1H group then must decide. Check the optimum is found.
        let c = Costs {
            groups: 3,
            multiplets: 2,
            pair: vec![0.0, 1.0, 0.0, 1.0, 0.5, 0.6],
            unassigned: vec![5.0; 3],
            hydrogens: vec![1, 1, 1],
            observed_h: vec![Some(2.0), Some(1.0)],
            empty: vec![4.0, 4.0],
            overlap: vec![0.3, 0.3],
            abs_sigma: 0.25,
            rel_sigma: 0.06,
        };
        let s = solve(&c, f64::INFINITY).unwrap();
        assert_eq!(s.choice, vec![0, 0, 1]);
        assert!((s.cost - brute(&c)).abs() < 1e-12);
    }
}
