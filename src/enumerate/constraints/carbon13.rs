//! From a 13C line list to sound constraints: attached-H counts and carbon
//! type counts ([`CarbonClass`]).
//!
//! Each line is (shift in ppm, attached H when known from DEPT, APT, an
//! edited HSQC or off-resonance multiplicity, number of carbons it stands
//! for). What is inferred, and why it is sound:
//!
//! * **H counts.** A line with a known H count and count k says at least k
//!   carbons carry that many H. The carbons not covered by such lines (lines
//!   without an H count, and carbons no line counts: accidental overlap,
//!   symmetry not annotated) may carry any number, so each H count's upper
//!   bound is its lower bound plus all of those. Requires that a line's
//!   stated carbon count is not above the truth (an unannotated line counts
//!   one carbon, which never is).
//! * **Carbon types.** Each class has deliberately wide shift regions and
//!   the H counts it can carry (`fragment-library/carbon-regions.toml`,
//!   common practice, values from memory), some only for formulas that
//!   hold the partner they need (no carbonyl without N, O or S, no
//!   sp3-hetero carbon without N, O, S, P or a halogen). A line counts towards a class's
//!   lower bound only when that class alone fits its shift and H count; it
//!   counts towards the upper bound of every class that fits. Where regions
//!   overlap (a quaternary carbon at 120 ppm could be aromatic, nitrile,
//!   isocyanate or CF3; 50-90 ppm could be sp3 C-O or an alkyne) the line
//!   constrains nothing beyond those upper bounds. The uncounted carbons
//!   raise every upper bound.
//! * **Carbons with a pi bond.** A line that neither single-bond class
//!   (sp3, sp3-hetero) fits stands for carbons with a double or triple
//!   bond; the rest are at most `single_hi` ([`ClassCounts::single_hi`]),
//!   from which [`super::Constraints::compile`] bounds the rings.
//!
//! A line no region holds, or more carbons than the formula has, is an
//! input error naming the line.

use super::{CarbonClass, ClassCounts, Constraints, HydrogenCounts, MAX_H};
use crate::chem::{Element, Formula};
use crate::error::{Error, Result};
use serde::Deserialize;
use std::sync::OnceLock;

const REGIONS_TOML: &str = include_str!("../../../fragment-library/carbon-regions.toml");

/// One class's shift regions and possible H counts.
#[derive(Clone, Debug, Deserialize)]
pub struct Region {
    pub class: String,
    pub ranges: Vec<[f64; 2]>,
    pub hydrogens: Vec<u8>,
    /// The region applies only when the formula holds one of these
    /// elements (empty: always).
    #[serde(default)]
    pub needs: Vec<String>,
    /// How many atoms of `needs` the formula must hold in all (a carbon
    /// with two heteroatom neighbours needs two heteroatoms).
    #[serde(default = "one")]
    pub min_atoms: u32,
    pub source: String,
}

fn one() -> u32 {
    1
}

impl Region {
    /// Whether a formula can hold a carbon of this region at all.
    fn allowed_in(&self, formula: &Formula) -> bool {
        self.needs.is_empty()
            || self
                .needs
                .iter()
                .map(|e| {
                    let e =
                        Element::from_symbol(e).expect("a known element in carbon-regions.toml");
                    formula.count(e)
                })
                .sum::<u32>()
                >= self.min_atoms
    }
}

#[derive(Deserialize)]
struct RegionFile {
    region: Vec<Region>,
    /// Narrower regions that hold most carbons of a class (a hypothesis a
    /// ranking tries first, never a bound: [`typical_regions`]).
    typical: Vec<Region>,
}

fn region_file() -> &'static RegionFile {
    static FILE: OnceLock<RegionFile> = OnceLock::new();
    FILE.get_or_init(|| {
        toml::from_str(REGIONS_TOML).expect("the embedded carbon-regions.toml parses")
    })
}

fn by_class(regions: &[Region]) -> Vec<(CarbonClass, Region)> {
    let mut out: Vec<(CarbonClass, Region)> = regions
        .iter()
        .map(|r| {
            let c = CarbonClass::from_name(&r.class).expect("a known carbon class");
            (c, r.clone())
        })
        .collect();
    out.sort_by_key(|(c, _)| *c);
    out
}

/// The embedded region table, sorted by [`CarbonClass`] (a class may have
/// several regions).
pub fn regions() -> &'static [(CarbonClass, Region)] {
    static TABLE: OnceLock<Vec<(CarbonClass, Region)>> = OnceLock::new();
    TABLE.get_or_init(|| by_class(&region_file().region))
}

/// The typical regions (`[[typical]]` in carbon-regions.toml), sorted by
/// class: where most carbons of each class fall, narrower than
/// [`regions`]. Not sound: a ranking searches the structures whose carbons
/// all fit them first and the rest after ([`super::Constraints::stages`]),
/// so they decide the order of the work, never the answer.
pub fn typical_regions() -> &'static [(CarbonClass, Region)] {
    static TABLE: OnceLock<Vec<(CarbonClass, Region)>> = OnceLock::new();
    TABLE.get_or_init(|| by_class(&region_file().typical))
}

/// The classes a line at `shift` with `hydrogens` (when known) may belong
/// to in a structure of `formula`, as a bit set over [`CarbonClass::index`].
pub fn possible_classes(shift: f64, hydrogens: Option<u8>, formula: &Formula) -> u8 {
    classes_in(regions(), shift, hydrogens, formula)
}

/// The classes whose typical regions hold a line, within
/// [`possible_classes`]; when none does (an unusual shift), the classes
/// [`possible_classes`] gives.
pub fn typical_classes(shift: f64, hydrogens: Option<u8>, formula: &Formula) -> u8 {
    let wide = possible_classes(shift, hydrogens, formula);
    match classes_in(typical_regions(), shift, hydrogens, formula) & wide {
        0 => wide,
        typical => typical,
    }
}

fn classes_in(
    table: &[(CarbonClass, Region)],
    shift: f64,
    hydrogens: Option<u8>,
    formula: &Formula,
) -> u8 {
    let mut set = 0u8;
    for (c, r) in table {
        if !r.allowed_in(formula) {
            continue;
        }
        let in_range = r.ranges.iter().any(|&[lo, hi]| shift >= lo && shift <= hi);
        let h_fits = hydrogens.is_none_or(|h| r.hydrogens.contains(&h));
        if in_range && h_fits {
            set |= 1 << c.index();
        }
    }
    set
}

/// What a 13C line list fixes.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CarbonFacts {
    /// Attached-H counts of the carbons, when any line gives one.
    pub hydrogens: Option<HydrogenCounts>,
    /// Carbon type counts, when any line narrows them.
    pub classes: Option<ClassCounts>,
    /// The carbon types when every line lies where its class typically
    /// does ([`typical_classes`]): narrower than `classes`, a hypothesis
    /// for the order of the search, not a bound. `None` when it would say
    /// no more than `classes`.
    pub typical: Option<ClassCounts>,
    /// One line per input line: what it was charged to, or why not.
    pub notes: Vec<String>,
}

/// Derive the sound constraints of a 13C line list: `lines` holds (shift in
/// ppm, attached H when known, number of carbons), `formula` the molecular
/// formula. See the module documentation for what is inferred.
pub fn carbon_facts(lines: &[(f64, Option<u8>, u32)], formula: &Formula) -> Result<CarbonFacts> {
    let carbons = formula.count(Element::C);
    let counted: u64 = lines.iter().map(|l| l.2 as u64).sum();
    if counted > carbons as u64 {
        return Err(Error::input(format!(
            "the 13C lines stand for {counted} carbons, the formula {formula} has {carbons}"
        )));
    }
    let unknown = carbons - counted as u32;
    let mut h_lo = [0u32; MAX_H + 1];
    let mut h_unknown = unknown;
    let mut notes = Vec::new();
    // Per line, the classes that fit it and its carbons; the same with the
    // typical regions.
    let mut fits: Vec<(u8, u32)> = Vec::with_capacity(lines.len());
    let mut typical: Vec<(u8, u32)> = Vec::with_capacity(lines.len());
    for (i, &(shift, h, count)) in lines.iter().enumerate() {
        let label = match h {
            Some(h) => format!("line {} (δ {shift:.1}, {h} H)", i + 1),
            None => format!("line {} (δ {shift:.1})", i + 1),
        };
        if !shift.is_finite() {
            return Err(Error::input(format!(
                "13C {label}: the shift is not a number"
            )));
        }
        match h {
            Some(h) if h as usize > MAX_H => {
                return Err(Error::input(format!(
                    "13C {label}: a carbon carries at most {MAX_H} H"
                )))
            }
            Some(h) => h_lo[h as usize] += count,
            None => h_unknown += count,
        }
        let set = possible_classes(shift, h, formula);
        fits.push((set, count));
        typical.push((typical_classes(shift, h, formula), count));
        if set == 0 {
            return Err(Error::input(format!(
                "13C {label}: no carbon type has a shift there{}",
                if h.is_some() {
                    " with that H count"
                } else {
                    ""
                }
            )));
        }
        let names: Vec<&str> = CarbonClass::ALL
            .iter()
            .filter(|c| set >> c.index() & 1 == 1)
            .map(|c| c.name())
            .collect();
        if set.count_ones() == 1 {
            notes.push(format!("{label}: {}", names[0]));
        } else {
            notes.push(format!(
                "{label}: {} (regions overlap; not charged to one type)",
                names.join(" or ")
            ));
        }
    }
    let hydrogens = (h_lo.iter().sum::<u32>() > 0).then(|| {
        let mut hi = h_lo;
        for x in &mut hi {
            *x += h_unknown;
        }
        HydrogenCounts {
            element: Element::C,
            lo: h_lo,
            hi,
        }
    });
    let classes = class_bounds(&fits, lines, formula, unknown, h_unknown);
    // A typical hypothesis the formula cannot meet (sp2 carbons in a
    // formula with DBE 0, more lines than a class's cap) says nothing.
    let caps = formula_caps(formula);
    let possible: u8 = (0..6).filter(|&c| caps[c] > 0).map(|c| 1u8 << c).sum();
    for ((t, _), &(wide, _)) in typical.iter_mut().zip(&fits) {
        if *t & possible == 0 {
            *t = wide;
        }
    }
    let typical = class_bounds(&typical, lines, formula, unknown, h_unknown)
        .filter(|t| t.feasible(carbons) && classes.as_ref() != Some(t));
    Ok(CarbonFacts {
        hydrogens,
        classes,
        typical,
        notes,
    })
}

/// The carbon type bounds that per-line class sets `fits` (one per line of
/// `lines`, with its carbons) give; `unknown` carbons no line counts,
/// `h_unknown` carbons without a known H count. `None` when they narrow
/// nothing.
fn class_bounds(
    fits: &[(u8, u32)],
    lines: &[(f64, Option<u8>, u32)],
    formula: &Formula,
    unknown: u32,
    h_unknown: u32,
) -> Option<ClassCounts> {
    let carbons = formula.count(Element::C);
    let mut class_lo = [0u32; 6];
    let mut class_hi = [unknown; 6];
    // Carbons of lines that no single-bond class fits have a pi bond.
    let mut pi_carbons = 0u32;
    // Carbons of lines that only single-bond classes fit, and of lines
    // whose carbons may have two units of extra bond order.
    let (mut single_carbons, mut pi2_carbons) = (0u32, unknown);
    let single = 1 << CarbonClass::Sp3.index() | 1 << CarbonClass::Sp3Hetero.index();
    let pi2 = 1 << CarbonClass::Carbonyl.index()
        | 1 << CarbonClass::Triple.index()
        | 1 << CarbonClass::Cumulated.index();
    for (&(set, count), &(_, h, _)) in fits.iter().zip(lines) {
        for c in CarbonClass::ALL {
            if set >> c.index() & 1 == 1 {
                class_hi[c.index()] += count;
            }
        }
        if set & single == 0 {
            pi_carbons += count;
        }
        if set & !single == 0 {
            single_carbons += count;
        }
        // Two units of extra order: a triple bond (at most one H) or two
        // double bonds (cumulated, O=C=C, N=C=O: no H).
        let two = match h {
            None => set & pi2 != 0,
            Some(0) => set & pi2 != 0,
            Some(1) => set >> CarbonClass::Triple.index() & 1 == 1,
            Some(_) => false,
        };
        if two {
            pi2_carbons += count;
        }
        if set.count_ones() == 1 {
            class_lo[set.trailing_zeros() as usize] += count;
        }
    }
    // What the formula allows each class at most, and from those caps
    // the carbons that must fall in a class because the other classes
    // their lines fit cannot hold them all.
    let caps = formula_caps(formula);
    for c in 0..6 {
        class_hi[c] = class_hi[c].min(caps[c]);
    }
    for (c, lo) in forced_by_caps(fits, &caps).into_iter().enumerate() {
        class_lo[c] = class_lo[c].max(lo);
    }
    let narrows = class_lo.iter().any(|&x| x > 0)
        || class_hi.iter().any(|&x| x < carbons)
        || single_carbons > 0
        || pi2_carbons < carbons;
    // Per class and H count: the lines with that H count that the class
    // fits, plus every carbon whose H count is not known.
    let hi_by_h = (h_unknown < carbons).then(|| {
        let mut t = [[h_unknown; MAX_H + 1]; 6];
        for (&(set, count), &(_, h, _)) in fits.iter().zip(lines) {
            if let Some(h) = h {
                for (c, row) in t.iter_mut().enumerate() {
                    if set >> c & 1 == 1 {
                        row[h as usize] += count;
                    }
                }
            }
        }
        t.map(|row| row.map(|x| x.min(carbons)))
    });
    narrows.then_some(ClassCounts {
        lo: class_lo,
        hi: class_hi.map(|x| x.min(carbons)),
        single_hi: carbons - pi_carbons,
        single_lo: single_carbons,
        pi2_hi: pi2_carbons.min(carbons),
        hi_by_h,
    })
}

/// The most carbons of each class (by [`CarbonClass::index`]) a neutral
/// structure of `formula` can hold, whatever its spectrum. Sound because:
/// a carbonyl-class carbon has a double bond to O, S or N, and each O and
/// each N takes part in at most one double bond to carbon (neutral O has
/// valence 2; N has valence 3, or 4 as the N+ of the charge-separated
/// groups, whose second multiple bond goes to O or N), an S in at most
/// three (S(VI) with the expanded valences); every carbon of a triple bond
/// accounts for at least one unit of the DBE (an alkyne's two carbons
/// share its two units, a nitrile's one carbon has both); each cumulated
/// centre has two double bonds and n centres in a row need n + 1 of them
/// (at most DBE - 1 centres); every sp2 carbon shares a double bond with
/// at most one other carbon, so at most 2 DBE of them.
pub fn formula_caps(formula: &Formula) -> [u32; 6] {
    let carbons = formula.count(Element::C);
    let dbe = formula.dbe().max(0.0).floor() as u32;
    let partners =
        formula.count(Element::O) + formula.count(Element::N) + 3 * formula.count(Element::S);
    let mut caps = [carbons; 6];
    caps[CarbonClass::Carbonyl.index()] = partners.min(dbe).min(carbons);
    caps[CarbonClass::Triple.index()] = dbe.min(carbons);
    caps[CarbonClass::Cumulated.index()] = dbe.saturating_sub(1).min(carbons);
    caps[CarbonClass::Sp2.index()] = (2 * dbe).min(carbons);
    caps
}

/// For each class, the fewest listed carbons it must hold: the listed
/// carbons less the most that the other classes their lines fit can take
/// within `caps`. That most is a maximum flow from lines to classes; by
/// the max-flow min-cut theorem (Ford & Fulkerson 1956) it is the least,
/// over sets T of the other classes, of the caps of T plus the carbons of
/// the lines that fit some other class outside T.
pub fn forced_by_caps(fits: &[(u8, u32)], caps: &[u32; 6]) -> [u32; 6] {
    let listed: u64 = fits.iter().map(|&(_, n)| n as u64).sum();
    let mut out = [0u32; 6];
    for c in 0..6 {
        let others = 0x3fu8 & !(1 << c);
        let mut best = u64::MAX;
        // Subsets T of the other classes.
        let mut t = others;
        loop {
            let cap_t: u64 = (0..6)
                .filter(|&k| t >> k & 1 == 1)
                .map(|k| caps[k] as u64)
                .sum();
            let outside: u64 = fits
                .iter()
                .filter(|&&(set, _)| set & others & !t != 0)
                .map(|&(_, n)| n as u64)
                .sum();
            best = best.min(cap_t + outside);
            if t == 0 {
                break;
            }
            t = (t - 1) & others;
        }
        out[c] = listed.saturating_sub(best) as u32;
    }
    out
}

impl Constraints {
    /// Add what a 13C line list fixes (see [`carbon_facts`]); returns the
    /// per-line notes.
    pub fn add_carbon_lines(
        &mut self,
        lines: &[(f64, Option<u8>, u32)],
        formula: &Formula,
    ) -> Result<Vec<String>> {
        let facts = carbon_facts(lines, formula)?;
        if let Some(h) = facts.hydrogens {
            self.add_hydrogens(h);
        }
        if let Some(c) = facts.classes {
            self.classes = Some(match self.classes.take() {
                Some(have) => have.meet(&c),
                None => c,
            });
        }
        // The typical types narrow what is known (the sound types, and the
        // typical ones of earlier lists).
        let mut typical: Option<ClassCounts> = None;
        for t in [self.classes.clone(), self.typical.take(), facts.typical]
            .into_iter()
            .flatten()
        {
            typical = Some(match typical {
                Some(have) => have.meet(&t),
                None => t,
            });
        }
        let carbons = formula.count(Element::C);
        self.typical = typical.filter(|t| t.feasible(carbons) && Some(t) != self.classes.as_ref());
        Ok(facts.notes)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Benzaldehyde in CDCl3 (from memory): 192.3 (CH), 136.4 (C), 134.4
    /// (CH), 129.7 (CH, 2C), 129.0 (CH, 2C).
    const BENZALDEHYDE: [(f64, Option<u8>, u32); 5] = [
        (192.3, Some(1), 1),
        (136.4, Some(0), 1),
        (134.4, Some(1), 1),
        (129.7, Some(1), 2),
        (129.0, Some(1), 2),
    ];

    /// o-Xylene, 13C in CDCl3 (common practice, values from memory).
    const O_XYLENE: [(f64, Option<u8>, u32); 4] = [
        (136.5, Some(0), 2),
        (129.6, Some(1), 2),
        (125.8, Some(1), 2),
        (19.7, Some(3), 2),
    ];

    fn classes(set: u8) -> Vec<&'static str> {
        CarbonClass::ALL
            .iter()
            .filter(|c| set >> c.index() & 1 == 1)
            .map(|c| c.name())
            .collect()
    }

    #[test]
    fn typical_regions_narrow_a_line_within_its_sound_classes() {
        // Common practice (values from memory): a CH3 at 55 ppm is an
        // O-CH3 (anisole 55.1), though a C-CH3 is possible in the sound
        // regions; one at 21 ppm a C-CH3 (toluene 21.4), though an
        // N-CH3 or S-CH3 is possible in the sound regions.
        let f = Formula::parse("C7H8O").unwrap();
        assert_eq!(
            classes(possible_classes(55.1, Some(3), &f)),
            ["sp3-hetero", "sp3"]
        );
        assert_eq!(classes(typical_classes(55.1, Some(3), &f)), ["sp3-hetero"]);
        assert_eq!(
            classes(possible_classes(21.0, Some(3), &f)),
            ["sp3-hetero", "sp3"]
        );
        assert_eq!(classes(typical_classes(21.0, Some(3), &f)), ["sp3"]);
        // A line no typical region holds keeps its sound classes.
        let odd = 240.0;
        assert_eq!(
            typical_classes(odd, Some(0), &f),
            possible_classes(odd, Some(0), &f)
        );
        // In the bounds: anisole's list types its CH3 for sure only in the
        // typical set.
        let lines = [
            (159.6, Some(0), 1),
            (129.5, Some(1), 2),
            (120.7, Some(1), 1),
            (114.0, Some(1), 2),
            (55.1, Some(3), 1),
        ];
        let facts = carbon_facts(&lines, &f).unwrap();
        let sound = facts.classes.unwrap();
        let typical = facts.typical.unwrap();
        let h = CarbonClass::Sp3Hetero.index();
        assert_eq!((sound.lo[h], typical.lo[h]), (0, 1));
        assert_eq!(typical.hi[CarbonClass::Sp3.index()], 0);
    }

    #[test]
    fn a_typical_set_the_formula_cannot_hold_is_not_used() {
        // CH3-CFCl2 (dev record 20209568; 13C 118.5 C, 38.0 CH3): a
        // quaternary carbon at 118.5 lies in the typical sp2 region, but a
        // formula with DBE 0 has no sp2 carbon, so the line keeps its sound
        // class (sp3-hetero) and the typical types stay consistent.
        let f = Formula::parse("C2H3Cl2F").unwrap();
        let facts = carbon_facts(&[(118.5, Some(0), 1), (38.0, Some(3), 1)], &f).unwrap();
        if let Some(t) = &facts.typical {
            assert!(t.feasible(2), "{}", t.describe());
        }
        let mut c = Constraints::default();
        c.add_carbon_lines(&[(118.5, Some(0), 1), (38.0, Some(3), 1)], &f)
            .unwrap();
        for stage in c.stages() {
            assert!(stage.compile(&f, 0).is_ok());
        }
    }

    #[test]
    fn overlapping_regions_are_declined() {
        let f = Formula::parse("C6H9NOSCl").unwrap();
        // Common practice (FIELD-GUIDE section 7, from memory): 100-125 ppm
        // could be a nitrile or an aromatic carbon; 50-90 an sp3 C-O or an
        // alkyne.
        assert!(possible_classes(118.0, Some(0), &f).count_ones() > 1);
        assert!(classes(possible_classes(118.0, Some(0), &f)).contains(&"triple"));
        assert!(classes(possible_classes(118.0, Some(0), &f)).contains(&"sp2"));
        let at_70 = classes(possible_classes(70.0, Some(0), &f));
        assert!(
            at_70.contains(&"triple") && at_70.contains(&"sp3-hetero"),
            "{at_70:?}"
        );
        // An aldehyde CH at 200 ppm: only a carbonyl carbon has a shift
        // there with one H (an allene centre carries none).
        assert_eq!(classes(possible_classes(200.0, Some(1), &f)), ["carbonyl"]);
        // A methyl group at 20 ppm may be plain sp3 or C-S/C-I: declined.
        assert_eq!(
            classes(possible_classes(20.0, Some(3), &f)),
            ["sp3-hetero", "sp3"]
        );
        // CH4-type carbon (4 H): only plain sp3.
        assert_eq!(classes(possible_classes(-2.0, Some(4), &f)), ["sp3"]);
    }

    #[test]
    fn facts_from_a_line_list() {
        // A line list of our own (invented for the test) for C5H10O2 with a
        // carbonyl at 173 (no H), an OCH2 at 64 (2 H), a CH3 at 21 (3 H),
        // and one line of 2 carbons at 14 ppm without an H count.
        let f = Formula::parse("C5H10O2").unwrap();
        let lines = [
            (173.0, Some(0), 1),
            (64.0, Some(2), 1),
            (21.0, Some(3), 1),
            (14.0, None, 2),
        ];
        let facts = carbon_facts(&lines, &f).unwrap();
        let h = facts.hydrogens.unwrap();
        assert_eq!(h.lo, [1, 0, 1, 1, 0]);
        assert_eq!(h.hi, [3, 2, 3, 3, 2]);
        let c = facts.classes.unwrap();
        // No line is decisive; the upper bounds: the 173 line may be
        // carbonyl, cumulated or sp2; nothing else reaches 110 ppm.
        assert_eq!(c.lo, [0; 6]);
        assert_eq!(c.hi[CarbonClass::Carbonyl.index()], 1);
        assert_eq!(c.hi[CarbonClass::Sp3.index()], 4);
        assert_eq!(facts.notes.len(), 4);
        let too_many = [(20.0, None, 6)];
        let e = carbon_facts(&too_many, &f).unwrap_err().to_string();
        assert!(e.contains("6 carbons") && e.contains("has 5"), "{e}");
        let nowhere = [(400.0, None, 1)];
        let e = carbon_facts(&nowhere, &f).unwrap_err().to_string();
        assert!(e.contains("line 1") && e.contains("no carbon type"), "{e}");
    }

    #[test]
    fn classes_the_formula_cannot_hold_are_left_out() {
        // Common practice (from memory): a carbonyl carbon needs its O, S or
        // N; an sp3-hetero carbon a heteroatom neighbour.
        let hydrocarbon = Formula::parse("C13H12").unwrap();
        assert_eq!(
            classes(possible_classes(200.0, Some(0), &hydrocarbon)),
            ["cumulated"]
        );
        assert_eq!(
            classes(possible_classes(70.0, Some(0), &hydrocarbon)),
            ["triple", "sp2", "sp3"]
        );
        // An aromatic CH at 128 ppm: no sp3-hetero CH reaches it without
        // fluorine (orthoformate CH ~113 at most); CHF2 groups do (~105-122)
        // when the formula has their two F. Without N, no C=O or C=S carbon
        // lies below ~140 and no alkyne CH above ~100; with N, a C=N carbon
        // or a nitrile may.
        let oxygen = Formula::parse("C8H8O").unwrap();
        let fluorine = Formula::parse("C8H6F2").unwrap();
        let nitrogen = Formula::parse("C8H7N").unwrap();
        assert_eq!(classes(possible_classes(128.0, Some(1), &oxygen)), ["sp2"]);
        assert_eq!(
            classes(possible_classes(128.0, Some(1), &nitrogen)),
            ["carbonyl", "triple", "sp2"]
        );
        assert_eq!(
            classes(possible_classes(150.0, Some(1), &oxygen)),
            ["carbonyl", "sp2"]
        );
        assert!(classes(possible_classes(128.0, Some(1), &fluorine)).contains(&"sp3-hetero"));
        // A quaternary C at 128 may still be CF3 or an orthocarbonate, but
        // only where the formula holds two heteroatoms for its neighbours.
        let two_o = Formula::parse("C8H8O2").unwrap();
        assert!(classes(possible_classes(128.0, Some(0), &two_o)).contains(&"sp3-hetero"));
        assert!(!classes(possible_classes(128.0, Some(0), &oxygen)).contains(&"sp3-hetero"));
        // A tertiary C-O at 80 ppm needs one.
        assert!(classes(possible_classes(80.0, Some(0), &oxygen)).contains(&"sp3-hetero"));
    }

    #[test]
    fn pi_carbons_bound_the_rings() {
        // o-Xylene: 136.5 (C, 2C), 129.6 (CH, 2C), 125.8 (CH, 2C), 19.7
        // (CH3, 2C). Six carbons with a pi bond need 3 pi bonds: of DBE 4 at
        // most 1 ring.
        let f = Formula::parse("C8H10").unwrap();
        let lines = O_XYLENE;
        let c = carbon_facts(&lines, &f).unwrap().classes.unwrap();
        assert_eq!(c.single_hi, 2);
        assert_eq!(c.least_pi(8), 3);
        let mut k = Constraints::default();
        k.add_carbon_lines(&lines, &f).unwrap();
        let b = k.compile(&f, 4).unwrap().unwrap();
        assert_eq!(b.pi_needed, 3);
        assert_eq!(b.pi_owner, b.classes_at);
        // Benzaldehyde (from memory): 192.3 (CH), 136.4 (C), 134.4 (CH),
        // 129.7 (CH, 2C), 129.0 (CH, 2C). The aldehyde carbon's C=O serves
        // it alone: (7 + 1) / 2 = 4 pi bonds, so of DBE 5 at most 1 ring.
        let f = Formula::parse("C7H6O").unwrap();
        let lines = BENZALDEHYDE;
        let c = carbon_facts(&lines, &f).unwrap().classes.unwrap();
        assert_eq!(c.lo[CarbonClass::Carbonyl.index()], 1);
        assert_eq!((c.single_hi, c.least_pi(7)), (0, 4));
        // Lines that a single-bond class may hold bound nothing: an
        // unannotated 70 ppm line in an O compound.
        let c = carbon_facts(&[(70.0, None, 1)], &f).unwrap().classes;
        assert!(c.is_none_or(|c| c.least_pi(7) == 0));
    }

    #[test]
    fn lines_bound_the_carbons_pi_bonds_from_above() {
        // o-Xylene as above: the two CH3 lines fit only single-bond classes
        // and no line may hold a carbon of two pi units (the quaternary
        // 136.5 fits no carbonyl without N, O or S, and a triple-bond
        // carbon has at most one H), so the carbons' extra orders add up
        // to at most 6: 3 pi bonds, and of DBE 4 at least 1 ring.
        let f = Formula::parse("C8H10").unwrap();
        let c = carbon_facts(&O_XYLENE, &f).unwrap().classes.unwrap();
        assert_eq!((c.single_lo, c.single_hi, c.pi2_hi), (2, 2, 0));
        assert_eq!(c.most_pi(8), 6);
        // Benzaldehyde: the aldehyde CH may not have two pi units (one H
        // and no triple bond at 192 ppm), nor the 136.4 quaternary carbon
        // (below the cumulated and, without N, the carbonyl regions): 7.
        let f = Formula::parse("C7H6O").unwrap();
        let c = carbon_facts(&BENZALDEHYDE, &f).unwrap().classes.unwrap();
        assert_eq!((c.single_lo, c.pi2_hi), (0, 0));
        assert_eq!(c.most_pi(7), 7);
    }

    #[test]
    fn the_formula_caps_carbon_types_and_the_caps_force_the_rest() {
        // Valence arithmetic (common practice): C7H6O has DBE 5 and one O,
        // so at most one carbonyl carbon, five triple-bond carbons, four
        // cumulated centres and all seven carbons sp2.
        let f = Formula::parse("C7H6O").unwrap();
        let caps = formula_caps(&f);
        assert_eq!(caps[CarbonClass::Carbonyl.index()], 1);
        assert_eq!(caps[CarbonClass::Triple.index()], 5);
        assert_eq!(caps[CarbonClass::Cumulated.index()], 4);
        assert_eq!(caps[CarbonClass::Sp2.index()], 7);
        assert_eq!(caps[CarbonClass::Sp3.index()], 7);
        // A saturated formula: no pi carbon of any kind.
        let caps = formula_caps(&Formula::parse("C4H10O").unwrap());
        assert_eq!(&caps[..4], &[0, 0, 0, 0]);
        // Three carbons on lines that fit carbonyl or sp2, one on a line
        // that fits only sp2, carbonyl capped at 1: at least 3 sp2 (max
        // flow by hand: at most one of the three goes to carbonyl).
        let c = 1 << CarbonClass::Carbonyl.index();
        let p = 1 << CarbonClass::Sp2.index();
        let mut caps = [7u32; 6];
        caps[CarbonClass::Carbonyl.index()] = 1;
        let forced = forced_by_caps(&[(c | p, 3), (p, 1)], &caps);
        assert_eq!(forced[CarbonClass::Sp2.index()], 3);
        assert_eq!(forced[CarbonClass::Carbonyl.index()], 0);
        // Uncapped, the overlap forces nothing beyond the sp2-only line.
        let forced = forced_by_caps(&[(c | p, 3), (p, 1)], &[7; 6]);
        assert_eq!(forced[CarbonClass::Sp2.index()], 1);
        // Benzaldehyde (from memory, as above) in full: the aldehyde CH is a
        // carbonyl, and with the one O taken the six ring carbons are sp2.
        let lines = BENZALDEHYDE;
        let c = carbon_facts(&lines, &f).unwrap().classes.unwrap();
        assert_eq!(c.lo[CarbonClass::Carbonyl.index()], 1);
        assert_eq!(c.hi[CarbonClass::Carbonyl.index()], 1);
        assert_eq!(c.lo[CarbonClass::Sp2.index()], 6);
    }
}
