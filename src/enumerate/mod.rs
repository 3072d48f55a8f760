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
use rayon::prelude::*;
use rules::{Rule, RuleSet};

/// How many tasks the search tree is cut into (at least, where the tree is
/// that wide): enough for even load on many cores and for fine-grained shards.
const TARGET_TASKS: usize = 4096;
/// Tasks run together before their results are emitted in order.
const CHUNK: usize = 256;
/// The first chunk's size; each next one doubles up to [`CHUNK`]. A caller
/// that learns from the emitted results (a ranking's cutoff) learns early.
const FIRST_CHUNK: usize = 8;

/// The task ranges of the chunks: sizes 8, 16, 32, ... up to [`CHUNK`]; a
/// fixed cut, so output stays independent of the thread count.
fn chunk_ranges(total: usize) -> Vec<std::ops::Range<usize>> {
    let mut out = Vec::new();
    let (mut start, mut size) = (0, FIRST_CHUNK);
    while start < total {
        let end = (start + size).min(total);
        out.push(start..end);
        start = end;
        size = (size * 2).min(CHUNK);
    }
    out
}

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
    /// Only this shard of the search.
    pub part: Option<Part>,
    /// Plausibility rules to apply (none: every isomer).
    pub rules: RuleSet,
    /// Facts the structures must fit, applied inside the search.
    pub constraints: constraints::Constraints,
}

/// Counts from one enumeration.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
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
        per_element.push(
            splits
                .into_iter()
                .map(|s| {
                    vals.iter()
                        .zip(s)
                        .filter(|&(_, n)| n > 0)
                        .map(|(&v, n)| (Kind::new(e, v), n))
                        .collect()
                })
                .collect(),
        );
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
        for t in &level {
            let p = &problems[t.problem];
            let mut node = t.node(p);
            if p.atoms <= depth {
                next.push(t.clone());
                continue;
            }
            gens[t.problem].skeletons(&mut node, depth + 1, &mut |n: &Node, _| {
                next.push(Task::from_node(t.problem, n))
            });
        }
        level = next;
        depth += 1;
    }
    level
}

/// Progress of a long enumeration, reported after each chunk of tasks.
#[derive(Clone, Copy, Debug)]
pub struct Progress {
    pub tasks_done: usize,
    pub tasks_total: usize,
    pub isomers: u64,
}

/// Enumerate the isomers of `formula`, calling `map` on each (in parallel) and
/// `emit` on each result in a deterministic order. `emit` returns false to
/// stop early. `progress` is called after every chunk.
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
    let problems = problems(formula, opts)?;
    let all = tasks(&problems);
    let mine: Vec<&Task> = match opts.part {
        Some(part) => all
            .iter()
            .enumerate()
            .filter(|(i, _)| i % part.of == part.index - 1)
            .map(|(_, t)| t)
            .collect(),
        None => all.iter().collect(),
    };
    let rules = &opts.rules.rules;
    let mut summary = Summary {
        flagged: rules.iter().map(|&r| (r, 0)).collect(),
        ..Summary::default()
    };
    let total = mine.len();
    for range in chunk_ranges(mine.len()) {
        let first = range.start;
        let chunk = &mine[range];
        let results: Vec<TaskResult<T>> = chunk
            .par_iter()
            .enumerate()
            .map_init(
                || {
                    let gens: Vec<Generator> = problems.iter().map(Generator::new).collect();
                    (
                        gens,
                        resonance::Workspace::default(),
                        rules::Checker::default(),
                    )
                },
                |(gens, ws, checker), (i, task)| {
                    let task_index = first + i;
                    let p = &problems[task.problem];
                    let symmetry_usable = p.one_kind_per_element();
                    let gen = &mut gens[task.problem];
                    let mut node = task.node(p);
                    let mut res = TaskResult {
                        items: Vec::new(),
                        generated: 0,
                        excluded: 0,
                        flagged: vec![0; rules.len()],
                    };
                    gen.search(&mut node, &mut |leaf: &Node, auts| {
                        let iso = Isomer {
                            node: leaf,
                            problem: p,
                            auts: auts.filter(|_| symmetry_usable),
                            task: task_index,
                        };
                        if !resonance::is_representative(leaf, || iso.molecule(), ws) {
                            return;
                        }
                        res.generated += 1;
                        let mut out = false;
                        for (i, &r) in rules.iter().enumerate() {
                            if checker.flags(r, &iso) {
                                res.flagged[i] += 1;
                                out = true;
                            }
                        }
                        if out {
                            res.excluded += 1;
                        } else if let Some(t) = map(&iso) {
                            res.items.push(t);
                        }
                    });
                    res
                },
            )
            .collect();
        for r in results {
            summary.generated += r.generated;
            summary.excluded += r.excluded;
            for (i, f) in r.flagged.iter().enumerate() {
                summary.flagged[i].1 += f;
            }
            for t in r.items {
                summary.isomers += 1;
                if !emit(t) {
                    summary.constraints = constraint_cuts(&problems);
                    return Ok(summary);
                }
            }
        }
        progress(Progress {
            tasks_done: first + chunk.len(),
            tasks_total: total,
            isomers: summary.isomers,
        });
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

struct TaskResult<T> {
    items: Vec<T>,
    generated: u64,
    excluded: u64,
    flagged: Vec<u64>,
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
    let mut write_error = None;
    let summary = for_each_ordered(
        formula,
        opts,
        |iso| Some(iso.smiles()),
        |s: String| match out
            .write_all(s.as_bytes())
            .and_then(|()| out.write_all(b"\n"))
        {
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
    Ok(for_each_ordered(formula, opts, |_| Some(()), |_| true, &mut |_| {})?.isomers)
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
