//! Plausibility rules: named, individually selectable filters that remove
//! structures a chemist would not expect to isolate under ordinary conditions.
//!
//! Each rule states its reason; the enumerator counts how many isomers each
//! rule flags (a structure can be flagged by several rules; each counts it).
//! Counting (`isomers`) applies none unless asked; ranking applies all by
//! default and names them in its output.

use super::generator::bits;
use super::Isomer;
use crate::chem::Element;
use crate::error::{Error, Result};

/// One plausibility rule.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Rule {
    SmallRingTriple,
    SmallRingCumulated,
    Bredt,
    Enol,
    Peroxide,
}

impl Rule {
    pub const ALL: [Rule; 5] = [
        Rule::SmallRingTriple,
        Rule::SmallRingCumulated,
        Rule::Bredt,
        Rule::Enol,
        Rule::Peroxide,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Rule::SmallRingTriple => "small-ring-triple",
            Rule::SmallRingCumulated => "small-ring-cumulated",
            Rule::Bredt => "bredt",
            Rule::Enol => "enol",
            Rule::Peroxide => "peroxide",
        }
    }

    /// Why the rule exists, in one sentence (shown by `--help` and the README).
    pub fn reason(self) -> &'static str {
        match self {
            Rule::SmallRingTriple => {
                "no triple bond in a ring of fewer than 8 atoms: a C-C triple bond is linear, \
                 and cycloalkynes smaller than cyclooctyne are not isolable (common practice)"
            }
            Rule::SmallRingCumulated => {
                "no cumulated double bonds (allene, ketene, ketenimine) at an atom of a ring of \
                 fewer than 8 atoms: the sp atom wants 180 degrees (common practice)"
            }
            Rule::Bredt => {
                "Bredt's rule: no double bond at a bridgehead of a bridged bicyclic system with \
                 fewer than 7 bridge atoms in all (Fawcett, Chem. Rev. 1950, 47, 219: S >= 7)"
            }
            Rule::Enol => {
                "no enol or ynol (OH on a C=C or C#C carbon): these tautomerise to the carbonyl \
                 compound, which is enumerated separately (common practice)"
            }
            Rule::Peroxide => {
                "no O-O bond: peroxides are rare, unstable and hazardous as unknowns (common practice)"
            }
        }
    }

    pub fn from_name(name: &str) -> Option<Rule> {
        Rule::ALL.iter().copied().find(|r| r.name() == name)
    }

    /// Whether the isomer breaks this rule.
    pub fn flags(self, iso: &Isomer) -> bool {
        match self {
            Rule::SmallRingTriple => small_ring_triple(iso),
            Rule::SmallRingCumulated => small_ring_cumulated(iso),
            Rule::Bredt => bredt(iso),
            Rule::Enol => enol(iso),
            Rule::Peroxide => peroxide(iso),
        }
    }
}

/// A set of rules to apply.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct RuleSet {
    pub rules: Vec<Rule>,
}

impl RuleSet {
    pub fn all() -> RuleSet {
        RuleSet {
            rules: Rule::ALL.to_vec(),
        }
    }

    pub fn none() -> RuleSet {
        RuleSet { rules: Vec::new() }
    }

    /// Parse a comma-separated list of rule names (`all` for every rule).
    pub fn parse(text: &str) -> Result<RuleSet> {
        if text.trim() == "all" {
            return Ok(RuleSet::all());
        }
        let mut rules = Vec::new();
        for (i, name) in text.split(',').enumerate() {
            let name = name.trim();
            match Rule::from_name(name) {
                Some(r) if !rules.contains(&r) => rules.push(r),
                Some(_) => {}
                None => {
                    let known: Vec<&str> = Rule::ALL.iter().map(|r| r.name()).collect();
                    return Err(Error::input(format!(
                        "unknown plausibility rule \"{name}\" (item {} of \"{text}\"); known rules: {}",
                        i + 1,
                        known.join(", ")
                    )));
                }
            }
        }
        rules.sort();
        Ok(RuleSet { rules })
    }

    pub fn is_empty(&self) -> bool {
        self.rules.is_empty()
    }
}

/// Size of the smallest ring through the bond a-b (None when it is in no ring).
pub fn smallest_ring_with_bond(iso: &Isomer, a: usize, b: usize) -> Option<usize> {
    let nb = &iso.node.nb;
    // Breadth-first search from a to b that does not use the bond a-b.
    let mut seen = 1u64 << a;
    let mut frontier = 1u64 << a;
    let mut dist = 0;
    while frontier != 0 {
        dist += 1;
        let mut next = 0u64;
        for v in bits(frontier) {
            let mut step = nb[v];
            if v == a {
                step &= !(1u64 << b);
            }
            next |= step;
        }
        next &= !seen;
        if next >> b & 1 == 1 {
            return Some(dist + 1);
        }
        seen |= next;
        frontier = next;
    }
    None
}

fn bonds<'a>(iso: &'a Isomer<'a>) -> impl Iterator<Item = (usize, usize, u8)> + 'a {
    (0..iso.atoms()).flat_map(move |a| {
        bits(iso.node.nb[a])
            .filter(move |&b| b > a)
            .map(move |b| (a, b, iso.order(a, b)))
    })
}

fn small_ring_triple(iso: &Isomer) -> bool {
    bonds(iso).any(|(a, b, o)| o == 3 && smallest_ring_with_bond(iso, a, b).is_some_and(|s| s < 8))
}

fn small_ring_cumulated(iso: &Isomer) -> bool {
    (0..iso.atoms()).any(|x| {
        let doubles: Vec<usize> = bits(iso.node.nb[x])
            .filter(|&y| iso.order(x, y) == 2)
            .collect();
        doubles.len() >= 2
            && doubles
                .iter()
                .any(|&y| smallest_ring_with_bond(iso, x, y).is_some_and(|s| s < 8))
    })
}

fn enol(iso: &Isomer) -> bool {
    (0..iso.atoms()).any(|o| {
        iso.element(o) == Element::O
            && iso.hydrogens(o) == 1
            && bits(iso.node.nb[o]).any(|c| {
                iso.element(c) == Element::C
                    && bits(iso.node.nb[c]).any(|y| y != o && iso.order(c, y) >= 2)
            })
    })
}

fn peroxide(iso: &Isomer) -> bool {
    bonds(iso).any(|(a, b, _)| iso.element(a) == Element::O && iso.element(b) == Element::O)
}

/// Bredt's rule with Fawcett's S number: a double bond at an atom x that is a
/// bridgehead, i.e. there is an atom z not bonded to x joined to it by three
/// internally disjoint paths of at least two bonds (the bridges of a bicyclic
/// [p.q.r] system with p, q, r >= 1), flagged when the bridges found have
/// S = p + q + r < 7 atoms. The bridges are found as shortest augmenting
/// paths, so S is that of the smallest bicyclic the search meets.
fn bredt(iso: &Isomer) -> bool {
    let n = iso.atoms();
    (0..n).any(|x| {
        let ring_nb = bits(iso.node.nb[x])
            .filter(|&y| smallest_ring_with_bond(iso, x, y).is_some())
            .count();
        if ring_nb < 3 || !bits(iso.node.nb[x]).any(|y| iso.order(x, y) == 2) {
            return false;
        }
        (0..n).any(|z| {
            z != x
                && iso.node.nb[x] >> z & 1 == 0
                && disjoint_paths(&iso.node.nb[..n], x, z, 3).is_some_and(|lens| {
                    let s: usize = lens.iter().map(|l| l - 1).sum();
                    s < 7
                })
        })
    })
}

/// Find `want` internally vertex-disjoint paths from s to t (unit vertex
/// capacities, augmenting paths found by breadth-first search in the split
/// graph); returns their lengths in bonds, or None when fewer exist.
fn disjoint_paths(nb: &[u64], s: usize, t: usize, want: usize) -> Option<Vec<usize>> {
    let n = nb.len();
    // Split each vertex v into v_in (2v) and v_out (2v+1); flow on arcs.
    // flow[(u, v)] for arc u_out -> v_in, and inner[v] for v_in -> v_out.
    let mut flow = vec![vec![false; n]; n];
    let mut inner = vec![false; n];
    for _ in 0..want {
        // BFS over states (vertex, side): side 0 = in, 1 = out.
        let mut prev: Vec<Option<(usize, usize)>> = vec![None; 2 * n];
        let start = 2 * s + 1;
        let goal = 2 * t;
        let mut queue = std::collections::VecDeque::new();
        let mut seen = vec![false; 2 * n];
        seen[start] = true;
        queue.push_back(start);
        while let Some(state) = queue.pop_front() {
            if state == goal {
                break;
            }
            let v = state / 2;
            let mut push = |next: usize, queue: &mut std::collections::VecDeque<usize>| {
                if !seen[next] {
                    seen[next] = true;
                    prev[next] = Some((state, 0));
                    queue.push_back(next);
                }
            };
            if state % 2 == 1 {
                // v_out -> u_in along unused arcs.
                for u in bits(nb[v]) {
                    if u != s && !flow[v][u] {
                        push(2 * u, &mut queue);
                    }
                }
                // Residual: v_out -> v_in when v's inner arc carries flow.
                if v != s && inner[v] {
                    push(2 * v, &mut queue);
                }
            } else {
                // v_in -> v_out when v is free (t is the sink, never passed through).
                if v != t && !inner[v] {
                    push(2 * v + 1, &mut queue);
                }
                // Residual: v_in -> u_out where arc u -> v carries flow.
                for u in bits(nb[v]) {
                    if flow[u][v] {
                        push(2 * u + 1, &mut queue);
                    }
                }
            }
        }
        if !seen[goal] {
            return None;
        }
        // Apply the augmenting path.
        let mut cur = goal;
        while cur != start {
            let (p, _) = prev[cur].expect("path back to the start");
            let (pv, cv) = (p / 2, cur / 2);
            match (p % 2, cur % 2) {
                // Residual of v's inner arc: cancel it.
                (1, 0) if pv == cv => inner[pv] = false,
                // Edge arc pv_out -> cv_in; cancel an opposite flow instead of
                // sending flow both ways along one bond.
                (1, 0) => {
                    if flow[cv][pv] {
                        flow[cv][pv] = false;
                    } else {
                        flow[pv][cv] = true;
                    }
                }
                (0, 1) if pv == cv => inner[pv] = true,
                // Residual of arc cv_out -> pv_in: cancel it.
                (0, 1) => flow[cv][pv] = false,
                _ => unreachable!("moves alternate between in and out states"),
            }
            cur = p;
        }
    }
    // Read off the paths from the flow.
    let mut lens = Vec::new();
    for first in 0..n {
        if !flow[s][first] {
            continue;
        }
        let (mut v, mut len) = (first, 1);
        while v != t && len <= n {
            match (0..n).find(|&u| flow[v][u]) {
                Some(next) => v = next,
                None => break,
            }
            len += 1;
        }
        lens.push(len);
    }
    Some(lens)
}
