//! A part of two groups on up to three lines ([`super::split`]) solved by
//! listing its assignments instead of through the search's set-up
//! ([`super::assign`]'s `run`: its bounds, order, symmetry tables and
//! buffers cost a few thousand instructions per part, while a part of two
//! groups on two lines has nine assignments).
//!
//! The answer is the search's own, bit for bit: the search visits the
//! assignments in lexicographic order of (group in search order, option in
//! cost order), starts from the split's known assignment as its incumbent
//! and keeps an assignment only when its total is strictly below the best
//! so far; its cuts drop only assignments that cannot be strictly below
//! (bounds, and exchanges that save more than a rounding margin). So it
//! returns the first assignment in that order whose total is the least
//! total, when that is below the incumbent's. Listing every assignment in
//! the same order, with each total summed in the search's order (the
//! groups' own costs in search order, then the lines' terms in line
//! order) and the same strict test, gives the same assignment and cost.
//! The two symmetry rules that also drop assignments of equal cost
//! (identical groups, identical multiplets) are left to the search: a
//! part with identical groups or identical lines is not solved here.

use super::assign::{CostsRef, NONE};

/// Most groups of a part solved here.
const MOST_GROUPS: usize = 2;

/// Most lines of a part solved here.
const MOST_LINES: usize = 3;

/// Most assignments, (lines + 1)^groups, of a part solved here. Listing
/// costs about as much as the search once a part has 25 or more: two
/// groups on up to three lines gained 4,600 instructions per candidate at
/// 30 multiplets (`bench_assign`, realistic 1H), parts of three groups on
/// up to three lines (64 assignments) nothing more.
const MOST_LEAVES: usize = 16;

/// What [`solve`] found.
#[derive(Debug, PartialEq)]
pub(crate) enum Small {
    /// The part is not one this module solves (too large, or identical
    /// groups or lines): search it.
    Search,
    /// No assignment of the part costs less than the cutoff.
    Nothing,
    /// The best assignment's total (summed as the search sums it); the
    /// assignment is in `out`.
    Below(f64),
}

/// Whether lines `a` and `b` (whole-problem indices) are identical for the
/// groups `gs`: the search's test on the part.
fn same_line(c: &CostsRef, gs: &[u32], a: usize, b: usize) -> bool {
    let m = c.multiplets;
    c.observed_h[a].map(f64::to_bits) == c.observed_h[b].map(f64::to_bits)
        && c.empty[a].to_bits() == c.empty[b].to_bits()
        && c.overlap[a].to_bits() == c.overlap[b].to_bits()
        && gs.iter().all(|&x| {
            let x = x as usize;
            c.pair[x * m + a].to_bits() == c.pair[x * m + b].to_bits()
        })
}

/// The search's group order on the part (larger groups first, then the
/// unassigned cost, then the pair costs on the part's lines in order);
/// `Equal` only for identical groups.
fn order(c: &CostsRef, ls: &[u32], a: usize, b: usize) -> std::cmp::Ordering {
    let m = c.multiplets;
    c.hydrogens[b]
        .cmp(&c.hydrogens[a])
        .then(c.unassigned[a].total_cmp(&c.unassigned[b]))
        .then_with(|| {
            ls.iter()
                .map(|&j| c.pair[a * m + j as usize].total_cmp(&c.pair[b * m + j as usize]))
                .find(|o| o.is_ne())
                .unwrap_or(std::cmp::Ordering::Equal)
        })
}

/// The best assignment of the part with groups `gs` and lines `ls`
/// (whole-problem indices, ascending, as [`super::split::Split::members`]
/// gives them) below `cutoff`, starting from `known` (per whole-problem
/// group: a line of `ls` or [`NONE`]); the assignment goes into `out`
/// (per whole-problem group). The same answer as the search on the part
/// (module doc).
pub(crate) fn solve(
    c: &CostsRef,
    gs: &[u32],
    ls: &[u32],
    known: &[u16],
    cutoff: f64,
    out: &mut [u16],
) -> Small {
    let (g, l) = (gs.len(), ls.len());
    if !(2..=MOST_GROUPS).contains(&g) || l == 0 || l > MOST_LINES {
        return Small::Search;
    }
    if (l + 1).pow(g as u32) > MOST_LEAVES {
        return Small::Search;
    }
    for a in 0..l {
        for b in a + 1..l {
            if same_line(c, gs, ls[a] as usize, ls[b] as usize) {
                return Small::Search;
            }
        }
    }
    // Search order of the part's groups (local indices 0..g).
    let mut by = [0usize; MOST_GROUPS];
    for (d, x) in by.iter_mut().enumerate() {
        *x = d;
    }
    let by = &mut by[..g];
    for i in 1..g {
        let mut k = i;
        while k > 0 {
            match order(c, ls, gs[by[k]] as usize, gs[by[k - 1]] as usize) {
                std::cmp::Ordering::Less => by.swap(k, k - 1),
                std::cmp::Ordering::Greater => break,
                std::cmp::Ordering::Equal => return Small::Search,
            }
            k -= 1;
        }
    }
    let m = c.multiplets;
    // Each group's options, cheapest first (local line index, `l` for
    // none; equal costs by line, none last): the search's option order.
    let mut options = [[(0.0f64, 0u16); MOST_LINES + 1]; MOST_GROUPS];
    for (d, &x) in by.iter().enumerate() {
        let gi = gs[x] as usize;
        let o = &mut options[d][..l + 1];
        for (i, &j) in ls.iter().enumerate() {
            o[i] = (c.pair[gi * m + j as usize], i as u16);
        }
        o[l] = (c.unassigned[gi], NONE);
        // Insertion sort (at most four options).
        for i in 1..o.len() {
            let mut k = i;
            while k > 0
                && o[k]
                    .0
                    .total_cmp(&o[k - 1].0)
                    .then(o[k].1.cmp(&o[k - 1].1))
                    .is_lt()
            {
                o.swap(k, k - 1);
                k -= 1;
            }
        }
    }
    // Per line and subset of the groups on it (bit d: the group at depth
    // d): the line's term.
    let mut term = [[0.0f64; 1 << MOST_GROUPS]; MOST_LINES];
    let mut hy = [0u32; MOST_GROUPS];
    for (d, &x) in by.iter().enumerate() {
        hy[d] = c.hydrogens[gs[x] as usize];
    }
    for (row, &j) in term.iter_mut().zip(ls) {
        for (set, t) in row[..1 << g].iter_mut().enumerate() {
            let h: u32 = (0..g).filter(|d| set >> d & 1 == 1).map(|d| hy[d]).sum();
            *t = c.multiplet(j as usize, h, set.count_ones());
        }
    }
    // The incumbent: the known assignment, its cost summed as the search
    // sums its first incumbent (groups in the part's order, then lines).
    let mut set = [0usize; MOST_LINES];
    let mut total = 0.0;
    for (x, &gi) in gs.iter().enumerate() {
        let j = known[gi as usize];
        if j == NONE {
            total += c.unassigned[gi as usize];
        } else {
            let i = ls
                .binary_search(&u32::from(j))
                .expect("known line in its part");
            total += c.pair[gi as usize * m + j as usize];
            let d = by.iter().position(|&y| y == x).unwrap();
            set[i] |= 1 << d;
        }
    }
    let seed = total + (0..l).map(|i| term[i][set[i]]).sum::<f64>();
    let (mut best, mut found) = if seed < cutoff {
        (seed, true)
    } else {
        (cutoff, false)
    };
    // Every assignment in the search's order; the first strictly below the
    // best so far replaces it.
    let mut at = [0usize; MOST_GROUPS];
    let mut pick = [usize::MAX; MOST_GROUPS];
    loop {
        for x in &mut set[..l] {
            *x = 0;
        }
        let mut partial = 0.0;
        for d in 0..g {
            let (cost, i) = options[d][at[d]];
            partial += cost;
            if i != NONE {
                set[i as usize] |= 1 << d;
            }
        }
        let total = partial + (0..l).map(|i| term[i][set[i]]).sum::<f64>();
        if total < best {
            best = total;
            found = true;
            pick[..g].copy_from_slice(&at[..g]);
        }
        // Next in lexicographic order (the last depth fastest).
        let mut d = g;
        loop {
            if d == 0 {
                break;
            }
            d -= 1;
            at[d] += 1;
            if at[d] <= l {
                break;
            }
            at[d] = 0;
        }
        if at[..g].iter().all(|&a| a == 0) {
            break;
        }
    }
    if !found {
        return Small::Nothing;
    }
    for (d, &x) in by.iter().enumerate() {
        let gi = gs[x] as usize;
        out[gi] = if pick[0] == usize::MAX {
            known[gi]
        } else {
            match options[d][pick[d]].1 {
                NONE => NONE,
                i => ls[i as usize] as u16,
            }
        };
    }
    Small::Below(best)
}
