//! The assignment search as it was before the symmetry reduction and the
//! Lagrangian bound of [`super::assign`] (2026-12-02): depth-first branch
//! and bound over groups in a fixed order, with the root, overfill and
//! deficit bounds described in `assign.rs`'s history. Not used by the
//! ranking: kept as the reference the new search is tested against
//! (`assign::tests`) and timed beside (`examples/bench_assign.rs`).

use super::assign::{refill, root_bound, Costs, CostsRef, Solution, NONE};

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
