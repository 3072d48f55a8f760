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

impl Costs {
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

    /// Total cost of a complete assignment (group -> multiplet or NONE).
    pub fn evaluate(&self, choice: &[u16]) -> f64 {
        let m = self.multiplets;
        let mut h = vec![0u32; m];
        let mut k = vec![0u32; m];
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

struct Search<'a> {
    c: &'a Costs,
    order: Vec<usize>,
    /// Options per depth: (separable cost, multiplet or NONE), cheapest first.
    options: Vec<Vec<(f64, u16)>>,
    suffix_min: Vec<f64>,
    suffix_h: Vec<u32>,
    /// `suffix_extra[d * m + j]`: least extra cost (over its cheapest option)
    /// for any group at depth >= d to go to multiplet j.
    suffix_extra: Vec<f64>,
    sigma2: Vec<f64>,
    h: Vec<u32>,
    k: Vec<u32>,
    current: Vec<u16>,
    best: f64,
    best_choice: Option<Vec<u16>>,
    nodes: u64,
}

/// Find the cheapest assignment whose cost is below `cutoff`
/// (`f64::INFINITY` for no cutoff). `None` when none is.
pub fn solve(c: &Costs, cutoff: f64) -> Option<Solution> {
    let (g, m) = (c.groups, c.multiplets);
    // Cheap root bound first: most candidates of a large enumeration are
    // hopeless and leave here before any sorting or search.
    let min_choice: Vec<f64> = (0..g)
        .map(|gi| {
            c.pair[gi * m..(gi + 1) * m]
                .iter()
                .fold(c.unassigned[gi], |a, &b| a.min(b))
        })
        .collect();
    let root = min_choice.iter().sum::<f64>()
        + (0..m)
            .map(|j| {
                let extra = (0..g)
                    .map(|gi| c.pair[gi * m + j] - min_choice[gi])
                    .fold(f64::INFINITY, f64::min);
                c.empty[j].min(extra)
            })
            .sum::<f64>();
    if root >= cutoff {
        return None;
    }
    // Larger groups first: they decide the integrals; ties by index.
    let mut order: Vec<usize> = (0..g).collect();
    order.sort_by(|&a, &b| c.hydrogens[b].cmp(&c.hydrogens[a]).then(a.cmp(&b)));
    // Separable options of each group (in search order), cheapest first.
    let options: Vec<Vec<(f64, u16)>> = order
        .iter()
        .map(|&gi| {
            let mut v: Vec<(f64, u16)> = (0..m)
                .map(|j| (c.pair[gi * m + j], j as u16))
                .chain(std::iter::once((c.unassigned[gi], NONE)))
                .collect();
            v.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
            v
        })
        .collect();
    // Greedy incumbent: each group on its cheapest option.
    let mut greedy = vec![NONE; g];
    for (d, &gi) in order.iter().enumerate() {
        greedy[gi] = options[d][0].1;
    }
    let greedy_cost = c.evaluate(&greedy);
    let mut suffix_min = vec![0.0; g + 1];
    let mut suffix_h = vec![0u32; g + 1];
    for d in (0..g).rev() {
        suffix_min[d] = suffix_min[d + 1] + options[d][0].0;
        suffix_h[d] = suffix_h[d + 1] + c.hydrogens[order[d]];
    }
    let mut suffix_extra = vec![f64::INFINITY; (g + 1) * m];
    for d in (0..g).rev() {
        let gi = order[d];
        for j in 0..m {
            let extra = c.pair[gi * m + j] - min_choice[gi];
            suffix_extra[d * m + j] = suffix_extra[(d + 1) * m + j].min(extra);
        }
    }
    let sigma2 = (0..m)
        .map(|j| {
            let i = c.observed_h[j].unwrap_or(0.0);
            let s = c.abs_sigma + c.rel_sigma * i;
            s * s
        })
        .collect();
    let (best, best_choice) = if greedy_cost < cutoff {
        (greedy_cost, Some(greedy))
    } else {
        (cutoff, None)
    };
    let mut s = Search {
        c,
        order,
        options,
        suffix_min,
        suffix_h,
        suffix_extra,
        sigma2,
        h: vec![0; m],
        k: vec![0; m],
        current: vec![NONE; g],
        best,
        best_choice,
        nodes: 0,
    };
    s.dfs(0, 0.0);
    let nodes = s.nodes;
    s.best_choice.map(|choice| Solution {
        cost: s.best,
        choice,
        nodes,
    })
}

impl<'a> Search<'a> {
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
        let c = self.c;
        if d == self.order.len() {
            let total = partial
                + (0..c.multiplets)
                    .map(|j| c.multiplet(j, self.h[j], self.k[j]))
                    .sum::<f64>();
            if total < self.best {
                self.best = total;
                let mut choice = vec![NONE; self.order.len()];
                for (depth, &g) in self.order.iter().enumerate() {
                    choice[g] = self.current[depth];
                }
                self.best_choice = Some(choice);
            }
            return;
        }
        let g = self.order[d];
        let hg = c.hydrogens[g];
        for oi in 0..self.options[d].len() {
            let (cost, j) = self.options[d][oi];
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

    /// Small deterministic pseudo-random numbers (xorshift) for the test.
    fn rng(state: &mut u64) -> f64 {
        *state ^= *state << 13;
        *state ^= *state >> 7;
        *state ^= *state << 17;
        (*state % 10_000) as f64 / 10_000.0
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
