//! Chemical shift and its sigma for each group, by the published additive
//! methods whose numbers live in `fragment-library/`:
//!
//! - special environments (OH, NH, SH, CHO, alkyne H, ...): handbook ranges;
//! - benzene H: Beeby, Sternhell, Hoffmann-Ostenhof, Pretsch & Simon,
//!   Anal. Chem. 1973, 45, 1571 (7.26 + sum of ortho/meta/para increments;
//!   the increments are counted from benzene's shift in the chosen solvent,
//!   7.36 in CDCl3, when the solvent table gives it);
//! - other aromatic rings: base shift per ring position plus the benzene
//!   increments by ring distance;
//! - alkene H: Pascual, Meier & Simon, Helv. Chim. Acta 1966, 49, 164
//!   (5.25 + Z gem + Z cis + Z trans);
//! - sp3 C-H: Beauchamp & Marquez, J. Chem. Educ. 1997, 74, 1483 (base +
//!   alpha, beta, gamma constants), Shoolery's rule (0.23 + sum S) when two
//!   or more functional groups sit on the carbon, handbook CH3-X values for
//!   methyl groups on a functional group, and a ring-size correction;
//! - then, for every H on carbon, the 1H group terms of
//!   `fragment-library/h-groups.toml`: a correction per atom group (an
//!   atom's type with its neighbours' types and bonds, the one-sphere
//!   HOSE-like code of Bremser, Anal. Chim. Acta 1978, 103, 355, as
//!   `carbon::group_name` writes it) at 0 to 3 bonds from the carbon, and
//!   per solvent where the table has solvent terms; refitted on the
//!   NMRShiftDB2 dev lists by `scripts/fit_1h_groups.py` (the
//!   non-additivity and the environments the increment tables miss).

use super::library::{HGroupTable, H_GROUP_DIST};
use super::view::{bits, DOUBLE};
use super::{note, Ctx, Group, Method};
use crate::chem::Element;

/// Occupant of one of the two substituent places of an alkene carbon.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Place {
    H,
    Atom(usize),
}

impl Ctx<'_> {
    pub(super) fn shifts(&mut self, groups: &mut [Group]) {
        // 13C atom types, for the 1H group terms (h-groups.toml).
        // Per atom, for the family `rows_family`, its terms by distance.
        let use_groups = !self.lib.h_groups.is_empty();
        let mut types = [0u8; super::view::MAX_ATOMS];
        if use_groups {
            for (a, t) in types.iter_mut().enumerate().take(self.v.n) {
                *t = super::carbon::atom_type(self.v, a);
            }
        }
        // Up to four families' rows at once (a molecule's C-H groups rarely
        // span more; a fifth reuses the last slot).
        let mut rows = [[[0.0; H_GROUP_DIST + 1]; super::view::MAX_ATOMS]; 4];
        let mut rows_family = [usize::MAX; 4];
        for g in groups.iter_mut() {
            let a = g.rep;
            let (shift, sigma, notes, method) = match g.method {
                Method::Special(i) => {
                    let e = &self.lib.environments[i];
                    let solvent = &self.lib.solvents[self.opts.solvent];
                    let (s, sg) = solvent
                        .exchange_shift
                        .iter()
                        .find(|x| x.0 == i)
                        .map(|x| (x.1, x.2))
                        .unwrap_or((e.shift, e.sigma));
                    let mut notes = 0;
                    if e.exchangeable {
                        notes |= if solvent.couples.contains(&i) {
                            note::EXCHANGE_COUPLES
                        } else {
                            note::EXCHANGEABLE
                        };
                        notes |= note::RANGE;
                    }
                    (s, sg, notes, g.method)
                }
                _ if self.v.is_aromatic(a) => self.aromatic_shift(a),
                _ if self.alkene_partner(a).is_some() => {
                    let (s, sg, n) = self.alkene_shift(a, g.slot);
                    (s, sg, n, Method::Alkene)
                }
                _ if self.v.hyb[a] == 3 && self.v.element[a] == Element::C => {
                    let (s, sg, n) = self.sp3_shift(a);
                    (s, sg, n, Method::Sp3)
                }
                _ => {
                    let (s, sg) = self.lib.fallback[self.v.hyb[a] as usize];
                    (s, sg, note::FALLBACK, Method::Fallback)
                }
            };
            let exchangeable =
                matches!(method, Method::Special(i) if self.lib.environments[i].exchangeable);
            g.shift = shift;
            if use_groups && self.v.element[a] == Element::C && !exchangeable {
                let family = super::carbon::family_of(self.v, a);
                let slot = match rows_family.iter().position(|&f| f == family) {
                    Some(k) => k,
                    None => {
                        let k = rows_family
                            .iter()
                            .position(|&f| f == usize::MAX)
                            .unwrap_or(3);
                        let (v, solvent) = (self.v, self.opts.solvent);
                        self.lib
                            .h_groups
                            .atom_rows(v, &types, family, solvent, &mut rows[k]);
                        rows_family[k] = family;
                        k
                    }
                };
                g.shift += HGroupTable::correction(self.v, a, &rows[slot]);
            }
            g.sigma = sigma;
            g.notes |= notes;
            g.method = method;
        }
    }

    /// The far carbon of a non-aromatic C=C at `a`, if `a` is such a carbon.
    pub(super) fn alkene_partner(&self, a: usize) -> Option<usize> {
        let v = self.v;
        if v.element[a] != Element::C || v.hyb[a] != 2 || v.is_aromatic(a) {
            return None;
        }
        v.neighbours(a)
            .find(|&(b, k)| k == DOUBLE && v.element[b] == Element::C)
            .map(|(b, _)| b)
    }

    /// The two places of each alkene carbon, place i of `c1` cis to place i
    /// of `c2`, and whether the geometry was assumed (E/Z unknown).
    pub(super) fn alkene_places(&self, c1: usize, c2: usize) -> ([Place; 2], [Place; 2], bool) {
        let v = self.v;
        let heavy = |c: usize, other: usize| {
            let mut out = [usize::MAX; 2];
            let mut k = 0;
            for (x, _) in v.neighbours(c) {
                if x != other && k < 2 {
                    out[k] = x;
                    k += 1;
                }
            }
            (out, k)
        };
        let (h2, k2) = heavy(c2, c1);
        // Far carbon: reference substituent first (see `alkene_reference_key`).
        let p2 = match k2 {
            0 => [Place::H, Place::H],
            1 => [Place::Atom(h2[0]), Place::H],
            _ => {
                let order = self.alkene_reference_order(c2, h2[0], h2[1]);
                let first = order.is_gt() || order.is_eq() && self.orb[h2[0]] <= self.orb[h2[1]];
                let (x, y) = if first {
                    (h2[0], h2[1])
                } else {
                    (h2[1], h2[0])
                };
                [Place::Atom(x), Place::Atom(y)]
            }
        };
        let (h1, k1) = heavy(c1, c2);
        let mut assumed = false;
        let p1 = match k1 {
            0 => [Place::H, Place::H],
            1 => {
                let x = h1[0];
                // In a ring, x is cis to the far carbon's substituent that
                // closes the ring with it (the smaller ring when both do);
                // otherwise assume E (x trans to the reference substituent).
                let ring = |p: Place| match p {
                    Place::Atom(y) => self.small_ring_through(x, c1, c2, y),
                    Place::H => None,
                };
                match (ring(p2[0]), ring(p2[1])) {
                    (Some(a), Some(b)) if b < a => [Place::H, Place::Atom(x)],
                    (Some(_), _) => [Place::Atom(x), Place::H],
                    (None, Some(_)) => [Place::H, Place::Atom(x)],
                    _ if matches!(p2[0], Place::Atom(_)) => {
                        assumed = true;
                        [Place::H, Place::Atom(x)]
                    }
                    _ => [Place::H, Place::Atom(x)],
                }
            }
            _ => [Place::Atom(h1[0]), Place::Atom(h1[1])],
        };
        (p1, p2, assumed)
    }

    /// Size of the smallest ring x-c1=c2-y-...-x of at most 8 atoms, if any:
    /// a double bond in such a ring has its ring bonds cis (trans-cyclooctene
    /// is the smallest trans cycloalkene one meets; common practice). Found
    /// by breadth-first search from y back to x avoiding c1 and c2, so it
    /// does not depend on which rings the view happened to record.
    fn small_ring_through(&self, x: usize, c1: usize, c2: usize, y: usize) -> Option<u32> {
        let v = self.v;
        let blocked = 1u64 << c1 | 1u64 << c2;
        let mut seen = blocked | 1u64 << y;
        let mut front = 1u64 << y;
        for d in 0..=5u32 {
            if front >> x & 1 == 1 {
                return Some(d + 3);
            }
            let mut next = 0;
            for a in bits(front) {
                next |= v.adj[a];
            }
            next &= !seen;
            seen |= next;
            front = next;
        }
        None
    }

    /// Which of the two heavy substituents of an alkene carbon `c2` is its
    /// reference (the one an unknown geometry puts trans to the other
    /// carbon's substituent): the larger branch (more heavy atoms), then the
    /// heavier attached atom, then more heavy neighbours there, then a hash
    /// of the atoms one and two bonds further out. The bulkier
    /// groups trans is the usual assumption when E/Z is not given (common
    /// practice). Equal keys fall back to the orbit ids, which are then
    /// canonical positions (`Ctx::needs_canonical_ids`), so the choice never
    /// depends on the input's atom numbering.
    /// `alkene_reference_key(c2, x)` against `alkene_reference_key(c2, y)`,
    /// where x and y are the two heavy substituents of `c2` other than its
    /// alkene partner, in neighbour order: remembered per `c2`, because the
    /// shifts, the couplings and the orbit check all ask (each key walks two
    /// bonds out).
    pub(super) fn alkene_reference_order(
        &self,
        c2: usize,
        x: usize,
        y: usize,
    ) -> std::cmp::Ordering {
        use std::cmp::Ordering;
        let known = self.reference_order[c2].get();
        if known != 0 {
            return [Ordering::Less, Ordering::Equal, Ordering::Greater][known as usize - 1];
        }
        let order = self
            .alkene_reference_key(c2, x)
            .cmp(&self.alkene_reference_key(c2, y));
        self.reference_order[c2].set((order as i8 + 2) as u8);
        order
    }

    fn alkene_reference_key(&self, c2: usize, y: usize) -> (u32, u8, u8, u64) {
        let v = self.v;
        let size = v.branch(y, c2).count_ones();
        // Then the atoms one and two bonds out (a hash: unequal hashes order
        // the substituents the same way in any numbering; equal ones are a
        // tie, settled by canonical positions).
        let code = |a: usize, kind: u8| {
            let c = (v.element[a].atomic_number() as u64) << 16
                | (v.deg[a] as u64) << 8
                | (v.h[a] as u64) << 4
                | kind as u64;
            let x = (c ^ 0x9e37_79b9_7f4a_7c15).wrapping_mul(0xbf58_476d_1ce4_e5b9);
            x ^ x >> 31
        };
        let mut around = 0u64;
        for (z, kz) in v.neighbours(y) {
            if z == c2 {
                continue;
            }
            around = around.wrapping_add(code(z, kz));
            for (w, kw) in v.neighbours(z) {
                if w != y && w != c2 {
                    around = around.wrapping_add(code(w, kw).rotate_left(17));
                }
            }
        }
        (size, v.element[y].atomic_number(), v.deg[y], around)
    }

    /// Place index of the representative H of a group on alkene carbon `a`.
    pub(super) fn h_place(p1: &[Place; 2], slot: u8) -> usize {
        match slot {
            2 => 1,
            1 => 0,
            _ => {
                if p1[0] == Place::H {
                    0
                } else {
                    1
                }
            }
        }
    }

    fn alkene_z(
        &mut self,
        x: Place,
        parent: usize,
        c1: usize,
        c2: usize,
    ) -> (Option<[f64; 3]>, bool) {
        let Place::Atom(x) = x else {
            return (Some([0.0; 3]), true);
        };
        let v = self.v;
        if v.hyb[x] == 3 && v.element[x] == Element::C {
            let endo = v.rings[..v.nrings]
                .iter()
                .any(|&r| r >> x & 1 == 1 && r >> c1 & 1 == 1 && r >> c2 & 1 == 1);
            if endo {
                if let Some(z) = self.lib.alkene.alkyl_ring {
                    return (Some(z), true);
                }
            }
        }
        match self.class_of(x, parent) {
            Some(c) => (self.lib.alkene.z[c as usize], true),
            None => (None, false),
        }
    }

    /// Pascual-Meier-Simon: 5.25 + Z(gem) + Z(cis) + Z(trans).
    fn alkene_shift(&mut self, c1: usize, slot: u8) -> (f64, f64, u32) {
        let c2 = self.alkene_partner(c1).expect("alkene carbon");
        let (p1, p2, assumed) = self.alkene_places(c1, c2);
        let i = Self::h_place(&p1, slot);
        let t = &self.lib.alkene;
        let (base, mut sigma, unknown) = (t.base, t.sigma, t.sigma_unknown);
        let mut shift = base;
        let mut notes = if assumed { note::EZ_ASSUMED } else { 0 };
        for (occ, parent, col) in [(p1[1 - i], c1, 0), (p2[i], c2, 1), (p2[1 - i], c2, 2)] {
            match self.alkene_z(occ, parent, c1, c2) {
                (Some(z), _) => shift += z[col],
                _ => {
                    sigma += unknown;
                    notes |= note::UNKNOWN_SUBSTITUENT;
                }
            }
        }
        (shift, sigma, notes)
    }

    /// Aromatic H: benzene increments, or a heteroaromatic ring's base
    /// shift per position plus benzene increments by ring distance.
    fn aromatic_shift(&mut self, a: usize) -> (f64, f64, u32, Method) {
        let Some(r) = self.v.aromatic_ring_of(a) else {
            let (s, sg) = self.lib.fallback[2];
            return (s, sg, note::FALLBACK, Method::Fallback);
        };
        let hetero: u64 = r & self.v.hetero;
        let size = r.count_ones() as usize;
        let (mut shift, mut sigma, method, skip) = if hetero == 0 && size == 6 {
            let solvent = &self.lib.solvents[self.opts.solvent];
            let base = solvent.benzene.unwrap_or(self.lib.benzene.base);
            (base, self.lib.benzene.sigma, Method::Benzene, 0u64)
        } else {
            match self.hetero_base(r, hetero, a) {
                Some((s, sg)) => (s, sg, Method::Hetero, hetero),
                None => {
                    return (
                        self.lib.hetero.generic_shift,
                        self.lib.hetero.generic_sigma,
                        0,
                        Method::Hetero,
                    )
                }
            }
        };
        let mut notes = 0;
        let mut nsub = 0;
        for y in bits(r & !(1u64 << a) & !skip) {
            let d = self.v.ring_distance(r, a, y);
            if !(1..=3).contains(&d) {
                continue;
            }
            for k in 0..self.v.deg[y] as usize {
                let z = self.v.nbr[y][k] as usize;
                if r >> z & 1 == 1 {
                    continue;
                }
                nsub += 1;
                // A fusion atom whose other ring goes on through an aromatic
                // carbon (naphthalene-like) has its own row.
                let shares_ring = |size: Option<u32>| {
                    self.v.rings[..self.v.nrings].iter().any(|&q| {
                        q >> y & 1 == 1
                            && q >> z & 1 == 1
                            && size.is_none_or(|n| q.count_ones() == n)
                    })
                };
                let fused = method == Method::Benzene
                    && self.v.element[z] == Element::C
                    && self.v.is_aromatic(z)
                    && shares_ring(None);
                // A fusion atom whose other ring, a five-membered one, goes
                // on through a pyrrole-type N (indole's C7a) has its own row
                // too: the N's lone pair shields the benzo ring, where the
                // `aromatic_n` class (falling back to `aryl`) deshields it.
                let fused_pyrrole_n = method == Method::Benzene
                    && self.v.element[z] == Element::N
                    && self.v.is_aromatic(z)
                    && self.v.deg[z] + self.v.h[z] == 3
                    && shares_ring(Some(5));
                let row = match (self.lib.benzene.fusion, self.lib.benzene.fusion_pyrrole_n) {
                    (Some(f), _) if fused => Some(f),
                    (_, Some(f)) if fused_pyrrole_n => Some(f),
                    _ => self
                        .class_via(y, k)
                        .and_then(|c| self.lib.benzene.z[c as usize]),
                };
                match row {
                    Some(inc) => shift += inc[d - 1],
                    None => {
                        sigma += self.lib.benzene.sigma_unknown;
                        notes |= note::UNKNOWN_SUBSTITUENT;
                    }
                }
            }
        }
        if method == Method::Benzene {
            if nsub > 2 {
                sigma += self.lib.benzene.sigma_per_extra * (nsub - 2) as f64;
            }
            if nsub == 1 && bits(r).filter(|&x| self.v.h[x] > 0).count() == 5 {
                notes |= note::MONO_RING;
            }
        } else if nsub > 0 {
            sigma += self.lib.hetero.substituted_extra_sigma;
        }
        (shift, sigma, notes, method)
    }

    /// Base shift of `a` in a heteroaromatic ring: the library's ring with
    /// one heteroatom; with several, the ring of the principal heteroatom
    /// (O or S, then pyrrole-type N, then the nearest N) plus an increment
    /// per further pyridine-type N by ring distance (`extra_nitrogen`).
    fn hetero_base(&self, r: u64, hetero: u64, a: usize) -> Option<(f64, f64)> {
        if hetero.count_ones() == 1 {
            let (t, pos) = self.hetero_template(r, hetero, a)?;
            return t.shift[pos].map(|s| (s, t.sigma));
        }
        let v = self.v;
        let size = r.count_ones() as usize;
        let (_, incs, extra_sigma) = *self
            .lib
            .hetero
            .extra_nitrogen
            .iter()
            .find(|x| x.0 == size)?;
        let pyridine_type = |h: usize| v.element[h] == Element::N && v.deg[h] + v.h[h] == 2;
        let principal = bits(hetero).min_by_key(|&h| {
            let rank = if v.element[h] != Element::N {
                0
            } else if !pyridine_type(h) {
                1
            } else {
                2
            };
            (rank, v.ring_distance(r, h, a), h)
        })?;
        let (t, pos) = self.hetero_template(r, 1u64 << principal, a)?;
        let mut shift = t.shift[pos]?;
        for h in bits(hetero & !(1u64 << principal)) {
            if !pyridine_type(h) {
                return None;
            }
            let d = v.ring_distance(r, h, a);
            shift += incs[d.clamp(1, 3) - 1];
        }
        Some((shift, t.sigma + extra_sigma))
    }

    /// The library ring matching ring `r` and the position of `a` in it.
    pub(super) fn hetero_template(
        &self,
        r: u64,
        hetero: u64,
        a: usize,
    ) -> Option<(&super::library::HeteroRing, usize)> {
        if hetero.count_ones() != 1 {
            return None;
        }
        let h = hetero.trailing_zeros() as usize;
        let size = r.count_ones() as usize;
        // An N-oxide ring N ([n+][O-]) has its own table row.
        let oxide = self.v.element[h] == Element::N
            && (0..self.v.deg[h] as usize).any(|k| {
                self.v.order[h][k] == 2 && self.v.element[self.v.nbr[h][k] as usize] == Element::O
            });
        let t =
            self.lib.hetero.rings.iter().find(|t| {
                t.size == size && t.heteroatom == self.v.element[h] && t.oxide == oxide
            })?;
        let pos = self.v.ring_distance(r, h, a) + 1;
        if pos > 4 {
            return None;
        }
        Some((t, pos))
    }

    /// sp3 C-H: Beauchamp-Marquez, with Shoolery's rule and CH3-X values.
    fn sp3_shift(&mut self, c: usize) -> (f64, f64, u32) {
        let t = &self.lib.sp3;
        let h = self.v.h[c];
        let deg = self.v.deg[c] as usize;
        if h == 4 || deg == 0 {
            return (t.methane, t.sigma, 0);
        }
        let base = match h {
            3 => t.methyl,
            2 => t.methylene,
            _ => t.methine,
        };
        let mut notes = 0;
        // Methyl on a functional group: the handbook CH3-X value.
        if h == 3 && deg == 1 {
            let x = self.v.nbr[c][0] as usize;
            if !self.is_alkyl(x) {
                if let Some(s) = self
                    .class_via(c, 0)
                    .and_then(|k| self.lib.sp3.methyl_direct[k as usize])
                {
                    return (s, self.lib.sp3.sigma_methyl_direct, 0);
                }
            }
        }
        let mut shift = base;
        let mut sigma = self.lib.sp3.sigma;
        let mut functional = 0usize;
        // Shoolery: 0.23 + S for every heavy neighbour (alkyl counts as -R).
        let mut shoolery = self.lib.sp3.methane;
        let mut shoolery_ok = true;
        for k in 0..deg {
            let x = self.v.nbr[c][k] as usize;
            // An sp3 carbon whose class has its own row (CF3) counts as that
            // group, not as alkyl with its F walked as beta substituents.
            let own_row = self.is_alkyl(x)
                && self
                    .class_via(c, k)
                    .is_some_and(|q| self.lib.sp3.abg[q as usize].is_some());
            if self.is_alkyl(x) && !own_row {
                shoolery += self.lib.sp3.shoolery_alkyl;
                // beta and gamma substituents through this alkyl carbon
                for k2 in 0..self.v.deg[x] as usize {
                    let y = self.v.nbr[x][k2] as usize;
                    if y == c {
                        continue;
                    }
                    if self.is_alkyl(y) {
                        for k3 in 0..self.v.deg[y] as usize {
                            let z = self.v.nbr[y][k3] as usize;
                            if z == x || z == c || self.is_alkyl(z) {
                                continue;
                            }
                            match self
                                .class_via(y, k3)
                                .and_then(|q| self.lib.sp3.abg[q as usize])
                            {
                                Some(v) => shift += v[2],
                                None => notes |= note::UNKNOWN_SUBSTITUENT,
                            }
                        }
                    } else {
                        match self
                            .class_via(x, k2)
                            .and_then(|q| self.lib.sp3.abg[q as usize])
                        {
                            Some(v) => shift += v[1],
                            None => notes |= note::UNKNOWN_SUBSTITUENT,
                        }
                    }
                }
            } else {
                functional += 1;
                let cls = self.class_via(c, k);
                match cls.and_then(|q| self.lib.sp3.abg[q as usize]) {
                    Some(v) => {
                        shift += v[0];
                        if h == 1 {
                            let in_ring = self.v.ring_size[c] > 0;
                            shift += cls
                                .and_then(|q| self.lib.sp3.methine_alpha[q as usize])
                                .filter(|&(_, ring_only)| in_ring || !ring_only)
                                .map_or(0.0, |(a, _)| a);
                        }
                    }
                    None => {
                        notes |= note::UNKNOWN_SUBSTITUENT;
                        sigma += self.lib.sp3.sigma_unknown;
                    }
                }
                match cls.and_then(|q| self.lib.sp3.shoolery[q as usize]) {
                    Some(s) => shoolery += s,
                    None => shoolery_ok = false,
                }
            }
        }
        if functional >= 2 && shoolery_ok && h <= 2 {
            shift = shoolery;
            notes |= note::SHOOLERY;
        } else if let Some(corr) = self.ring_correction(c) {
            shift += corr;
        }
        if functional > 1 {
            sigma += self.lib.sp3.sigma_per_extra_alpha * (functional - 1) as f64;
        }
        (shift, sigma, notes)
    }

    fn ring_correction(&self, c: usize) -> Option<f64> {
        let size = self.v.ring_size[c] as usize;
        if size == 0 || size >= self.lib.sp3.ring.len() {
            return None;
        }
        self.lib.sp3.ring[size]
    }

    /// An sp3 carbon (the sp3 rule propagates through these).
    pub(super) fn is_alkyl(&self, x: usize) -> bool {
        self.v.element[x] == Element::C && self.v.hyb[x] == 3
    }
}
