//! The cheapest one-to-one assignment of groups to multiplets over short
//! per-group lists: a known assignment for [`super::split`] when its
//! heuristics leave one large part.
//!
//! One-to-one (each multiplet holds at most one group, a group may stay
//! unassigned) is a restriction of the search's problem (which allows
//! overlap), so its optimum is a feasible assignment, not a bound. Its cost
//! is separable: group g alone on multiplet j costs
//! pair(g, j) + integral_j(h_g) instead of empty_j, so the problem is a
//! rectangular linear assignment problem (rows: groups; columns: the listed
//! multiplets plus one private "unassigned" column per group). It catches
//! what the local search of `assign::improve` cannot: a chain of groups each
//! sitting one line off (a cyclic shift of three or more groups).
//!
//! Solved by successive shortest augmenting paths with dual potentials (the
//! Hungarian method of Kuhn, Naval Res. Logist. Q. 1955, 2, 83, and Munkres,
//! J. SIAM 1957, 5, 32, in the shortest-path form of Tomizawa, Networks
//! 1971, 1, 173 and Jonker & Volgenant, Computing 1987, 38, 325; from
//! memory): one Dijkstra (Numer. Math. 1959, 1, 269) per group over the
//! sparse lists, each reaching at least its own free "unassigned" column,
//! so every group ends somewhere. Rounding can only make the result a
//! worse heuristic, never infeasible: every row keeps a listed column.

use super::assign::{refill, CostsRef, NONE};

/// The matching's buffers, kept between calls.
#[derive(Clone, Debug, Default)]
pub(crate) struct Matching {
    /// Column potentials: multiplets 0..m, then group g's own column m + g.
    v: Vec<f64>,
    /// Per column: the row holding it, or `u32::MAX`.
    row_of: Vec<u32>,
    /// Per row: its column.
    col_of: Vec<u32>,
    /// Per column: tentative distance, predecessor row, scanned flag.
    dist: Vec<f64>,
    pred: Vec<u32>,
    scanned: Vec<bool>,
    /// Columns with a finite distance in the current search.
    touched: Vec<u32>,
}

const FREE: u32 = u32::MAX;

impl Matching {
    /// The cheapest one-to-one assignment using group g's listed
    /// multiplets `lines[start[g]..start[g + 1]]` (or none) into `out`.
    pub fn solve(&mut self, c: &CostsRef, start: &[u32], lines: &[u16], out: &mut [u16]) {
        let (g, m) = (c.groups, c.multiplets);
        let cols = m + g;
        refill(&mut self.v, cols, 0.0);
        refill(&mut self.row_of, cols, FREE);
        refill(&mut self.col_of, g, FREE);
        refill(&mut self.dist, cols, f64::INFINITY);
        refill(&mut self.pred, cols, FREE);
        refill(&mut self.scanned, cols, false);
        // Cost of row r on column x (finite for listed columns).
        let cost = |r: usize, x: usize| -> f64 {
            if x >= m {
                c.unassigned[r]
            } else {
                c.pair[r * m + x] + c.integral(x, c.hydrogens[r]) - c.empty[x]
            }
        };
        for r in 0..g {
            self.touched.clear();
            // Relax the edges of row `from`, reached at distance `base`
            // (its reduced cost so far, the row's own potential removed).
            let relax = |me: &mut Matching, from: usize, base: f64| {
                let listed = lines[start[from] as usize..start[from + 1] as usize].iter();
                for x in listed.map(|&j| j as usize).chain([m + from]) {
                    let d = base + cost(from, x) - me.v[x];
                    if !me.scanned[x] && d < me.dist[x] {
                        if me.dist[x] == f64::INFINITY {
                            me.touched.push(x as u32);
                        }
                        me.dist[x] = d;
                        me.pred[x] = from as u32;
                    }
                }
            };
            relax(self, r, 0.0);
            let mut end = None;
            loop {
                // The closest unscanned column (ties to the first touched).
                let mut best: Option<(f64, usize)> = None;
                for &x in &self.touched {
                    let x = x as usize;
                    if !self.scanned[x] && best.is_none_or(|b| self.dist[x] < b.0) {
                        best = Some((self.dist[x], x));
                    }
                }
                let Some((d, x)) = best else { break };
                if !d.is_finite() {
                    break;
                }
                self.scanned[x] = true;
                let holder = self.row_of[x];
                if holder == FREE {
                    end = Some((d, x));
                    break;
                }
                // Through the row holding x (its matched edge has reduced
                // cost 0): the row's potential is cost - v on that edge.
                let h = holder as usize;
                let base = d - (cost(h, x) - self.v[x]);
                relax(self, h, base);
            }
            if let Some((d, x)) = end {
                // Potentials: every scanned column moves by its distance
                // short of the path's, which keeps reduced costs >= 0.
                for &t in &self.touched {
                    let t = t as usize;
                    if self.scanned[t] {
                        self.v[t] += self.dist[t] - d;
                    }
                }
                // Augment along the predecessors back to row r.
                let mut x = x;
                loop {
                    let p = self.pred[x] as usize;
                    let before = self.col_of[p];
                    self.row_of[x] = p as u32;
                    self.col_of[p] = x as u32;
                    if p == r {
                        break;
                    }
                    x = before as usize;
                }
            }
            for &t in &self.touched {
                let t = t as usize;
                self.dist[t] = f64::INFINITY;
                self.pred[t] = FREE;
                self.scanned[t] = false;
            }
        }
        for (r, o) in out.iter_mut().enumerate().take(g) {
            let x = self.col_of[r];
            *o = if x == FREE || x as usize >= m {
                NONE
            } else {
                x as u16
            };
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::score::assign::Costs;
    use crate::score::testgen::rng;

    /// Exhaustive reference: the cheapest assignment in which no two
    /// groups share a multiplet and each group takes a listed one or none
    /// (no outside source: the definition of the optimum).
    fn brute(c: &Costs, allowed: &[bool]) -> f64 {
        let (g, m) = (c.groups, c.multiplets);
        let mut best = f64::INFINITY;
        let mut choice = vec![NONE; g];
        let total = (m + 1).pow(g as u32);
        'codes: for mut code in 0..total {
            let mut used = vec![false; m];
            for (gi, x) in choice.iter_mut().enumerate() {
                let v = code % (m + 1);
                code /= m + 1;
                if v < m && (used[v] || !allowed[gi * m + v]) {
                    continue 'codes;
                }
                if v < m {
                    used[v] = true;
                }
                *x = if v == m { NONE } else { v as u16 };
            }
            best = best.min(c.evaluate(&choice));
        }
        best
    }

    // Random instances (invented numbers on the model's scales: costs of a
    // few units, 1-3 H, integrals 1-3 or none, some negative filled costs)
    // with random lists: the matching is one-to-one, uses listed
    // multiplets only and costs the exhaustive optimum.
    #[test]
    fn matching_equals_exhaustive_one_to_one() {
        let mut st = 0x3c6e_f372_fe94_f82bu64;
        let mut matching = Matching::default();
        let mut assigned = 0;
        for _ in 0..500 {
            let g = 1 + (rng(&mut st) * 6.0) as usize;
            let m = 1 + (rng(&mut st) * 5.0) as usize;
            let c = Costs {
                groups: g,
                multiplets: m,
                pair: (0..g * m).map(|_| rng(&mut st) * 8.0).collect(),
                unassigned: (0..g).map(|_| 1.0 + rng(&mut st) * 6.0).collect(),
                hydrogens: (0..g).map(|_| 1 + (rng(&mut st) * 3.0) as u32).collect(),
                observed_h: (0..m)
                    .map(|_| {
                        let x = rng(&mut st);
                        (x > 0.2).then(|| 1.0 + (x * 3.0).floor())
                    })
                    .collect(),
                empty: (0..m).map(|_| 1.0 + rng(&mut st) * 6.0).collect(),
                overlap: (0..m).map(|_| rng(&mut st) * 2.0).collect(),
                abs_sigma: 0.25,
                rel_sigma: 0.06,
            };
            let allowed: Vec<bool> = (0..g * m).map(|_| rng(&mut st) < 0.6).collect();
            let mut start = vec![0u32];
            let mut lines = vec![];
            for gi in 0..g {
                lines.extend((0..m).filter(|&j| allowed[gi * m + j]).map(|j| j as u16));
                start.push(lines.len() as u32);
            }
            let mut out = vec![NONE; g];
            matching.solve(&c.view(), &start, &lines, &mut out);
            let mut used = vec![false; m];
            for (gi, &j) in out.iter().enumerate() {
                if j != NONE {
                    assert!(allowed[gi * m + j as usize], "unlisted pair");
                    assert!(!used[j as usize], "multiplet used twice");
                    used[j as usize] = true;
                    assigned += 1;
                }
            }
            let exact = brute(&c, &allowed);
            let got = c.evaluate(&out);
            assert!((got - exact).abs() < 1e-9, "{got} vs {exact}");
        }
        assert!(assigned > 500, "{assigned} groups placed");
    }
}
