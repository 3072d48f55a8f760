//! Constraints: facts from the data (attached-H counts, carbon types,
//! required and forbidden fragments) turned into bounds the generator reads
//! while it builds, so that the work grows with the structures that fit
//! rather than with every isomer of the formula.
//!
//! The stage in one screen:
//!
//! * [`Constraints`] is what the user or a spectrum says: per element, how
//!   many atoms carry 0, 1, 2, ... H ([`HydrogenCounts`], exact or as
//!   intervals), how many carbons fall in each [`CarbonClass`], and
//!   fragments ([`fragment::Fragment`]) that must or must not occur.
//! * [`Constraints::compile`] checks them against the formula (errors name
//!   the numbers that do not add up) and makes a [`Bounds`]: per element a
//!   small table `max_below[t]`, the most atoms of that element whose free
//!   valence may end below t, plus the fragments as bitset queries.
//! * The generator ([`super::generator`]) reads the tables in its hot loop:
//!   at every skeleton extension, at every raised bond order, and once per
//!   complete structure (exact H counts, carbon classes, fragment matches
//!   with aromaticity perceived). Each rejection is counted per constraint
//!   and stage ([`Cut`]) and reported.
//!
//! Why each test is sound (never removes a structure that fits) is written
//! beside the test: [`Bounds::skeleton_ok`], [`Bounds::orders_ok`],
//! [`check::Work::accepts`].

pub mod carbon13;
pub mod check;
pub mod fragment;

use crate::chem::{Element, Formula};
use crate::error::{Error, Result};
use fragment::Fragment;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Arc;

/// Most H an atom of a supported element can carry (CH4; S(VI) carries no
/// more than 6, and the tables below are sized for free valence up to 7).
pub const MAX_H: usize = 4;
/// Size of the per-element tables indexed by free valence (0..=6 and one
/// more for the sums).
const SLOTS: usize = 8;

/// How many atoms of one element carry each number of H: for h = 0..=4, the
/// count of such atoms lies in `lo[h]..=hi[h]`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct HydrogenCounts {
    pub element: Element,
    pub lo: [u32; MAX_H + 1],
    pub hi: [u32; MAX_H + 1],
}

impl HydrogenCounts {
    /// Exactly `counts[h]` atoms with h H.
    pub fn exact(element: Element, counts: [u32; MAX_H + 1]) -> HydrogenCounts {
        HydrogenCounts {
            element,
            lo: counts,
            hi: counts,
        }
    }

    /// How the counts read in messages, e.g. `C: CH3=2, CH2=1, C=1`.
    pub fn describe(&self) -> String {
        let e = self.element.symbol();
        let mut parts = Vec::new();
        for h in (0..=MAX_H).rev() {
            let (lo, hi) = (self.lo[h], self.hi[h]);
            if hi == 0 {
                continue;
            }
            let group = match h {
                0 => e.to_string(),
                1 => format!("{e}H"),
                _ => format!("{e}H{h}"),
            };
            if lo == hi {
                parts.push(format!("{group}={lo}"));
            } else {
                parts.push(format!("{group}={lo}..{hi}"));
            }
        }
        parts.join(",")
    }
}

/// Types of carbon, each carbon in exactly one (decided on the finished
/// structure with aromaticity perceived by the RDKit model).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum CarbonClass {
    /// A non-aromatic double bond to O, S or N (ketone, aldehyde, acid,
    /// ester, amide, imine, ketene and isocyanate centre, thiocarbonyl).
    Carbonyl,
    /// A triple bond (alkyne, nitrile).
    Triple,
    /// Two double bonds, none to O, S or N (allene and cumulene centre).
    Cumulated,
    /// Aromatic, or one double bond to C, P or another non-O/S/N partner
    /// (alkene).
    Sp2,
    /// Single bonds only, at least one to N, O, S, P or a halogen.
    Sp3Hetero,
    /// Single bonds only, to C and H alone.
    Sp3,
}

impl CarbonClass {
    pub const ALL: [CarbonClass; 6] = [
        CarbonClass::Carbonyl,
        CarbonClass::Triple,
        CarbonClass::Cumulated,
        CarbonClass::Sp2,
        CarbonClass::Sp3Hetero,
        CarbonClass::Sp3,
    ];

    pub fn name(self) -> &'static str {
        match self {
            CarbonClass::Carbonyl => "carbonyl",
            CarbonClass::Triple => "triple",
            CarbonClass::Cumulated => "cumulated",
            CarbonClass::Sp2 => "sp2",
            CarbonClass::Sp3Hetero => "sp3-hetero",
            CarbonClass::Sp3 => "sp3",
        }
    }

    pub fn from_name(name: &str) -> Option<CarbonClass> {
        CarbonClass::ALL.iter().copied().find(|c| c.name() == name)
    }

    pub fn index(self) -> usize {
        self as usize
    }
}

/// Bounds on how many carbons fall in each class: `lo[c]..=hi[c]`, indexed
/// by [`CarbonClass::index`], and on the single-bond classes together.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ClassCounts {
    pub lo: [u32; 6],
    pub hi: [u32; 6],
    /// At most this many carbons with single bonds only (sp3 and
    /// sp3-hetero together); the others have a pi bond. `u32::MAX`: no
    /// bound beyond `hi`.
    pub single_hi: u32,
    /// At least this many carbons with single bonds only (sp3 and
    /// sp3-hetero together: the carbons of lines that no pi class fits).
    /// 0: no bound beyond `lo`.
    pub single_lo: u32,
    /// At most this many carbons with two units of extra bond order (a
    /// triple bond, or two double bonds: cumulated centres and O=C=C,
    /// N=C=O carbons), which only the triple, cumulated and carbonyl
    /// classes have: the carbons of lines one of them fits with an H
    /// count that allows it (none; one on a triple bond), and those of
    /// unknown H count. `u32::MAX`: no bound beyond `hi`.
    pub pi2_hi: u32,
    /// Per class and attached-H count h = 0..=4, the most carbons of that
    /// class carrying h H (from 13C lines with H counts); `None`: no bound
    /// beyond `hi`.
    pub hi_by_h: Option<[[u32; MAX_H + 1]; 6]>,
}

impl ClassCounts {
    /// Class intervals only (no joint bound on the single-bond classes).
    pub fn new(lo: [u32; 6], hi: [u32; 6]) -> ClassCounts {
        ClassCounts {
            lo,
            hi,
            single_hi: u32::MAX,
            single_lo: 0,
            pi2_hi: u32::MAX,
            hi_by_h: None,
        }
    }

    /// The fewest carbons with single bonds only: `single_lo`, or the
    /// lower bounds of the two single-bond classes.
    pub fn single_least(&self) -> u32 {
        self.single_lo
            .max(self.lo[CarbonClass::Sp3.index()] + self.lo[CarbonClass::Sp3Hetero.index()])
    }

    /// The most that the carbons' extra bond orders can add up to (each
    /// carbon's extra order x: its bond orders less its bonds; a triple
    /// bond gives each end 2, and a bond's extra order counts at both of
    /// its ends). Sound because in every Kekulé structure a carbon of the
    /// sp3 classes has x = 0 and a carbon of the sp2 class exactly one
    /// double bond (x = 1); only carbonyl (O=C=C, N=C=O), triple and
    /// cumulated carbons reach x = 2, and no carbon more (valence 4, at
    /// least one other bond). So the sum is at most the carbons outside the
    /// single-bond classes plus those that may reach 2. On a complete
    /// skeleton the carbons' free valence (valence less degree) is their H
    /// plus this sum, and each ring takes two units of free valence, so it
    /// bounds the rings from below (`Bounds::carbon_pi_hi`).
    pub fn most_pi(&self, carbons: u32) -> i64 {
        let hi = |c: CarbonClass| self.hi[c.index()] as u64;
        let p = carbons.saturating_sub(self.single_least()) as u64;
        let two =
            (hi(CarbonClass::Carbonyl) + hi(CarbonClass::Triple) + hi(CarbonClass::Cumulated))
                .min(self.pi2_hi as u64)
                .min(p);
        (p + two) as i64
    }

    /// The least number of extra bond orders (pi bonds; a triple bond
    /// counts 2) that the carbons of a structure of `carbons` carbons
    /// within these bounds need. Sound because, in every Kekulé structure,
    /// each carbon outside the single-bond classes has a double or triple
    /// bond (an aromatic carbon of a neutral molecule has its double bond
    /// in each Kekulé form); let each such carbon pick one: a carbonyl
    /// carbon its bond to O, S or N, a triple-class carbon its triple bond.
    /// Hand each bond's extra order out in equal shares to the carbons
    /// that picked it (at most its two ends; a bond to O, S or N has one
    /// carbon end): a carbonyl carbon then gets at least 1, a triple-class
    /// carbon at least 2 / 2 = 1, any other at least 1/2, and the shares add
    /// up to at most the structure's extra orders. So extra orders >=
    /// ceil((P + K) / 2) with P the carbons with a pi bond and K the
    /// carbonyl and triple ones, both at least their lower bounds here.
    pub fn least_pi(&self, carbons: u32) -> i64 {
        let lo = |c: CarbonClass| self.lo[c.index()];
        let single = (self.hi[CarbonClass::Sp3.index()] as u64
            + self.hi[CarbonClass::Sp3Hetero.index()] as u64)
            .min(self.single_hi as u64)
            .min(carbons as u64) as u32;
        let k = lo(CarbonClass::Carbonyl) + lo(CarbonClass::Triple);
        let p = (carbons - single)
            .max(k + lo(CarbonClass::Cumulated) + lo(CarbonClass::Sp2))
            .min(carbons);
        (p as i64 + k.min(p) as i64 + 1) / 2
    }

    /// The bounds of both `self` and `other` (each interval narrowed to
    /// their intersection).
    pub fn meet(&self, other: &ClassCounts) -> ClassCounts {
        ClassCounts {
            lo: std::array::from_fn(|i| self.lo[i].max(other.lo[i])),
            hi: std::array::from_fn(|i| self.hi[i].min(other.hi[i])),
            single_hi: self.single_hi.min(other.single_hi),
            single_lo: self.single_lo.max(other.single_lo),
            pi2_hi: self.pi2_hi.min(other.pi2_hi),
            hi_by_h: match (self.hi_by_h, other.hi_by_h) {
                (Some(a), Some(b)) => Some(std::array::from_fn(|k| {
                    std::array::from_fn(|h| a[k][h].min(b[k][h]))
                })),
                (a, b) => a.or(b),
            },
        }
    }

    /// Whether some split of `carbons` carbons over the classes meets the
    /// class intervals and the single-bond bounds (necessary, not
    /// sufficient, for a structure to exist).
    pub fn feasible(&self, carbons: u32) -> bool {
        let lo: u64 = self.lo.iter().map(|&x| x as u64).sum();
        let hi: u64 = self.hi.iter().map(|&x| x as u64).sum();
        let single_hi = (self.hi[CarbonClass::Sp3.index()] as u64
            + self.hi[CarbonClass::Sp3Hetero.index()] as u64)
            .min(self.single_hi as u64);
        (0..6).all(|c| self.lo[c] <= self.hi[c])
            && lo <= carbons as u64
            && hi >= carbons as u64
            && self.single_least() as u64 <= single_hi
    }

    /// Whether a structure's carbons meet these bounds: `counts` per class,
    /// `by_h` per class and H count, `pi2` the carbons with two units of
    /// extra bond order.
    pub fn admits(&self, counts: &[u32; 6], by_h: &[[u32; MAX_H + 1]; 6], pi2: u32) -> bool {
        let single = counts[CarbonClass::Sp3.index()] + counts[CarbonClass::Sp3Hetero.index()];
        let by_h_over = self
            .hi_by_h
            .as_ref()
            .is_some_and(|t| (0..6).any(|c| (0..=MAX_H).any(|h| by_h[c][h] > t[c][h])));
        (0..6).all(|c| counts[c] >= self.lo[c] && counts[c] <= self.hi[c])
            && single <= self.single_hi
            && single >= self.single_lo
            && pi2 <= self.pi2_hi
            && !by_h_over
    }

    pub fn describe(&self) -> String {
        let mut parts: Vec<String> = CarbonClass::ALL
            .iter()
            .filter(|c| self.lo[c.index()] > 0 || self.hi[c.index()] < u32::MAX)
            .map(|c| {
                let (lo, hi) = (self.lo[c.index()], self.hi[c.index()]);
                if lo == hi {
                    format!("{}={lo}", c.name())
                } else {
                    format!("{}={lo}..{hi}", c.name())
                }
            })
            .collect();
        if self.single_lo > 0 {
            parts.push(format!("single-bonded>={}", self.single_lo));
        }
        if self.single_hi < u32::MAX {
            parts.push(format!("single-bonded<={}", self.single_hi));
        }
        if self.pi2_hi < u32::MAX {
            parts.push(format!("two-pi<={}", self.pi2_hi));
        }
        parts.join(",")
    }
}

/// Everything the search must respect besides the formula.
#[derive(Clone, Debug, Default)]
pub struct Constraints {
    /// Attached-H counts, at most one entry per element.
    pub hydrogens: Vec<HydrogenCounts>,
    /// Carbon types, when known.
    pub classes: Option<ClassCounts>,
    /// Fragments every structure must contain.
    pub require: Vec<Fragment>,
    /// Fragments no structure may contain.
    pub forbid: Vec<Fragment>,
    /// Carbon types if every 13C line lies in its class's typical region
    /// (`carbon13::typical_classes`): narrower than `classes` and not
    /// sound, so never a bound by itself. A ranking searches these first
    /// ([`Constraints::stages`]).
    pub typical: Option<ClassCounts>,
    /// Leave out every structure whose carbons fit these types: an earlier
    /// stage of the same ranking searched them ([`Constraints::stages`]).
    pub exclude: Option<ClassCounts>,
}

impl Constraints {
    /// The searches a ranking runs, in order, whose structures together
    /// are exactly those these constraints allow, each structure in one of
    /// them. Without typical carbon types, one: these constraints. With
    /// them, two: first the structures whose carbons fit the typical types
    /// (`classes` narrowed to `typical`), then the rest (`exclude`). The
    /// first is usually a small part of the second and holds the usual
    /// answers, so a ranking under a time limit meets them early and its
    /// cutoff tightens; a complete ranking is the same either way.
    pub fn stages(&self) -> Vec<Constraints> {
        match &self.typical {
            Some(t) if self.exclude.is_none() => {
                let first = Constraints {
                    classes: Some(t.clone()),
                    typical: None,
                    ..self.clone()
                };
                let rest = Constraints {
                    typical: None,
                    exclude: Some(t.clone()),
                    ..self.clone()
                };
                vec![first, rest]
            }
            _ => vec![Constraints {
                typical: None,
                ..self.clone()
            }],
        }
    }

    /// One name per constraint, in the order the search counts their cuts:
    /// attached H, carbon types, each required fragment, each forbidden one,
    /// and the structures an earlier stage searched (`exclude`).
    pub fn names(&self) -> Vec<String> {
        let mut names = Vec::new();
        if !self.hydrogens.is_empty() {
            names.push(format!(
                "attached H ({})",
                self.hydrogens
                    .iter()
                    .map(|c| c.describe())
                    .collect::<Vec<_>>()
                    .join("; ")
            ));
        }
        if let Some(cc) = &self.classes {
            names.push(format!("carbon types ({})", cc.describe()));
        }
        for f in &self.require {
            names.push(format!("--require {}", f.text));
        }
        for f in &self.forbid {
            names.push(format!("--forbid {}", f.text));
        }
        if let Some(t) = &self.exclude {
            names.push(format!(
                "left to this stage: carbon types outside the typical 13C regions (searched first: {})",
                t.describe()
            ));
        }
        names
    }

    pub fn is_empty(&self) -> bool {
        self.hydrogens.is_empty()
            && self.classes.is_none()
            && self.require.is_empty()
            && self.forbid.is_empty()
            && self.exclude.is_none()
    }

    /// Parse the `--attached-h` list, e.g. `CH3=2,CH2=1,CH=5,C=2,OH=1`:
    /// items `{E}H{n}=count` (n omitted for 1, `E` alone for 0 H) for E in
    /// C, N, O, S, P. The counts given for an element must add up to its
    /// number in the formula (checked by [`Constraints::compile`]); H
    /// counts not listed for that element are zero.
    pub fn parse_attached_h(text: &str) -> Result<Vec<HydrogenCounts>> {
        let mut out: Vec<HydrogenCounts> = Vec::new();
        for (i, item) in text.split(',').enumerate() {
            let item = item.trim();
            let bad = |why: &str| {
                Error::input(format!(
                    "--attached-h \"{text}\": item {} \"{item}\": {why} (expected e.g. CH3=2,CH2=1,CH=5,C=2,OH=1)",
                    i + 1
                ))
            };
            let (group, count) = item.split_once('=').ok_or_else(|| bad("missing \"=\""))?;
            let count: u32 = count
                .trim()
                .parse()
                .map_err(|_| bad("the count is not a whole number"))?;
            let group = group.trim();
            let (symbol, h) = match group.find('H') {
                Some(at) => {
                    let digits = &group[at + 1..];
                    let h: usize = if digits.is_empty() {
                        1
                    } else {
                        digits
                            .parse()
                            .map_err(|_| bad("the H count after \"H\" is not a number"))?
                    };
                    (&group[..at], h)
                }
                None => (group, 0),
            };
            let element = Element::from_symbol(symbol)
                .filter(|e| !e.is_halogen() && *e != Element::H)
                .ok_or_else(|| bad("the element must be one of C, N, O, S, P"))?;
            if h > MAX_H || h > element.valence() as usize {
                return Err(bad(&format!(
                    "{} carries at most {} H",
                    element.symbol(),
                    element.valence().min(MAX_H as u8)
                )));
            }
            let entry = match out.iter().position(|c| c.element == element) {
                Some(p) => &mut out[p],
                None => {
                    out.push(HydrogenCounts::exact(element, [0; MAX_H + 1]));
                    out.last_mut().expect("just pushed")
                }
            };
            if entry.lo[h] != 0 {
                return Err(bad("this group is listed twice"));
            }
            entry.lo[h] = count;
            entry.hi[h] = count;
        }
        Ok(out)
    }

    /// Add attached-H counts, merging with counts already present for the
    /// same element (the tighter interval of each).
    pub fn add_hydrogens(&mut self, counts: HydrogenCounts) {
        match self
            .hydrogens
            .iter_mut()
            .find(|c| c.element == counts.element)
        {
            Some(have) => {
                for h in 0..=MAX_H {
                    have.lo[h] = have.lo[h].max(counts.lo[h]);
                    have.hi[h] = have.hi[h].min(counts.hi[h]);
                }
            }
            None => self.hydrogens.push(counts),
        }
    }

    /// Check the constraints against the formula and turn them into the
    /// generator's bounds. `dbe` is the formula's double-bond equivalent
    /// (standard valences). Errors name the numbers that do not fit.
    pub fn compile(&self, formula: &Formula, dbe: i64) -> Result<Option<Arc<Bounds>>> {
        if self.is_empty() {
            return Ok(None);
        }
        let mut max_below = [[u8::MAX; SLOTS]; 9];
        let mut h_below = [[u8::MAX; SLOTS]; 9];
        let mut exact = Vec::new();
        let mut h_listed = 0u32;
        let mut all_bearers_listed = true;
        for &e in Element::HEAVY.iter() {
            if formula.count(e) > 0
                && !e.is_halogen()
                && !self.hydrogens.iter().any(|c| c.element == e)
            {
                all_bearers_listed = false;
            }
        }
        let mut h_min = 0u32;
        for c in &self.hydrogens {
            let total = formula.count(c.element);
            let e = c.element.symbol();
            for h in 0..=MAX_H {
                if c.lo[h] > c.hi[h] {
                    return Err(Error::input(format!(
                        "attached-H counts for {e}: the sources disagree on atoms with {h} H ({}..{} wanted)",
                        c.lo[h], c.hi[h]
                    )));
                }
            }
            let lo_sum: u32 = c.lo.iter().sum();
            let hi_sum: u64 = c.hi.iter().map(|&x| x as u64).sum();
            if lo_sum > total || hi_sum < total as u64 {
                let said = if lo_sum as u64 == hi_sum {
                    format!("{lo_sum}")
                } else {
                    format!("{lo_sum}..{hi_sum}")
                };
                return Err(Error::input(format!(
                    "attached-H counts ({}) give {said} {e} atoms, the formula {formula} has {total}",
                    c.describe()
                )));
            }
            let slot = c.element.heavy_index().expect("heavy element");
            // H <= free valence, so an atom ending with free valence below t
            // has fewer than t H: at most sum_{h<t} hi[h] of them, and at
            // most total - sum_{h>=t} lo[h].
            for (t, cap) in h_below[slot].iter_mut().enumerate().skip(1) {
                let below_hi: u64 = (0..t.min(MAX_H + 1)).map(|h| c.hi[h] as u64).sum();
                let at_least: u32 = (t.min(MAX_H + 1)..=MAX_H).map(|h| c.lo[h]).sum();
                *cap = below_hi.min((total - at_least) as u64).min(255) as u8;
            }
            max_below[slot] = h_below[slot];
            exact.push((slot, c.lo, c.hi));
            h_listed += (0..=MAX_H).map(|h| h as u32 * c.lo[h]).sum::<u32>();
            h_min += (0..=MAX_H).map(|h| h as u32 * c.lo[h]).sum::<u32>();
        }
        let h = formula.hydrogens();
        let exact_h = self.hydrogens.iter().all(|c| c.lo == c.hi);
        if h_min > h || (all_bearers_listed && exact_h && h_listed != h) {
            return Err(Error::input(format!(
                "attached-H counts carry {h_listed} H, the formula {formula} has {h}{}",
                if h_listed < h {
                    " (every element that can carry H is listed, so they must add up)"
                } else {
                    ""
                }
            )));
        }
        if let Some(cc) = &self.classes {
            let carbons = formula.count(Element::C);
            let lo: u32 = cc.lo.iter().sum();
            let hi: u64 = cc.hi.iter().map(|&x| x as u64).sum();
            if lo > carbons || hi < carbons as u64 {
                return Err(Error::input(format!(
                    "carbon types ({}) give {lo}..{hi} carbons, the formula {formula} has {carbons}",
                    cc.describe()
                )));
            }
            // A carbon with skeleton free valence 0 keeps single bonds only
            // (an sp3 class); carbonyl, triple, cumulated and sp2 carbons
            // need a free valence of at least 1, triple and cumulated ones
            // at least 2.
            let at = |c: CarbonClass| cc.lo[c.index()];
            let single = (cc.hi[CarbonClass::Sp3.index()] as u64
                + cc.hi[CarbonClass::Sp3Hetero.index()] as u64)
                .min(cc.single_hi as u64);
            let need1 = at(CarbonClass::Carbonyl)
                + at(CarbonClass::Triple)
                + at(CarbonClass::Cumulated)
                + at(CarbonClass::Sp2);
            let need2 = at(CarbonClass::Triple) + at(CarbonClass::Cumulated);
            let c = &mut max_below[0];
            c[1] = c[1].min(single.min((carbons - need1.min(carbons)) as u64).min(255) as u8);
            c[2] = c[2].min((carbons - need2.min(carbons)).min(255) as u8);
            // With classes per H count: a carbon with h H ends with skeleton
            // free valence h plus its extra orders, at least 1 unless it
            // keeps single bonds only. So free valence below t means h <=
            // t - 2, or h = t - 1 and single bonds only: at most
            // sum_{h <= t-2} hi[h] + min(hi[t-1], single carbons with t-1 H).
            let h_hi = self
                .hydrogens
                .iter()
                .find(|h| h.element == Element::C)
                .map_or([carbons; MAX_H + 1], |h| h.hi);
            if let Some(t) = &cc.hi_by_h {
                let single_h = |h: usize| {
                    t[CarbonClass::Sp3.index()][h] as u64
                        + t[CarbonClass::Sp3Hetero.index()][h] as u64
                };
                for (tv, cap) in c.iter_mut().enumerate().skip(1) {
                    let below: u64 = (0..=MAX_H)
                        .map(|h| {
                            if h + 2 <= tv {
                                h_hi[h] as u64
                            } else if h + 1 == tv {
                                (h_hi[h] as u64).min(single_h(h))
                            } else {
                                0
                            }
                        })
                        .sum();
                    *cap = (*cap as u64).min(below).min(255) as u8;
                }
            }
        }
        let mut pi_needed = 0i64;
        let mut pi_owner = 0usize;
        for (i, f) in self.require.iter().enumerate() {
            f.fits(formula, dbe)?;
            if f.least_pi() > pi_needed {
                pi_needed = f.least_pi();
                pi_owner = i;
            }
            // A fragment atom that needs k extra bond orders can only sit on
            // an atom whose skeleton free valence ends at k or more: at most
            // total - (fragment atoms of that element needing >= t) atoms of
            // the element may end below t.
            for (slot, need) in f.needs() {
                let total = formula.count(Element::HEAVY[slot]);
                for (t, below) in max_below[slot].iter_mut().enumerate().skip(1) {
                    let needing = need.iter().filter(|&&k| k as usize >= t).count() as u32;
                    *below = (*below).min((total - needing.min(total)).min(255) as u8);
                }
            }
        }
        let classes_at = usize::from(!self.hydrogens.is_empty());
        let require_at = classes_at + usize::from(self.classes.is_some());
        let mut pi_owner = require_at + pi_owner;
        // The carbons' own pi bonds, from the carbon types
        // ([`ClassCounts::least_pi`]): applied as a fragment's are (a
        // skeleton keeps at most DBE - this many rings).
        if let Some(cc) = &self.classes {
            let need = cc.least_pi(formula.count(Element::C));
            if need > pi_needed {
                pi_needed = need;
                pi_owner = classes_at;
            }
        }
        let names = self.names();
        let forbid_at = require_at + self.require.len();
        let exclude_at = forbid_at + self.forbid.len();
        let stats = (0..names.len())
            .map(|_| [AtomicU64::new(0), AtomicU64::new(0), AtomicU64::new(0)])
            .collect();
        Ok(Some(Arc::new(Bounds {
            max_below,
            h_below,
            skeleton_test: max_below.iter().any(|r| r.iter().any(|&x| x < u8::MAX)),
            pi_needed: pi_needed as i32,
            pi_owner,
            h_sums: exact
                .iter()
                .map(|&(slot, lo, hi)| {
                    let n = formula.count(Element::HEAVY[slot]);
                    (slot, h_sum(n, &lo, &hi, false), h_sum(n, &lo, &hi, true))
                })
                .collect(),
            h_total: formula.hydrogens(),
            carbon_pi_hi: self
                .classes
                .as_ref()
                .map(|cc| cc.most_pi(formula.count(Element::C))),
            exact,
            classes: self.classes.clone(),
            require: self.require.clone(),
            forbid: self.forbid.clone(),
            names,
            classes_at,
            require_at,
            forbid_at,
            exclude: self.exclude.clone(),
            exclude_at,
            stats,
        })))
    }
}

/// The fewest (`most` false) or the most H that `n` atoms can carry when
/// between `lo[h]` and `hi[h]` of them carry h H: the lower bounds first,
/// the rest on the smallest (largest) h with room. 0 (`u32::MAX`) when the
/// intervals cannot hold `n` atoms, so no bound follows.
fn h_sum(n: u32, lo: &[u32; MAX_H + 1], hi: &[u32; MAX_H + 1], most: bool) -> u32 {
    let placed: u32 = lo.iter().sum();
    let mut left = match n.checked_sub(placed) {
        Some(x) => x,
        None => return if most { u32::MAX } else { 0 },
    };
    let mut sum: u32 = (0..=MAX_H).map(|h| h as u32 * lo[h]).sum();
    let order: Vec<usize> = if most {
        (0..=MAX_H).rev().collect()
    } else {
        (0..=MAX_H).collect()
    };
    for h in order {
        let take = left.min(hi[h].saturating_sub(lo[h]));
        sum += h as u32 * take;
        left -= take;
    }
    if left > 0 {
        return if most { u32::MAX } else { 0 };
    }
    sum
}

/// Stages at which a constraint can cut the search.
pub const STAGES: [&str; 3] = ["skeletons", "bond-order steps", "complete structures"];

/// What the generator reads: compiled, compact bounds (shared by every
/// thread and every valence problem of one formula).
#[derive(Debug)]
pub struct Bounds {
    /// Per heavy element (index of [`Element::HEAVY`]) and t = 1..=7: the
    /// most atoms whose skeleton free valence (valence - degree) may be
    /// below t. `u8::MAX`: no bound.
    pub max_below: [[u8; SLOTS]; 9],
    /// The same for the free valence left while bond orders are placed
    /// (it ends as the atom's H count): from the H counts alone.
    pub h_below: [[u8; SLOTS]; 9],
    /// Whether `max_below` bounds anything.
    pub skeleton_test: bool,
    /// The most pi bonds one required fragment, or the carbons of the carbon
    /// types, need: a skeleton may have at most DBE - this many rings
    /// (rings only grow along a branch).
    pub pi_needed: i32,
    /// The constraint a ring-count cut is charged to.
    pub pi_owner: usize,
    /// The most the carbons' extra bond orders can add up to, from the
    /// carbon types ([`ClassCounts::most_pi`]): a complete skeleton whose
    /// carbons' free valence less their H is more than that has too few
    /// rings (`constraints::check::Work::totals_fit`).
    pub carbon_pi_hi: Option<i64>,
    /// Per element with H counts (slot): the fewest and the most H its
    /// atoms can carry in all (`h_sum`); the formula's H (the rest sits on
    /// the other elements). Read by `constraints::check::Work::totals_fit`.
    pub h_sums: Vec<(usize, u32, u32)>,
    pub h_total: u32,
    /// Exact H-count intervals (slot, lo, hi), checked on complete structures.
    pub exact: Vec<(usize, [u32; MAX_H + 1], [u32; MAX_H + 1])>,
    pub classes: Option<ClassCounts>,
    pub require: Vec<Fragment>,
    pub forbid: Vec<Fragment>,
    /// One name per constraint, in the order of `stats`: the H counts (one
    /// entry for all elements), the carbon types, each required fragment,
    /// each forbidden fragment.
    pub names: Vec<String>,
    pub classes_at: usize,
    pub require_at: usize,
    pub forbid_at: usize,
    /// Structures whose carbons fit these types are left out (an earlier
    /// stage searched them: [`Constraints::stages`]); the cut's index.
    pub exclude: Option<ClassCounts>,
    pub exclude_at: usize,
    /// Per constraint and stage ([`STAGES`]), how many it cut.
    stats: Vec<[AtomicU64; 3]>,
}

/// How much of the search one constraint cut.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Cut {
    pub name: String,
    /// Per stage of [`STAGES`].
    pub cut: [u64; 3],
}

impl Bounds {
    /// Index of the H-count constraint in `names`, when there is one.
    pub fn hydrogens_at(&self) -> Option<usize> {
        (!self.exact.is_empty()).then_some(0)
    }

    /// The index in `names` of the first constraint that bounds skeleton
    /// free valences (what a skeleton cut is charged to: the H counts when
    /// given, else the carbon types, else the first required fragment).
    pub fn skeleton_owner(&self) -> usize {
        self.hydrogens_at().unwrap_or(if self.classes.is_some() {
            self.classes_at
        } else {
            self.require_at
        })
    }

    /// Add a thread's counts.
    pub fn record(&self, local: &[[u64; 3]]) {
        for (s, l) in self.stats.iter().zip(local) {
            for k in 0..3 {
                if l[k] > 0 {
                    s[k].fetch_add(l[k], Ordering::Relaxed);
                }
            }
        }
    }

    /// The counts so far, one entry per constraint.
    pub fn cuts(&self) -> Vec<Cut> {
        self.names
            .iter()
            .zip(&self.stats)
            .map(|(n, s)| Cut {
                name: n.clone(),
                cut: [0, 1, 2].map(|k| s[k].load(Ordering::Relaxed)),
            })
            .collect()
    }

    /// Skeleton test, run on every skeleton extension. In a skeleton an
    /// atom's free valence (valence - degree) bounds its final H count and
    /// its room for extra bond orders; adding atoms only raises degrees, so
    /// free valences only fall along a branch of the search. If more atoms
    /// of an element already have free valence below t than `max_below[t]`
    /// allows, every descendant has at least as many: the branch is empty.
    #[inline]
    pub fn skeleton_ok(&self, kinds_slot: &[u8], node_kind: &[u8], free: &[u8]) -> bool {
        below_ok(&self.max_below, kinds_slot, node_kind, free)
    }

    /// Bond-order test, run after each raised bond order: placing orders
    /// only lowers free valences, which end as the H counts, so the same
    /// argument holds with the H-count table.
    #[inline]
    pub fn orders_ok(&self, kinds_slot: &[u8], node_kind: &[u8], free: &[u8]) -> bool {
        below_ok(&self.h_below, kinds_slot, node_kind, free)
    }
}

/// Whether, for every bounded element and t, the atoms with free valence
/// below t number at most `table[slot][t]`. `kinds_slot[k]`: the element
/// slot of kind k (`u8::MAX`: not bounded).
#[inline]
fn below_ok(table: &[[u8; SLOTS]; 9], kinds_slot: &[u8], node_kind: &[u8], free: &[u8]) -> bool {
    let mut hist = [[0u8; SLOTS]; 9];
    let mut used = 0u16;
    for (&k, &f) in node_kind.iter().zip(free) {
        let s = kinds_slot[k as usize];
        if s != u8::MAX {
            hist[s as usize][(f as usize).min(SLOTS - 1)] += 1;
            used |= 1 << s;
        }
    }
    while used != 0 {
        let s = used.trailing_zeros() as usize;
        used &= used - 1;
        let mut below = 0u8;
        for t in 1..SLOTS {
            below += hist[s][t - 1];
            if below > table[s][t] {
                return false;
            }
        }
    }
    true
}

/// Per kind of a problem, the element slot when the bounds constrain that
/// element (`u8::MAX` otherwise).
pub fn kind_slots(
    kinds: &[super::generator::Kind],
    table: &[[u8; SLOTS]; 9],
) -> [u8; super::generator::MAX_KINDS] {
    let mut out = [u8::MAX; super::generator::MAX_KINDS];
    for (k, kind) in kinds.iter().enumerate() {
        let slot = kind.element.heavy_index().expect("heavy kind");
        if table[slot].iter().any(|&x| x < u8::MAX) {
            out[k] = slot as u8;
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn attached_h_lists_parse_and_describe() {
        let c = Constraints::parse_attached_h("CH3=2, CH2=1,CH=5,C=2,OH=1,O=0").unwrap();
        assert_eq!(c.len(), 2);
        assert_eq!(c[0].element, Element::C);
        assert_eq!(c[0].lo, [2, 5, 1, 2, 0]);
        assert_eq!(c[1].lo, [0, 1, 0, 0, 0]);
        assert_eq!(c[0].describe(), "CH3=2,CH2=1,CH=5,C=2");
        for bad in ["CH3", "CH3=x", "ClH=1", "CH5=1", "OH3=1", "CH3=1,CH3=2"] {
            assert!(Constraints::parse_attached_h(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn h_sums_place_the_free_carbons_on_the_smallest_and_largest_counts() {
        // 5 carbons: at least 1 CH3 and 2 CH, at most 1 more of any count
        // up to CH2: two carbons left to place.
        let lo = [0, 2, 0, 1, 0];
        let hi = [1, 3, 1, 1, 0];
        assert_eq!(h_sum(5, &lo, &hi, false), 5 + 0 + 1);
        assert_eq!(h_sum(5, &lo, &hi, true), 5 + 2 + 1);
        // Exact counts: both ends are the same.
        assert_eq!(h_sum(3, &[1, 1, 1, 0, 0], &[1, 1, 1, 0, 0], true), 3);
        // Intervals that cannot hold the atoms bound nothing.
        assert_eq!(h_sum(9, &lo, &hi, false), 0);
        assert_eq!(h_sum(9, &lo, &hi, true), u32::MAX);
    }

    #[test]
    fn contradictory_counts_name_the_numbers() {
        let f = Formula::parse("C4H8O").unwrap();
        let mut c = Constraints {
            hydrogens: Constraints::parse_attached_h("CH3=2,CH2=1").unwrap(),
            ..Constraints::default()
        };
        let e = c.compile(&f, 1).unwrap_err().to_string();
        assert!(e.contains("give 3 C atoms") && e.contains("has 4"), "{e}");
        // 4 carbons, but 3+3+2+1 = 9 H on carbon and O listed with 0 H: 9 != 8.
        c.hydrogens = Constraints::parse_attached_h("CH3=2,CH2=1,CH=1,O=1").unwrap();
        let e = c.compile(&f, 1).unwrap_err().to_string();
        assert!(e.contains("carry 9 H") && e.contains("has 8"), "{e}");
        c.hydrogens = Constraints::parse_attached_h("CH3=2,CH2=1,C=1,O=1").unwrap();
        assert!(c.compile(&f, 1).unwrap().is_some());
    }

    #[test]
    fn below_tables_bound_what_the_counts_allow() {
        // Two CH3, one CH2, one C: at most 1 carbon below free valence 1
        // (the quaternary C), 1 below 2, 2 below 3, 4 below 4.
        let f = Formula::parse("C4H8O").unwrap();
        let c = Constraints {
            hydrogens: Constraints::parse_attached_h("CH3=2,CH2=1,C=1").unwrap(),
            ..Constraints::default()
        };
        let b = c.compile(&f, 1).unwrap().unwrap();
        assert_eq!(&b.max_below[0][1..5], &[1, 1, 2, 4]);
    }
}
