//! Study: could a bound cheaper than the prediction spare the ranking most of
//! its per-isomer work? Measures, over every isomer of a formula (default
//! C9H10O, no plausibility rules) and one peak list, how many candidates each
//! kind of lower bound lets through at the ranking's final cutoff
//! `max(k-th best, best + skip_margin)`:
//!
//! 1. the ranking's own gate: exact group shifts, multiplicity and J terms
//!    at zero (`score::Prepared::may_beat`, run after the shifts);
//! 2. bounds that know each H-bearing atom only by a local key, computable
//!    from the generator's compact isomer with a few bit operations, with
//!    the **tightest sound shift interval** such a bound can use: the range
//!    of the predicted shifts of all atoms with that key over this very
//!    formula (a sound interval must contain every one of them, so no bound
//!    built on that key can be sharper; this one is optimistic on top,
//!    because it is handed the true groups of equivalent H and the smallest
//!    sigma seen for the key). Keys, each refining the one before:
//!    - K0 element, H count, highest bond order;
//!    - K1 + element and bond order of each neighbour;
//!    - K2 + per neighbour its H count and its other neighbours' elements
//!      and bond orders;
//!    - K3 + size of the smallest ring through the atom;
//! 3. the same intervals with the exact multiplicity and J terms added
//!    (which in truth need the groups and the shifts: an upper limit of what
//!    shifts-free information could reach);
//! 4. how often an atom's bond orders within R bonds repeat among the
//!    isomers of one skeleton (the generator hands them over consecutively):
//!    the hit rate a per-skeleton memo of per-atom results could reach.
//!
//! Why: the ranking's goal was at most twice the bare enumeration. The
//! generator spends about 3,400 instructions per isomer (callgrind, C8H8O);
//! the ranking's prediction up to its gate about 17,000 (DEVELOPERS.md). A
//! cheap bound helps only if it stops nearly all candidates before the
//! prediction. The figures this prints are quoted in DEVELOPERS.md.
//!
//! Holds every prediction in memory (about 1 GB for C9H10O) and takes a
//! minute or two: a study, not a benchmark.
//!
//! Run: `cargo run --release --example study_cheap_bounds [FORMULA [PEAKS]]`

mod common;

use common::Setup;
use isomerank::chem::Molecule;
use isomerank::enumerate;
use isomerank::predict::PredictedSignal;
use isomerank::rank::{self, Settings};
use isomerank::score::{self, assign, ScoringModel};
use isomerank::spectrum::Spectrum;
use std::collections::{HashMap, HashSet, VecDeque};

const KEYS: usize = 4;
const RADII: [usize; 4] = [1, 2, 3, 4];

/// What the study keeps of one isomer.
struct Candidate {
    predicted: Vec<PredictedSignal>,
    /// Per atom, the keys K0..K3 (0 for atoms without H).
    keys: Vec<[u64; KEYS]>,
    /// The skeleton (neighbour sets and elements), to find runs of isomers
    /// with one skeleton.
    skeleton: Vec<u64>,
    /// Per atom with H, a hash of the bond orders within R bonds.
    local: Vec<[u64; RADII.len()]>,
}

fn mix(h: u64, x: u64) -> u64 {
    let h = (h ^ x).wrapping_mul(0x0100_0000_01b3);
    h ^ h >> 29
}

fn hash(xs: &[u64]) -> u64 {
    xs.iter().fold(0xcbf2_9ce4_8422_2325, |h, &x| mix(h, x))
}

fn code(m: &Molecule, a: usize, order: u8) -> u64 {
    (m.atom(a).element.atomic_number() as u64) << 8 | order as u64
}

/// Bond-path distances from `a` (breadth-first search).
fn distances(m: &Molecule, a: usize) -> Vec<usize> {
    let mut d = vec![usize::MAX; m.atom_count()];
    d[a] = 0;
    let mut queue = VecDeque::from([a]);
    while let Some(x) = queue.pop_front() {
        for (y, _) in m.neighbours(x) {
            if d[y] == usize::MAX {
                d[y] = d[x] + 1;
                queue.push_back(y);
            }
        }
    }
    d
}

/// Size of the smallest ring through `a` (0 if none): for each bond a-b,
/// the shortest path from b back to a without that bond, plus one.
fn smallest_ring(m: &Molecule, a: usize) -> u64 {
    let mut best = 0;
    for (b, _) in m.neighbours(a) {
        let mut d = vec![usize::MAX; m.atom_count()];
        d[b] = 0;
        let mut queue = VecDeque::from([b]);
        while let Some(x) = queue.pop_front() {
            for (y, _) in m.neighbours(x) {
                if (x == b && y == a) || d[y] != usize::MAX {
                    continue;
                }
                d[y] = d[x] + 1;
                queue.push_back(y);
            }
        }
        if d[a] != usize::MAX && (best == 0 || d[a] as u64 + 1 < best) {
            best = d[a] as u64 + 1;
        }
    }
    best
}

fn keys_of(m: &Molecule, a: usize) -> [u64; KEYS] {
    let atom = m.atom(a);
    if atom.hydrogens == 0 {
        return [0; KEYS];
    }
    let top = m.neighbours(a).map(|x| x.1).max().unwrap_or(0) as u64;
    let k0 = hash(&[
        atom.element.atomic_number() as u64,
        atom.hydrogens as u64,
        top,
    ]);
    let mut first: Vec<u64> = m.neighbours(a).map(|(b, o)| code(m, b, o)).collect();
    first.sort_unstable();
    let k1 = hash(&[&[k0][..], &first].concat());
    let mut second: Vec<u64> = m
        .neighbours(a)
        .map(|(b, o)| {
            let mut around: Vec<u64> = m
                .neighbours(b)
                .filter(|&(c, _)| c != a)
                .map(|(c, o2)| code(m, c, o2))
                .collect();
            around.sort_unstable();
            hash(&[&[code(m, b, o), m.atom(b).hydrogens as u64][..], &around].concat())
        })
        .collect();
    second.sort_unstable();
    let k2 = hash(&[&[k0][..], &second].concat());
    let k3 = hash(&[k2, smallest_ring(m, a)]);
    [k0, k1, k2, k3]
}

fn local_of(m: &Molecule, a: usize) -> [u64; RADII.len()] {
    if m.atom(a).hydrogens == 0 {
        return [0; RADII.len()];
    }
    let d = distances(m, a);
    let mut out = [0; RADII.len()];
    for (i, &r) in RADII.iter().enumerate() {
        let mut h = hash(&[a as u64, m.atom(a).hydrogens as u64]);
        for x in 0..m.atom_count() {
            for (y, o) in m.neighbours(x) {
                if y > x && d[x] <= r && d[y] <= r {
                    h = mix(h, ((x * 64 + y) * 4) as u64 + o as u64);
                }
            }
        }
        out[i] = h;
    }
    out
}

/// Shift interval (lo, hi) and smallest sigma per key, over every atom with
/// that key in the whole set: the tightest sound interval for the key.
fn intervals(all: &[Candidate], k: usize) -> HashMap<u64, (f64, f64, f64)> {
    let mut iv: HashMap<u64, (f64, f64, f64)> = HashMap::new();
    for c in all {
        for p in &c.predicted {
            for &a in &p.atoms {
                let e = iv.entry(c.keys[a][k]).or_insert((
                    f64::INFINITY,
                    f64::NEG_INFINITY,
                    f64::INFINITY,
                ));
                e.0 = e.0.min(p.shift);
                e.1 = e.1.max(p.shift);
                e.2 = e.2.min(p.sigma);
            }
        }
    }
    iv
}

/// Whether some assignment costs less than `cutoff` when each group's shift
/// may lie anywhere in `shift_range(group)` (sigma as given), with or
/// without the group's exact multiplicity and J terms.
fn may_beat(
    predicted: &[PredictedSignal],
    spectrum: &Spectrum,
    model: &ScoringModel,
    cutoff: f64,
    shift_range: impl Fn(usize) -> (f64, f64, f64),
    with_multiplicity: bool,
) -> bool {
    let mut c = score::costs(predicted, spectrum, model);
    let m = c.multiplets;
    for (g, p) in predicted.iter().enumerate() {
        let (lo, hi, sigma) = shift_range(g);
        let (sigma, ln) = model.shift_sigma(sigma);
        for (j, o) in spectrum.multiplets.iter().enumerate() {
            let (a, b) = o
                .range
                .map_or((o.shift, o.shift), |(x, y)| (x.min(y), x.max(y)));
            let d = (a - hi).max(lo - b).max(0.0);
            let mut cost = d * d / (2.0 * sigma * sigma) + ln;
            if with_multiplicity {
                let t = model.pair_cost_with(p, o, sigma, ln);
                cost += t.multiplicity + t.coupling;
            }
            c.pair[g * m + j] = cost;
        }
    }
    assign::solve(&c, cutoff).is_some()
}

fn main() {
    let setup = Setup::from_args();
    let (formula, options, spectrum) = (&setup.formula, &setup.options, &setup.spectrum);
    let (predictor, opts, model) = (&setup.predictor, &setup.opts, &setup.model);
    let top = 10;

    // The final cutoff, from the ranking itself.
    let settings = Settings {
        spectrum,
        carbon: None,
        model,
        top,
    };
    let ranking = rank::with_standard_steps(predictor, opts, |steps| {
        rank::rank_formula(formula, options, steps, &settings, &mut |_, _| {})
    })
    .expect("ranking");
    let costs: Vec<f64> = ranking.candidates.iter().map(|c| c.cost).collect();
    let best = costs[0];
    let kth = if costs.len() >= top {
        costs[top - 1]
    } else {
        f64::INFINITY
    };
    let cutoff = kth.max(best + model.ranking.skip_margin);
    println!(
        "formula {formula}; {} observed multiplets",
        spectrum.multiplets.len()
    );
    println!(
        "best cost {best:.2}, {top}th {kth:.2}: final cutoff {cutoff:.2}; first: {}",
        ranking.candidates[0].smiles
    );

    let mut all: Vec<Candidate> = Vec::new();
    enumerate::for_each_ordered(
        formula,
        options,
        |iso| {
            let m = iso.molecule();
            let skeleton = (0..m.atom_count())
                .map(|a| {
                    m.neighbours(a).fold(0u64, |s, (b, _)| s | 1 << b)
                        | (m.atom(a).element.atomic_number() as u64) << 56
                })
                .collect();
            Some(Candidate {
                predicted: predictor.predict(&m, opts),
                keys: (0..m.atom_count()).map(|a| keys_of(&m, a)).collect(),
                skeleton,
                local: (0..m.atom_count()).map(|a| local_of(&m, a)).collect(),
            })
        },
        |c| {
            all.push(c);
            true
        },
        &mut |_| {},
    )
    .expect("enumeration");
    let n = all.len();
    let share = |k: usize| format!("{k} ({:.1}%)", 100.0 * k as f64 / n as f64);
    println!("{n} isomers; candidates a bound lets through at the final cutoff:");

    // How many candidates pass with these shift intervals per group.
    let pass = |range: &dyn Fn(&Candidate, usize) -> (f64, f64, f64), mult: bool| {
        all.iter()
            .filter(|c| may_beat(&c.predicted, spectrum, model, cutoff, |g| range(c, g), mult))
            .count()
    };
    let exact = pass(
        &|c, g| {
            let p = &c.predicted[g];
            (p.shift, p.shift, p.sigma)
        },
        false,
    );
    println!(
        "  exact group shifts (the ranking's gate):          {}",
        share(exact)
    );
    for k in 0..KEYS {
        let iv = intervals(&all, k);
        let width = iv.values().map(|x| x.1 - x.0).sum::<f64>() / iv.len() as f64;
        let range = |c: &Candidate, g: usize| iv[&c.keys[c.predicted[g].atoms[0]][k]];
        println!(
            "  key K{k} ({} keys, mean interval {width:.2} ppm): shifts only {}; with exact multiplicity and J {}",
            iv.len(),
            share(pass(&range, false)),
            share(pass(&range, true))
        );
    }

    // Reuse of local bond orders within one skeleton's run of isomers.
    for (i, r) in RADII.iter().enumerate() {
        let (mut hits, mut total) = (0u64, 0u64);
        let mut seen: HashSet<u64> = HashSet::new();
        let mut last: &[u64] = &[];
        for c in &all {
            if c.skeleton != last {
                seen.clear();
                last = &c.skeleton;
            }
            for (a, l) in c.local.iter().enumerate() {
                if c.keys[a][0] == 0 {
                    continue;
                }
                total += 1;
                hits += !seen.insert(l[i]) as u64;
            }
        }
        println!(
            "  atoms with H whose bond orders within {r} bonds were seen before in the same skeleton: {hits} of {total} ({:.1}%)",
            100.0 * hits as f64 / total as f64
        );
    }
}
