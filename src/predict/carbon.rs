//! Prediction of a structure's 13C list: one signal per carbon symmetry
//! class (the automorphism orbits the 1H path computes, restricted to
//! carbon), with the class's H count and a shift from additive increments.
//!
//! Methods (every number is a row of `fragment-library/carbon-*.toml`):
//!
//! - sp3 carbon: Grant & Paul, J. Am. Chem. Soc. 1964, 86, 2984:
//!   base + sum over the atoms at 1, 2, 3, 4 bonds (alpha, beta, gamma,
//!   delta) of an increment per atom type; the branching corrections of
//!   the paper are increments of the centre's H count against the alpha
//!   atom's degree, and substituents (O, N, halogen, ...) are atom types
//!   with their own alpha/beta/gamma/delta increments, as in the
//!   substituent tables for functionalised alkanes (Pretsch, Bühlmann &
//!   Badertscher, "Structure Determination of Organic Compounds").
//! - alkene carbon: base (ethylene) + increments of the atoms at each
//!   distance (the alkene increments of the same tables);
//! - benzene carbon: benzene's shift + ipso/ortho/meta/para substituent
//!   increments, which are the increments of the substituent's first atom
//!   at 1, 2, 3 and 4 bonds from the ring carbon (Ewing, Org. Magn. Reson.
//!   1979, 12, 499 for the scheme);
//! - carbonyl, imine, thiocarbonyl, nitrile, alkyne, cumulated and
//!   heteroaromatic carbons: a base value per kind and H count, with the
//!   same distance increments (a ring N at 1, 2 or 3 bonds gives pyridine's
//!   C2, C3 and C4).
//!
//! - group terms, for every centre family: an increment per atom group
//!   (an atom's type with the types of its neighbours and the bonds to
//!   them, a one-bond HOSE-like sphere: Bremser, Anal. Chim. Acta 1978,
//!   103, 355) at 0, 1 or 2 bonds from the centre. At distance 0 the group
//!   is the centre itself, so the term tells carbonyl subtypes (ketone,
//!   ester, amide, carbamate, urea, carbonate ...) apart and carries Grant
//!   & Paul's branching corrections and the geminal non-additivity of
//!   substituents (tert-butyl ethers, CF3, acetals); at 1 and 2 bonds it
//!   tells substituents with the same first atom apart (OMe / OAc / OAr
//!   on a ring, ketone / ester / amide / acid carbonyl next to a carbon,
//!   NH2 / NHAc), the second-order terms the single-atom increments miss.
//!
//! The increments are per centre class (kind and H count, e.g. `sp3.CH2`),
//! falling back to the centre's family (`sp3`) when a class has no row of
//! its own, so a table can hold the published family-wide values and add a
//! class-specific value where a method has one (Grant & Paul's branching).
//! Where the tables were refitted on measured data the rows say so and
//! `fragment-library/README.md` documents the fit.
//!
//! Cost: atom types are computed once per molecule, then per carbon class a
//! breadth-first walk of four levels over neighbour bitsets with one table
//! lookup per atom reached; no pattern search.

use super::library::need_source;
use super::signal::PredictedCarbon;
use super::view::{bits, View, DOUBLE, TRIPLE};
use crate::chem::Element;
use crate::error::{Error, Result};
use serde::Deserialize;

/// Atom types an increment can be given for (the neighbour side).
pub const ATOM_TYPES: [&str; 31] = [
    "C.sp3.1", "C.sp3.2", "C.sp3.3", "C.sp3.4", "C.sp2", "C.ar", "C.co", "C.cn", "C.cs", "C.sp",
    "O.h", "O.2", "O.dbl", "O.ar", "N.h2", "N.h1", "N.h0", "N.dbl", "N.tpl", "N.ar", "N.ar3",
    "S.h", "S.2", "S.dbl", "S.ar", "S.ox", "P", "F", "Cl", "Br", "I",
];

/// Centre classes (kind and H count) and the family each falls back to.
pub const CENTRES: [(&str, &str); 24] = [
    ("sp3.CH4", "sp3"),
    ("sp3.CH3", "sp3"),
    ("sp3.CH2", "sp3"),
    ("sp3.CH", "sp3"),
    ("sp3.C", "sp3"),
    ("alkene.CH2", "alkene"),
    ("alkene.CH", "alkene"),
    ("alkene.C", "alkene"),
    ("aro6.CH", "aro6"),
    ("aro6.C", "aro6"),
    ("aro5.CH", "aro5"),
    ("aro5.C", "aro5"),
    ("carbonyl.CH", "carbonyl"),
    ("carbonyl.C", "carbonyl"),
    ("imine.CH", "imine"),
    ("imine.C", "imine"),
    ("thione.CH", "thione"),
    ("thione.C", "thione"),
    ("nitrile.C", "nitrile"),
    ("alkyne.CH", "alkyne"),
    ("alkyne.C", "alkyne"),
    ("cumulene.CH", "cumulene"),
    ("cumulene.C", "cumulene"),
    ("other.C", "other"),
];

/// Families, in the order their names appear in [`CENTRES`].
pub const FAMILIES: [&str; 11] = [
    "sp3", "alkene", "aro6", "aro5", "carbonyl", "imine", "thione", "nitrile", "alkyne",
    "cumulene", "other",
];

// Indices into ATOM_TYPES (checked by a test).
const T_C_SP3_1: u8 = 0;
const T_C_SP3_2: u8 = 1;
const T_C_SP3_3: u8 = 2;
const T_C_SP3_4: u8 = 3;
const T_C_SP2: u8 = 4;
const T_C_AR: u8 = 5;
const T_C_CO: u8 = 6;
const T_C_CN: u8 = 7;
const T_C_CS: u8 = 8;
const T_C_SP: u8 = 9;
const T_O_H: u8 = 10;
const T_O_2: u8 = 11;
const T_O_DBL: u8 = 12;
const T_O_AR: u8 = 13;
const T_N_H2: u8 = 14;
const T_N_H1: u8 = 15;
const T_N_H0: u8 = 16;
const T_N_DBL: u8 = 17;
const T_N_TPL: u8 = 18;
const T_N_AR: u8 = 19;
const T_N_AR3: u8 = 20;
const T_S_H: u8 = 21;
const T_S_2: u8 = 22;
const T_S_DBL: u8 = 23;
const T_S_AR: u8 = 24;
const T_S_OX: u8 = 25;
const T_P: u8 = 26;
const T_F: u8 = 27;
const T_CL: u8 = 28;
const T_BR: u8 = 29;
const T_I: u8 = 30;

pub const NT: usize = ATOM_TYPES.len();
pub const NC: usize = CENTRES.len();
/// Distances with increments: alpha, beta, gamma, delta.
pub const DIST: usize = 4;

/// Group terms reach atoms at 0 (the centre itself) to this many bonds.
pub const GROUP_DIST: usize = 2;

/// The compiled carbon tables.
pub struct CarbonTable {
    /// Base shift and sigma per centre class (family row when the class has none).
    pub base: [(f64, f64); NC],
    /// Increments per (centre class, atom type), by distance 1-4.
    pub inc: Vec<[f64; DIST]>,
    /// Correction per centre class and smallest ring size (index 3-8).
    pub ring: [[f64; 9]; NC],
    /// Increment per two-bond path centre-via-atom (beta atom seen through
    /// its alpha atom and the bond to it), indexed by [`pair_index`].
    pub pair: Vec<f64>,
    /// Group id per packed group key ([`group_key`]), for the groups the
    /// tables name.
    group_ids: std::collections::HashMap<u64, u32>,
    /// Group increment per (centre class, distance 0..=GROUP_DIST, group id).
    group: Vec<f64>,
    by_family_h: [[u8; 5]; FAMILIES.len()],
}

impl CarbonTable {
    #[inline]
    fn inc(&self, centre: u8, ty: u8) -> &[f64; DIST] {
        &self.inc[centre as usize * NT + ty as usize]
    }

    #[inline]
    fn pair(&self, centre: u8, via: u8, multiple: bool, ty: u8) -> f64 {
        self.pair[pair_index(centre as usize, via as usize, multiple, ty as usize)]
    }

    #[inline]
    fn group(&self, centre: u8, d: usize, id: u32) -> f64 {
        if id == NO_GROUP {
            return 0.0;
        }
        let ng = self.group_ids.len();
        self.group[(centre as usize * (GROUP_DIST + 1) + d) * ng + id as usize]
    }
}

const NO_GROUP: u32 = u32::MAX;

/// The group of atom `a`: its type and the sorted (type, bond) codes of its
/// neighbours, packed (6 bits for the type, 7 per neighbour code).
pub fn group_key(v: &View, types: &[u8], a: usize) -> u64 {
    let mut codes = [0u64; super::view::MAX_DEGREE];
    let d = v.deg[a] as usize;
    for (k, code) in codes.iter_mut().enumerate().take(d) {
        let x = v.nbr[a][k] as usize;
        *code = neighbour_code(types[x], v.bond[a][k]);
    }
    pack_group(types[a], &mut codes[..d])
}

/// A neighbour's code: 1 + 4 * type + bond kind (0 single, 1 double, 2
/// triple, 3 aromatic).
#[inline]
fn neighbour_code(ty: u8, bond: u8) -> u64 {
    1 + 4 * ty as u64 + (bond.clamp(1, 4) - 1) as u64
}

fn pack_group(ty: u8, codes: &mut [u64]) -> u64 {
    codes.sort_unstable();
    let mut key = ty as u64;
    for &c in codes.iter() {
        key = key << 7 | c;
    }
    key
}

const BOND_MARKS: [&str; 4] = ["", "=", "#", ":"];

/// The name of a group as the tables write it: `TYPE(N1,N2,...)`, each
/// neighbour its type and a bond mark (none single, `=`, `#`, `:`
/// aromatic), in code order.
pub fn group_name(v: &View, types: &[u8], a: usize) -> String {
    let mut codes: Vec<u64> = (0..v.deg[a] as usize)
        .map(|k| neighbour_code(types[v.nbr[a][k] as usize], v.bond[a][k]))
        .collect();
    codes.sort_unstable();
    let nbrs: Vec<String> = codes
        .iter()
        .map(|c| {
            let ty = ((c - 1) / 4) as usize;
            format!("{}{}", ATOM_TYPES[ty], BOND_MARKS[((c - 1) % 4) as usize])
        })
        .collect();
    format!("{}({})", ATOM_TYPES[types[a] as usize], nbrs.join(","))
}

/// Read a group name (`C.co(N.h0,O.2,O.dbl=)`) into its packed key.
pub fn parse_group(name: &str) -> Option<u64> {
    let (ty, rest) = name.split_once('(')?;
    let inner = rest.strip_suffix(')')?;
    let ty = type_index(ty)? as u8;
    let mut codes = Vec::new();
    if !inner.is_empty() {
        for item in inner.split(',') {
            let (name, bond) = match item.char_indices().last()? {
                (i, '=') => (&item[..i], 2),
                (i, '#') => (&item[..i], 3),
                (i, ':') => (&item[..i], 4),
                _ => (item, 1),
            };
            codes.push(neighbour_code(type_index(name)? as u8, bond));
        }
    }
    if codes.len() > super::view::MAX_DEGREE {
        return None;
    }
    Some(pack_group(ty, &mut codes))
}

pub fn centre_index(name: &str) -> Option<usize> {
    CENTRES.iter().position(|(c, _)| *c == name)
}

pub fn family_index(name: &str) -> Option<usize> {
    FAMILIES.iter().position(|f| *f == name)
}

pub fn type_index(name: &str) -> Option<usize> {
    ATOM_TYPES.iter().position(|t| *t == name)
}

/// Bond kinds of `a`'s bonds: (double to C, double to O, double to N,
/// double to S or other, triples, doubles).
struct Bonds {
    dbl_c: bool,
    dbl_o: bool,
    dbl_n: bool,
    dbl_s: bool,
    triple_n: bool,
    triples: u8,
    doubles: u8,
}

fn bonds(v: &View, a: usize) -> Bonds {
    let mut b = Bonds {
        dbl_c: false,
        dbl_o: false,
        dbl_n: false,
        dbl_s: false,
        triple_n: false,
        triples: 0,
        doubles: 0,
    };
    for k in 0..v.deg[a] as usize {
        let x = v.nbr[a][k] as usize;
        match v.bond[a][k] {
            DOUBLE => {
                b.doubles += 1;
                match v.element[x] {
                    Element::C => b.dbl_c = true,
                    Element::O => b.dbl_o = true,
                    Element::N => b.dbl_n = true,
                    _ => b.dbl_s = true,
                }
            }
            TRIPLE => {
                b.triples += 1;
                if v.element[x] == Element::N {
                    b.triple_n = true;
                }
            }
            _ => {}
        }
    }
    b
}

/// The atom type of `a` (index into [`ATOM_TYPES`]).
pub fn atom_type(v: &View, a: usize) -> u8 {
    let aro = v.is_aromatic(a);
    let h = v.h[a];
    let deg = v.deg[a];
    match v.element[a] {
        Element::C => {
            if aro {
                return T_C_AR;
            }
            let b = bonds(v, a);
            if b.triples > 0 || b.doubles >= 2 {
                T_C_SP
            } else if b.dbl_o {
                T_C_CO
            } else if b.dbl_n {
                T_C_CN
            } else if b.dbl_s {
                T_C_CS
            } else if b.dbl_c {
                T_C_SP2
            } else {
                match deg {
                    0 | 1 => T_C_SP3_1,
                    2 => T_C_SP3_2,
                    3 => T_C_SP3_3,
                    _ => T_C_SP3_4,
                }
            }
        }
        Element::O => {
            if aro {
                T_O_AR
            } else if bonds(v, a).doubles > 0 {
                T_O_DBL
            } else if h > 0 {
                T_O_H
            } else {
                T_O_2
            }
        }
        Element::N => {
            if aro {
                if deg + h == 2 {
                    T_N_AR
                } else {
                    T_N_AR3
                }
            } else {
                let b = bonds(v, a);
                if b.triples > 0 {
                    T_N_TPL
                } else if b.doubles > 0 {
                    T_N_DBL
                } else {
                    match h {
                        0 => T_N_H0,
                        1 => T_N_H1,
                        _ => T_N_H2,
                    }
                }
            }
        }
        Element::S => {
            if aro {
                return T_S_AR;
            }
            let b = bonds(v, a);
            let valence = deg + h + b.doubles + 2 * b.triples;
            if valence > 2 {
                T_S_OX
            } else if b.doubles > 0 {
                T_S_DBL
            } else if h > 0 {
                T_S_H
            } else {
                T_S_2
            }
        }
        Element::P => T_P,
        Element::F => T_F,
        Element::Cl => T_CL,
        Element::Br => T_BR,
        Element::I => T_I,
        // Hydrogen never reaches a view (explicit H are refused).
        Element::H => T_F,
    }
}

/// Centre class per (family, H count 0-4), `u8::MAX` where [`CENTRES`] has
/// none (then `other.C`).
fn centre_by_family_h() -> [[u8; 5]; FAMILIES.len()] {
    let mut t = [[u8::MAX; 5]; FAMILIES.len()];
    for (i, (name, fam)) in CENTRES.iter().enumerate() {
        let f = family_index(fam).expect("family listed in FAMILIES");
        let h = match name.rsplit('.').next() {
            Some("C") => 0,
            Some("CH") => 1,
            Some("CH2") => 2,
            Some("CH3") => 3,
            _ => 4,
        };
        t[f][h] = i as u8;
    }
    t
}

const F_SP3: usize = 0;
const F_ALKENE: usize = 1;
const F_ARO6: usize = 2;
const F_ARO5: usize = 3;
const F_CARBONYL: usize = 4;
const F_IMINE: usize = 5;
const F_THIONE: usize = 6;
const F_NITRILE: usize = 7;
const F_ALKYNE: usize = 8;
const F_CUMULENE: usize = 9;
const F_OTHER: usize = 10;

/// The family of carbon `c` (index into [`FAMILIES`]).
pub fn family_of(v: &View, c: usize) -> usize {
    if v.is_aromatic(c) {
        let six = v.aromatic_ring_of(c).is_some_and(|r| r.count_ones() == 6);
        return if six { F_ARO6 } else { F_ARO5 };
    }
    let b = bonds(v, c);
    if b.triple_n {
        F_NITRILE
    } else if b.triples > 0 {
        F_ALKYNE
    } else if b.doubles >= 2 {
        F_CUMULENE
    } else if b.dbl_o {
        F_CARBONYL
    } else if b.dbl_n {
        F_IMINE
    } else if b.dbl_s {
        F_THIONE
    } else if b.dbl_c {
        F_ALKENE
    } else {
        F_SP3
    }
}

impl CarbonTable {
    /// The centre class of carbon `c` (index into [`CENTRES`]).
    pub fn centre_class(&self, v: &View, c: usize) -> u8 {
        match self.by_family_h[family_of(v, c)][v.h[c].min(4) as usize] {
            u8::MAX => self.by_family_h[F_OTHER][0],
            x => x,
        }
    }
}

/// Per-molecule atom types, then the shift of one carbon.
pub(crate) struct CarbonCtx<'a> {
    t: &'a CarbonTable,
    v: &'a View,
    types: [u8; super::view::MAX_ATOMS],
    /// Group id per atom ([`NO_GROUP`] where the tables have none).
    groups: [u32; super::view::MAX_ATOMS],
}

impl<'a> CarbonCtx<'a> {
    pub fn new(t: &'a CarbonTable, v: &'a View) -> CarbonCtx<'a> {
        let mut types = [0u8; super::view::MAX_ATOMS];
        for (a, x) in types.iter_mut().enumerate().take(v.n) {
            *x = atom_type(v, a);
        }
        let mut groups = [NO_GROUP; super::view::MAX_ATOMS];
        if !t.group_ids.is_empty() {
            for (a, g) in groups.iter_mut().enumerate().take(v.n) {
                *g = t
                    .group_ids
                    .get(&group_key(v, &types, a))
                    .copied()
                    .unwrap_or(NO_GROUP);
            }
        }
        CarbonCtx {
            t,
            v,
            types,
            groups,
        }
    }

    /// Shift and sigma of carbon `c`: base of its class, the increment of
    /// every atom within four bonds by its distance (shortest path), the
    /// two-bond paths, the groups within [`GROUP_DIST`] bonds (the centre's
    /// own included), and the ring correction of the smallest ring through
    /// `c`.
    pub fn shift(&self, c: usize) -> (f64, f64) {
        let v = self.v;
        let centre = self.t.centre_class(v, c);
        let (mut s, sigma) = self.t.base[centre as usize];
        s += self.t.group(centre, 0, self.groups[c]);
        walk(v, c, |d, y| {
            s += self.t.inc(centre, self.types[y])[d];
            if d < GROUP_DIST {
                s += self.t.group(centre, d + 1, self.groups[y]);
            }
        });
        paths(v, c, |x, multiple, y| {
            s += self.t.pair(centre, self.types[x], multiple, self.types[y]);
        });
        let ring = v.ring_size[c] as usize;
        if ring < 9 {
            s += self.t.ring[centre as usize][ring];
        }
        (s, sigma)
    }

    /// One [`PredictedCarbon`] per carbon symmetry class (`orb`: orbit id
    /// per atom), written into `out` (its elements reused), highest shift
    /// first; shifts and sigmas rounded to 0.1 ppm.
    pub fn predict(&self, orb: &[u8], out: &mut Vec<PredictedCarbon>) {
        let v = self.v;
        let mut class_of = [u8::MAX; 256];
        let mut used = 0usize;
        for (a, &o) in orb.iter().enumerate().take(v.n) {
            if v.element[a] != Element::C {
                continue;
            }
            let o = o as usize;
            if class_of[o] == u8::MAX {
                class_of[o] = used as u8;
                let (shift, sigma) = self.shift(a);
                let p = PredictedCarbon {
                    shift: round1(shift),
                    sigma: round1(sigma),
                    carbons: 0,
                    hydrogens: v.h[a],
                    atoms: Vec::new(),
                    halves: false,
                };
                if used < out.len() {
                    let q = &mut out[used];
                    q.atoms.clear();
                    q.shift = p.shift;
                    q.sigma = p.sigma;
                    q.carbons = 0;
                    q.hydrogens = p.hydrogens;
                    q.halves = false;
                } else {
                    out.push(p);
                }
                used += 1;
            }
            let q = &mut out[class_of[o] as usize];
            q.carbons += 1;
            q.atoms.push(a);
        }
        out.truncate(used);
        // Diastereotopic methyl pairs (src/predict/groups.rs): the class
        // may be read as two, the first half of its atoms one methyl of
        // each pair.
        if super::groups::has_stereocentre(v, orb) {
            let mut marked = 0;
            for q in out.iter_mut() {
                if marked == super::groups::MAX_HALVES || q.hydrogens != 3 {
                    continue;
                }
                let atoms = q.atoms.iter().fold(0u64, |m, &a| m | 1u64 << a);
                let half = super::groups::methyl_pair_half(v, orb, atoms);
                if half != 0 {
                    q.atoms.clear();
                    q.atoms.extend(bits(half).chain(bits(atoms & !half)));
                    q.halves = true;
                    marked += 1;
                }
            }
        }
        out.sort_by(|a, b| {
            b.shift
                .partial_cmp(&a.shift)
                .unwrap_or(std::cmp::Ordering::Equal)
                .then(a.atoms.cmp(&b.atoms))
        });
    }
}

/// Call `f(d, atom)` for every atom at distance d + 1 (d = 0..DIST) from
/// `c` along shortest paths, breadth first over neighbour bitsets.
#[inline]
fn walk(v: &View, c: usize, mut f: impl FnMut(usize, usize)) {
    let mut seen = 1u64 << c;
    let mut front = seen;
    for d in 0..DIST {
        let mut next = 0u64;
        for x in bits(front) {
            next |= v.adj[x];
        }
        next &= !seen;
        if next == 0 {
            break;
        }
        seen |= next;
        for y in bits(next) {
            f(d, y);
        }
        front = next;
    }
}

/// Index of a path term in [`CarbonTable::pair`].
#[inline]
fn pair_index(centre: usize, via: usize, multiple: bool, ty: usize) -> usize {
    ((centre * 2 + multiple as usize) * NT + via) * NT + ty
}

/// Call `f(x, multiple, y)` for every path c-x-y to an atom y two bonds
/// from `c` (shortest distance 2): x an alpha atom, `multiple` whether the
/// c-x bond is double, triple or aromatic. Every such path counts, so the
/// sum does not depend on the atom order.
#[inline]
fn paths(v: &View, c: usize, mut f: impl FnMut(usize, bool, usize)) {
    let alpha = v.adj[c];
    let mut beta = 0u64;
    for x in bits(alpha) {
        beta |= v.adj[x];
    }
    beta &= !alpha & !(1u64 << c);
    for k in 0..v.deg[c] as usize {
        let x = v.nbr[c][k] as usize;
        let multiple = v.bond[c][k] != super::view::SINGLE;
        for y in bits(v.adj[x] & beta) {
            f(x, multiple, y);
        }
    }
}

/// The terms [`CarbonCtx::shift`] sums for carbon `c`, by name: its centre
/// class, its smallest ring (0 none), and (atom type, distance 1-4) for
/// every atom within four bonds. For the fitting script
/// (`examples/carbon_fit_data.rs`).
pub fn environment(t: &CarbonTable, v: &View, c: usize) -> Environment {
    let name = |a: usize| ATOM_TYPES[atom_type(v, a) as usize];
    let mut terms = Vec::new();
    walk(v, c, |d, y| terms.push((name(y), d as u8 + 1)));
    let mut path_terms = Vec::new();
    paths(v, c, |x, multiple, y| {
        path_terms.push((name(x), multiple, name(y)))
    });
    let types: Vec<u8> = (0..v.n).map(|a| atom_type(v, a)).collect();
    let mut groups = vec![(group_name(v, &types, c), 0u8)];
    walk(v, c, |d, y| {
        if d < GROUP_DIST {
            groups.push((group_name(v, &types, y), d as u8 + 1));
        }
    });
    Environment {
        centre: CENTRES[t.centre_class(v, c) as usize].0,
        ring: v.ring_size[c],
        terms,
        paths: path_terms,
        groups,
    }
}

/// What [`environment`] lists.
pub struct Environment {
    pub centre: &'static str,
    pub ring: u8,
    /// (atom type, distance 1-4)
    pub terms: Vec<(&'static str, u8)>,
    /// (alpha atom type, c-alpha bond multiple, beta atom type)
    pub paths: Vec<(&'static str, bool, &'static str)>,
    /// (group name, distance 0..=GROUP_DIST)
    pub groups: Vec<(String, u8)>,
}

/// 13C shifts are reported to 0.1 ppm. The sum is first snapped to 1e-6
/// ppm so that the order of the additions (which follows the atom and
/// neighbour order) cannot move a value across a rounding boundary.
fn round1(x: f64) -> f64 {
    let snapped = (x * 1e6).round() / 1e6;
    (snapped * 10.0).round() / 10.0
}

// ---- the tables' file schema (fragment-library/carbon-*.toml) ----

/// The carbon table files, in load order.
pub const CARBON_FILES: [&str; 5] = [
    "carbon-sp3.toml",
    "carbon-alkene.toml",
    "carbon-benzene.toml",
    "carbon-heteroaromatic.toml",
    "carbon-special.toml",
];

#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
struct CarbonFile {
    #[serde(default)]
    base: Vec<BaseRow>,
    #[serde(default)]
    increment: Vec<IncrementRow>,
    #[serde(default)]
    ring: Vec<RingRow>,
    #[serde(default)]
    pair: Vec<PairRow>,
    #[serde(default)]
    group: Vec<GroupRow>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct GroupRow {
    centre: String,
    /// Bonds from the centre, 0 (the centre itself) to [`GROUP_DIST`].
    distance: usize,
    /// The group: `TYPE(NEIGHBOUR,...)`, see [`group_name`].
    atom: String,
    increment: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct PairRow {
    centre: String,
    /// The alpha atom's type and its bond to the centre ("single" or
    /// "multiple": double, triple or aromatic).
    via: String,
    bond: String,
    /// The beta atom's type.
    neighbour: String,
    increment: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct BaseRow {
    centre: String,
    shift: f64,
    sigma: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct IncrementRow {
    centre: String,
    neighbour: String,
    /// alpha, beta, gamma, delta: the atom at 1, 2, 3, 4 bonds.
    by_distance: [f64; DIST],
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RingRow {
    centre: String,
    size: usize,
    correction: f64,
    source: String,
}

/// A row's centre: a class (index into [`CENTRES`]) or a family (into
/// [`FAMILIES`]).
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
enum Key {
    Class(usize),
    Family(usize),
}

fn key(file: &str, name: &str) -> Result<Key> {
    if let Some(i) = centre_index(name) {
        return Ok(Key::Class(i));
    }
    if let Some(i) = family_index(name) {
        return Ok(Key::Family(i));
    }
    let mut known: Vec<&str> = FAMILIES.to_vec();
    known.extend(CENTRES.iter().map(|c| c.0));
    Err(Error::input(format!(
        "fragment library {file}: unknown carbon centre \"{name}\" (known: {})",
        known.join(", ")
    )))
}

/// Resolve per class: the class's own row, else its family's.
fn resolve<T: Copy>(rows: &[(Key, T)], class: usize) -> Option<T> {
    let fam = family_index(CENTRES[class].1).expect("family listed");
    rows.iter()
        .find(|(k, _)| *k == Key::Class(class))
        .or_else(|| rows.iter().find(|(k, _)| *k == Key::Family(fam)))
        .map(|&(_, v)| v)
}

/// Compile the carbon tables from the files' texts (name, text), as the
/// library reader hands them over.
pub(crate) fn load(files: &[(&str, String)]) -> Result<CarbonTable> {
    let mut base: Vec<(Key, (f64, f64))> = Vec::new();
    let mut inc: Vec<Vec<(Key, [f64; DIST])>> = vec![Vec::new(); NT];
    let mut ring: Vec<Vec<(Key, f64)>> = vec![Vec::new(); 9];
    let mut pair: Vec<(Key, usize, f64)> = Vec::new();
    let mut group_ids: std::collections::HashMap<u64, u32> = Default::default();
    let mut group: Vec<(Key, usize, u32, f64)> = Vec::new();
    for (file, text) in files {
        let f: CarbonFile = toml::from_str(text)
            .map_err(|e| Error::input(format!("fragment library {file}: {e}")))?;
        for row in &f.base {
            let entry = format!("base {}", row.centre);
            need_source(file, &entry, &row.source)?;
            let k = key(file, &row.centre)?;
            if base.iter().any(|(x, _)| *x == k) {
                return Err(twice(file, &entry));
            }
            if !(row.shift.is_finite() && row.sigma.is_finite() && row.sigma > 0.0) {
                return Err(Error::input(format!(
                    "fragment library {file}: {entry}: shift and a positive sigma needed"
                )));
            }
            base.push((k, (row.shift, row.sigma)));
        }
        for row in &f.increment {
            let entry = format!("increment {} {}", row.centre, row.neighbour);
            need_source(file, &entry, &row.source)?;
            let k = key(file, &row.centre)?;
            let Some(t) = type_index(&row.neighbour) else {
                return Err(Error::input(format!(
                    "fragment library {file}: {entry}: unknown atom type \"{}\" (known: {})",
                    row.neighbour,
                    ATOM_TYPES.join(", ")
                )));
            };
            if inc[t].iter().any(|(x, _)| *x == k) {
                return Err(twice(file, &entry));
            }
            if row.by_distance.iter().any(|x| !x.is_finite()) {
                return Err(Error::input(format!(
                    "fragment library {file}: {entry}: increments must be numbers"
                )));
            }
            inc[t].push((k, row.by_distance));
        }
        for row in &f.ring {
            let entry = format!("ring {} size {}", row.centre, row.size);
            need_source(file, &entry, &row.source)?;
            let k = key(file, &row.centre)?;
            if !(3..=8).contains(&row.size) {
                return Err(Error::input(format!(
                    "fragment library {file}: {entry}: ring size 3-8 only"
                )));
            }
            if ring[row.size].iter().any(|(x, _)| *x == k) {
                return Err(twice(file, &entry));
            }
            ring[row.size].push((k, row.correction));
        }
        for row in &f.pair {
            let entry = format!(
                "pair {} {} ({}) {}",
                row.centre, row.via, row.bond, row.neighbour
            );
            need_source(file, &entry, &row.source)?;
            let k = key(file, &row.centre)?;
            let known = || {
                Error::input(format!(
                    "fragment library {file}: {entry}: unknown atom type (known: {})",
                    ATOM_TYPES.join(", ")
                ))
            };
            let via = type_index(&row.via).ok_or_else(known)?;
            let ty = type_index(&row.neighbour).ok_or_else(known)?;
            let multiple = match row.bond.as_str() {
                "single" => false,
                "multiple" => true,
                other => {
                    return Err(Error::input(format!(
                        "fragment library {file}: {entry}: bond \"{other}\" (single or multiple)"
                    )))
                }
            };
            let slot = pair_index(0, via, multiple, ty);
            if pair.iter().any(|&(x, i, _)| x == k && i == slot) {
                return Err(twice(file, &entry));
            }
            pair.push((k, slot, row.increment));
        }
        for row in &f.group {
            let entry = format!(
                "group {} {} distance {}",
                row.centre, row.atom, row.distance
            );
            need_source(file, &entry, &row.source)?;
            let k = key(file, &row.centre)?;
            let Some(g) = parse_group(&row.atom) else {
                return Err(Error::input(format!(
                    "fragment library {file}: {entry}: a group is TYPE(NEIGHBOUR,...) with \
                     atom types (known: {}) and bond marks = # : after a neighbour",
                    ATOM_TYPES.join(", ")
                )));
            };
            if row.distance > GROUP_DIST || !row.increment.is_finite() {
                return Err(Error::input(format!(
                    "fragment library {file}: {entry}: distance 0-{GROUP_DIST} and a number needed"
                )));
            }
            let next = group_ids.len() as u32;
            let id = *group_ids.entry(g).or_insert(next);
            if group
                .iter()
                .any(|&(x, d, i, _)| x == k && d == row.distance && i == id)
            {
                return Err(twice(file, &entry));
            }
            group.push((k, row.distance, id, row.increment));
        }
    }
    let mut t = CarbonTable {
        base: [(0.0, 1.0); NC],
        inc: vec![[0.0; DIST]; NC * NT],
        ring: [[0.0; 9]; NC],
        pair: vec![0.0; NC * 2 * NT * NT],
        group: vec![0.0; NC * (GROUP_DIST + 1) * group_ids.len()],
        group_ids,
        by_family_h: centre_by_family_h(),
    };
    // Group rows: the class's own, else its family's.
    let ng = t.group_ids.len();
    for (c, (_, family)) in CENTRES.iter().enumerate() {
        let fam = Key::Family(family_index(family).expect("family listed"));
        for pass in [fam, Key::Class(c)] {
            for &(k, d, id, x) in &group {
                if k == pass {
                    t.group[(c * (GROUP_DIST + 1) + d) * ng + id as usize] = x;
                }
            }
        }
    }
    // Path rows: the class's own, else its family's.
    let stride = 2 * NT * NT;
    for (c, (_, family)) in CENTRES.iter().enumerate() {
        let fam = family_index(family).expect("family listed");
        for &(k, slot, x) in &pair {
            if k == Key::Family(fam) {
                t.pair[c * stride + slot] = x;
            }
        }
        for &(k, slot, x) in &pair {
            if k == Key::Class(c) {
                t.pair[c * stride + slot] = x;
            }
        }
    }
    for (c, (class, family)) in CENTRES.iter().enumerate() {
        t.base[c] = resolve(&base, c).ok_or_else(|| {
            Error::input(format!(
                "fragment library {}: no [[base]] row for carbon centre {class} or its family {family}",
                CARBON_FILES.join(" / "),
            ))
        })?;
        for (ty, rows) in inc.iter().enumerate() {
            if let Some(x) = resolve(rows, c) {
                t.inc[c * NT + ty] = x;
            }
        }
        for (size, rows) in ring.iter().enumerate() {
            if let Some(x) = resolve(rows, c) {
                t.ring[c][size] = x;
            }
        }
    }
    Ok(t)
}

fn twice(file: &str, entry: &str) -> Error {
    Error::input(format!(
        "fragment library {file}: {entry} is given twice (in this or an earlier carbon file)"
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn group_names_read_back_to_their_keys() {
        // Methyl acetate, pyridine-2-carbonitrile: every atom's group name
        // is read back to the key computed from the structure.
        for smiles in ["CC(=O)OC", "N#Cc1ccccn1"] {
            let mol = crate::chem::smiles::parse_smiles(smiles).unwrap();
            let v = View::new(&mol).unwrap();
            let types: Vec<u8> = (0..v.n).map(|a| atom_type(&v, a)).collect();
            for a in 0..v.n {
                let name = group_name(&v, &types, a);
                assert_eq!(parse_group(&name), Some(group_key(&v, &types, a)), "{name}");
            }
        }
        // The ester carbonyl as the tables write it (neighbours in code order).
        let mol = crate::chem::smiles::parse_smiles("CC(=O)OC").unwrap();
        let v = View::new(&mol).unwrap();
        let types: Vec<u8> = (0..v.n).map(|a| atom_type(&v, a)).collect();
        assert_eq!(group_name(&v, &types, 1), "C.co(C.sp3.1,O.2,O.dbl=)");
        // Neighbour order does not matter; unknown types and bad marks are refused.
        assert_eq!(
            parse_group("C.co(O.dbl=,O.2,C.sp3.1)"),
            parse_group("C.co(C.sp3.1,O.2,O.dbl=)")
        );
        assert_eq!(parse_group("C.co(X,O.dbl=)"), None);
        assert_eq!(parse_group("C.co O.dbl="), None);
    }

    #[test]
    fn type_constants_match_their_names() {
        for (name, c) in [
            ("C.sp3.1", T_C_SP3_1),
            ("C.ar", T_C_AR),
            ("O.h", T_O_H),
            ("N.ar3", T_N_AR3),
            ("S.ox", T_S_OX),
            ("I", T_I),
        ] {
            assert_eq!(type_index(name), Some(c as usize), "{name}");
        }
        for (i, f) in FAMILIES.iter().enumerate() {
            let want = [
                F_SP3, F_ALKENE, F_ARO6, F_ARO5, F_CARBONYL, F_IMINE, F_THIONE, F_NITRILE,
                F_ALKYNE, F_CUMULENE, F_OTHER,
            ][i];
            assert_eq!(family_index(f), Some(want));
        }
    }
}
