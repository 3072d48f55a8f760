//! The streaming collector: a bounded top-k of scored candidates, the
//! softmax normaliser over every candidate considered, and the shared cutoff
//! that lets scoring threads give up early on hopeless candidates.
//!
//! Memory stays flat: the top-k heap holds at most k candidates, the
//! normaliser is one running sum (rescaled when the best improves), and the
//! cost histogram used to count near-ties beyond the table has at most
//! `skip_margin * HIST_BINS_PER_NAT` bins.
//!
//! Determinism: results reach [`Collector::push`] in the enumeration's fixed
//! order. The cutoffs that scoring threads read only ever fall, so a
//! candidate they skip could never have entered the final top-k nor the
//! normaliser (which counts a cost when it is below the running best +
//! skip_margin at its turn in the stream; such a candidate is always below
//! any cutoff published before, since the best only falls), and one they
//! report without a payload (cost above the top-k cutoff of the moment)
//! could never have entered the top-k. Hence the output does not depend on
//! thread timing.

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

/// Collects scored candidates in stream order.
pub struct Collector<T> {
    k: usize,
    skip_margin: f64,
    heap: BinaryHeap<HeapItem<T>>,
    /// Sum of exp(-(cost - best)) over the costs counted so far.
    z: f64,
    /// Counts of costs within skip_margin of the running best, by bin.
    hist: BTreeMap<i64, u64>,
    best: f64,
    considered: u64,
    skipped: u64,
    cutoff: Cutoff,
}

/// The final top-k, best first, with softmax probabilities.
pub struct TopK<T> {
    /// (cost, probability, item), best first.
    pub entries: Vec<(f64, f64, T)>,
    /// Every candidate seen (scored or skipped).
    pub considered: u64,
    /// Candidates skipped by the cutoff without exact scoring.
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

impl<T> Collector<T> {
    pub fn new(k: usize, skip_margin: f64) -> Collector<T> {
        Collector {
            k: k.max(1),
            skip_margin,
            heap: BinaryHeap::new(),
            z: 0.0,
            hist: BTreeMap::new(),
            best: f64::INFINITY,
            considered: 0,
            skipped: 0,
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
        self.skipped += n;
    }

    pub fn push(&mut self, outcome: Outcome<T>) {
        self.considered += 1;
        let (cost, key, item) = match outcome {
            Outcome::Skipped => {
                self.skipped += 1;
                return;
            }
            Outcome::CostOnly { cost } => {
                self.count_cost(cost);
                return;
            }
            Outcome::Scored { cost, key, item } => (cost, key, item),
        };
        self.count_cost(cost);
        let entry = HeapItem { cost, key, item };
        if self.heap.len() < self.k {
            self.heap.push(entry);
        } else if let Some(worst) = self.heap.peek() {
            if entry < *worst {
                self.heap.pop();
                self.heap.push(entry);
            }
        }
        let kth = if self.heap.len() >= self.k {
            self.heap.peek().map(|w| w.cost).unwrap_or(f64::INFINITY)
        } else {
            f64::INFINITY
        };
        // A tiny slack keeps exact ties scored, so that the key decides them.
        self.cutoff.set(
            kth.max(self.best + self.skip_margin) + 1e-9,
            kth + 1e-9,
            self.best,
        );
    }

    fn count_cost(&mut self, cost: f64) {
        if cost < self.best {
            // Rescale the running sum to the new best.
            self.z = if self.best.is_finite() {
                self.z * (-(self.best - cost)).exp()
            } else {
                0.0
            };
            self.best = cost;
            let limit = bin(self.best + self.skip_margin);
            self.hist.split_off(&limit);
        }
        if cost < self.best + self.skip_margin {
            self.z += (-(cost - self.best)).exp();
            *self.hist.entry(bin(cost)).or_insert(0) += 1;
        }
    }

    pub fn finish(self) -> TopK<T> {
        let (best, z) = (self.best, self.z);
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
            skipped: self.skipped,
            hist: self.hist,
        }
    }
}

/// A cost with a total order, for the per-thread heaps.
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

thread_local! {
    /// Per scoring thread: the run it belongs to and the k lowest costs this
    /// thread has seen in that run.
    static LOCAL: std::cell::RefCell<((u64, usize), BinaryHeap<Cost>)> =
        const { std::cell::RefCell::new(((0, 0), BinaryHeap::new())) };
}

static RUNS: AtomicU64 = AtomicU64::new(1);

/// Identifies one ranking run for [`local_admits`].
pub fn new_run() -> u64 {
    RUNS.fetch_add(1, AtomicOrdering::Relaxed)
}

/// Whether a candidate of `cost` may still reach the final top-k, judged
/// from what this thread alone has seen of `task` in `run`: if it has already seen k
/// candidates that cost less, k better candidates exist and this one cannot.
/// Records the cost. Why: before the first results are emitted in order the
/// shared cutoff is still infinite, and without this bound every candidate
/// of the first parallel chunk would carry a full payload (for a formula
/// with millions of isomers, gigabytes).
pub fn local_admits(run: u64, task: usize, k: usize, cost: f64) -> bool {
    LOCAL.with(|cell| {
        let mut l = cell.borrow_mut();
        if l.0 != (run, task) {
            *l = ((run, task), BinaryHeap::new());
        }
        let heap = &mut l.1;
        let admits = heap.len() < k || heap.peek().is_some_and(|w| cost <= w.0);
        if admits {
            heap.push(Cost(cost));
            if heap.len() > k {
                heap.pop();
            }
        }
        admits
    })
}

/// The cutoff for a candidate of one generation task of `run`: the skip rule
/// `max(k-th best, best + margin)` with the k-th best and the best each taken
/// as the lower of the shared value (`shared`, what the collector has seen)
/// and this task's own (the costs this thread recorded for it through
/// [`local_admits`]). Both are bounds from subsets of all candidates, so the
/// final k-th best and best are at most these, and this cutoff is never
/// below the one a complete view would give: skipping by it is safe. The
/// task's own values matter while the shared ones are still infinite (the
/// first chunk) and sharpen them later. Per task, not per thread: one thread
/// runs a task's isomers in order, so what is skipped does not depend on the
/// thread count.
pub fn task_cutoff(run: u64, task: usize, k: usize, margin: f64, shared: &Cutoff) -> f64 {
    LOCAL.with(|cell| {
        let l = cell.borrow();
        let (mut kth, mut best) = (f64::INFINITY, f64::INFINITY);
        if l.0 == (run, task) {
            if l.1.len() >= k {
                kth = l.1.peek().map_or(f64::INFINITY, |c| c.0) + 1e-9;
            }
            best = l.1.iter().map(|c| c.0).fold(f64::INFINITY, f64::min);
        }
        let kth = kth.min(shared.top_k());
        let best = best.min(shared.best());
        kth.max(best + margin + 1e-9)
    })
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
    fn a_thread_rejects_what_k_better_candidates_already_beat() {
        let run = new_run();
        assert!(local_admits(run, 0, 2, 5.0));
        assert!(local_admits(run, 0, 2, 3.0));
        assert!(local_admits(run, 0, 2, 4.0));
        // 3 and 4 are better: 6 cannot be in the top 2; a tie with 4 may be.
        assert!(!local_admits(run, 0, 2, 6.0));
        assert!(local_admits(run, 0, 2, 4.0));
        // A new run starts afresh.
        assert!(local_admits(new_run(), 0, 2, 100.0));
    }

    #[test]
    fn task_cutoff_combines_the_tasks_costs_with_the_shared_ones() {
        let run = new_run();
        let shared = Cutoff::new();
        assert_eq!(task_cutoff(run, 0, 2, 30.0, &shared), f64::INFINITY);
        assert!(local_admits(run, 0, 2, 10.0));
        assert_eq!(
            task_cutoff(run, 0, 2, 30.0, &shared),
            f64::INFINITY,
            "fewer than k and nothing shared"
        );
        assert!(local_admits(run, 0, 2, 50.0));
        // k-th (50) above best + margin (40).
        assert!((task_cutoff(run, 0, 2, 30.0, &shared) - 50.0).abs() < 1e-6);
        assert!(local_admits(run, 0, 2, 12.0));
        // Now 10 and 12 kept: best + margin = 40 wins.
        assert!((task_cutoff(run, 0, 2, 30.0, &shared) - 40.0).abs() < 1e-6);
        // A shared k-th best helps a task that has seen fewer than k.
        shared.set(60.0, 20.0, 5.0);
        let other = new_run();
        assert!(local_admits(other, 3, 2, 8.0));
        // max(min(20, inf), min(5, 8) + 30) = 35.
        assert!((task_cutoff(other, 3, 2, 30.0, &shared) - 35.0).abs() < 1e-6);
        assert!((task_cutoff(new_run(), 0, 2, 30.0, &shared) - 35.0).abs() < 1e-6);
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
        assert!((h.get() - 12.0).abs() < 1e-6);
        c.push(Outcome::Scored {
            cost: 4.0,
            key: "b".into(),
            item: (),
        });
        assert!((h.get() - 6.0).abs() < 1e-6);
    }
}
