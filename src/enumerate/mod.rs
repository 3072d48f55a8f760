//! Enumeration of every constitutional isomer of a molecular formula.
//!
//! A formula becomes one or more [`generator::Problem`]s (one per way of giving
//! the S and P atoms their valences when expanded valences are on). The
//! skeleton search tree of each problem (see [`generator`]) is cut at the
//! first depth with enough nodes into *tasks*, in a deterministic order; tasks are run in parallel (rayon) in ordered chunks, so
//! the output order does not depend on the thread count, memory stays flat
//! (one chunk of results at a time), and `--part K/N` simply takes every N-th
//! task, giving disjoint shards whose union is the whole set.

pub mod constraints;
pub mod generator;
pub mod resonance;
pub mod rules;

use crate::chem::canon::MAX_ATOMS;
use crate::chem::{Element, Formula, Molecule};
use crate::error::{Error, Result};
use generator::{Generator, Kind, Node, Problem};
use rules::{Rule, RuleSet};

/// How many tasks the search tree is cut into (at least, where the tree is
/// that wide): enough for even load on many cores and for fine-grained shards.
const TARGET_TASKS: usize = 4096;

/// One shard of the search: the `index`-th (from 1) of `of`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Part {
    pub index: usize,
    pub of: usize,
}

impl Part {
    /// Parse `K/N` with 1 <= K <= N.
    pub fn parse(text: &str) -> Result<Part> {
        let bad = || {
            Error::input(format!(
                "--part \"{text}\": expected K/N with whole numbers 1 <= K <= N, e.g. 3/8"
            ))
        };
        let (k, n) = text.split_once('/').ok_or_else(bad)?;
        let k: usize = k.trim().parse().map_err(|_| bad())?;
        let n: usize = n.trim().parse().map_err(|_| bad())?;
        if k == 0 || n == 0 || k > n {
            return Err(bad());
        }
        Ok(Part { index: k, of: n })
    }
}

/// What to enumerate and how.
#[derive(Clone, Debug, Default)]
pub struct Options {
    /// Allow S(IV), S(VI) and P(V) besides the standard valences.
    pub expanded_valence: bool,
    /// Also build the charge-separated neutral N-oxide groups (nitro,
    /// nitrate, azine and amine N-oxides, nitrones, azoxy), with N as
    /// [`generator::Kind::oxide_n`]; written `[N+](=O)[O-]`, `[n+][O-]`.
    pub charge_separated: bool,
    /// Only this shard of the search.
    pub part: Option<Part>,
    /// Plausibility rules to apply (none: every isomer).
    pub rules: RuleSet,
    /// Facts the structures must fit, applied inside the search.
    pub constraints: constraints::Constraints,
    /// Caps that end the run early.
    pub limits: Limits,
    /// Estimated isomers per task (all tasks, in task order, from
    /// [`estimate`]): progress is then reported as a share of the estimated
    /// work instead of a share of the tasks.
    pub weights: Option<Vec<f64>>,
}

/// Counts from one enumeration.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Summary {
    /// Isomers found (one per compound), before plausibility rules.
    pub generated: u64,
    /// Isomers that passed the rules and went to the caller's map function.
    pub isomers: u64,
    /// Isomers removed by the rules (each counted once).
    pub excluded: u64,
    /// For each rule applied, how many isomers it flagged (an isomer flagged
    /// by several rules counts for each).
    pub flagged: Vec<(Rule, u64)>,
    /// For each constraint, how much of the search it cut (empty without
    /// constraints).
    pub constraints: Vec<constraints::Cut>,
    /// Tasks of this run (this shard's) and how many were covered in order.
    pub tasks_total: usize,
    pub tasks_done: usize,
    /// Why the run ended early (`None`: the whole search was covered).
    pub stopped: Option<Stop>,
    /// Share of the search covered, 0 to 1 (1 when complete).
    pub share: f64,
    /// When a ranking searched in two stages (typical 13C regions first,
    /// `constraints::Constraints::stages`): the share of the first stage
    /// covered. `share` is then the second stage's, which walks the whole
    /// search tree.
    pub first_stage: Option<f64>,
}

impl Summary {
    /// Whether the whole search (of this shard) was covered.
    pub fn complete(&self) -> bool {
        self.stopped.is_none()
    }
}

/// A complete isomer as the generator found it (compact form); convert with
/// [`Isomer::molecule`].
pub struct Isomer<'a> {
    pub(crate) node: &'a Node,
    pub(crate) problem: &'a Problem,
    pub(crate) auts: Option<&'a [[u8; crate::chem::canon::MAX_ATOMS]]>,
    pub(crate) task: usize,
}

impl Isomer<'_> {
    /// Number of heavy atoms.
    pub fn atoms(&self) -> usize {
        self.node.n
    }

    /// Element of atom `i`.
    pub fn element(&self, i: usize) -> Element {
        self.problem.kinds[self.node.kind[i] as usize].element
    }

    /// Bond order between atoms `a` and `b` (0 when not bonded).
    pub fn order(&self, a: usize, b: usize) -> u8 {
        self.node.order(a, b)
    }

    /// Implicit hydrogens on atom `i`.
    pub fn hydrogens(&self, i: usize) -> u8 {
        self.node.free[i]
    }

    /// Index of the generation task this isomer came from. One thread
    /// produces a task's isomers in a fixed order, so state kept per task
    /// (not per thread) gives the same results whatever the thread count.
    pub fn task(&self) -> usize {
        self.task
    }

    /// Every non-identity automorphism of this isomer's skeleton (the simple
    /// graph of its bonds, atoms coloured by element), as vertex permutations
    /// in the numbering of [`Isomer::molecule`], when the generator has them
    /// at hand (an empty list: the skeleton has no symmetry); `None` when it
    /// did not compute them. The automorphisms of the isomer itself are those
    /// of the skeleton that keep every bond order (or, for a prediction that
    /// treats aromatic bonds as one kind, every bond kind): a caller needing
    /// the isomer's symmetry classes can filter this list instead of running
    /// a canonical labelling.
    pub fn skeleton_automorphisms(&self) -> Option<&[[u8; crate::chem::canon::MAX_ATOMS]]> {
        self.auts
    }

    /// Canonical SMILES (aromatic lower-case form), read from the compact
    /// form by this thread's [`crate::chem::smiles::SmilesWriter`]: the
    /// string `canonical_smiles(&self.molecule())` gives, without building
    /// the molecule.
    pub fn smiles(&self) -> String {
        crate::chem::smiles::with_writer(|w| w.canonical_heavy_atoms(self).to_owned())
    }

    /// The general molecule type for this isomer. Bonds are added by their
    /// lower atom, then by the other atom (the numbering
    /// [`crate::chem::flat::FlatMolecule::set_heavy_atoms`] gives too).
    pub fn molecule(&self) -> Molecule {
        let mut m = Molecule::new();
        let idx: Vec<_> = (0..self.node.n)
            .map(|i| m.add_atom(self.element(i), self.node.free[i]))
            .collect();
        for a in 0..self.node.n {
            for b in generator::bits(self.node.nb[a]) {
                if b > a {
                    m.add_bond(idx[a], idx[b], self.node.order(a, b));
                }
            }
        }
        m
    }
}

impl crate::chem::HeavyAtoms for Isomer<'_> {
    fn atom_count(&self) -> usize {
        self.node.n
    }
    fn element_of(&self, i: usize) -> Element {
        self.element(i)
    }
    fn hydrogens_of(&self, i: usize) -> u8 {
        self.node.free[i]
    }
    fn each_neighbour(&self, i: usize, f: &mut dyn FnMut(usize, u8)) {
        for j in generator::bits(self.node.nb[i]) {
            f(j, self.node.order(i, j));
        }
    }
    fn neighbour_masks(&self, i: usize) -> Option<[u64; 3]> {
        let adj = &self.node.g.adj;
        Some([adj[0][i], adj[1][i], adj[2][i]])
    }
}

/// The generation problems for a formula: one per assignment of valences to
/// the S and P atoms (just one with standard valences).
pub fn problems(formula: &Formula, opts: &Options) -> Result<Vec<Problem>> {
    let heavy = formula.heavy_atoms() as usize;
    if heavy == 0 {
        return Err(Error::input(format!(
            "formula {formula} has no atom other than hydrogen"
        )));
    }
    if heavy > MAX_ATOMS {
        return Err(Error::input(format!(
            "formula {formula} has {heavy} heavy atoms; the generator handles at most {MAX_ATOMS}"
        )));
    }
    if !opts.expanded_valence {
        formula.check_neutral()?;
    }
    // Per element, the ways of splitting its count over its allowed valences.
    let mut per_element: Vec<Vec<Vec<(Kind, u8)>>> = Vec::new();
    for &e in Element::HEAVY.iter() {
        let c = formula.count(e) as u8;
        if c == 0 {
            continue;
        }
        let vals = e.valences(opts.expanded_valence);
        let mut splits = Vec::new();
        split_counts(c, vals, &mut Vec::new(), &mut splits);
        let mut ways: Vec<Vec<(Kind, u8)>> = splits
            .into_iter()
            .map(|s| {
                vals.iter()
                    .zip(s)
                    .filter(|&(_, n)| n > 0)
                    .map(|(&v, n)| (Kind::new(e, v), n))
                    .collect()
            })
            .collect();
        if e == Element::N && opts.charge_separated {
            // k of the N as N-oxide nitrogens, each with an O of its own.
            let oxygens = formula.count(Element::O) as u8;
            for k in 1..=c.min(oxygens) {
                let mut way = vec![(Kind::oxide_n(), k)];
                if c > k {
                    way.insert(0, (Kind::new(e, 3), c - k));
                }
                ways.push(way);
            }
        }
        per_element.push(ways);
    }
    let mut out = Vec::new();
    for combo in itertools::Itertools::multi_cartesian_product(per_element.iter().map(|v| v.iter()))
    {
        let pairs: Vec<(Kind, u8)> = combo.into_iter().flatten().copied().collect();
        let valence_sum: i64 = pairs
            .iter()
            .map(|(k, n)| k.valence as i64 * *n as i64)
            .sum();
        let h = formula.hydrogens() as i64;
        let twice_b = valence_sum - h;
        if twice_b < 0 || twice_b % 2 != 0 {
            continue;
        }
        let dbe = twice_b / 2 - (heavy as i64 - 1);
        if dbe < 0 {
            continue;
        }
        out.push(Problem {
            kinds: pairs.iter().map(|p| p.0).collect(),
            counts: pairs.iter().map(|p| p.1).collect(),
            atoms: heavy,
            dbe: dbe as i32,
            bounds: None,
        });
    }
    if out.is_empty() {
        // Only reachable with expanded valences: no valence choice fits.
        return Err(Error::input(format!(
            "no neutral structure has formula {formula}, whatever valences S and P take"
        )));
    }
    let most_dbe = out.iter().map(|p| p.dbe as i64).max().unwrap_or(0);
    let bounds = opts.constraints.compile(formula, most_dbe)?;
    for p in &mut out {
        p.bounds = bounds.clone();
    }
    Ok(out)
}

/// The note for a run without [`Options::charge_separated`] whose formula
/// could hold a charge-separated N-oxide group (an N, an O and at least 4
/// heavy atoms: the smallest such group, the nitrone C=[N+](C)[O-], has
/// 4), naming the option; `None` when the option is on or no group fits.
pub fn charge_separated_note(formula: &Formula, opts: &Options) -> Option<String> {
    let fits = formula.count(Element::N) > 0
        && formula.count(Element::O) > 0
        && formula.heavy_atoms() >= 4;
    (fits && !opts.charge_separated).then(|| {
        format!(
            "{formula} could hold a charge-separated group (nitro, nitrate, N-oxide, nitrone, \
             azoxy), which was not built; add --charge-separated to include them"
        )
    })
}

fn split_counts(left: u8, vals: &[u8], cur: &mut Vec<u8>, out: &mut Vec<Vec<u8>>) {
    if cur.len() + 1 == vals.len() {
        cur.push(left);
        out.push(cur.clone());
        cur.pop();
        return;
    }
    for k in (0..=left).rev() {
        cur.push(k);
        split_counts(left - k, vals, cur, out);
        cur.pop();
    }
}

/// A task: a skeleton at the cut depth of the search tree, stored compactly.
#[derive(Clone)]
struct Task {
    problem: usize,
    kinds: Vec<u8>,
    /// Per atom, the earlier atoms it is bonded to (the order atoms were added).
    attach: Vec<u64>,
}

impl Task {
    fn from_node(problem: usize, node: &Node) -> Task {
        Task {
            problem,
            kinds: node.kind[..node.n].to_vec(),
            attach: (0..node.n)
                .map(|v| node.nb[v] & ((1u64 << v) - 1))
                .collect(),
        }
    }

    fn node(&self, p: &Problem) -> Node {
        let mut node = generator::root(p, self.kinds[0] as usize);
        for (v, &k) in self.kinds.iter().enumerate().skip(1) {
            node.add_vertex(p, k as usize, self.attach[v]);
        }
        node
    }
}

/// Cut the search trees of all problems into tasks, in a fixed order: the
/// accepted skeletons of the first depth with at least [`TARGET_TASKS`] of
/// them (or complete skeletons), found level by level, so each level is the
/// previous one's children in order, as a depth-first search would meet them.
fn tasks(problems: &[Problem]) -> Vec<Task> {
    let mut gens: Vec<Generator> = problems.iter().map(Generator::new).collect();
    let mut level: Vec<Task> = Vec::new();
    for (pi, p) in problems.iter().enumerate() {
        for root in generator::roots(p) {
            level.push(Task::from_node(pi, &root));
        }
    }
    let mut depth = 1;
    while level.len() < TARGET_TASKS && problems.iter().any(|p| p.atoms > depth) {
        let mut next = Vec::new();
        // A level that costs more than LEVEL_STEPS generator steps is not
        // taken: with tight constraints few skeletons survive each depth,
        // and deepening would run most of the search here, before any
        // limit or progress applies. Counted in steps, so the tasks do not
        // depend on the machine (shards stay disjoint and complete).
        for g in &mut gens {
            g.set_step_budget(Some(LEVEL_STEPS));
        }
        let mut over = false;
        for t in &level {
            let p = &problems[t.problem];
            let mut node = t.node(p);
            if p.atoms <= depth {
                next.push(t.clone());
                continue;
            }
            let g = &mut gens[t.problem];
            g.skeletons(&mut node, depth + 1, &mut |n: &Node, _| {
                next.push(Task::from_node(t.problem, n))
            });
            if g.abort_flag().load(std::sync::atomic::Ordering::Relaxed) {
                over = true;
                break;
            }
        }
        if over {
            break;
        }
        level = next;
        depth += 1;
    }
    level
}

/// The most generator steps one level of [`tasks`] may take (a few
/// seconds at most).
const LEVEL_STEPS: u64 = 2_000_000;

/// Progress of a long enumeration, reported after each task is handed on
/// and every few hundred milliseconds while tasks run.
#[derive(Clone, Copy, Debug)]
pub struct Progress {
    pub tasks_done: usize,
    pub tasks_total: usize,
    /// Candidates handed on so far (isomers after the plausibility rules).
    pub isomers: u64,
    /// Share of the search done, 0 to 1: tasks done, each weighted by its
    /// estimated number of isomers when an estimate was made (see
    /// [`estimate`]), else counted alike.
    pub share: f64,
}

/// Caps on one run (`--max-candidates`, `--time-limit`).
#[derive(Clone, Copy, Debug, Default)]
pub struct Limits {
    /// Stop after this many candidates (isomers after the plausibility
    /// rules), counted in task order: the result is the same whatever the
    /// thread count.
    pub max_candidates: Option<u64>,
    /// Stop when this moment has passed; the result covers the tasks
    /// finished in order by then (and, for a ranking, what the others did:
    /// [`RankWindow`]).
    pub deadline: Option<std::time::Instant>,
    /// `max_candidates` and `deadline` are the command's default caps, set
    /// because the user gave no cap (the run's estimate was below the
    /// default): a stop at either is reported as [`Stop::DefaultCap`].
    pub default_cap: bool,
}

impl Limits {
    /// Whether the deadline has passed (never without one).
    fn past_deadline(&self) -> bool {
        self.deadline
            .is_some_and(|d| std::time::Instant::now() >= d)
    }

    /// How a stop at `max_candidates` is reported.
    fn candidate_stop(&self) -> Stop {
        if self.default_cap {
            Stop::DefaultCap
        } else {
            Stop::Candidates
        }
    }

    /// How a stop at `deadline` is reported.
    fn time_stop(&self) -> Stop {
        if self.default_cap {
            Stop::DefaultCap
        } else {
            Stop::Time
        }
    }
}

/// Why a run stopped before covering its whole search.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Stop {
    /// `--max-candidates` was reached.
    Candidates,
    /// `--time-limit` passed.
    Time,
    /// No cap was given and the run reached the command's default cap (its
    /// estimate before the run was too low).
    DefaultCap,
}

impl Stop {
    /// Every kind of stop (the shard reader matches names against these).
    pub const ALL: [Stop; 3] = [Stop::Candidates, Stop::Time, Stop::DefaultCap];
}

/// Enumerate the isomers of `formula`, calling `map` on each (in parallel) and
/// `emit` on each result in a deterministic order. `emit` returns false to
/// stop early. `progress` is called as tasks finish.
pub fn for_each_ordered<T, M, E>(
    formula: &Formula,
    opts: &Options,
    map: M,
    mut emit: E,
    progress: &mut dyn FnMut(Progress),
) -> Result<Summary>
where
    T: Send,
    M: Fn(&Isomer) -> Option<T> + Sync,
    E: FnMut(T) -> bool,
{
    for_each_task(
        formula,
        opts,
        ListWindow,
        Vec::new,
        |acc: &mut Vec<T>, iso| {
            if let Some(t) = map(iso) {
                acc.push(t);
            }
        },
        |_, items: Vec<T>| items.into_iter().all(&mut emit),
        progress,
    )
}

/// How many tasks may run ahead of the one next in order (their results
/// wait in memory): a few per thread for results that grow with the task
/// (lists of SMILES), many for results of a fixed size (counts, a ranking's
/// per-task top-k).
#[derive(Clone, Copy, Debug)]
pub struct ListWindow;
/// See [`ListWindow`]: results of a fixed size per task.
#[derive(Clone, Copy, Debug)]
pub struct SmallWindow;

/// A ranking's window ([`SmallWindow`]'s size) whose run, when a time
/// limit stops it, also keeps what it did out of order: the tasks finished
/// beyond the first unfinished one and the candidates the stopped tasks
/// had already handed over. A ranking merges per-task results in any
/// order, and under a time limit the set of tasks done depends on the
/// machine anyway; without this, one long task early in the order (the
/// usual shape of a constrained search) left a ranking with nothing in it
/// after minutes of scoring.
#[derive(Clone, Copy, Debug)]
pub struct RankWindow;

/// How far ahead tasks may run; see [`ListWindow`].
pub trait Window: Copy {
    fn tasks(self, threads: usize) -> usize;
    /// Whether a run stopped by its time limit hands over what it did out
    /// of order too (see [`RankWindow`]); else only the tasks finished in
    /// order, so that a listing stays a prefix of the full one.
    fn keeps_out_of_order(self) -> bool {
        false
    }
}
impl Window for RankWindow {
    fn tasks(self, threads: usize) -> usize {
        SmallWindow.tasks(threads)
    }
    fn keeps_out_of_order(self) -> bool {
        true
    }
}
impl Window for ListWindow {
    fn tasks(self, threads: usize) -> usize {
        4 * threads + 4
    }
}
impl Window for SmallWindow {
    fn tasks(self, threads: usize) -> usize {
        256 * threads
    }
}

/// The ordered parallel driver. Each task (see [`tasks`]) folds its isomers
/// into an accumulator of its own (`init`, then `visit` per isomer that
/// passed the rules, in the generator's order); `emit` receives the
/// accumulators in task order with the task's index and returns false to
/// stop. Worker threads (as many as rayon's pool has) take tasks in order,
/// at most a window ahead of the next one to emit, so memory holds the
/// window's accumulators, never a whole chunk of the search. The caps of
/// `opts.limits` end the run early: a candidate cap re-runs the task that
/// crosses it up to the cap, so exactly the first N candidates in task order
/// are covered; a time limit keeps the tasks finished in order by then
/// (and, for a window that [`Window::keeps_out_of_order`], after them every
/// other task's result, finished or cut short, in task order).
pub fn for_each_task<A, W, I, V, E>(
    formula: &Formula,
    opts: &Options,
    window: W,
    init: I,
    visit: V,
    mut emit: E,
    progress: &mut dyn FnMut(Progress),
) -> Result<Summary>
where
    A: Send,
    W: Window,
    I: Fn() -> A + Sync,
    V: Fn(&mut A, &Isomer) + Sync,
    E: FnMut(usize, A) -> bool,
{
    use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering::Relaxed};
    use std::sync::{Condvar, Mutex};
    let problems = problems(formula, opts)?;
    let all = tasks(&problems);
    let mine: Vec<(usize, &Task)> = all
        .iter()
        .enumerate()
        .filter(|(i, _)| opts.part.is_none_or(|p| i % p.of == p.index - 1))
        .collect();
    let weights = opts
        .weights
        .as_ref()
        .filter(|w| w.len() == all.len())
        .map(|w| mine.iter().map(|&(i, _)| w[i]).collect::<Vec<f64>>());
    let weight_total: f64 = weights.as_ref().map_or(0.0, |w| w.iter().sum());
    let rules = &opts.rules.rules;
    let mut summary = Summary {
        flagged: rules.iter().map(|&r| (r, 0)).collect(),
        tasks_total: mine.len(),
        ..Summary::default()
    };
    let total = mine.len();
    let threads = rayon::current_num_threads().max(1);
    let ahead = window.tasks(threads);
    let limits = opts.limits;
    let stop = std::sync::Arc::new(AtomicBool::new(false));
    let time_up = AtomicBool::new(false);
    let next = AtomicUsize::new(0);
    // Finished tasks waiting for their turn, and the next index to emit.
    let state: Mutex<(std::collections::BTreeMap<usize, TaskOut<A>>, usize)> =
        Mutex::new((Default::default(), 0));
    let cond = Condvar::new();
    let panicked: Mutex<Option<Box<dyn std::any::Any + Send>>> = Mutex::new(None);
    let run = |w: &mut Worker, at: usize, limit: Option<u64>| -> TaskOut<A> {
        let (index, task) = mine[at];
        w.run(
            &problems, task, index, rules, limit, &limits, &stop, &time_up, &init, &visit,
        )
    };
    let mut emitted_share = 0.0;
    let progress_at = |at: usize, s: &Summary, weight_done: f64| Progress {
        tasks_done: at,
        tasks_total: total,
        isomers: s.isomers,
        share: share_of(at, total, s.generated, weight_done, weight_total, 0.0),
    };
    let mut last_progress = std::time::Instant::now();
    // The first task not emitted in order when the run ended.
    let mut late_from = total;
    std::thread::scope(|s| {
        for _ in 0..threads {
            s.spawn(|| {
                let mut w = Worker::new(&problems);
                loop {
                    let at = {
                        let mut g = state.lock().expect("driver state");
                        loop {
                            if stop.load(Relaxed) {
                                return;
                            }
                            let t = next.load(Relaxed);
                            if t >= total {
                                return;
                            }
                            if t < g.1 + ahead {
                                next.store(t + 1, Relaxed);
                                break t;
                            }
                            g = cond.wait(g).expect("driver state");
                        }
                    };
                    // A panic in a task (a bug in `visit`) would leave its
                    // result missing and the emitter waiting for it: keep
                    // the panic, stop everyone, and raise it after the scope.
                    let out = match std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
                        run(&mut w, at, None)
                    })) {
                        Ok(out) => out,
                        Err(payload) => {
                            let mut p = panicked.lock().unwrap_or_else(|e| e.into_inner());
                            p.get_or_insert(payload);
                            stop.store(true, Relaxed);
                            drop(p);
                            let _g = state.lock().unwrap_or_else(|e| e.into_inner());
                            cond.notify_all();
                            return;
                        }
                    };
                    state.lock().expect("driver state").0.insert(at, out);
                    cond.notify_all();
                }
            });
        }
        // This thread emits in task order.
        let mut at = 0;
        let mut candidates = 0u64;
        let mut own: Option<Worker> = None;
        while at < total {
            let out = {
                let mut g = state.lock().expect("driver state");
                loop {
                    if let Some(o) = g.0.remove(&at) {
                        g.1 = at + 1;
                        break Some(o);
                    }
                    if stop.load(Relaxed)
                        && (at >= next.load(Relaxed)
                            || panicked.lock().map_or(true, |p| p.is_some()))
                    {
                        break None;
                    }
                    if limits.past_deadline() {
                        time_up.store(true, Relaxed);
                        stop.store(true, Relaxed);
                    }
                    g = cond
                        .wait_timeout(g, std::time::Duration::from_millis(200))
                        .expect("driver state")
                        .0;
                    if last_progress.elapsed().as_millis() >= 200 {
                        last_progress = std::time::Instant::now();
                        drop(g);
                        progress(progress_at(at, &summary, emitted_share));
                        g = state.lock().expect("driver state");
                    }
                }
            };
            cond.notify_all();
            let Some(mut out) = out else { break };
            if out.aborted {
                // Stopped by the time limit (or a stop for another reason)
                // before it finished: not covered (but kept for a window
                // that keeps what was done out of order).
                state.lock().expect("driver state").0.insert(at, out);
                break;
            }
            let full = out.candidates;
            if let Some(max) = limits.max_candidates {
                if candidates + out.candidates > max {
                    // Only part of this task fits: stop the others and run
                    // it again up to the cap.
                    stop.store(true, Relaxed);
                    let w = own.get_or_insert_with(|| Worker::new(&problems));
                    let no_stop = std::sync::Arc::new(AtomicBool::new(false));
                    let (index, task) = mine[at];
                    let unlimited = Limits {
                        deadline: None,
                        ..limits
                    };
                    out = w.run(
                        &problems,
                        task,
                        index,
                        rules,
                        Some(max - candidates),
                        &unlimited,
                        &no_stop,
                        &no_stop,
                        &init,
                        &visit,
                    );
                    summary.stopped = Some(limits.candidate_stop());
                }
            }
            candidates += out.candidates;
            summary.generated += out.generated;
            summary.excluded += out.excluded;
            summary.isomers += out.candidates;
            for (i, f) in out.flagged.iter().enumerate() {
                summary.flagged[i].1 += f;
            }
            let index = mine[at].0;
            if summary.stopped.is_some() {
                // The crossing task counts as partly covered.
                let left = (full - out.candidates) as f64;
                summary.share = match &weights {
                    Some(w) => share_of(
                        at,
                        total,
                        summary.generated,
                        emitted_share + w[at],
                        weight_total,
                        left,
                    ),
                    None if full > 0 => {
                        (at as f64 + out.candidates as f64 / full as f64) / total as f64
                    }
                    None => share_of(at, total, 0, 0.0, 0.0, 0.0),
                };
                emit(index, out.acc);
                break;
            }
            if let Some(w) = &weights {
                emitted_share += w[at];
            }
            at += 1;
            summary.tasks_done = at;
            if !emit(index, out.acc) {
                stop.store(true, Relaxed);
                cond.notify_all();
                return;
            }
            if limits.max_candidates.is_some_and(|m| candidates >= m) && at < total {
                summary.stopped = Some(limits.candidate_stop());
                break;
            }
            if last_progress.elapsed().as_millis() >= 200 || at == total {
                last_progress = std::time::Instant::now();
                progress(progress_at(at, &summary, emitted_share));
            }
        }
        if at < total && summary.stopped.is_none() {
            summary.stopped = Some(if time_up.load(Relaxed) {
                limits.time_stop()
            } else {
                limits.candidate_stop()
            });
            summary.share = share_of(
                at,
                total,
                summary.generated,
                emitted_share,
                weight_total,
                0.0,
            );
        }
        summary.tasks_done = summary.tasks_done.max(at.min(total));
        stop.store(true, Relaxed);
        cond.notify_all();
        late_from = at;
    });
    if window.keeps_out_of_order() && time_up.load(Relaxed) && summary.stopped.is_some() {
        // Every worker has returned (the scope waited for them): what they
        // left beyond the first unfinished task, in task order.
        let rest = std::mem::take(&mut state.lock().unwrap_or_else(|e| e.into_inner()).0);
        let mut finished = 0;
        for (at, out) in rest.into_iter().filter(|&(at, _)| at >= late_from) {
            summary.generated += out.generated;
            summary.excluded += out.excluded;
            summary.isomers += out.candidates;
            for (i, f) in out.flagged.iter().enumerate() {
                summary.flagged[i].1 += f;
            }
            if !out.aborted {
                finished += 1;
                if let Some(w) = &weights {
                    emitted_share += w[at];
                }
            }
            emit(mine[at].0, out.acc);
        }
        summary.share = share_of(
            late_from + finished,
            total,
            summary.generated,
            emitted_share,
            weight_total,
            0.0,
        );
    }
    if let Some(payload) = panicked.into_inner().unwrap_or_else(|e| e.into_inner()) {
        std::panic::resume_unwind(payload);
    }
    if summary.stopped.is_none() {
        summary.share = 1.0;
    }
    summary.constraints = constraint_cuts(&problems);
    Ok(summary)
}

/// The constraints' cut counts of a run (all problems share one table).
/// Generators add their counts when dropped, which happens before a chunk's
/// results are collected.
fn constraint_cuts(problems: &[Problem]) -> Vec<constraints::Cut> {
    problems
        .first()
        .and_then(|p| p.bounds.as_ref())
        .map(|b| b.cuts())
        .unwrap_or_default()
}

/// Share of the search done after `done` of `total` tasks: with the
/// estimator's weights, the isomers found so far (`generated`, a true count)
/// against those plus the estimate of the tasks not done (`weight_total -
/// weight_done`, plus `left` isomers known to remain), so the share corrects
/// itself as tasks finish; without weights, the share of the tasks.
fn share_of(
    done: usize,
    total: usize,
    generated: u64,
    weight_done: f64,
    weight_total: f64,
    left: f64,
) -> f64 {
    // The estimate is trusted only while the tasks done hold about what it
    // said (Knuth's estimator can be far too low on trees whose isomers sit
    // in a few deep branches, as for C30 alkanes); else tasks count alike.
    let plausible = (generated as f64) <= 4.0 * weight_done + 1000.0;
    if weight_total > 0.0 && plausible {
        let g = generated as f64;
        let rest = (weight_total - weight_done).max(0.0) + left;
        if g + rest > 0.0 {
            (g / (g + rest)).clamp(0.0, 1.0)
        } else {
            1.0
        }
    } else if total == 0 {
        1.0
    } else {
        done as f64 / total as f64
    }
}

/// One worker's generators and work space.
struct Worker<'p> {
    gens: Vec<Generator<'p>>,
    ws: resonance::Workspace,
    checker: rules::Checker,
}

impl<'p> Worker<'p> {
    fn new(problems: &'p [Problem]) -> Worker<'p> {
        Worker {
            gens: problems.iter().map(Generator::new).collect(),
            ws: resonance::Workspace::default(),
            checker: rules::Checker::default(),
        }
    }

    /// Run one task: every isomer below its node, through the resonance
    /// filter and the rules, into a fresh accumulator. With `limit`, stop
    /// after that many candidates. The search is cut short (and the result
    /// marked aborted) when `stop` is set or the deadline passes.
    #[allow(clippy::too_many_arguments)]
    fn run<A>(
        &mut self,
        problems: &[Problem],
        task: &Task,
        task_index: usize,
        rules: &[Rule],
        limit: Option<u64>,
        limits: &Limits,
        stop: &std::sync::Arc<std::sync::atomic::AtomicBool>,
        time_up: &std::sync::atomic::AtomicBool,
        init: &(dyn Fn() -> A + Sync),
        visit: &(dyn Fn(&mut A, &Isomer) + Sync),
    ) -> TaskOut<A> {
        use std::sync::atomic::Ordering::Relaxed;
        let p = &problems[task.problem];
        let symmetry_usable = p.one_kind_per_element();
        let gen = &mut self.gens[task.problem];
        let abort = gen.abort_flag();
        abort.store(false, Relaxed);
        // The generator also looks at the stop flag and the deadline while
        // it searches, so a task whose skeletons are all rejected (no leaf
        // reaches the check below) still ends on time.
        gen.set_watch(Some(generator::Watch {
            stop: Some(std::sync::Arc::clone(stop)),
            deadline: limits.deadline,
            fired: None,
        }));
        let (ws, checker) = (&mut self.ws, &mut self.checker);
        let mut node = task.node(p);
        let mut res = TaskOut {
            acc: init(),
            generated: 0,
            excluded: 0,
            flagged: vec![0; rules.len()],
            candidates: 0,
            aborted: false,
        };
        let mut seen = 0u32;
        gen.search(&mut node, &mut |leaf: &Node, auts| {
            if abort.load(Relaxed) {
                return;
            }
            if limit.is_some_and(|m| res.candidates >= m) {
                // The cap is reached: what follows is not covered.
                abort.store(true, Relaxed);
                return;
            }
            // A leaf may cost a full scoring (milliseconds and more for a
            // large candidate), so the clock is read every 8 leaves: at
            // most a few per cent of the cheapest leaf (a count).
            seen = seen.wrapping_add(1);
            if seen.is_multiple_of(8) {
                if limits.past_deadline() {
                    time_up.store(true, Relaxed);
                    stop.store(true, Relaxed);
                }
                if stop.load(Relaxed) {
                    res.aborted = true;
                    abort.store(true, Relaxed);
                    return;
                }
            }
            let iso = Isomer {
                node: leaf,
                problem: p,
                auts: auts.filter(|_| symmetry_usable),
                task: task_index,
            };
            if !resonance::is_representative(leaf, || iso.molecule(), ws) {
                return;
            }
            let mut out = false;
            for (i, &r) in rules.iter().enumerate() {
                if checker.flags(r, &iso) {
                    res.flagged[i] += 1;
                    out = true;
                }
            }
            res.generated += 1;
            if out {
                res.excluded += 1;
            } else {
                res.candidates += 1;
                visit(&mut res.acc, &iso);
            }
        });
        if let Some(late) = gen.set_watch(None).and_then(|w| w.fired) {
            if late {
                time_up.store(true, Relaxed);
            }
            stop.store(true, Relaxed);
            res.aborted = true;
        }
        // A task that ends after the deadline is not covered: its last
        // candidates may have been dropped by a scorer that gave up at the
        // deadline (score::assign::with_deadline).
        if !res.aborted && limits.past_deadline() {
            time_up.store(true, Relaxed);
            stop.store(true, Relaxed);
            res.aborted = true;
        }
        abort.store(false, Relaxed);
        res
    }
}

struct TaskOut<A> {
    acc: A,
    generated: u64,
    excluded: u64,
    flagged: Vec<u64>,
    /// Candidates handed to `visit`.
    candidates: u64,
    /// Cut short by a stop: incomplete, not to be used.
    aborted: bool,
}

/// An estimate of the number of isomers (before plausibility rules) from
/// random probes down the search tree: Knuth's estimator (D. E. Knuth,
/// "Estimating the efficiency of backtrack programs", Math. Comp. 29 (1975)
/// 121-136). A probe walks from a task's skeleton to a complete skeleton,
/// choosing one accepted child uniformly at random at each level; the
/// product of the numbers of children met, times the isomers of the
/// complete skeleton it reaches, is an unbiased estimate of the task's
/// isomers. The run's estimate is the sum over tasks of their mean probe.
#[derive(Clone, Debug)]
pub struct Estimate {
    /// Estimated isomers of the whole formula (every shard).
    pub isomers: f64,
    /// Per task (all tasks, in task order), its estimate.
    pub per_task: Vec<f64>,
    /// Probes made.
    pub probes: usize,
}

/// Probes in all (spread over the tasks, at least one each).
const PROBES: usize = 8192;

/// Estimate the number of isomers of `formula` (see [`Estimate`]). The
/// probes' random choices come from a fixed seed per task, so the estimate
/// is the same at every run.
pub fn estimate(formula: &Formula, opts: &Options) -> Result<Estimate> {
    use rayon::prelude::*;
    let problems = problems(formula, opts)?;
    let all = tasks(&problems);
    let per = PROBES.div_ceil(all.len().max(1)).max(1);
    // The probes end at the run's deadline too (a probe whose skeleton
    // admits no bond orders can search long): past it, each remaining
    // probe stops at once, and the run that follows stops at its start.
    let per_task: Vec<f64> = all
        .par_iter()
        .enumerate()
        .map_init(
            || {
                let mut gens = problems.iter().map(Generator::new).collect::<Vec<_>>();
                for g in &mut gens {
                    g.set_watch(Some(generator::Watch {
                        stop: None,
                        deadline: opts.limits.deadline,
                        fired: None,
                    }));
                }
                (gens, resonance::Workspace::default())
            },
            |(gens, ws), (i, task)| {
                let p = &problems[task.problem];
                let gen = &mut gens[task.problem];
                let mut rng = SplitMix(0x9e37_79b9_7f4a_7c15 ^ i as u64);
                let sum: f64 = (0..per).map(|_| probe(p, gen, ws, task, &mut rng)).sum();
                sum / per as f64
            },
        )
        .collect();
    Ok(Estimate {
        isomers: per_task.iter().sum(),
        probes: per * all.len(),
        per_task,
    })
}

fn probe(
    p: &Problem,
    gen: &mut Generator,
    ws: &mut resonance::Workspace,
    task: &Task,
    rng: &mut SplitMix,
) -> f64 {
    let mut node = task.node(p);
    let mut factor = 1.0;
    let mut children: Vec<Node> = Vec::new();
    while node.n < p.atoms {
        children.clear();
        let depth = node.n + 1;
        gen.skeletons(&mut node, depth, &mut |c: &Node, _| {
            children.push(c.clone())
        });
        if children.is_empty() {
            return 0.0;
        }
        factor *= children.len() as f64;
        let pick = (rng.next() % children.len() as u64) as usize;
        node = children.swap_remove(pick);
    }
    let mut leaves = 0u64;
    gen.search(&mut node, &mut |leaf: &Node, auts| {
        let iso = Isomer {
            node: leaf,
            problem: p,
            auts,
            task: 0,
        };
        if resonance::is_representative(leaf, || iso.molecule(), ws) {
            leaves += 1;
        }
    });
    factor * leaves as f64
}

/// A small fixed-seed generator (SplitMix64, Steele, Lea & Flood, OOPSLA
/// 2014) for the estimator's choices: reproducible, no crate needed.
struct SplitMix(u64);

impl SplitMix {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
}

/// Write every isomer's canonical SMILES to `out`, one per line, in the
/// deterministic order of [`for_each_ordered`]: what `isomerank isomers`
/// prints. Stops at the first write error and returns it (a closed pipe is
/// the caller's to treat as a normal end).
pub fn write_smiles(
    formula: &Formula,
    opts: &Options,
    out: &mut dyn std::io::Write,
    progress: &mut dyn FnMut(Progress),
) -> Result<Summary> {
    write_records(
        formula,
        opts,
        out,
        |iso| {
            let mut line = iso.smiles();
            line.push('\n');
            line
        },
        progress,
    )
}

/// Write one text record per isomer to `out` (built in parallel by
/// `record`, written in the deterministic order of [`for_each_ordered`]).
/// Stops at the first write error and returns it.
pub fn write_records(
    formula: &Formula,
    opts: &Options,
    out: &mut dyn std::io::Write,
    record: impl Fn(&Isomer) -> String + Sync,
    progress: &mut dyn FnMut(Progress),
) -> Result<Summary> {
    let mut write_error = None;
    let summary = for_each_ordered(
        formula,
        opts,
        |iso| Some(record(iso)),
        |s: String| match out.write_all(s.as_bytes()) {
            Ok(()) => true,
            Err(e) => {
                write_error = Some(e);
                false
            }
        },
        progress,
    )?;
    match write_error {
        Some(e) => Err(e.into()),
        None => Ok(summary),
    }
}

/// Number of isomers (of the shard, if one is given).
pub fn count(formula: &Formula, opts: &Options) -> Result<u64> {
    Ok(count_summary(formula, opts, &mut |_| {})?.isomers)
}

/// Count the isomers (under the caps of `opts.limits`): the summary, with
/// the count in `isomers`.
pub fn count_summary(
    formula: &Formula,
    opts: &Options,
    progress: &mut dyn FnMut(Progress),
) -> Result<Summary> {
    for_each_task(
        formula,
        opts,
        SmallWindow,
        || (),
        |_, _| {},
        |_, _| true,
        progress,
    )
}

/// Every isomer of `formula` (standard valences, no rules) as a molecule,
/// in output order: for tests that check a chemistry step on whole isomer
/// sets.
#[cfg(test)]
pub(crate) fn molecules_of(formula: &str) -> Vec<crate::chem::Molecule> {
    let formula = Formula::parse(formula).expect("test formula");
    let mut out = Vec::new();
    for_each_ordered(
        &formula,
        &Options::default(),
        |iso| Some(iso.molecule()),
        |m| {
            out.push(m);
            true
        },
        &mut |_| {},
    )
    .expect("test enumeration");
    out
}

#[cfg(test)]
mod driver_tests {
    use super::*;

    /// A panic inside a worker's map reaches the caller (it used to leave
    /// the emitter waiting for the lost task's result forever).
    #[test]
    fn a_panic_in_a_worker_reaches_the_caller() {
        let formula = Formula::parse("C6H14").unwrap();
        let seen = std::sync::atomic::AtomicUsize::new(0);
        let result = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            for_each_ordered(
                &formula,
                &Options::default(),
                |iso| {
                    // C6H14 has 5 isomers (OEIS A000602): panic on the third.
                    if seen.fetch_add(1, std::sync::atomic::Ordering::Relaxed) == 2 {
                        panic!("planted panic for {}", iso.smiles());
                    }
                    Some(())
                },
                |_| true,
                &mut |_| {},
            )
        }));
        let payload = result.expect_err("the planted panic must reach the caller");
        let text = payload
            .downcast_ref::<String>()
            .cloned()
            .unwrap_or_default();
        assert!(text.starts_with("planted panic for C"), "{text}");
    }

    /// A time limit that stops a run while an early task is slow: a
    /// ranking's window keeps every task the other worker finished meanwhile
    /// (and the slow task's candidates so far), in task order; a listing's
    /// window keeps only the tasks finished in order before it. The
    /// isomers of C9H12 are spread over thousands of small tasks; the test
    /// counts them per task first, with no limit.
    #[test]
    fn a_time_stop_keeps_out_of_order_work_for_a_ranking_only() {
        let formula = Formula::parse("C9H12").unwrap();
        // The first task with at least 10 isomers becomes the slow one (the
        // clock is read every 8 leaves, so it is cut short).
        let mut per = vec![];
        for_each_task(
            &formula,
            &Options::default(),
            SmallWindow,
            || 0u64,
            |n: &mut u64, _| *n += 1,
            |_, n| {
                per.push(n);
                true
            },
            &mut |_| {},
        )
        .unwrap();
        let all: u64 = per.iter().sum();
        let slow = per
            .iter()
            .position(|&n| n >= 10)
            .expect("a task of 10 isomers");
        assert!(slow + 1 < per.len());
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(2)
            .build()
            .unwrap();
        let run = |keep: bool| -> (Vec<usize>, u64, Summary) {
            let opts = Options {
                limits: Limits {
                    deadline: Some(
                        std::time::Instant::now() + std::time::Duration::from_millis(300),
                    ),
                    ..Limits::default()
                },
                ..Options::default()
            };
            let mut emitted = vec![];
            let mut candidates = 0;
            let visit = |n: &mut u64, iso: &Isomer| {
                if iso.task == slow {
                    std::thread::sleep(std::time::Duration::from_millis(60));
                }
                *n += 1;
            };
            let emit = |task: usize, n: u64| {
                emitted.push(task);
                candidates += n;
                true
            };
            let summary = pool.install(|| {
                if keep {
                    for_each_task(&formula, &opts, RankWindow, || 0, visit, emit, &mut |_| {})
                } else {
                    for_each_task(&formula, &opts, SmallWindow, || 0, visit, emit, &mut |_| {})
                }
            });
            (emitted, candidates, summary.unwrap())
        };
        let (listed, _, s) = run(false);
        assert_eq!(s.stopped, Some(Stop::Time));
        assert!(listed.iter().all(|&t| t < slow), "{listed:?}");
        let (ranked, ranked_n, s) = run(true);
        assert_eq!(s.stopped, Some(Stop::Time));
        assert!(
            ranked.contains(&slow) && ranked.iter().any(|&t| t > slow),
            "{ranked:?}"
        );
        assert!(
            ranked.windows(2).all(|w| w[0] < w[1]),
            "in task order: {ranked:?}"
        );
        assert!(ranked_n > 0 && ranked_n < all, "{ranked_n} of {all}");
        assert_eq!(s.isomers, ranked_n);
        assert!(s.share > 0.0 && s.share < 1.0, "{}", s.share);
    }
}
