//! The collector: a bounded top-k of scored candidates, the softmax
//! normaliser over every candidate considered, and the shared cutoff that
//! lets scoring threads give up early on hopeless candidates.
//!
//! Memory stays flat: the top-k heap holds at most k candidates, and the
//! normaliser is a histogram of the costs within `skip_margin` of the best
//! (at most `skip_margin * HIST_BINS_PER_NAT` bins).
//!
//! Order-free and exact: each generation task (and each shard of a run on
//! a cluster) fills a collector of its own, and [`Collector::merge`]
//! combines them. The result does not depend on the order of merging, not
//! even in the last bit: the top-k is the k smallest (cost, SMILES) pairs; a
//! bin holds the count of its costs and the sum of `exp(-(cost - bin start))`
//! in 2^-63 fixed point, an integer sum, so exact in any order; the
//! normaliser keeps exactly the costs whose bin is below `bin(best) +
//! skip_margin` bins, the final best's, whatever the best was when a cost
//! arrived (a bin once cut away stays cut away as the best only falls), and
//! it is turned into a floating sum only at the end, in bin order.
//!
//! Safety of skipping: a scoring thread skips a candidate only when a bound
//! shows its cost is at or above the cutoff `max(k-th best, best +
//! skip_margin) + SLACK`, with k-th best and best taken over a subset of the
//! candidates, so at least their final values: such a candidate could never
//! have entered the final top-k, and the slack of two bins keeps every cost
//! whose bin the normaliser keeps scored exactly. A candidate reported
//! without a payload (cost above a k-th best of the moment) could never
//! have entered the top-k.

use std::cmp::Ordering;
use std::collections::{BTreeMap, BinaryHeap};
use std::sync::atomic::{AtomicU64, Ordering as AtomicOrdering};
use std::sync::Arc;

/// Resolution of the cost histogram (bins per unit of cost).
pub const HIST_BINS_PER_NAT: f64 = 1024.0;

/// What scoring one candidate gave.
pub enum Outcome<T> {
    /// Scored exactly: the cost and the payload to keep if it ranks.
    Scored { cost: f64, key: String, item: T },
    /// Scored exactly, but provably not good enough for the top-k (its cost
    /// still counts in the probabilities): no payload was built.
    CostOnly { cost: f64 },
    /// Provably above the cutoff; not scored exactly.
    Skipped,
}

/// The cutoffs shared with the scoring threads (f64 bits in atomics).
#[derive(Clone)]
pub struct Cutoff(Arc<[AtomicU64; 3]>);

impl Cutoff {
    fn new() -> Cutoff {
        let inf = f64::INFINITY.to_bits();
        Cutoff(Arc::new([
            AtomicU64::new(inf),
            AtomicU64::new(inf),
            AtomicU64::new(inf),
        ]))
    }

    /// The lowest cost collected so far.
    pub fn best(&self) -> f64 {
        f64::from_bits(self.0[2].load(AtomicOrdering::Relaxed))
    }

    /// The cost at or above which a candidate cannot matter any more
    /// (neither for the top-k nor for the probabilities).
    pub fn get(&self) -> f64 {
        f64::from_bits(self.0[0].load(AtomicOrdering::Relaxed))
    }

    /// The cost above which a candidate cannot enter the top-k: below it the
    /// payload (SMILES, prediction) is worth building.
    pub fn top_k(&self) -> f64 {
        f64::from_bits(self.0[1].load(AtomicOrdering::Relaxed))
    }

    fn set(&self, any: f64, top_k: f64, best: f64) {
        self.0[0].store(any.to_bits(), AtomicOrdering::Relaxed);
        self.0[1].store(top_k.to_bits(), AtomicOrdering::Relaxed);
        self.0[2].store(best.to_bits(), AtomicOrdering::Relaxed);
    }
}

struct HeapItem<T> {
    cost: f64,
    key: String,
    item: T,
}

impl<T> PartialEq for HeapItem<T> {
    fn eq(&self, o: &Self) -> bool {
        self.cmp(o) == Ordering::Equal
    }
}
impl<T> Eq for HeapItem<T> {}
impl<T> PartialOrd for HeapItem<T> {
    fn partial_cmp(&self, o: &Self) -> Option<Ordering> {
        Some(self.cmp(o))
    }
}
impl<T> Ord for HeapItem<T> {
    /// Better = lower cost, then smaller key; the heap's top is the worst.
    fn cmp(&self, o: &Self) -> Ordering {
        self.cost
            .total_cmp(&o.cost)
            .then_with(|| self.key.cmp(&o.key))
    }
}

/// Two bins: the cutoff's margin over `max(k-th best, best + margin)`, so
/// that a cost the normaliser keeps is never skipped (see the module notes).
pub const SLACK: f64 = 2.0 / HIST_BINS_PER_NAT;

/// Fixed-point scale of the bin sums.
const FIXED: f64 = 9_223_372_036_854_775_808.0; // 2^63

/// Collects scored candidates; collectors of parts of a run merge exactly.
pub struct Collector<T> {
    k: usize,
    skip_margin: f64,
    heap: BinaryHeap<HeapItem<T>>,
    /// The k lowest costs seen by this collector (payload or not).
    low: BinaryHeap<Cost>,
    /// Per bin of cost: how many costs and the sum of exp(-(cost - bin
    /// start)) in 2^-63 fixed point, for the bins below bin(best) + margin.
    bins: BTreeMap<i64, (u64, u128)>,
    best: f64,
    considered: u64,
    cutoff: Cutoff,
}

/// The final top-k, best first, with softmax probabilities.
pub struct TopK<T> {
    /// (cost, probability, item), best first.
    pub entries: Vec<(f64, f64, T)>,
    /// Every candidate seen (scored or skipped).
    pub considered: u64,
    /// Candidates left out of the normaliser: cost at or above the best +
    /// skip_margin (most of them never scored exactly).
    pub skipped: u64,
    /// Histogram of the costs that entered the normaliser.
    hist: BTreeMap<i64, u64>,
}

impl<T> TopK<T> {
    /// Number of counted candidates with cost in [lo, hi] (to the
    /// histogram's resolution, 1/1024).
    pub fn count_between(&self, lo: f64, hi: f64) -> u64 {
        let (a, b) = (bin(lo), bin(hi));
        if a > b {
            return 0;
        }
        self.hist.range(a..=b).map(|(_, n)| n).sum()
    }
}

fn bin(cost: f64) -> i64 {
    (cost * HIST_BINS_PER_NAT).floor() as i64
}

/// The state a collector carries apart from its top-k items: what a shard
/// file stores so that a merge is exact.
#[derive(Clone, Debug, PartialEq)]
pub struct Totals {
    pub best: f64,
    pub considered: u64,
    /// (bin, count, fixed-point sum), in bin order.
    pub bins: Vec<(i64, u64, u128)>,
}

impl Totals {
    /// The log of the sum of exp(-cost) over the costs in the normaliser
    /// (those below the best + skip_margin; minus infinity when none): the
    /// softmax denominator of these candidates, for readers of a shard file.
    /// A merge adds the bins themselves, which is exact.
    pub fn log_sum_exp(&self) -> f64 {
        let z: f64 = self
            .bins
            .iter()
            .map(|&(b, _, s)| {
                (s as f64 / FIXED) * (-(b as f64 / HIST_BINS_PER_NAT - self.best)).exp()
            })
            .sum();
        if z > 0.0 {
            z.ln() - self.best
        } else {
            f64::NEG_INFINITY
        }
    }
}

impl<T> Collector<T> {
    pub fn new(k: usize, skip_margin: f64) -> Collector<T> {
        Collector {
            k: k.max(1),
            skip_margin,
            heap: BinaryHeap::new(),
            low: BinaryHeap::new(),
            bins: BTreeMap::new(),
            best: f64::INFINITY,
            considered: 0,
            cutoff: Cutoff::new(),
        }
    }

    /// The shared cutoff handle for the scoring threads.
    pub fn cutoff(&self) -> Cutoff {
        self.cutoff.clone()
    }

    /// Count `n` candidates skipped without a result reaching the collector.
    pub fn add_skipped(&mut self, n: u64) {
        self.considered += n;
    }

    pub fn push(&mut self, outcome: Outcome<T>) {
        self.considered += 1;
        let (cost, key, item) = match outcome {
            Outcome::Skipped => return,
            Outcome::CostOnly { cost } => {
                self.count_cost(cost);
                self.publish();
                return;
            }
            Outcome::Scored { cost, key, item } => (cost, key, item),
        };
        self.count_cost(cost);
        self.offer(HeapItem { cost, key, item });
        self.publish();
    }

    fn offer(&mut self, entry: HeapItem<T>) {
        if self.heap.len() < self.k {
            self.heap.push(entry);
        } else if let Some(worst) = self.heap.peek() {
            if entry < *worst {
                self.heap.pop();
                self.heap.push(entry);
            }
        }
    }

    /// The k-th lowest cost seen here (infinite before k).
    fn kth(&self) -> f64 {
        if self.low.len() >= self.k {
            self.low.peek().map_or(f64::INFINITY, |c| c.0)
        } else {
            f64::INFINITY
        }
    }

    fn publish(&self) {
        let kth = self.kth();
        // A tiny slack keeps exact ties scored, so that the key decides them.
        self.cutoff.set(
            kth.max(self.best + self.skip_margin) + SLACK,
            kth + 1e-9,
            self.best,
        );
    }

    /// Whether a candidate of `cost` may still reach the final top-k, judged
    /// from this collector alone: not when it has seen k lower costs.
    pub fn admits(&self, cost: f64) -> bool {
        self.low.len() < self.k || self.low.peek().is_some_and(|w| cost <= w.0)
    }

    /// The cutoff for a candidate scored into this collector (a task's):
    /// the skip rule with the k-th best and the best each the lower of this
    /// collector's and the shared ones (`shared`, the whole run's so far).
    /// Both are values over subsets of all candidates, so never below the
    /// final ones: skipping by this cutoff is safe.
    pub fn local_cutoff(&self, shared: &Cutoff) -> f64 {
        let kth = (self.kth() + 1e-9).min(shared.top_k());
        let best = self.best.min(shared.best());
        kth.max(best + self.skip_margin) + SLACK
    }

    fn limit_bin(&self) -> i64 {
        // Before any cost the best is infinite and every bin is kept.
        bin(self.best).saturating_add((self.skip_margin * HIST_BINS_PER_NAT).round() as i64)
    }

    fn count_cost(&mut self, cost: f64) {
        self.low.push(Cost(cost));
        if self.low.len() > self.k {
            self.low.pop();
        }
        if cost < self.best {
            self.best = cost;
            let limit = self.limit_bin();
            self.bins.split_off(&limit);
        }
        let b = bin(cost);
        if b < self.limit_bin() {
            let start = b as f64 / HIST_BINS_PER_NAT;
            let term = ((-(cost - start)).exp() * FIXED) as u128;
            let e = self.bins.entry(b).or_insert((0, 0));
            e.0 += 1;
            e.1 += term;
        }
    }

    /// Add another collector's candidates (another task's or shard's): the
    /// result is the same as if this one had seen them all, in any order.
    pub fn merge(&mut self, other: Collector<T>) {
        let Collector {
            heap,
            low,
            bins,
            best,
            considered,
            ..
        } = other;
        self.merge_totals(&Totals {
            best,
            considered,
            bins: bins.into_iter().map(|(b, (n, s))| (b, n, s)).collect(),
        });
        for c in low {
            self.low.push(c);
            if self.low.len() > self.k {
                self.low.pop();
            }
        }
        for h in heap {
            self.offer(h);
        }
        self.publish();
    }

    /// Add a part's totals (see [`Collector::totals`]).
    pub fn merge_totals(&mut self, t: &Totals) {
        self.considered += t.considered;
        if t.best < self.best {
            self.best = t.best;
            let limit = self.limit_bin();
            self.bins.split_off(&limit);
        }
        let limit = self.limit_bin();
        for &(b, n, s) in &t.bins {
            if b < limit {
                let e = self.bins.entry(b).or_insert((0, 0));
                e.0 += n;
                e.1 += s;
            }
        }
        self.publish();
    }

    /// Add a part's top-k item (with its cost, key and k-th-cost bookkeeping).
    pub fn offer_item(&mut self, cost: f64, key: String, item: T) {
        self.low.push(Cost(cost));
        if self.low.len() > self.k {
            self.low.pop();
        }
        self.offer(HeapItem { cost, key, item });
        self.publish();
    }

    /// What this collector counted, apart from its items.
    pub fn totals(&self) -> Totals {
        Totals {
            best: self.best,
            considered: self.considered,
            bins: self.bins.iter().map(|(&b, &(n, s))| (b, n, s)).collect(),
        }
    }

    /// The kept items, best first, with their costs and keys.
    pub fn into_items(self) -> Vec<(f64, String, T)> {
        let mut items = self.heap.into_vec();
        items.sort();
        items.into_iter().map(|h| (h.cost, h.key, h.item)).collect()
    }

    pub fn finish(self) -> TopK<T> {
        let best = self.best;
        // The normaliser from the bins, in bin order (a fixed order: the
        // same floating sum wherever the bins came from).
        let mut z = 0.0;
        let mut counted = 0;
        for (&b, &(n, s)) in &self.bins {
            let start = b as f64 / HIST_BINS_PER_NAT;
            z += (s as f64 / FIXED) * (-(start - best)).exp();
            counted += n;
        }
        let hist = self.bins.iter().map(|(&b, &(n, _))| (b, n)).collect();
        let mut items = self.heap.into_vec();
        items.sort();
        let entries = items
            .into_iter()
            .map(|h| {
                let p = if z > 0.0 {
                    (-(h.cost - best)).exp() / z
                } else {
                    0.0
                };
                (h.cost, p, h.item)
            })
            .collect();
        TopK {
            entries,
            considered: self.considered,
            skipped: self.considered - counted,
            hist,
        }
    }
}

/// A cost with a total order, for the heaps of lowest costs.
#[derive(Clone, Copy, PartialEq)]
struct Cost(f64);
impl Eq for Cost {}
impl PartialOrd for Cost {
    fn partial_cmp(&self, o: &Self) -> Option<Ordering> {
        Some(self.cmp(o))
    }
}
impl Ord for Cost {
    fn cmp(&self, o: &Self) -> Ordering {
        self.0.total_cmp(&o.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keeps_the_k_best_and_normalises_over_all() {
        let mut c = Collector::new(2, 30.0);
        for (i, cost) in [5.0, 1.0, 3.0, 1.0, 9.0].iter().enumerate() {
            c.push(Outcome::Scored {
                cost: *cost,
                key: format!("c{i}"),
                item: i,
            });
        }
        c.push(Outcome::Skipped);
        let t = c.finish();
        assert_eq!(t.considered, 6);
        assert_eq!(t.skipped, 1);
        let items: Vec<usize> = t.entries.iter().map(|e| e.2).collect();
        assert_eq!(items, vec![1, 3]);
        // softmax of -cost over all five scored candidates
        let z: f64 = [5.0f64, 1.0, 3.0, 1.0, 9.0]
            .iter()
            .map(|c| (-c).exp())
            .sum();
        assert!((t.entries[0].1 - (-1.0f64).exp() / z).abs() < 1e-12);
    }

    #[test]
    fn a_collector_rejects_what_k_better_candidates_already_beat() {
        let mut c: Collector<()> = Collector::new(2, 30.0);
        for cost in [5.0, 3.0, 4.0] {
            assert!(c.admits(cost));
            c.push(Outcome::CostOnly { cost });
        }
        // 3 and 4 are better: 6 cannot be in the top 2; a tie with 4 may be.
        assert!(!c.admits(6.0));
        assert!(c.admits(4.0));
    }

    #[test]
    fn local_cutoff_combines_the_tasks_costs_with_the_shared_ones() {
        let shared = Cutoff::new();
        let mut c: Collector<()> = Collector::new(2, 30.0);
        assert_eq!(c.local_cutoff(&shared), f64::INFINITY);
        c.push(Outcome::CostOnly { cost: 10.0 });
        // Fewer than k and nothing shared: any cost may still rank.
        assert_eq!(c.local_cutoff(&shared), f64::INFINITY);
        c.push(Outcome::CostOnly { cost: 50.0 });
        // k-th (50) above best + margin (40).
        assert!((c.local_cutoff(&shared) - (50.0 + SLACK)).abs() < 1e-6);
        // A shared k-th best and best help.
        shared.set(60.0, 20.0, 5.0);
        assert!((c.local_cutoff(&shared) - (35.0 + SLACK)).abs() < 1e-6);
    }

    #[test]
    fn merging_parts_in_any_order_gives_the_same_bits() {
        // Costs spread over 40 nats with ties, split into parts three ways.
        let costs: Vec<f64> = (0..500)
            .map(|i| ((i * 7919) % 4000) as f64 / 97.0)
            .collect();
        let whole = |parts: Vec<Vec<usize>>| {
            let mut all: Collector<usize> = Collector::new(5, 30.0);
            for part in parts {
                let mut c = Collector::new(5, 30.0);
                for i in part {
                    c.push(Outcome::Scored {
                        cost: costs[i],
                        key: format!("{i:04}"),
                        item: i,
                    });
                }
                all.merge(c);
            }
            let t = all.finish();
            let e: Vec<(u64, u64, usize)> = t
                .entries
                .iter()
                .map(|e| (e.0.to_bits(), e.1.to_bits(), e.2))
                .collect();
            (e, t.considered, t.skipped)
        };
        let one = whole(vec![(0..500).collect()]);
        let forward = whole((0..5).map(|p| (p * 100..p * 100 + 100).collect()).collect());
        let strided = whole(
            (0..7)
                .rev()
                .map(|p| (p..500).step_by(7).collect())
                .collect(),
        );
        assert_eq!(one, forward);
        assert_eq!(one, strided);
        // The probabilities are the softmax over the kept costs (best + 30).
        let best = costs.iter().cloned().fold(f64::INFINITY, f64::min);
        let z: f64 = costs
            .iter()
            .filter(|&&c| c < best + 30.0)
            .map(|c| (-(c - best)).exp())
            .sum();
        let p0 = f64::from_bits(one.0[0].1);
        assert!((p0 - 1.0 / z).abs() < 1e-12, "{p0} against {}", 1.0 / z);
        assert_eq!(one.1, 500);
        assert_eq!(
            one.2,
            costs.iter().filter(|&&c| c >= best + 30.0).count() as u64
        );
    }

    #[test]
    fn cutoff_falls_as_better_candidates_arrive() {
        let mut c = Collector::new(1, 2.0);
        let h = c.cutoff();
        assert_eq!(h.get(), f64::INFINITY);
        c.push(Outcome::Scored {
            cost: 10.0,
            key: "a".into(),
            item: (),
        });
        assert!((h.get() - 12.0 - SLACK).abs() < 1e-6);
        c.push(Outcome::Scored {
            cost: 4.0,
            key: "b".into(),
            item: (),
        });
        assert!((h.get() - 6.0 - SLACK).abs() < 1e-6);
    }
}
