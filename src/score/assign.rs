//! Exact best assignment of predicted groups to observed multiplets, by
//! depth-first branch and bound with symmetry reduction, local search on the
//! incumbents and two Lagrangian bounds.
//!
//! The problem: each of G predicted groups goes to one of M observed
//! multiplets or to none; several groups may share one multiplet (overlap).
//! The cost is separable per group (shift, multiplicity, J, or the
//! unassigned penalty) plus a per-multiplet term f_j(H, k) of the H sum H
//! and the number k of groups it holds (integral mismatch of H, overlap per
//! group beyond the first, or the unexplained penalty when empty). The
//! per-multiplet term couples the groups and is not linear in the groups'
//! H, so neither a greedy choice per group nor a plain assignment solver
//! gives the optimum. The same code serves 13C lists (carbons in place of H).
//!
//! Branch and bound (Land & Doig, Econometrica 1960, 28, 497) over groups in
//! a fixed order (larger groups first), each group's options tried cheapest
//! first, with five additions that keep the search small when spectra are
//! long or repetitive:
//!
//! 1. **Identical groups** (same cost row, unassigned cost and H) are
//!    interchangeable: they sit next to each other in the search order and
//!    take options in non-decreasing order, so each multiset of choices is
//!    visited once instead of in every permutation.
//! 2. **Identical multiplets** (same cost column for every group, same
//!    observed H, unexplained and overlap cost) are interchangeable too. Per
//!    class of identical groups (a row of the count matrix "how many groups
//!    of class c sit in multiplet j"), the columns of identical multiplets
//!    are kept in non-increasing lexicographic order: the lex-leader
//!    symmetry-breaking constraint (Crawford, Ginsberg, Luks & Roy, KR 1996,
//!    148). Every assignment has a column permutation that satisfies it at
//!    the same cost, so the optimum survives; checked incrementally because
//!    identical multiplets are adjacent among a group's sorted options.
//! 3. **Lagrangian bound** (Held & Karp, Math. Programming 1971, 1, 6;
//!    Fisher, Management Science 1981, 27, 1): the coupling constraints
//!    "H_j = sum of the H of its groups" and "k_j = number of its groups"
//!    are priced with multipliers lambda_j and mu_j = overlap_j. A group then
//!    pays pair + lambda_j h + mu_j on multiplet j, independently of the
//!    others, and multiplet j contributes min over the H it may still reach
//!    of f_j(H, k) - lambda_j (H - H0) - mu_j (k - k0); an empty multiplet
//!    contributes the cheaper of staying empty and being opened by some
//!    remaining group at that group's extra reduced cost, and no more
//!    multiplets can be opened than groups remain. For every choice of
//!    lambda this is a lower bound, so the search stays exact; lambda is
//!    chosen once per instance by subgradient ascent (Held, Wolfe & Crowder,
//!    Math. Programming 1974, 6, 62) on the root relaxation, and only when
//!    the search has not finished after [`STRONG_AFTER`] nodes (ordinary
//!    spectra never pay for it).
//! 4. **Local search** on the incumbents: one group moved to another
//!    multiplet (or none), or two groups exchanging places, while the total
//!    drops (a plain descent over these two neighbourhoods, as in the
//!    interchange heuristics for assignment problems).
//! 5. **Line bound** ([`super::line_bound`]), after [`LINES_AFTER`] nodes:
//!    the other Lagrangian relaxation, pricing "each group is placed once"
//!    with one multiplier per group, so that each multiplet takes its best
//!    subset of the remaining groups at its exact term (a knapsack table by
//!    H per multiplet and depth). It sees what item 3 cannot: two groups
//!    wanting one line, a second group on a full line, and the integral
//!    deficit, at O(M x H) per node (a child changes one multiplet's term).
//!
//! 6. **Exchange dominance**: two groups of the same H exchanging their
//!    places leave every multiplet's H sum and group count as they were,
//!    so only their own costs change. An optimum therefore has no such
//!    exchange that lowers the total, and a node where a group and an
//!    earlier group of as many H would together cost strictly less with
//!    their places exchanged holds no optimum below it (a dominance rule
//!    in the sense of Ibaraki, J. ACM 1977, 24, 264:
//!    every assignment below it is beaten by the exchanged one). It is
//!    what keeps near-identical groups (the CH of two unsymmetrical phenyl
//!    rings, 0.1 ppm apart, against a 4C line) from being tried in every
//!    arrangement: with shift-ordered costs it leaves only the arrangements
//!    that keep the groups' order. Identical groups never improve by an
//!    exchange and are left to item 1; the lex-leader order of item 2 only
//!    permutes identical multiplets, which keeps an optimum optimal, so the
//!    two rules together still keep one optimum.
//!
//! Before all of this, a problem is split into independent parts
//! ([`super::split`]: pairs that no assignment cheaper than a known one can
//! use are set aside, and the connected components of the rest are
//! searched one by one), which keeps long spectra whose lines are spread
//! out at a cost about linear in their length.
//!
//! The cheap bound of every node (kept from the earlier search, which
//! remains in `assign_reference.rs` for the tests and the benchmark) adds to
//! the cost so far:
//! - the cheapest option of every group still to place (their separable part);
//! - for each multiplet already holding groups: its overlap cost and, when it
//!   already holds more H than observed, its integral cost (the H sum only
//!   grows, and the integral cost grows with it past the observed value);
//! - for each multiplet still empty: the cheaper of staying empty (its
//!   unexplained cost) and the least extra any group still to place would
//!   pay to go there instead of to its own cheapest option, plus the least
//!   term the multiplet can have once it holds groups (`line_floors`: a
//!   4-carbon line filled by one-carbon classes pays three overlaps or a
//!   missing count; also tried before the search, against the cutoff)
//!   (distinct
//!   multiplets need distinct groups, so these extras add up, and at most as
//!   many multiplets as groups remain can take the cheaper branch);
//! - the deficit bound: multiplets holding fewer H than observed need
//!   D H more in total, the groups left carry R H, so at least D - R H stay
//!   missing; with quadratic costs the cheapest way to spread them is
//!   proportional to sigma^2, giving (D - R)^2 / (2 sum sigma^2).
//!
//! A node is cut when any bound reaches the best cost found. A cutoff
//! (the current k-th best cost of the ranking) makes the search return
//! nothing as soon as no assignment can beat it. The Lagrangian bounds are
//! lowered by a relative 1e-9 before it cuts, so rounding in its sums
//! (reduced costs added, multipliers subtracted) cannot cut an optimum.

use super::line_bound::{LineBound, Order};
use super::small::{self, Small};
use super::split::Split;

/// Marker for "no observed multiplet".
pub const NONE: u16 = u16::MAX;

/// The numbers the search needs, precomputed for one candidate.
#[derive(Clone, Debug, Default)]
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
    /// Integral cost of multiplet j holding h H (0 without an observed
    /// integral).
    #[inline]
    pub fn integral(&self, j: usize, h: u32) -> f64 {
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
    #[inline]
    pub fn multiplet(&self, j: usize, h: u32, k: u32) -> f64 {
        if k == 0 {
            self.empty[j]
        } else {
            self.integral(j, h) + self.overlap[j] * (k - 1) as f64
        }
    }

    /// A floor under `multiplet(j, h, k)` for k >= 1 whatever h: its
    /// overlap part, the very product `multiplet` adds its integral part
    /// (>= 0) to. Rounding is monotone, so a sum computed with the floor in
    /// place of the term, in the same order, is a floor under the sum with
    /// the term: the heuristics skip a trial whose floor already fails,
    /// with the same outcome as computing it (also when the term is NaN,
    /// which fails every test).
    #[inline]
    pub(crate) fn floor(&self, j: usize, k: u32) -> f64 {
        self.overlap[j] * (k - 1) as f64
    }

    /// Total cost of a complete assignment; `h` and `k` are zeroed scratch
    /// of length `multiplets` (left dirty).
    pub(crate) fn evaluate_in(&self, choice: &[u16], h: &mut [u32], k: &mut [u32]) -> f64 {
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

/// Search nodes after which the Lagrangian bound is computed and used for
/// the rest of the search. Above the ranking gate's node budget, so the gate
/// never pays for it; ordinary spectra finish well below it.
pub const STRONG_AFTER: u64 = 128;

/// Search nodes after which the line bound ([`super::line_bound`]) is
/// prepared and used for the rest of the search.
pub const LINES_AFTER: u64 = 1024;

/// When the two stronger bounds join the search (node counts; the tests and
/// the benchmark vary them).
#[derive(Clone, Copy, Debug)]
pub struct Tuning {
    pub strong_after: u64,
    pub lines_after: u64,
    /// Whether a problem is first split into independent parts
    /// ([`super::split`]; the dense search on the whole problem without).
    pub split: bool,
    /// Whether nodes that an exchange of two groups of the same H would
    /// improve are cut (module doc, item 6).
    pub exchange: bool,
}

impl Default for Tuning {
    fn default() -> Tuning {
        Tuning {
            strong_after: STRONG_AFTER,
            lines_after: LINES_AFTER,
            split: true,
            exchange: true,
        }
    }
}

/// Subgradient steps on the root relaxation, the first step (in cost per H)
/// and its decay per step.
const SUBGRADIENT_STEPS: usize = 40;
const FIRST_STEP: f64 = 2.0;
const STEP_DECAY: f64 = 0.85;

/// Relative margin by which the Lagrangian bound is lowered before it cuts.
const BOUND_SLACK: f64 = 1e-9;

thread_local! {
    /// The moment after which searches on this thread give up (see
    /// [`with_deadline`]).
    static DEADLINE: std::cell::Cell<Option<std::time::Instant>> =
        const { std::cell::Cell::new(None) };
}

/// Search nodes between two looks at the clock when a deadline is set.
const CLOCK_EVERY: u64 = 1 << 14;

/// Run `f` with searches on this thread giving up (answering as if nothing
/// beat the cutoff) once `deadline` has passed, so that a run stopped by
/// its time limit does not wait for one long assignment. Only for callers
/// whose result is partial past the deadline anyway (a ranking under
/// `--time-limit` marks a task that ends after it as cut short).
pub fn with_deadline<R>(deadline: Option<std::time::Instant>, f: impl FnOnce() -> R) -> R {
    let before = DEADLINE.with(|d| d.replace(deadline));
    let out = f();
    DEADLINE.with(|d| d.set(before));
    out
}

/// Relative margin an exchange must save before it rules a node out (item
/// 6 of the module doc), so that rounding cannot rule out an optimum.
const EXCHANGE_EPS: f64 = 1e-9;

/// Buffers of one search, kept between calls so that scoring a stream of
/// candidates allocates nothing once they have grown to the largest size.
#[derive(Clone, Debug, Default)]
pub struct Workspace {
    min_choice: Vec<f64>,
    /// Per multiplet: the least extra a group pays to go there (of the
    /// root bound).
    root_extra: Vec<f64>,
    /// Per multiplet: the least its term can be once it holds a group
    /// ([`line_floors`]).
    floor: Vec<f64>,
    order: Vec<usize>,
    /// Per depth: the first depth of its class of identical groups.
    class_start: Vec<usize>,
    /// Per depth: the index of that class.
    class_of: Vec<usize>,
    /// Per depth d, `peers[peer_start[d]..peer_start[d + 1]]`: the earlier
    /// depths whose group holds as many H but is not identical (exchange
    /// dominance, module doc item 6).
    peers: Vec<u16>,
    peer_start: Vec<u32>,
    /// Options of the group at depth d: `options[d * (m + 1)..][..m + 1]`.
    options: Vec<(f64, u16)>,
    greedy: Vec<u16>,
    suffix_min: Vec<f64>,
    suffix_h: Vec<u32>,
    suffix_extra: Vec<f64>,
    sigma2: Vec<f64>,
    /// Per multiplet: the nearest identical multiplet before it, or [`NONE`].
    twin: Vec<u16>,
    /// `count[c * m + j]`: groups of class c placed on multiplet j.
    count: Vec<u32>,
    /// `tie[c * m + j]`: the columns of j and `twin[j]` are equal on every
    /// class before c (so class c must not put more groups on j).
    tie: Vec<bool>,
    gains: Vec<f64>,
    h: Vec<u32>,
    k: Vec<u32>,
    current: Vec<u16>,
    /// Per depth: the index of the option taken.
    position: Vec<usize>,
    best_choice: Vec<u16>,
    strong: Strong,
    lines: LineBound,
    /// Scratch of the local search on offered incumbents.
    trial: Vec<u16>,
    trial_h: Vec<u32>,
    trial_k: Vec<u32>,
    local: Local,
    /// Per depth d, per multiplet: its line-bound term at depth d + 1 before
    /// the group at depth d is placed.
    line_terms: Vec<f64>,
    nodes: u64,
    /// The split into independent parts, and the search of one part
    /// starting from `seed` (the split's known assignment on that part).
    split: Split,
    seed: Vec<u16>,
    part: Option<Box<Workspace>>,
    parts: usize,
}

/// The Lagrangian bound's tables for one instance (module doc, item 3).
#[derive(Clone, Debug, Default)]
struct Strong {
    ready: bool,
    /// The bound at the root, when prepared there (for the tests).
    root: Option<f64>,
    lambda: Vec<f64>,
    best_lambda: Vec<f64>,
    /// `rho[d]`: sum over the groups at depth >= d of their cheapest reduced
    /// option (reduced cost pair + lambda_j h + overlap_j, or unassigned).
    rho: Vec<f64>,
    /// `extra[d * m + j]`: least reduced extra (over its cheapest) for a
    /// group at depth >= d to go to multiplet j.
    extra: Vec<f64>,
    /// `hmin[d]`: fewest H of a group at depth >= d.
    hmin: Vec<u32>,
    /// Total H + 1: the H values a multiplet can hold.
    width: usize,
    /// Sparse table of range minima (Bentley, CACM 1980, 23, 214):
    /// `table[(l * m + j) * width + h]` is the least of
    /// u_j(H) = integral_j(H) - lambda_j H over H in h..h + 2^l.
    table: Vec<f64>,
    slope: Vec<f64>,
    root_extra: Vec<f64>,
    members: Vec<(f64, u32)>,
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

    /// Independent parts the last [`solve_in`] searched one by one
    /// ([`super::split`]); 0 when it searched the whole problem.
    pub fn parts(&self) -> usize {
        self.parts
    }
}

impl Workspace {
    /// Room for searches of up to `g` groups and `m` multiplets in the
    /// buffers that grow with them, so that a fresh workspace searching
    /// parts of rising size allocates each once.
    fn reserve_for(&mut self, g: usize, m: usize) {
        fn room<T>(v: &mut Vec<T>, n: usize) {
            v.reserve(n.saturating_sub(v.len()));
        }
        room(&mut self.min_choice, g);
        room(&mut self.root_extra, m);
        room(&mut self.floor, m);
        room(&mut self.order, g);
        room(&mut self.class_start, g);
        room(&mut self.class_of, g);
        room(&mut self.peers, g * g / 2);
        room(&mut self.peer_start, g + 1);
        room(&mut self.options, g * (m + 1));
        room(&mut self.greedy, g);
        room(&mut self.suffix_min, g + 1);
        room(&mut self.suffix_h, g + 1);
        room(&mut self.suffix_extra, (g + 1) * m);
        room(&mut self.sigma2, m);
        room(&mut self.twin, m);
        room(&mut self.count, g * m);
        room(&mut self.tie, g * m);
        room(&mut self.h, m);
        room(&mut self.k, m);
        room(&mut self.current, g);
        room(&mut self.position, g);
        room(&mut self.best_choice, g);
        room(&mut self.trial, g);
        room(&mut self.line_terms, g * m);
        room(&mut self.local.term, 3 * m + 1);
    }
}

pub(crate) fn refill<T: Copy>(v: &mut Vec<T>, n: usize, x: T) {
    v.clear();
    v.resize(n, x);
}

/// The least of `first` and `row`: what folding `f64::min` over them gives
/// (the same value whatever the order, NaN in `row` skipped alike), as one
/// compare per entry instead of `min`'s NaN handling.
#[inline]
fn least(first: f64, row: &[f64]) -> f64 {
    let mut a = first;
    for &p in row {
        if p < a {
            a = p;
        }
    }
    a
}

/// The root bound: every group on its cheapest option, plus per multiplet the
/// cheaper of staying empty and the least extra a group pays to go there.
/// Fills `min_choice` with each group's cheapest option.
pub fn root_bound(c: &CostsRef, min_choice: &mut Vec<f64>) -> f64 {
    let (g, m) = (c.groups, c.multiplets);
    min_choice.clear();
    min_choice.extend((0..g).map(|gi| least(c.unassigned[gi], &c.pair[gi * m..(gi + 1) * m])));
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

/// [`root_bound`] raised by the multiplets' floors (`line_floors`: the
/// least term a multiplet has once it holds groups), the bound the search
/// itself first tries against its cutoff; `extra` and `floor` are scratch.
/// Summed in another order than an assignment's cost: a caller cutting
/// with it lowers it by a rounding margin first.
pub fn root_bound_floored(
    c: &CostsRef,
    min_choice: &mut Vec<f64>,
    extra: &mut Vec<f64>,
    floor: &mut Vec<f64>,
) -> f64 {
    root_bound_in(c, min_choice, extra) + line_floors(c, extra, floor)
}

/// [`root_bound`] row by row, also leaving in `extra` the least extra a
/// group pays to go to each multiplet instead of to its cheapest option
/// (the split's reduced costs reuse it). The same minima in the same order
/// (groups ascending per multiplet) and the same sum, so the same bits.
fn root_bound_in(c: &CostsRef, min_choice: &mut Vec<f64>, extra: &mut Vec<f64>) -> f64 {
    let (g, m) = (c.groups, c.multiplets);
    min_choice.clear();
    min_choice.extend((0..g).map(|gi| least(c.unassigned[gi], &c.pair[gi * m..(gi + 1) * m])));
    refill(extra, m, f64::INFINITY);
    for (gi, &low) in min_choice.iter().enumerate() {
        let row = &c.pair[gi * m..(gi + 1) * m];
        for (e, &p) in extra.iter_mut().zip(row) {
            // `e.min(p - low)` without its NaN handling (see `least`).
            let x = p - low;
            if x < *e {
                *e = x;
            }
        }
    }
    min_choice.iter().sum::<f64>() + (0..m).map(|j| c.empty[j].min(extra[j])).sum::<f64>()
}

/// Per multiplet, the least its term f_j(H, k) can be once it holds some
/// group (`floor`), and what these floors add to the root bound (`extra`
/// as [`root_bound_in`] leaves it). With groups of at most `hmax` H, H on
/// one multiplet take at least ceil(H / hmax) groups, each beyond the first
/// paying the overlap cost: a 4-carbon 13C line filled by one-carbon
/// classes costs three overlaps or a missing count, whichever is less, and
/// only when it stays empty does it cost less (its unexplained cost). Only
/// H up to the observed integral (rounded up) need trying: above it both
/// the integral and the overlap cost grow with H. The root bound takes per
/// multiplet the cheaper of staying empty and being opened at `extra`; with
/// the floor, opening costs `extra + floor`. Kept out of the root bound
/// itself, whose share per part the split ([`super::split`]) relies on.
fn line_floors(c: &CostsRef, extra: &[f64], floor: &mut Vec<f64>) -> f64 {
    let hmax = c.hydrogens.iter().copied().max().unwrap_or(1).max(1);
    let total: u32 = c.hydrogens.iter().sum();
    floor.clear();
    let mut gain = 0.0;
    for j in 0..c.multiplets {
        let f = match c.observed_h[j] {
            Some(i) if total > 0 => {
                let top = (i.ceil().max(1.0) as u32).min(total);
                (1..=top)
                    .map(|h| c.multiplet(j, h, h.div_ceil(hmax)))
                    .fold(f64::INFINITY, f64::min)
            }
            _ => 0.0,
        };
        floor.push(f);
        gain += c.empty[j].min(extra[j] + f) - c.empty[j].min(extra[j]);
    }
    gain
}

/// Sum of the `n` largest of `gains` (all of them when there are no more).
fn largest(gains: &mut [f64], n: usize) -> f64 {
    if gains.len() > n {
        if n == 0 {
            return 0.0;
        }
        gains.select_nth_unstable_by(n - 1, |a, b| b.total_cmp(a));
        gains[..n].iter().sum()
    } else {
        gains.iter().sum()
    }
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
    solve_tuned(c, cutoff, ws, Tuning::default())
}

/// [`solve_in`] with the stronger bounds joining at other node counts (for
/// the benchmark and the tests; the result is the same, only the time
/// differs).
pub fn solve_tuned(c: &CostsRef, cutoff: f64, ws: &mut Workspace, tuning: Tuning) -> Option<f64> {
    match run(c, cutoff, ws, false, u64::MAX, tuning, None) {
        Outcome::Below(cost) => Some(cost),
        _ => None,
    }
}

/// Whether some assignment may cost less than `cutoff`: the same search,
/// stopped at the first assignment below the cutoff, and giving up with
/// `true` ("not ruled out") after `max_nodes` nodes. `false` only when the
/// whole search found nothing below the cutoff.
pub fn may_reach_below(c: &CostsRef, cutoff: f64, ws: &mut Workspace, max_nodes: u64) -> bool {
    !matches!(
        run(c, cutoff, ws, true, max_nodes, Tuning::default(), None),
        Outcome::Nothing
    )
}

enum Outcome {
    /// The best (or, in existence mode, the first) cost below the cutoff.
    Below(f64),
    Nothing,
    GaveUp,
}

/// Whether multiplets `a` and `b` are interchangeable: same observed H,
/// unexplained and overlap cost, and the same pair cost for every group.
fn same_multiplet(c: &CostsRef, a: usize, b: usize) -> bool {
    let m = c.multiplets;
    c.observed_h[a].map(f64::to_bits) == c.observed_h[b].map(f64::to_bits)
        && c.empty[a].to_bits() == c.empty[b].to_bits()
        && c.overlap[a].to_bits() == c.overlap[b].to_bits()
        && (0..c.groups).all(|g| c.pair[g * m + a].to_bits() == c.pair[g * m + b].to_bits())
}

/// Search order: larger groups first (they decide the integrals), identical
/// groups next to each other (`Equal` only for identical groups; the caller
/// breaks ties by index).
fn group_order(c: &CostsRef, a: usize, b: usize) -> std::cmp::Ordering {
    let m = c.multiplets;
    c.hydrogens[b]
        .cmp(&c.hydrogens[a])
        .then(c.unassigned[a].total_cmp(&c.unassigned[b]))
        .then_with(|| {
            let (ra, rb) = (&c.pair[a * m..(a + 1) * m], &c.pair[b * m..(b + 1) * m]);
            ra.iter()
                .zip(rb)
                .map(|(x, y)| x.total_cmp(y))
                .find(|o| o.is_ne())
                .unwrap_or(std::cmp::Ordering::Equal)
        })
}

/// The search; the Lagrangian bounds join after `tuning`'s node counts (the
/// tests set 1 to check them on every instance). With `seed` (an assignment
/// of this problem, not with `first_only`) the search starts from it as its
/// incumbent instead of building its own from the greedy, marginal and
/// local-search heuristics.
fn run(
    c: &CostsRef,
    cutoff: f64,
    ws: &mut Workspace,
    first_only: bool,
    max_nodes: u64,
    tuning: Tuning,
    seed: Option<&[u16]>,
) -> Outcome {
    let (g, m) = (c.groups, c.multiplets);
    ws.nodes = 0;
    ws.parts = 0;
    ws.strong.root = None;
    ws.lines.root = None;
    // Cheap root bound first: most candidates of a large enumeration are
    // hopeless and leave here before any sorting or search.
    let root = root_bound_in(c, &mut ws.min_choice, &mut ws.root_extra);
    if root >= cutoff {
        return Outcome::Nothing;
    }
    let floored = root + line_floors(c, &ws.root_extra, &mut ws.floor);
    if floored - BOUND_SLACK * (1.0 + floored.abs()) >= cutoff {
        return Outcome::Nothing;
    }
    if tuning.split && !first_only {
        if let Some(out) = run_split(c, cutoff, root, ws, max_nodes, tuning) {
            return out;
        }
    }
    if let Some(seed) = seed {
        // A known assignment that costs no more than the root bound with
        // the floors (a lower bound on every assignment) is optimal, and
        // the search would end at its root with it: nothing can cost
        // strictly less. Most parts of the split end here, before the
        // search's set-up (order, classes, options, suffix tables).
        refill(&mut ws.h, m, 0);
        refill(&mut ws.k, m, 0);
        let cost = c.evaluate_in(seed, &mut ws.h, &mut ws.k);
        if cost <= floored {
            ws.nodes = 1;
            if cost >= cutoff {
                return Outcome::Nothing;
            }
            ws.best_choice.clear();
            ws.best_choice.extend_from_slice(seed);
            return Outcome::Below(cost);
        }
    }
    let Workspace {
        min_choice,
        floor,
        order,
        class_start,
        class_of,
        peers,
        peer_start,
        options,
        greedy,
        suffix_min,
        suffix_h,
        suffix_extra,
        sigma2,
        twin,
        count,
        tie,
        gains,
        h,
        k,
        current,
        position,
        best_choice,
        strong,
        lines,
        trial,
        trial_h,
        trial_k,
        local,
        line_terms,
        nodes,
        ..
    } = ws;
    order.clear();
    order.extend(0..g);
    order.sort_unstable_by(|&a, &b| group_order(c, a, b).then(a.cmp(&b)));
    // Classes of identical groups: runs of the order equal but for the index.
    class_start.clear();
    class_of.clear();
    for d in 0..g {
        let same = d > 0 && group_order(c, order[d - 1], order[d]).is_eq();
        if same {
            class_start.push(class_start[d - 1]);
            class_of.push(class_of[d - 1]);
        } else {
            class_start.push(d);
            class_of.push(if d == 0 { 0 } else { class_of[d - 1] + 1 });
        }
    }
    let classes = class_of.last().map_or(0, |&x| x + 1);
    peers.clear();
    peer_start.clear();
    for d in 0..g {
        peer_start.push(peers.len() as u32);
        let h = c.hydrogens[order[d]];
        peers.extend(
            (0..class_start[d])
                .filter(|&e| c.hydrogens[order[e]] == h)
                .map(|e| e as u16),
        );
    }
    peer_start.push(peers.len() as u32);
    twin.clear();
    twin.extend((0..m).map(|j| {
        (0..j)
            .rev()
            .find(|&p| same_multiplet(c, p, j))
            .map_or(NONE, |p| p as u16)
    }));
    refill(count, classes * m, 0);
    refill(tie, classes * m, true);
    // Separable options of each group (in search order), cheapest first;
    // identical multiplets tie on cost and stay in index order.
    let stride = m + 1;
    options.clear();
    options.reserve(g * stride);
    for &gi in order.iter() {
        let from = options.len();
        options.extend((0..m).map(|j| (c.pair[gi * m + j], j as u16)));
        options.push((c.unassigned[gi], NONE));
        options[from..].sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    }
    let mut greedy_cost;
    if let Some(seed) = seed {
        // The caller's assignment (the split's known one, on this part).
        greedy.clear();
        greedy.extend_from_slice(seed);
        refill(h, m, 0);
        refill(k, m, 0);
        greedy_cost = c.evaluate_in(greedy, h, k);
    } else {
        // Greedy incumbent: each group on its cheapest option.
        refill(greedy, g, NONE);
        for (d, &gi) in order.iter().enumerate() {
            greedy[gi] = options[d * stride].1;
        }
        refill(h, m, 0);
        refill(k, m, 0);
        greedy_cost = c.evaluate_in(greedy, h, k);
        if first_only && greedy_cost < cutoff {
            return Outcome::Below(greedy_cost);
        }
        // Second incumbent: groups in search order, each where it adds least to
        // the total so far (its pair cost plus the change of the multiplet term),
        // which spreads repeated groups over repeated lines.
        refill(h, m, 0);
        refill(k, m, 0);
        refill(current, g, NONE);
        marginal(c, order, Targets::All, h, k, current, local);
        refill(h, m, 0);
        refill(k, m, 0);
        let marginal_cost = c.evaluate_in(current, h, k);
        if marginal_cost < greedy_cost {
            greedy.copy_from_slice(current);
            greedy_cost = marginal_cost;
        }
        if first_only && greedy_cost < cutoff {
            return Outcome::Below(greedy_cost);
        }
        // Local search from the better of the two.
        refill(h, m, 0);
        refill(k, m, 0);
        trial.clone_from(greedy);
        let improved = improve(c, trial, h, k, Targets::All, local);
        if improved < greedy_cost {
            greedy.copy_from_slice(trial);
            greedy_cost = improved;
            if first_only && greedy_cost < cutoff {
                return Outcome::Below(greedy_cost);
            }
        }
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
    refill(position, g, 0);
    strong.ready = false;
    strong.root = None;
    lines.ready = false;
    lines.root = None;
    refill(line_terms, g * m, 0.0);
    let mut s = Search {
        c,
        order,
        class_start,
        class_of,
        peers,
        peer_start,
        options,
        stride,
        suffix_min,
        suffix_h,
        suffix_extra,
        sigma2,
        floor,
        twin,
        count,
        tie,
        gains,
        h,
        k,
        current,
        position,
        best,
        best_choice,
        strong,
        lines,
        lines_ok: LineBound::applies(c),
        trial,
        trial_h,
        trial_k,
        local,
        line_terms,
        found,
        nodes: 0,
        first_only,
        max_nodes,
        strong_after: tuning.strong_after,
        lines_after: tuning.lines_after,
        exchange: tuning.exchange,
        deadline: DEADLINE.with(|d| d.get()),
        late: false,
        stop: false,
    };
    s.dfs(0, 0.0);
    *nodes = s.nodes;
    if s.late {
        Outcome::GaveUp
    } else if s.found {
        Outcome::Below(s.best)
    } else if s.stop {
        Outcome::GaveUp
    } else {
        Outcome::Nothing
    }
}

/// The search through independent parts ([`super::split`]), against each
/// group on its cheapest option as the known assignment; `None` when the
/// problem does not split (one part holds every group).
fn run_split(
    c: &CostsRef,
    cutoff: f64,
    root: f64,
    ws: &mut Workspace,
    max_nodes: u64,
    tuning: Tuning,
) -> Option<Outcome> {
    let (g, m) = (c.groups, c.multiplets);
    let parts = ws
        .split
        .parts(c, &ws.min_choice, &ws.root_extra, root, &mut ws.local)?;
    ws.parts = parts;
    let Workspace {
        min_choice,
        best_choice,
        split,
        part,
        h,
        k,
        nodes,
        local,
        seed,
        ..
    } = ws;
    let part = part.get_or_insert_with(Default::default);
    // The heuristics' scratch goes to the parts' searches while they run
    // (one set of buffers for the whole solve).
    std::mem::swap(local, &mut part.local);
    // The largest of the parts searched (those of two groups or more).
    let most = (0..parts).fold((0, 0), |(a, b), p| match split.members(p) {
        (gs, ls) if gs.len() > 1 => (a.max(gs.len()), b.max(ls.len())),
        _ => (a, b),
    });
    if most.0 > 0 {
        part.reserve_for(most.0, most.1);
        split.reserve_parts(most.0, most.1);
    }
    refill(best_choice, g, NONE);
    let tuning = Tuning {
        split: false,
        ..tuning
    };
    // Each part's cutoff leaves room for the others' lower bounds (the
    // root bound is the sum of the parts' shares and the lone multiplets').
    let slack = 1e-9 * (1.0 + cutoff.abs());
    let (mut left, mut spent) = (root, 0.0);
    let failed = 'parts: {
        for p in 0..parts {
            let (gs, ls) = split.members(p);
            if gs.is_empty() {
                continue;
            }
            left -= split.lower(min_choice, p);
            let below = cutoff - spent - left + slack;
            if let [one] = *gs {
                // One group: its options side by side (none first, then the
                // multiplets in order; the first of equal costs stays).
                let gi = one as usize;
                let empty: f64 = ls.iter().map(|&j| c.empty[j as usize]).sum();
                let mut best = (c.unassigned[gi] + empty, NONE);
                for &j in ls {
                    let ju = j as usize;
                    let cost = c.pair[gi * m + ju] + c.multiplet(ju, c.hydrogens[gi], 1) + empty
                        - c.empty[ju];
                    if cost < best.0 {
                        best = (cost, j as u16);
                    }
                }
                *nodes += 1;
                if best.0 >= below {
                    break 'parts Some(Outcome::Nothing);
                }
                spent += best.0;
                best_choice[gi] = best.1;
                continue;
            }
            // Two groups on a few lines: every assignment listed in the
            // search's order (`small`: the search's answer, without its
            // set-up).
            match small::solve(c, gs, ls, split.known(), below, best_choice) {
                Small::Search => {}
                Small::Nothing => {
                    *nodes += 1;
                    break 'parts Some(Outcome::Nothing);
                }
                Small::Below(cost) => {
                    *nodes += 1;
                    spent += cost;
                    continue;
                }
            }
            // The part's search starts from the split's known assignment
            // on it (its own heuristics would find it or a worse one, at a
            // cost per part that most parts' searches, ended at the root
            // node, do not have).
            split.known_on(p, seed);
            let out = {
                let view = split.view(c, p);
                run(
                    &view,
                    below,
                    part,
                    false,
                    max_nodes,
                    tuning,
                    Some(seed.as_slice()),
                )
            };
            *nodes += part.nodes;
            let Outcome::Below(cost) = out else {
                break 'parts Some(out);
            };
            spent += cost;
            let (gs, ls) = split.members(p);
            for (&x, &j) in gs.iter().zip(&part.best_choice) {
                best_choice[x as usize] = if j == NONE {
                    NONE
                } else {
                    ls[j as usize] as u16
                };
            }
        }
        None
    };
    std::mem::swap(local, &mut part.local);
    if failed.is_some() {
        return failed;
    }
    refill(h, m, 0);
    refill(k, m, 0);
    let total = c.evaluate_in(best_choice, h, k);
    Some(if total < cutoff {
        Outcome::Below(total)
    } else {
        Outcome::Nothing
    })
}

struct Search<'a> {
    c: &'a CostsRef<'a>,
    order: &'a [usize],
    class_start: &'a [usize],
    class_of: &'a [usize],
    peers: &'a [u16],
    peer_start: &'a [u32],
    /// Options per depth: (separable cost, multiplet or NONE), cheapest first.
    options: &'a [(f64, u16)],
    stride: usize,
    suffix_min: &'a [f64],
    suffix_h: &'a [u32],
    /// `suffix_extra[d * m + j]`: least extra cost (over its cheapest option)
    /// for any group at depth >= d to go to multiplet j.
    suffix_extra: &'a [f64],
    sigma2: &'a [f64],
    /// Per multiplet: its least term once it holds a group ([`line_floors`]).
    floor: &'a [f64],
    twin: &'a [u16],
    count: &'a mut [u32],
    tie: &'a mut [bool],
    gains: &'a mut Vec<f64>,
    h: &'a mut [u32],
    k: &'a mut [u32],
    current: &'a mut [u16],
    position: &'a mut [usize],
    best: f64,
    best_choice: &'a mut [u16],
    strong: &'a mut Strong,
    lines: &'a mut LineBound,
    /// Whether the line bound applies (every group holds H).
    lines_ok: bool,
    trial: &'a mut Vec<u16>,
    trial_h: &'a mut Vec<u32>,
    trial_k: &'a mut Vec<u32>,
    local: &'a mut Local,
    line_terms: &'a mut Vec<f64>,
    found: bool,
    nodes: u64,
    /// Existence mode: stop at the first assignment below the cutoff.
    first_only: bool,
    /// Give up (set `stop`) beyond this many nodes.
    max_nodes: u64,
    /// Node at which the Lagrangian bound is prepared.
    strong_after: u64,
    /// Node at which the line bound is prepared.
    lines_after: u64,
    /// Whether exchange dominance cuts (module doc, item 6).
    exchange: bool,
    /// Give up (set `stop` and `late`) once this moment has passed.
    deadline: Option<std::time::Instant>,
    late: bool,
    stop: bool,
}

impl Search<'_> {
    /// Whether group `g` at depth `d` on option `j` (own cost `cost`) and
    /// some earlier group of as many H would cost strictly less with their
    /// places exchanged (module doc, item 6): then no assignment below this
    /// node is optimal.
    #[inline]
    fn improvable(&self, d: usize, g: usize, cost: f64, j: u16) -> bool {
        let c = self.c;
        let range = self.peer_start[d] as usize..self.peer_start[d + 1] as usize;
        self.peers[range].iter().rev().any(|&e| {
            let e = e as usize;
            let je = self.current[e];
            if je == j {
                return false;
            }
            let ge = self.order[e];
            let now = own(c, ge, je) + cost;
            let swapped = own(c, ge, j) + own(c, g, je);
            swapped < now - EXCHANGE_EPS * (1.0 + now.abs())
        })
    }

    /// Lower bound on the multiplet terms of any completion when the groups
    /// from depth `next` on are still to place (the cheap bound).
    fn multiplet_bound(&mut self, next: usize) -> f64 {
        let c = self.c;
        let m = c.multiplets;
        let remaining = self.suffix_h[next];
        let mut bound = 0.0;
        let mut deficit = 0.0;
        let mut sigma2 = 0.0;
        self.gains.clear();
        for j in 0..m {
            let k = self.k[j];
            if k == 0 {
                let extra = self.suffix_extra[next * m + j] + self.floor[j];
                if extra < c.empty[j] {
                    bound += extra;
                    self.gains.push(c.empty[j] - extra);
                } else {
                    bound += c.empty[j];
                }
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
        // Distinct multiplets need distinct groups: at most as many as
        // remain take the cheaper branch; the others stay empty.
        let left = self.order.len() - next;
        if self.gains.len() > left {
            let all: f64 = self.gains.iter().sum();
            bound += all - largest(self.gains, left);
        }
        let unfilled = deficit - remaining as f64;
        if unfilled > 0.0 && sigma2 > 0.0 {
            bound += unfilled * unfilled / (2.0 * sigma2);
        }
        bound
    }

    /// Least of u_j over H in lo..=hi.
    fn range_min(&self, j: usize, lo: usize, hi: usize) -> f64 {
        let st = &*self.strong;
        let m = self.c.multiplets;
        let len = hi - lo + 1;
        let l = (usize::BITS - 1 - len.leading_zeros()) as usize;
        let row = (l * m + j) * st.width;
        st.table[row + lo].min(st.table[row + hi + 1 - (1 << l)])
    }

    /// The Lagrangian lower bound on the cost of any completion, without the
    /// cost of the groups already placed.
    fn strong_bound(&mut self, next: usize) -> f64 {
        let c = self.c;
        let m = c.multiplets;
        let left = self.order.len() - next;
        let reach = self.suffix_h[next] as usize;
        let mut bound = self.strong.rho[next];
        self.gains.clear();
        for j in 0..m {
            let k = self.k[j];
            let observed = c.observed_h[j].is_some();
            if k > 0 {
                let h0 = self.h[j] as usize;
                if observed {
                    bound += self.range_min(j, h0, h0 + reach) + self.strong.lambda[j] * h0 as f64;
                }
                bound += c.overlap[j] * (k - 1) as f64;
            } else {
                bound += c.empty[j];
                if left > 0 {
                    let lo = self.strong.hmin[next] as usize;
                    let fill = if observed {
                        self.range_min(j, lo, reach)
                    } else {
                        0.0
                    };
                    let open = self.strong.extra[next * m + j] + fill - c.overlap[j];
                    if open < c.empty[j] {
                        self.gains.push(c.empty[j] - open);
                    }
                }
            }
        }
        bound -= largest(self.gains, left);
        bound - BOUND_SLACK * (1.0 + bound.abs())
    }

    /// Prepare the line bound; every feasible assignment its multiplier
    /// search meets is improved by local search and kept when it beats the
    /// best so far (in existence mode, one below the cutoff ends the search).
    fn prepare_lines(&mut self) {
        let c = self.c;
        let g = c.groups;
        let cheapest: Vec<f64> = (0..g).map(|d| self.options[d * self.stride].0).collect();
        let order = Order {
            order: self.order,
            suffix_h: self.suffix_h,
            cheapest: &cheapest,
        };
        let m = c.multiplets;
        let best = self.best;
        // The relaxed solution often repeats between steps: improve each
        // distinct one once.
        let mut last: Vec<u16> = vec![];
        let mut offer = |choice: &[u16]| -> f64 {
            if last == choice {
                return self.best;
            }
            last.clear();
            last.extend_from_slice(choice);
            self.trial.clear();
            self.trial.extend_from_slice(choice);
            refill(self.trial_h, m, 0);
            refill(self.trial_k, m, 0);
            let cost = improve(
                c,
                self.trial,
                self.trial_h,
                self.trial_k,
                Targets::All,
                self.local,
            );
            if cost < self.best {
                self.best = cost;
                self.found = true;
                self.best_choice.copy_from_slice(self.trial);
                self.stop |= self.first_only;
            }
            self.best
        };
        self.lines.prepare(c, &order, best, &mut offer);
    }

    /// Choose the multipliers by subgradient ascent on the root relaxation
    /// and fill the tables of [`Search::strong_bound`].
    fn prepare_strong(&mut self) {
        let c = self.c;
        let (g, m) = (c.groups, c.multiplets);
        let total = self.suffix_h[0] as usize;
        let width = total + 1;
        let levels = (usize::BITS - width.leading_zeros()) as usize;
        let st = &mut *self.strong;
        st.width = width;
        refill(&mut st.table, levels * m * width, 0.0);
        for j in 0..m {
            for hh in 0..width {
                st.table[j * width + hh] = c.integral(j, hh as u32);
            }
        }
        let hmin_all = (0..g).map(|gi| c.hydrogens[gi]).min().unwrap_or(0) as usize;
        refill(&mut st.lambda, m, 0.0);
        refill(&mut st.best_lambda, m, 0.0);
        refill(&mut st.slope, m, 0.0);
        refill(&mut st.root_extra, m, f64::INFINITY);
        refill(&mut st.members, m, (0.0, 0));
        let mut best = f64::NEG_INFINITY;
        let mut step = FIRST_STEP;
        for _ in 0..SUBGRADIENT_STEPS {
            st.slope.fill(0.0);
            st.root_extra.fill(f64::INFINITY);
            let mut value = 0.0;
            for gi in 0..g {
                let hg = c.hydrogens[gi] as f64;
                let row = &c.pair[gi * m..(gi + 1) * m];
                let reduced = |j: usize| row[j] + st.lambda[j] * hg + c.overlap[j];
                let mut rho = c.unassigned[gi];
                let mut arg = NONE;
                for j in 0..m {
                    if reduced(j) < rho {
                        rho = reduced(j);
                        arg = j as u16;
                    }
                }
                value += rho;
                for j in 0..m {
                    st.root_extra[j] = st.root_extra[j].min(reduced(j) - rho);
                }
                if arg != NONE {
                    st.slope[arg as usize] += hg;
                }
            }
            for j in 0..m {
                let (mut fill, mut at) = (0.0, 0);
                if c.observed_h[j].is_some() {
                    fill = f64::INFINITY;
                    for hh in hmin_all.min(total)..width {
                        let u = st.table[j * width + hh] - st.lambda[j] * hh as f64;
                        if u < fill {
                            fill = u;
                            at = hh;
                        }
                    }
                }
                let open = st.root_extra[j] + fill - c.overlap[j];
                if open < c.empty[j] {
                    value += open;
                    st.slope[j] -= at as f64;
                } else {
                    value += c.empty[j];
                }
            }
            if value > best {
                best = value;
                st.best_lambda.copy_from_slice(&st.lambda);
            }
            // Identical multiplets share one multiplier: the relaxation is
            // symmetric, so averaging their slopes loses nothing.
            st.members.fill((0.0, 0));
            for j in 0..m {
                let root = class_root(self.twin, j);
                st.members[root].0 += st.slope[j];
                st.members[root].1 += 1;
            }
            let mut norm: f64 = 0.0;
            for j in 0..m {
                let (sum, n) = st.members[class_root(self.twin, j)];
                st.slope[j] = if c.observed_h[j].is_some() {
                    sum / n as f64
                } else {
                    0.0
                };
                norm = norm.max(st.slope[j].abs());
            }
            if norm == 0.0 {
                break;
            }
            for j in 0..m {
                st.lambda[j] += step * st.slope[j] / norm;
            }
            step *= STEP_DECAY;
        }
        st.lambda.copy_from_slice(&st.best_lambda);
        // Per-depth sums and minima over the groups still to place.
        refill(&mut st.rho, g + 1, 0.0);
        refill(&mut st.extra, (g + 1) * m, f64::INFINITY);
        refill(&mut st.hmin, g + 1, u32::MAX);
        for d in (0..g).rev() {
            let gi = self.order[d];
            let hg = c.hydrogens[gi] as f64;
            let row = &c.pair[gi * m..(gi + 1) * m];
            let reduced = |j: usize| row[j] + st.lambda[j] * hg + c.overlap[j];
            let rho = (0..m).map(reduced).fold(c.unassigned[gi], f64::min);
            st.rho[d] = st.rho[d + 1] + rho;
            for j in 0..m {
                st.extra[d * m + j] = st.extra[(d + 1) * m + j].min(reduced(j) - rho);
            }
            st.hmin[d] = st.hmin[d + 1].min(c.hydrogens[gi]);
        }
        // u_j(H) = integral_j(H) - lambda_j H and its range-minimum levels.
        for j in 0..m {
            for hh in 0..width {
                st.table[j * width + hh] -= st.lambda[j] * hh as f64;
            }
        }
        for l in 1..levels {
            let half = 1 << (l - 1);
            for j in 0..m {
                let (from, to) = ((l - 1) * m + j, l * m + j);
                for hh in 0..width + 1 - (1 << l) {
                    st.table[to * width + hh] =
                        st.table[from * width + hh].min(st.table[from * width + hh + half]);
                }
            }
        }
        st.ready = true;
    }

    fn dfs(&mut self, d: usize, partial: f64) {
        self.nodes += 1;
        if self.nodes > self.max_nodes {
            self.stop = true;
            return;
        }
        if self.nodes.is_multiple_of(CLOCK_EVERY)
            && self
                .deadline
                .is_some_and(|t| std::time::Instant::now() >= t)
        {
            self.stop = true;
            self.late = true;
            return;
        }
        if self.nodes == self.strong_after {
            self.prepare_strong();
            if d == 0 {
                self.strong.root = Some(self.strong_bound(0));
            }
        }
        if self.nodes == self.lines_after && self.lines_ok {
            self.prepare_lines();
            if d == 0 {
                self.lines.root = Some(self.lines.bound(self.c, 0, &[], &[], self.suffix_h[0]));
            }
            if self.stop {
                return;
            }
        }
        let c = self.c;
        let m = c.multiplets;
        if d == self.order.len() {
            let total = partial
                + (0..m)
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
        let class = self.class_of[d];
        let row = class * m;
        let first = self.class_start[d] == d;
        if first && class > 0 {
            // The previous class is complete: carry the ties forward.
            for j in 0..m {
                let t = self.twin[j];
                if t != NONE {
                    let before = row - m;
                    self.tie[row + j] = self.tie[before + j]
                        && self.count[before + j] == self.count[before + t as usize];
                }
            }
        }
        // Identical groups take options in non-decreasing order.
        let from = if first { 0 } else { self.position[d - 1] };
        let g = self.order[d];
        let hg = c.hydrogens[g];
        // Sum of the line-bound terms at depth d + 1 before this group is
        // placed, filled when first needed: a child changes one term only.
        let mut line_sum: Option<f64> = None;
        for oi in from..self.stride {
            let (cost, j) = self.options[d * self.stride + oi];
            let base = partial + cost + self.suffix_min[d + 1];
            if base >= self.best {
                // Options are sorted: every later one is at least as dear.
                break;
            }
            if self.exchange && self.improvable(d, g, cost, j) {
                continue;
            }
            if j != NONE {
                let ju = j as usize;
                let t = self.twin[ju];
                // Lex-leader: while tied with its twin, j holds no more of
                // this class than the twin (whose count is final: it comes
                // earlier among the options).
                if t != NONE
                    && self.tie[row + ju]
                    && self.count[row + ju] >= self.count[row + t as usize]
                {
                    continue;
                }
                self.h[ju] += hg;
                self.k[ju] += 1;
                self.count[row + ju] += 1;
            }
            let mut go = base + self.multiplet_bound(d + 1) < self.best;
            if go && self.strong.ready {
                go = partial + cost + self.strong_bound(d + 1) < self.best;
            }
            if go && self.lines.ready {
                let reach = self.suffix_h[d + 1];
                let terms = &mut self.line_terms[d * m..(d + 1) * m];
                let sum = *line_sum.get_or_insert_with(|| {
                    for (jj, t) in terms.iter_mut().enumerate() {
                        let (mut h0, mut k0) = (self.h[jj], self.k[jj]);
                        if jj as u16 == j {
                            // Undo this option's own change.
                            h0 -= hg;
                            k0 -= 1;
                        }
                        *t = self.lines.term(c, jj, d + 1, h0, k0, reach);
                    }
                    terms.iter().sum()
                });
                let mut b = self.lines.base(d + 1) + sum;
                if j != NONE {
                    let ju = j as usize;
                    b += self.lines.term(c, ju, d + 1, self.h[ju], self.k[ju], reach) - terms[ju];
                }
                go = partial + cost + b - BOUND_SLACK * (1.0 + b.abs()) < self.best;
            }
            if go {
                self.current[d] = j;
                self.position[d] = oi;
                self.dfs(d + 1, partial + cost);
                if self.stop {
                    return;
                }
            }
            if j != NONE {
                let ju = j as usize;
                self.h[ju] -= hg;
                self.k[ju] -= 1;
                self.count[row + ju] -= 1;
            }
        }
    }
}

/// Scratch of the heuristics ([`improve`], [`marginal`]), kept between
/// calls.
#[derive(Clone, Debug, Default)]
pub(crate) struct Local {
    /// Per multiplet: its current term f_j(H, k), kept in step with `h` and
    /// `k` (the same function of the same numbers, so the same bits as
    /// computing it afresh).
    term: Vec<f64>,
    /// Per multiplet, then one row for [`NONE`]: a bit set of the groups
    /// placed there (`words` u64 per row), for the exchanges over listed
    /// targets.
    on: Vec<u64>,
    /// Counts of changes (moves and exchanges) in the local search, in one
    /// buffer: per multiplet, then one entry for [`NONE`], the count when a
    /// group last arrived there or left it; then per group the count when
    /// its moves were last tried; then per group the count when its
    /// exchanges (with later groups) last began.
    stamps: Vec<u32>,
}

/// Fill `term` with every multiplet's term at the sums `h`, `k`.
fn terms(c: &CostsRef, h: &[u32], k: &[u32], term: &mut Vec<f64>) {
    term.clear();
    // Room for the local search's floors too ([`Floors`]), in one
    // allocation.
    term.reserve(3 * c.multiplets + 1);
    term.extend((0..c.multiplets).map(|j| c.multiplet(j, h[j], k[j])));
}

/// Group `gi`'s own cost on multiplet j (its pair cost, or its unassigned
/// cost for [`NONE`]).
#[inline(always)]
fn own(c: &CostsRef, gi: usize, j: u16) -> f64 {
    if j == NONE {
        c.unassigned[gi]
    } else {
        c.pair[gi * c.multiplets + j as usize]
    }
}

/// Change of multiplet j's term when its H grow by `dh` and its groups by
/// `dk` (none for [`NONE`]); `term` holds the terms at `h`, `k`.
#[inline(always)]
fn change(c: &CostsRef, h: &[u32], k: &[u32], term: &[f64], j: u16, dh: i64, dk: i64) -> f64 {
    if j == NONE {
        return 0.0;
    }
    let j = j as usize;
    let (h0, k0) = (h[j] as i64, k[j] as i64);
    c.multiplet(j, (h0 + dh) as u32, (k0 + dk) as u32) - term[j]
}

/// The exchange of groups a < b in the local search, made when it lowers
/// the total: places, sums and terms updated; returns the two multiplets a
/// and b left.
#[allow(clippy::too_many_arguments)]
#[inline(always)]
fn exchange(
    c: &CostsRef,
    targets: &Targets,
    choice: &mut [u16],
    h: &mut [u32],
    k: &[u32],
    term: &mut [f64],
    floors: &mut Floors,
    a: usize,
    b: usize,
) -> Option<(u16, u16)> {
    let (ja, jb) = (choice[a], choice[b]);
    // The cheap tests first (all are pure, so the order does not change
    // the result): with short lists most pairs fail `allows` at once.
    if ja == jb || !targets.allows(a, jb) || !targets.allows(b, ja) {
        return None;
    }
    let (ha, hb) = (c.hydrogens[a] as i64, c.hydrogens[b] as i64);
    if ha == hb && own(c, a, jb) + own(c, b, ja) >= own(c, a, ja) + own(c, b, jb) {
        return None;
    }
    // The floor of the two changes first ([`CostsRef::floor`]; each
    // multiplet keeps its k >= 1; kept per multiplet in `floors.stay`).
    let swapped = own(c, a, jb) + own(c, b, ja) - own(c, a, ja) - own(c, b, jb);
    if !(swapped + floors.stay(ja) + floors.stay(jb) < -IMPROVE_EPS) {
        return None;
    }
    let delta =
        swapped + change(c, h, k, term, ja, hb - ha, 0) + change(c, h, k, term, jb, ha - hb, 0);
    if delta < -IMPROVE_EPS {
        for (j, dh) in [(ja, hb - ha), (jb, ha - hb)] {
            if j != NONE {
                let j = j as usize;
                h[j] = (h[j] as i64 + dh) as u32;
                floors.set(c, j, h, k, term);
            }
        }
        choice.swap(a, b);
        // `swap` exchanged the groups' places: a now sits on jb.
        return Some((ja, jb));
    }
    None
}

/// The local search's floors of a multiplet's term change, kept per
/// multiplet beside the terms (each the very expression the trials used
/// to compute, so the same bits and the same outcomes): `enter[j]`,
/// `floor(j, k + 1) - term[j]` (j gains a group), and `stay[j]`,
/// `floor(j, k) - term[j]` (j keeps its count; read only while j holds a
/// group), with one more entry, 0, for [`NONE`].
struct Floors<'a> {
    enter: &'a mut [f64],
    stay: &'a mut [f64],
}

impl<'a> Floors<'a> {
    /// `buf` holds the m terms at the sums `k`; the floors are appended
    /// (the buffer is then 3m + 1 long) and the terms returned beside them.
    fn new(c: &CostsRef, k: &[u32], buf: &'a mut Vec<f64>) -> (&'a mut [f64], Floors<'a>) {
        let m = c.multiplets;
        for j in 0..m {
            let x = c.floor(j, k[j] + 1) - buf[j];
            buf.push(x);
        }
        for j in 0..m {
            let x = c.overlap[j] * (k[j] as f64 - 1.0) - buf[j];
            buf.push(x);
        }
        buf.push(0.0);
        let (term, rest) = buf.split_at_mut(m);
        let (enter, stay) = rest.split_at_mut(m);
        (term, Floors { enter, stay })
    }

    /// Multiplet j's term and floors after its sums changed.
    #[inline(always)]
    fn set(&mut self, c: &CostsRef, j: usize, h: &[u32], k: &[u32], term: &mut [f64]) {
        let t = c.multiplet(j, h[j], k[j]);
        term[j] = t;
        self.enter[j] = c.floor(j, k[j] + 1) - t;
        // `(k - 1) as f64` for k >= 1, without the wrap at k = 0 (whose
        // value is never read).
        self.stay[j] = c.overlap[j] * (k[j] as f64 - 1.0) - t;
    }

    /// `stay` of multiplet j or of [`NONE`] (0).
    #[inline(always)]
    fn stay(&self, j: u16) -> f64 {
        self.stay[if j == NONE {
            self.enter.len()
        } else {
            j as usize
        }]
    }
}

/// The moves of group `gi` from `from` in the local search (`hg` its H,
/// `leave` what leaving saves).
struct Move {
    gi: usize,
    from: u16,
    hg: i64,
    leave: f64,
}

impl Move {
    /// The best move lowering the total, to one of `targets` (ascending)
    /// or then to none: (its change of the total, where), or (0, `from`).
    #[inline(always)]
    fn best(
        &self,
        c: &CostsRef,
        h: &[u32],
        k: &[u32],
        term: &[f64],
        enter: &[f64],
        targets: impl Iterator<Item = u16>,
    ) -> (f64, u16) {
        let Move {
            gi,
            from,
            hg,
            leave,
        } = *self;
        let mut best = (0.0, from);
        for to in targets {
            if to != from {
                // The floor of the change first (`to` gains a group;
                // [`CostsRef::floor`]).
                let j = to as usize;
                let floor = own(c, gi, to) + enter[j] - leave;
                if !(floor < best.0 - IMPROVE_EPS) {
                    continue;
                }
                let delta = own(c, gi, to) + change(c, h, k, term, to, hg, 1) - leave;
                if delta < best.0 - IMPROVE_EPS {
                    best = (delta, to);
                }
            }
        }
        if from != NONE {
            let delta = own(c, gi, NONE) + change(c, h, k, term, NONE, hg, 1) - leave;
            if delta < best.0 - IMPROVE_EPS {
                best = (delta, NONE);
            }
        }
        best
    }
}

/// Local search: move one group to another multiplet (or none), or exchange
/// the places of two groups, while that lowers the total; `choice` is
/// changed in place and its cost returned. `h` and `k` are zeroed scratch of
/// length `multiplets` (left holding the final sums).
///
/// Each pass tries the moves group by group, then the exchanges pair by
/// pair (a < b, in index order). With listed targets only pairs where each
/// group may take the other's place can exchange, and b may take a's place
/// only when b's multiplet (or none) is on a's list; with more than
/// [`EVERY_PAIR_UP_TO`] groups those b are read from per-multiplet bit sets
/// of the groups placed there instead of testing every pair. The set of
/// such b > a stays fixed while a's exchanges run (only a and the b just
/// visited change places), so the pairs are visited in the same order with
/// the same outcome as over every pair.
pub(crate) fn improve(
    c: &CostsRef,
    choice: &mut [u16],
    h: &mut [u32],
    k: &mut [u32],
    targets: Targets,
    local: &mut Local,
) -> f64 {
    let (g, m) = (c.groups, c.multiplets);
    for (gi, &j) in choice.iter().enumerate() {
        if j != NONE {
            h[j as usize] += c.hydrogens[gi];
            k[j as usize] += 1;
        }
    }
    let Local { term, on, stamps } = local;
    terms(c, h, k, term);
    let (term, mut floors) = Floors::new(c, k, term);
    let words = g.div_ceil(64);
    let row = |j: u16| if j == NONE { m } else { j as usize } * words;
    // A trial that failed gives the same answer again while nothing it
    // reads has changed: a group's moves read its own place and its
    // targets, an exchange the two groups' places (their H sums, counts
    // and terms, and which groups sit there). So a move or exchange is
    // skipped when none of these places changed since it last failed; the
    // search makes the same moves in the same order as without the skip
    // (the "don't look bits" of Bentley, ORSA J. Computing 1992, 4, 387,
    // in an exact form; from memory). `stamp` counts the changes; 0 in
    // `move_at`/`swap_at` means never tried, and every place starts at 1.
    // Only above `SKIP_ABOVE` groups: with fewer, the bookkeeping costs
    // more than the trials it saves.
    let at = |j: u16| if j == NONE { m } else { j as usize };
    let skip = g > SKIP_ABOVE;
    stamps.clear();
    if skip {
        stamps.resize(m + 1, 1);
        stamps.resize(m + 1 + 2 * g, 0);
    }
    let (changed, tries) = stamps.split_at_mut(if skip { m + 1 } else { 0 });
    let (move_at, swap_at) = tries.split_at_mut(if skip { g } else { 0 });
    let mut stamp = 1u32;
    let mut passes = 0;
    loop {
        passes += 1;
        let mut better = false;
        for (gi, place) in choice.iter_mut().enumerate() {
            let from = *place;
            if skip
                && passes > 1
                && changed[at(from)] <= move_at[gi]
                && match targets {
                    Targets::All => changed[..m].iter().all(|&t| t <= move_at[gi]),
                    Targets::Listed { start, lines, .. } => lines
                        [start[gi] as usize..start[gi + 1] as usize]
                        .iter()
                        .all(|&j| changed[j as usize] <= move_at[gi]),
                }
            {
                continue;
            }
            if skip {
                move_at[gi] = stamp;
            }
            let hg = c.hydrogens[gi] as i64;
            // What leaving `from` saves (own cost, and the term's change).
            let leave = own(c, gi, from) - change(c, h, k, term, from, -hg, -1);
            let moves = Move {
                gi,
                from,
                hg,
                leave,
            };
            let best = match targets {
                Targets::All => moves.best(c, h, k, term, floors.enter, 0..m as u16),
                Targets::Listed { start, lines, .. } => moves.best(
                    c,
                    h,
                    k,
                    term,
                    floors.enter,
                    lines[start[gi] as usize..start[gi + 1] as usize]
                        .iter()
                        .copied(),
                ),
            };
            if best.1 != from {
                let to = best.1;
                if from != NONE {
                    let j = from as usize;
                    h[j] -= c.hydrogens[gi];
                    k[j] -= 1;
                    floors.set(c, j, h, k, term);
                }
                if to != NONE {
                    let j = to as usize;
                    h[j] += c.hydrogens[gi];
                    k[j] += 1;
                    floors.set(c, j, h, k, term);
                }
                *place = to;
                better = true;
                if skip {
                    stamp += 1;
                    changed[at(from)] = stamp;
                    changed[at(to)] = stamp;
                }
            }
        }
        match targets {
            Targets::Listed { start, lines, .. } if g > EVERY_PAIR_UP_TO => {
                refill(on, (m + 1) * words, 0);
                for (gi, &j) in choice.iter().enumerate() {
                    on[row(j) + gi / 64] |= 1 << (gi % 64);
                }
                for a in 0..g {
                    let list = &lines[start[a] as usize..start[a + 1] as usize];
                    let tried = if skip {
                        std::mem::replace(&mut swap_at[a], stamp)
                    } else {
                        0
                    };
                    for w in (a + 1) / 64..words {
                        // The groups b > a in this word placed on a's list
                        // or on none.
                        let mut near = on[m * words + w];
                        for &j in list {
                            near |= on[j as usize * words + w];
                        }
                        if w == (a + 1) / 64 {
                            near &= u64::MAX << ((a + 1) % 64);
                        }
                        while near != 0 {
                            let b = w * 64 + near.trailing_zeros() as usize;
                            near &= near - 1;
                            if skip
                                && passes > 1
                                && changed[at(choice[a])] <= tried
                                && changed[at(choice[b])] <= tried
                            {
                                continue;
                            }
                            if let Some((ja, jb)) =
                                exchange(c, &targets, choice, h, k, term, &mut floors, a, b)
                            {
                                on[row(ja) + a / 64] &= !(1 << (a % 64));
                                on[row(jb) + a / 64] |= 1 << (a % 64);
                                on[row(jb) + w] &= !(1 << (b % 64));
                                on[row(ja) + w] |= 1 << (b % 64);
                                better = true;
                                if skip {
                                    stamp += 1;
                                    changed[at(ja)] = stamp;
                                    changed[at(jb)] = stamp;
                                }
                            }
                        }
                    }
                }
            }
            // Every pair: all targets, or too few groups to gain from
            // the bit sets.
            _ => {
                for a in 0..g {
                    let tried = if skip {
                        std::mem::replace(&mut swap_at[a], stamp)
                    } else {
                        0
                    };
                    for b in a + 1..g {
                        if skip
                            && passes > 1
                            && changed[at(choice[a])] <= tried
                            && changed[at(choice[b])] <= tried
                        {
                            continue;
                        }
                        if let Some((ja, jb)) =
                            exchange(c, &targets, choice, h, k, term, &mut floors, a, b)
                        {
                            better = true;
                            if skip {
                                stamp += 1;
                                changed[at(ja)] = stamp;
                                changed[at(jb)] = stamp;
                            }
                        }
                    }
                }
            }
        }
        if !better || passes >= IMPROVE_PASSES {
            break;
        }
    }
    for x in h.iter_mut().chain(k.iter_mut()) {
        *x = 0;
    }
    c.evaluate_in(choice, h, k)
}

/// The multiplets a group may take in the heuristics (the incumbents and
/// the local search): every one, or a short list per group (the pairs
/// [`super::split`] keeps). "None" is always allowed.
#[derive(Clone, Copy)]
pub(crate) enum Targets<'a> {
    All,
    /// Group g's multiplets are `lines[start[g]..start[g + 1]]`, ascending,
    /// followed by [`NONE`]; `allowed[g * m + j]` says whether j is listed
    /// (`m` multiplets).
    Listed {
        start: &'a [u32],
        lines: &'a [u16],
        allowed: &'a [bool],
        m: usize,
    },
}

impl Targets<'_> {
    /// Call `f` on each multiplet group `gi` may take, then on [`NONE`]
    /// (the order of the heuristics' trials).
    #[cfg(test)]
    fn each(&self, gi: usize, m: usize, mut f: impl FnMut(u16)) {
        match self {
            Targets::All => (0..m as u16).for_each(&mut f),
            Targets::Listed { start, lines, .. } => lines
                [start[gi] as usize..start[gi + 1] as usize]
                .iter()
                .for_each(|&j| f(j)),
        }
        f(NONE);
    }

    #[inline(always)]
    fn allows(&self, gi: usize, j: u16) -> bool {
        match self {
            Targets::All => true,
            Targets::Listed { allowed, m, .. } => j == NONE || allowed[gi * m + j as usize],
        }
    }
}

/// The second incumbent: groups in the given order, each where it adds
/// least to the total so far (its pair cost plus the change of the
/// multiplet term), which spreads repeated groups over repeated lines.
/// `h`, `k` are zeroed scratch (left holding the sums); `out` per group.
pub(crate) fn marginal(
    c: &CostsRef,
    order: &[usize],
    targets: Targets,
    h: &mut [u32],
    k: &mut [u32],
    out: &mut [u16],
    local: &mut Local,
) {
    let m = c.multiplets;
    let term = &mut local.term;
    terms(c, h, k, term);
    // The multiplet (or none) where group gi adds least, over `targets`
    // ascending (the first of equal costs stays).
    #[inline(always)]
    fn cheapest(
        c: &CostsRef,
        gi: usize,
        h: &[u32],
        k: &[u32],
        term: &[f64],
        targets: impl Iterator<Item = u16>,
    ) -> (f64, u16) {
        let (m, hg) = (c.multiplets, c.hydrogens[gi]);
        let mut best = (c.unassigned[gi], NONE);
        for j in targets {
            let ju = j as usize;
            // The floor first ([`CostsRef::floor`]).
            if !(c.pair[gi * m + ju] + c.floor(ju, k[ju] + 1) - term[ju] < best.0) {
                continue;
            }
            let added = c.pair[gi * m + ju] + c.multiplet(ju, h[ju] + hg, k[ju] + 1) - term[ju];
            if added < best.0 {
                best = (added, j);
            }
        }
        best
    }
    for &gi in order {
        let hg = c.hydrogens[gi];
        let best = match targets {
            Targets::All => cheapest(c, gi, h, k, term, 0..m as u16),
            Targets::Listed { start, lines, .. } => cheapest(
                c,
                gi,
                h,
                k,
                term,
                lines[start[gi] as usize..start[gi + 1] as usize]
                    .iter()
                    .copied(),
            ),
        };
        out[gi] = best.1;
        if best.1 != NONE {
            let j = best.1 as usize;
            h[j] += hg;
            k[j] += 1;
            term[j] = c.multiplet(j, h[j], k[j]);
        }
    }
}

/// Above this many groups the local search skips the trials that nothing
/// has changed for since they failed (see [`improve`]).
const SKIP_ABOVE: usize = 8;

/// Up to this many groups the local search tries the exchanges over every
/// pair even with listed targets (the bit sets cost more than they save).
const EVERY_PAIR_UP_TO: usize = 16;

/// A move of the local search must gain at least this much (no cycling on
/// rounding), and the local search stops after this many passes.
const IMPROVE_EPS: f64 = 1e-12;
const IMPROVE_PASSES: usize = 50;

/// The first multiplet of j's class of identical multiplets.
fn class_root(twin: &[u16], mut j: usize) -> usize {
    while twin[j] != NONE {
        j = twin[j] as usize;
    }
    j
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::score::assign_reference;
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

    /// The search with the stronger bounds from `tuning`'s nodes on, and
    /// the lower of their root values when one was prepared at the root.
    fn solve_with(c: &Costs, cutoff: f64, tuning: Tuning) -> (Option<Solution>, Option<f64>) {
        let mut ws = Workspace::default();
        let out = run(&c.view(), cutoff, &mut ws, false, u64::MAX, tuning, None);
        // Each root value must be a lower bound: report the higher one.
        let root = match (ws.strong.root, ws.lines.root) {
            (Some(a), Some(b)) => Some(a.max(b)),
            (a, b) => a.or(b),
        };
        match out {
            Outcome::Below(cost) => (
                Some(Solution {
                    cost,
                    choice: ws.best_choice,
                    nodes: ws.nodes,
                }),
                root,
            ),
            _ => (None, root),
        }
    }

    /// A random instance of up to `g_max` groups and `m_max` multiplets in
    /// which groups and multiplets often repeat (identical rows and
    /// columns), as equivalent CH2 groups and equal-shift m lines do.
    /// Invented numbers on the scales of the model (costs of a few units,
    /// 1-3 H per group, observed 1-5 H or none).
    fn random(st: &mut u64, g_max: usize, m_max: usize) -> Costs {
        let g = 1 + (rng(st) * g_max as f64) as usize;
        let m = 1 + (rng(st) * m_max as f64) as usize;
        let copy = |st: &mut u64, i: usize| -> usize {
            if i > 0 && rng(st) < 0.4 {
                (rng(st) * i as f64) as usize
            } else {
                i
            }
        };
        let mut gp: Vec<usize> = vec![];
        for i in 0..g {
            let p = copy(st, i);
            gp.push(if p == i { i } else { gp[p] });
        }
        let mut mp: Vec<usize> = vec![];
        for j in 0..m {
            let p = copy(st, j);
            mp.push(if p == j { j } else { mp[p] });
        }
        let base: Vec<f64> = (0..g * m).map(|_| rng(st) * 6.0).collect();
        let un: Vec<f64> = (0..g).map(|_| 1.0 + rng(st) * 6.0).collect();
        let hy: Vec<u32> = (0..g).map(|_| 1 + (rng(st) * 3.0) as u32).collect();
        let obs: Vec<Option<f64>> = (0..m)
            .map(|_| {
                let x = rng(st);
                (x > 0.15).then(|| 1.0 + (x * 5.0).floor())
            })
            .collect();
        let empty: Vec<f64> = (0..m).map(|_| 2.0 + rng(st) * 5.0).collect();
        let overlap: Vec<f64> = (0..m).map(|_| rng(st) * 2.0).collect();
        Costs {
            groups: g,
            multiplets: m,
            pair: (0..g * m)
                .map(|x| base[gp[x / m] * m + mp[x % m]])
                .collect(),
            unassigned: gp.iter().map(|&p| un[p]).collect(),
            hydrogens: gp.iter().map(|&p| hy[p]).collect(),
            observed_h: mp.iter().map(|&p| obs[p]).collect(),
            empty: mp.iter().map(|&p| empty[p]).collect(),
            overlap: mp.iter().map(|&p| overlap[p]).collect(),
            abs_sigma: 0.25,
            rel_sigma: 0.06,
        }
    }

    /// Both stronger bounds from the root (on the whole problem and on its
    /// parts), each alone from the root, the default, and the default
    /// without exchange dominance.
    const TUNINGS: [Tuning; 6] = [
        Tuning {
            strong_after: 1,
            lines_after: 1,
            split: false,
            exchange: true,
        },
        Tuning {
            strong_after: 1,
            lines_after: 1,
            split: true,
            exchange: true,
        },
        Tuning {
            strong_after: 1,
            lines_after: u64::MAX,
            split: false,
            exchange: true,
        },
        Tuning {
            strong_after: u64::MAX,
            lines_after: 1,
            split: false,
            exchange: true,
        },
        Tuning {
            strong_after: STRONG_AFTER,
            lines_after: LINES_AFTER,
            split: true,
            exchange: true,
        },
        Tuning {
            strong_after: STRONG_AFTER,
            lines_after: LINES_AFTER,
            split: true,
            exchange: false,
        },
    ];

    // Reference: exhaustive enumeration of every assignment (no outside
    // source: the definition of the optimum).
    #[test]
    fn search_equals_exhaustive_search() {
        let mut st = 0x9e3779b97f4a7c15u64;
        let (mut tighter, mut compared) = (0, 0);
        for _ in 0..600 {
            let c = random(&mut st, 6, 4);
            let exact = brute(&c);
            for tuning in TUNINGS {
                let (s, root) = solve_with(&c, f64::INFINITY, tuning);
                let s = s.unwrap();
                assert!((s.cost - exact).abs() < 1e-9, "{} vs {exact}", s.cost);
                assert!((c.evaluate(&s.choice) - s.cost).abs() < 1e-9);
                if let Some(root) = root {
                    // The Lagrangian bound is a lower bound ...
                    assert!(root <= exact + 1e-9, "bound {root} above optimum {exact}");
                    // ... and often a better one than the cheap root bound.
                    let cheap = root_bound(&c.view(), &mut vec![]);
                    tighter += (root > cheap + 1e-6) as usize;
                    compared += 1;
                }
                // With a cutoff below the optimum nothing is returned.
                assert!(solve_with(&c, exact - 1e-6, tuning).0.is_none());
                assert!(
                    (solve_with(&c, exact + 1e-6, tuning).0.unwrap().cost - exact).abs() < 1e-9
                );
            }
            assert_eq!(
                solve(&c, f64::INFINITY).unwrap().cost,
                solve_with(&c, f64::INFINITY, Tuning::default())
                    .0
                    .unwrap()
                    .cost
            );
            // The existence search agrees, and gives up only with "maybe".
            let mut ws = Workspace::default();
            assert!(may_reach_below(&c.view(), exact + 1e-6, &mut ws, u64::MAX));
            assert!(!may_reach_below(&c.view(), exact - 1e-6, &mut ws, u64::MAX));
            assert!(may_reach_below(&c.view(), exact + 1e-6, &mut ws, 1));
        }
        assert!(compared >= 600 * 3, "{compared}");
        assert!(
            tighter > 150,
            "Lagrangian bound tighter on {tighter} of {compared}"
        );
    }

    // Reference: the search as it was before this one
    // (`assign_reference.rs`), on instances too large to enumerate.
    #[test]
    fn search_equals_the_previous_search() {
        let mut st = 0x2545_f491_4f6c_dd1du64;
        let mut fewer = 0;
        for _ in 0..300 {
            let c = random(&mut st, 10, 7);
            let old = assign_reference::solve(&c, f64::INFINITY).unwrap();
            for tuning in TUNINGS {
                let (s, root) = solve_with(&c, f64::INFINITY, tuning);
                let s = s.unwrap();
                assert!(
                    (s.cost - old.cost).abs() < 1e-9,
                    "{} vs {}",
                    s.cost,
                    old.cost
                );
                assert!((c.evaluate(&s.choice) - s.cost).abs() < 1e-9);
                if let Some(root) = root {
                    assert!(root <= old.cost + 1e-9, "bound {root} above {}", old.cost);
                }
                fewer += (s.nodes <= old.nodes) as usize;
            }
            // Under a cutoff: nothing at or below the optimum, the optimum
            // just above it.
            assert!(solve(&c, old.cost - 1e-6).is_none());
            assert!((solve(&c, old.cost + 1e-6).unwrap().cost - old.cost).abs() < 1e-9);
        }
        assert!(fewer > 500 * TUNINGS.len() / 2, "{fewer}");
    }

    /// Near-identical one-H groups (shifts 0.1 ppm apart, so every pair
    /// cost differs a little) against lines that each want several of them
    /// (the CH of two unsymmetrical phenyl rings against 4C lines): the
    /// search with exchange dominance finds the exhaustive optimum in a
    /// small share of the nodes it takes without. Invented numbers on the
    /// model's scales.
    fn near_identical(n: usize, counts: &[f64]) -> Costs {
        let m = counts.len();
        let line_shift: Vec<f64> = (0..m).map(|j| 131.0 - 1.2 * j as f64).collect();
        let mut pair = vec![];
        for i in 0..n {
            let shift = 131.5 - 0.45 * i as f64;
            pair.extend(line_shift.iter().map(|&l| {
                let z = (shift - l) / 2.5;
                2.0 + 0.5 * z * z
            }));
        }
        Costs {
            groups: n,
            multiplets: m,
            pair,
            unassigned: vec![3.5; n],
            hydrogens: vec![1; n],
            observed_h: counts.iter().map(|&x| Some(x)).collect(),
            empty: vec![4.0; m],
            overlap: vec![2.0; m],
            abs_sigma: 0.35,
            rel_sigma: 0.0,
        }
    }

    // Reference: exhaustive enumeration (the definition of the optimum).
    #[test]
    fn exchange_dominance_keeps_the_optimum_of_near_identical_groups() {
        for (n, counts) in [
            (7, vec![1.0, 3.0, 3.0, 1.0]),
            (8, vec![1.0, 4.0, 4.0, 1.0]),
            (8, vec![2.0, 4.0, 1.0, 1.0, 1.0]),
        ] {
            let c = near_identical(n, &counts);
            let exact = brute(&c);
            let without = Tuning {
                exchange: false,
                ..Tuning::default()
            };
            let (on, _) = solve_with(&c, f64::INFINITY, Tuning::default());
            let (off, _) = solve_with(&c, f64::INFINITY, without);
            let (on, off) = (on.unwrap(), off.unwrap());
            println!(
                "{n} groups on {counts:?}: {} nodes, {} without",
                on.nodes, off.nodes
            );
            assert!((on.cost - exact).abs() < 1e-9, "{} vs {exact}", on.cost);
            assert!((off.cost - exact).abs() < 1e-9, "{} vs {exact}", off.cost);
            assert!(
                on.nodes * 5 < off.nodes,
                "{n} groups on {counts:?}: {} nodes with exchange dominance, {} without",
                on.nodes,
                off.nodes
            );
        }
    }

    /// A search past its thread's deadline gives up at its next look at
    /// the clock and answers as if nothing beat the cutoff; the same search
    /// without a deadline finishes (here, with the cheap bound alone and
    /// without exchange dominance, in more nodes than one look at the clock
    /// covers).
    #[test]
    fn a_search_past_its_deadline_gives_up() {
        let c = near_identical(11, &[1.0, 4.0, 4.0, 1.0, 1.0]);
        // The cheap bound alone, whole, without exchange dominance.
        let slow = Tuning {
            strong_after: u64::MAX,
            lines_after: u64::MAX,
            split: false,
            exchange: false,
        };
        let (whole, _) = solve_with(&c, f64::INFINITY, slow);
        let whole = whole.unwrap();
        assert!(whole.nodes > CLOCK_EVERY, "{}", whole.nodes);
        let past = std::time::Instant::now() - std::time::Duration::from_secs(1);
        let (late, _) = with_deadline(Some(past), || solve_with(&c, f64::INFINITY, slow));
        assert!(late.is_none());
        // The deadline is the thread's only inside `with_deadline`.
        let (again, _) = solve_with(&c, f64::INFINITY, slow);
        assert_eq!(again.unwrap().cost, whole.cost);
    }

    // Reference: exhaustive enumeration. The check of the checks: the line
    // bound raised by 0.3 (no longer a lower bound) must be caught by the
    // comparisons above, on the same kind of instances.
    #[test]
    fn a_raised_line_bound_is_caught() {
        let mut st = 0x9e3779b97f4a7c15u64;
        let mut caught = 0;
        for _ in 0..300 {
            let c = random(&mut st, 6, 4);
            let exact = brute(&c);
            let mut ws = Workspace::default();
            ws.lines.raise = 0.3;
            let tuning = Tuning {
                strong_after: u64::MAX,
                lines_after: 1,
                split: false,
                exchange: true,
            };
            let out = run(
                &c.view(),
                f64::INFINITY,
                &mut ws,
                false,
                u64::MAX,
                tuning,
                None,
            );
            let wrong_cost = match out {
                Outcome::Below(cost) => (cost - exact).abs() > 1e-9,
                _ => true,
            };
            let wrong_root = ws.lines.root.is_some_and(|r| r > exact + 1e-9);
            caught += (wrong_cost || wrong_root) as usize;
        }
        assert!(caught > 10, "a raised bound caught on {caught} of 300");
    }

    /// A random instance shaped like a long spectrum: groups and multiplets
    /// at positions along a shift axis of `span` units, the pair cost
    /// growing with the squared distance (capped at 9 and with a mismatch
    /// term of 5.3 now and then when `capped`, as the 13C terms are), some
    /// positions repeated (equal shifts, alike groups). Invented numbers on
    /// the scales of the model; `capped` also gives carbon-count-like
    /// integrals (1 or 2, sigma 0.35).
    fn spread(st: &mut u64, g: usize, m: usize, span: f64, capped: bool) -> Costs {
        let place = |st: &mut u64, n: usize| -> Vec<f64> {
            let mut at: Vec<f64> = vec![];
            for i in 0..n {
                let x = if i > 0 && rng(st) < 0.2 {
                    at[(rng(st) * i as f64) as usize]
                } else {
                    rng(st) * span
                };
                at.push(x);
            }
            at
        };
        let (gx, mx) = (place(st, g), place(st, m));
        let hy: Vec<u32> = (0..g)
            .map(|_| 1 + (rng(st) * if capped { 1.4 } else { 3.0 }) as u32)
            .collect();
        let mut pair = Vec::with_capacity(g * m);
        for &x in &gx {
            for &y in &mx {
                let d2 = (x - y) * (x - y) / 0.08;
                pair.push(if capped {
                    d2.min(9.0) + if rng(st) < 0.15 { 5.3 } else { 0.0 }
                } else {
                    d2 + (rng(st) * 1.5).floor()
                });
            }
        }
        Costs {
            groups: g,
            multiplets: m,
            pair,
            unassigned: hy
                .iter()
                .map(|&h| {
                    if capped {
                        1.5 + 2.0 * (h > 1) as u32 as f64
                    } else {
                        3.0 + 1.5 * h as f64
                    }
                })
                .collect(),
            hydrogens: hy,
            observed_h: (0..m)
                .map(|_| {
                    let x = rng(st);
                    if capped {
                        Some(1.0 + (x < 0.2) as u32 as f64)
                    } else {
                        (x > 0.1).then(|| 1.0 + (x * 3.0).floor())
                    }
                })
                .collect(),
            empty: (0..m)
                .map(|_| if capped { 4.0 } else { 4.5 + rng(st) * 1.5 })
                .collect(),
            overlap: (0..m).map(|_| if capped { 2.0 } else { 0.3 }).collect(),
            abs_sigma: if capped { 0.35 } else { 0.25 },
            rel_sigma: if capped { 0.0 } else { 0.06 },
        }
    }

    const WHOLE: Tuning = Tuning {
        strong_after: STRONG_AFTER,
        lines_after: LINES_AFTER,
        split: false,
        exchange: true,
    };

    /// The default search (with the split) finds `exact`, its assignment
    /// costs that, nothing below it passes a cutoff just under it and the
    /// optimum passes one just above; whether the problem split.
    fn split_finds(c: &Costs, exact: f64) -> bool {
        let mut ws = Workspace::default();
        let cost = solve_in(&c.view(), f64::INFINITY, &mut ws).unwrap();
        assert!((cost - exact).abs() < 1e-9, "{cost} vs {exact}");
        assert!((c.evaluate(ws.choice()) - cost).abs() < 1e-9);
        let split = ws.parts() > 1;
        assert!(solve_in(&c.view(), exact - 1e-6, &mut ws).is_none());
        let near = solve_in(&c.view(), exact + 1e-6, &mut ws).unwrap();
        assert!((near - exact).abs() < 1e-9);
        split
    }

    // Reference: exhaustive enumeration, on spectrum-shaped instances that
    // the split cuts into parts (1H-like and 13C-like terms).
    #[test]
    fn split_equals_exhaustive_search() {
        let mut st = 0x0123_4567_89ab_cdefu64;
        let mut split = 0;
        for i in 0..400 {
            let (g, m) = (2 + i % 5, 1 + (i / 5) % 5);
            let c = spread(&mut st, g, m, 3.0, i % 2 == 1);
            split += split_finds(&c, brute(&c)) as usize;
        }
        assert!(split > 200, "split {split} of 400");
    }

    // Reference: the search before this one (`assign_reference.rs`) on
    // spectrum-shaped instances of up to 9 groups and 9 multiplets, and the
    // search of the whole problem (itself checked against both above) on
    // long ones: 20 to 40 multiplets, far and equal shifts, 1H-like and
    // 13C-like terms, with and without a cutoff.
    #[test]
    fn split_equals_the_whole_and_the_previous_search() {
        let mut st = 0x5bd1_e995_1234_5678u64;
        let mut split = 0;
        for i in 0..200 {
            let (g, m) = (3 + i % 7, 2 + (i / 7) % 8);
            let c = spread(&mut st, g, m, 4.0, i % 2 == 1);
            let old = assign_reference::solve(&c, f64::INFINITY).unwrap();
            split += split_finds(&c, old.cost) as usize;
        }
        assert!(split > 100, "split {split} of 200");
        let mut split = 0;
        for i in 0..120 {
            let m = 20 + i % 21;
            let g = m - 3 + i % 7;
            let span = [8.0, 15.0, 40.0][i % 3];
            let c = spread(&mut st, g, m, span, i % 2 == 1);
            let mut whole = Workspace::default();
            let exact = solve_tuned(&c.view(), f64::INFINITY, &mut whole, WHOLE).unwrap();
            split += split_finds(&c, exact) as usize;
        }
        assert!(split > 80, "split {split} of 120");
    }

    /// n groups and n + 1 multiplets where each group is cheapest one line
    /// up from its own (the chain the local search cannot shift: a 1H list
    /// whose predictions all sit one line off), with random noise, some
    /// lines without an integral and, when `far` holds, a second chain
    /// far from the first. Invented numbers on the model's scales.
    fn chain_off_by_one(st: &mut u64, n: usize, far: bool) -> Costs {
        let blocks = 1 + far as usize;
        let (g, m) = (n * blocks, (n + 1) * blocks);
        let mut pair = vec![25.0; g * m];
        for b in 0..blocks {
            for i in 0..n {
                let (gi, j) = (b * n + i, b * (n + 1) + i);
                pair[gi * m + j] = 0.1 + rng(st) * 0.2;
                pair[gi * m + j + 1] = rng(st) * 0.1;
                if j + 2 < (b + 1) * (n + 1) {
                    pair[gi * m + j + 2] = 3.0 + rng(st);
                }
            }
        }
        Costs {
            groups: g,
            multiplets: m,
            pair,
            unassigned: vec![5.0; g],
            hydrogens: (0..g).map(|_| 1 + (rng(st) < 0.2) as u32).collect(),
            observed_h: (0..m)
                .map(|_| {
                    let x = rng(st);
                    (x > 0.15).then_some(1.0 + (x > 0.85) as u32 as f64)
                })
                .collect(),
            empty: vec![4.0; m],
            overlap: vec![2.0; m],
            abs_sigma: 0.35,
            rel_sigma: 0.0,
        }
    }

    // Reference: the search before this one (`assign_reference.rs`) and
    // the whole search, on chains longer than `split::RETRY_ABOVE` where
    // the split's first known assignment is poor and the one-to-one
    // matching (`score::matching`) gives the part a better one.
    #[test]
    fn split_with_matching_keeps_the_optimum_on_shifted_chains() {
        let mut st = 0x1f83_d9ab_fb41_bd6bu64;
        for i in 0..24 {
            let c = chain_off_by_one(&mut st, 9 + i % 6, i % 3 == 0);
            let old = assign_reference::solve(&c, f64::INFINITY).unwrap();
            let mut whole = Workspace::default();
            let exact = solve_tuned(&c.view(), f64::INFINITY, &mut whole, WHOLE).unwrap();
            assert!((exact - old.cost).abs() < 1e-9, "{exact} vs {}", old.cost);
            split_finds(&c, exact);
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

    /// n identical 2H groups and `lines` identical 1H multiplets, all near
    /// one shift (the shape of a long alkane chain against equal-shift m
    /// lines); pair cost 2, unassigned 6 (the model's 3 + 1.5 per H),
    /// unexplained 4.5, overlap 0.3 (the embedded model's values).
    fn chain(n: usize, lines: usize) -> Costs {
        Costs {
            groups: n,
            multiplets: lines,
            pair: vec![2.0; n * lines],
            unassigned: vec![6.0; n],
            hydrogens: vec![2; n],
            observed_h: vec![Some(1.0); lines],
            empty: vec![4.5; lines],
            overlap: vec![0.3; lines],
            abs_sigma: 0.25,
            rel_sigma: 0.06,
        }
    }

    // Reference: worked by hand from the cost model. One 2H group in a 1H
    // line costs 2 + (1 - 2)^2 / (2 (0.25 + 0.06 * 2)^2) = 2 + 3.652 = 5.652,
    // below both leaving the group out (6) plus the line unexplained (4.5);
    // a second group in the same line costs 2 + 0.3 more and raises the
    // integral term to (1 - 4)^2 / (2 (0.25 + 0.24)^2) = 18.74, worse than 6.
    // So the optimum puts one group in each line and leaves the rest out.
    #[test]
    fn repeated_groups_and_lines_are_solved_exactly_and_fast() {
        let one = 2.0 + 1.0 / (2.0 * 0.37f64.powi(2));
        for (n, lines) in [(14, 5), (14, 10), (30, 30), (20, 12)] {
            let c = chain(n, lines);
            let s = solve(&c, f64::INFINITY).unwrap();
            let placed = n.min(lines);
            let expect =
                placed as f64 * one + (n - placed) as f64 * 6.0 + (lines - placed) as f64 * 4.5;
            assert!(
                (s.cost - expect).abs() < 1e-9,
                "{n} {lines}: {} vs {expect}",
                s.cost
            );
            // Symmetry and the bound leave a search of a few nodes per
            // group (the previous search needed millions at 14 x 10).
            assert!(
                s.nodes < 50 * (n as u64 + 1),
                "{n} {lines}: {} nodes",
                s.nodes
            );
        }
    }

    /// The local search as it was before the exchanges were read from bit
    /// sets: every pair a < b tested in index order, every term computed
    /// afresh (the reference for the test below).
    fn improve_every_pair(
        c: &CostsRef,
        choice: &mut [u16],
        h: &mut [u32],
        k: &mut [u32],
        targets: Targets,
    ) -> f64 {
        let (g, m) = (c.groups, c.multiplets);
        for (gi, &j) in choice.iter().enumerate() {
            if j != NONE {
                h[j as usize] += c.hydrogens[gi];
                k[j as usize] += 1;
            }
        }
        let own = |gi: usize, j: u16| {
            if j == NONE {
                c.unassigned[gi]
            } else {
                c.pair[gi * m + j as usize]
            }
        };
        let change = |h: &[u32], k: &[u32], j: u16, dh: i64, dk: i64| {
            if j == NONE {
                return 0.0;
            }
            let j = j as usize;
            let (h0, k0) = (h[j] as i64, k[j] as i64);
            c.multiplet(j, (h0 + dh) as u32, (k0 + dk) as u32) - c.multiplet(j, h[j], k[j])
        };
        let mut passes = 0;
        loop {
            passes += 1;
            let mut better = false;
            for (gi, place) in choice.iter_mut().enumerate() {
                let from = *place;
                let hg = c.hydrogens[gi] as i64;
                let leave = own(gi, from) - change(h, k, from, -hg, -1);
                let mut best = (0.0, from);
                targets.each(gi, m, |to| {
                    if to != from {
                        let delta = own(gi, to) + change(h, k, to, hg, 1) - leave;
                        if delta < best.0 - IMPROVE_EPS {
                            best = (delta, to);
                        }
                    }
                });
                if best.1 != from {
                    let to = best.1;
                    if from != NONE {
                        h[from as usize] -= c.hydrogens[gi];
                        k[from as usize] -= 1;
                    }
                    if to != NONE {
                        h[to as usize] += c.hydrogens[gi];
                        k[to as usize] += 1;
                    }
                    *place = to;
                    better = true;
                }
            }
            for a in 0..g {
                for b in a + 1..g {
                    let (ja, jb) = (choice[a], choice[b]);
                    if ja == jb || !targets.allows(a, jb) || !targets.allows(b, ja) {
                        continue;
                    }
                    let (ha, hb) = (c.hydrogens[a] as i64, c.hydrogens[b] as i64);
                    if ha == hb && own(a, jb) + own(b, ja) >= own(a, ja) + own(b, jb) {
                        continue;
                    }
                    let delta = own(a, jb) + own(b, ja) - own(a, ja) - own(b, jb)
                        + change(h, k, ja, hb - ha, 0)
                        + change(h, k, jb, ha - hb, 0);
                    if delta < -IMPROVE_EPS {
                        for (j, dh) in [(ja, hb - ha), (jb, ha - hb)] {
                            if j != NONE {
                                h[j as usize] = (h[j as usize] as i64 + dh) as u32;
                            }
                        }
                        choice.swap(a, b);
                        better = true;
                    }
                }
            }
            if !better || passes >= IMPROVE_PASSES {
                break;
            }
        }
        for x in h.iter_mut().chain(k.iter_mut()) {
            *x = 0;
        }
        c.evaluate_in(choice, h, k)
    }

    // Reference: the local search over every pair with every term computed
    // afresh and no trial skipped (`improve_every_pair`, the code before
    // the bit sets and the skips of unchanged trials); the result must be
    // the same to the bit, move for move.
    #[test]
    fn local_search_over_bit_sets_equals_every_pair() {
        let mut st = 0x2f6b_1d3a_95c7_0e41u64;
        let (mut changed, mut local) = (0, Local::default());
        for round in 0..400 {
            // Up to 140 groups: bit sets of one to three words.
            let c = random(&mut st, if round % 4 == 0 { 140 } else { 40 }, 12);
            let (g, m) = (c.groups, c.multiplets);
            let density = 0.1 + 0.6 * rng(&mut st);
            let (mut start, mut lines, mut allowed) = (vec![0u32], vec![], vec![false; g * m]);
            for gi in 0..g {
                for j in 0..m {
                    if rng(&mut st) < density {
                        lines.push(j as u16);
                        allowed[gi * m + j] = true;
                    }
                }
                start.push(lines.len() as u32);
            }
            let listed = Targets::Listed {
                start: &start,
                lines: &lines,
                allowed: &allowed,
                m,
            };
            let first: Vec<u16> = (0..g)
                .map(|_| {
                    let x = (rng(&mut st) * (m + 1) as f64) as usize;
                    if x >= m {
                        NONE
                    } else {
                        x as u16
                    }
                })
                .collect();
            for targets in [Targets::All, listed] {
                let (mut a, mut b) = (first.clone(), first.clone());
                let (mut h, mut k) = (vec![0; m], vec![0; m]);
                let new = improve(&c.view(), &mut a, &mut h, &mut k, targets, &mut local);
                let (mut h, mut k) = (vec![0; m], vec![0; m]);
                let old = improve_every_pair(&c.view(), &mut b, &mut h, &mut k, targets);
                assert_eq!(a, b);
                assert_eq!(new.to_bits(), old.to_bits());
                changed += usize::from(a != first);
            }
        }
        // The instances did move groups (not a test of an idle search).
        assert!(changed > 400, "{changed}");
    }

    // A search given a known assignment that costs no more than the root
    // bound with the floors returns it without searching (`run`, `seed`).
    // References: exhaustive search, and the search from its own
    // incumbents (no seed), on random problems, half with whole-number
    // costs so that the bound often meets the optimum and ties are common;
    // seeds are the optimum or a random assignment, cutoffs above, at and
    // just above the optimum.
    #[test]
    fn a_seed_at_the_root_bound_is_returned_exactly() {
        let mut st = 0x2c41_9e07_b3d5_6a18u64;
        let (mut at_root, mut searched) = (0, 0);
        let tuning = Tuning {
            split: false,
            ..Tuning::default()
        };
        for round in 0..3000 {
            let mut c = random(&mut st, 5, 6);
            if round % 2 == 0 {
                for x in c.pair.iter_mut().chain(c.unassigned.iter_mut()) {
                    *x = x.round();
                }
                for x in c.empty.iter_mut().chain(c.overlap.iter_mut()) {
                    *x = x.round();
                }
            }
            let (g, m) = (c.groups, c.multiplets);
            let exact = brute(&c);
            let mut plain = Workspace::default();
            let unseeded = run(
                &c.view(),
                f64::INFINITY,
                &mut plain,
                false,
                u64::MAX,
                tuning,
                None,
            );
            let Outcome::Below(optimum) = unseeded else {
                panic!("round {round}: no optimum");
            };
            assert!((optimum - exact).abs() < 1e-9, "round {round}");
            let seed: Vec<u16> = if round % 3 == 0 {
                (0..g)
                    .map(|_| {
                        let i = (rng(&mut st) * (m + 1) as f64) as usize;
                        if i >= m {
                            NONE
                        } else {
                            i as u16
                        }
                    })
                    .collect()
            } else {
                plain.best_choice.clone()
            };
            let seed_cost = c.evaluate(&seed);
            let cutoff = match round % 4 {
                0 | 1 => f64::INFINITY,
                2 => exact + 1e-6,
                _ => exact,
            };
            let mut ws = Workspace::default();
            let out = run(
                &c.view(),
                cutoff,
                &mut ws,
                false,
                u64::MAX,
                tuning,
                Some(&seed),
            );
            // Whether the seed met the bound (the new path).
            let (mut mc, mut ex, mut fl) = (Vec::new(), Vec::new(), Vec::new());
            let bound = root_bound_floored(&c.view(), &mut mc, &mut ex, &mut fl);
            let met = seed_cost <= bound;
            match out {
                Outcome::Below(cost) => {
                    assert!(cutoff > exact - 1e-9, "round {round}");
                    assert!(
                        (cost - exact).abs() < 1e-9,
                        "round {round}: {cost} vs {exact}"
                    );
                    assert!((c.evaluate(&ws.best_choice) - cost).abs() < 1e-9);
                    if met {
                        assert_eq!(ws.best_choice, seed, "round {round}");
                        assert_eq!(cost.to_bits(), seed_cost.to_bits());
                        assert_eq!(ws.nodes, 1);
                    }
                }
                Outcome::Nothing => assert!(cutoff <= exact + 1e-9, "round {round}"),
                Outcome::GaveUp => panic!("round {round}: gave up"),
            }
            if met {
                at_root += 1;
            } else {
                searched += 1;
            }
        }
        // Both ways were taken.
        assert!(at_root > 200 && searched > 2000, "{at_root} {searched}");
    }

    // Reference: the search on the part (`run` from the same incumbent,
    // itself checked against exhaustive search above) and exhaustive
    // search; the direct solve of a small part must give the search's
    // assignment and cost to the bit, or leave the part to it.
    #[test]
    fn small_parts_listed_equal_the_search() {
        let mut st = 0x51ab_77c3_0d2e_9f18u64;
        let (mut listed, mut searched, mut below_cutoff) = (0, 0, 0);
        for round in 0..3000 {
            // A whole problem of 2-4 groups and 1-6 lines (repeats often,
            // and on even rounds costs of whole numbers, so that ties
            // between assignments are common), and a part of two of its
            // groups on one to three of its lines.
            let mut c = random(&mut st, 4, 6);
            if c.groups < 2 {
                continue;
            }
            if round % 2 == 0 {
                for x in c.pair.iter_mut().chain(c.unassigned.iter_mut()) {
                    *x = x.round();
                }
                for x in c.empty.iter_mut().chain(c.overlap.iter_mut()) {
                    *x = x.round();
                }
            }
            let (g, m) = (c.groups, c.multiplets);
            let mut gs: Vec<u32> = (0..g as u32).collect();
            while gs.len() > 2 {
                gs.remove((rng(&mut st) * gs.len() as f64) as usize % gs.len());
            }
            let mut ls: Vec<u32> = (0..m as u32).collect();
            let keep = 1 + (rng(&mut st) * 3.0) as usize;
            while ls.len() > keep {
                ls.remove((rng(&mut st) * ls.len() as f64) as usize % ls.len());
            }
            let mut known = vec![NONE; g];
            for &x in &gs {
                let i = (rng(&mut st) * (ls.len() + 1) as f64) as usize;
                known[x as usize] = ls.get(i).map_or(NONE, |&j| j as u16);
            }
            // The part as its own problem, as the split builds it.
            let part = Costs {
                groups: gs.len(),
                multiplets: ls.len(),
                pair: gs
                    .iter()
                    .flat_map(|&x| ls.iter().map(move |&j| (x, j)))
                    .map(|(x, j)| c.pair[x as usize * m + j as usize])
                    .collect(),
                unassigned: gs.iter().map(|&x| c.unassigned[x as usize]).collect(),
                hydrogens: gs.iter().map(|&x| c.hydrogens[x as usize]).collect(),
                observed_h: ls.iter().map(|&j| c.observed_h[j as usize]).collect(),
                empty: ls.iter().map(|&j| c.empty[j as usize]).collect(),
                overlap: ls.iter().map(|&j| c.overlap[j as usize]).collect(),
                abs_sigma: c.abs_sigma,
                rel_sigma: c.rel_sigma,
            };
            let seed: Vec<u16> = gs
                .iter()
                .map(|&x| match known[x as usize] {
                    NONE => NONE,
                    j => ls.iter().position(|&l| l == u32::from(j)).unwrap() as u16,
                })
                .collect();
            let exact = brute(&part);
            let cutoff = match round % 3 {
                0 => f64::INFINITY,
                1 => exact + 1e-6,
                _ => exact,
            };
            let mut out = vec![NONE; g];
            let small = small::solve(&c.view(), &gs, &ls, &known, cutoff, &mut out);
            let mut ws = Workspace::default();
            let tuning = Tuning {
                split: false,
                ..Tuning::default()
            };
            let search = run(
                &part.view(),
                cutoff,
                &mut ws,
                false,
                u64::MAX,
                tuning,
                Some(&seed),
            );
            match (small, search) {
                (Small::Search, _) => searched += 1,
                (Small::Nothing, Outcome::Nothing) => {
                    assert!(cutoff <= exact + 1e-9);
                    listed += 1;
                }
                (Small::Below(a), Outcome::Below(b)) => {
                    assert_eq!(a.to_bits(), b.to_bits(), "round {round}");
                    assert!((a - exact).abs() < 1e-9, "round {round}: {a} vs {exact}");
                    for (i, &x) in gs.iter().enumerate() {
                        let mine = out[x as usize];
                        let theirs = match ws.best_choice[i] {
                            NONE => NONE,
                            j => ls[j as usize] as u16,
                        };
                        assert_eq!(mine, theirs, "round {round}");
                    }
                    listed += 1;
                    below_cutoff += 1;
                }
                (a, _) => panic!("round {round}: {a:?} against the search"),
            }
        }
        // Both ways were taken, and most parts were listed.
        assert!(listed > 900 && searched > 100, "{listed} {searched}");
        assert!(below_cutoff > 600, "{below_cutoff}");
    }
}
