//! Coupling constants and first-order multiplicities.
//!
//! The n+1 rule (common practice): a group coupled to n equivalent H with
//! one J shows n+1 lines with binomial intensities (Pascal's triangle);
//! partners with clearly different J multiply, (n+1)(m+1) lines (dd, dt, td,
//! qd, ...); partners whose J differ by less than `similar_j_hz` act as one
//! set (an alkyl CH2 between CH3 and CH2 is a sextet). Couplings counted:
//! vicinal H-C-C-H (three bonds), vinyl cis/trans, geminal =CH2, aromatic
//! ortho/meta/para, aldehyde H to alpha-H, and HO-C-H / HN-C-H only in a
//! solvent where the exchangeable H couples (DMSO-d6). Couplings to 19F
//! (spin 1/2, 100%: n equivalent F split like n H): geminal H-C-F,
//! vicinal H-C-C(sp3)-F by the number of F there, ring H to ring F ortho
//! and meta; always first order (heteronuclear). Couplings to 31P the same
//! way: H-C-P (large on P(V), a P=O or P=S bond; small on P(III)), H-C-C-P,
//! H-C-O-P, H-C-N-P and ring H next to a P-bearing ring carbon. Allylic and
//! other long-range couplings are below the usual resolution and left out,
//! as is every coupling under `resolved_min_hz` (1.5 Hz): among them the
//! benzene-type meta J through a ring CH (1.4 Hz; benzene's J meta 1.37 Hz),
//! so a run of four ring H reads d, t, t, d as it is reported, while the
//! meta J through a substituted ring carbon (about 2 Hz) shows (dd).
//! The two doublets of a para-disubstituted ring keep their couplings to F
//! or P (a 4-fluorophenyl ring: dd and an apparent t). A single H next to
//! a CH2 beside a stereocentre couples to the CH2's two diastereotopic H
//! with two unlike J (the X of an ABX system: dd, not t); one H of a
//! diastereotopic CH2 read as its own signal has one J per partner H
//! (`Ctx::half_pattern`).
//!
//! Not first order, reported as m (common practice):
//! - a diastereotopic CH2 read as one group, bonded to a stereocentre or
//!   coupled to an sp3 CH2 bonded to one (ABX-type and virtual coupling);
//! - the shift difference in Hz to a coupled group is under
//!   `first_order_min_ratio` times J at the given spectrometer frequency,
//!   or under `first_order_min_ratio_ab` times J for an AB-type coupling
//!   (one H on each side: its two doublets stay recognisable, roofed, down
//!   to a shift difference of about J);
//! - a ring whose symmetry-equivalent H couple unequally to a partner
//!   (magnetic inequivalence: monosubstituted benzene, pyridine, o-xylene,
//!   the symmetric ortho-disubstituted ring of tetralin), except the
//!   para-disubstituted AA'BB' ring, reported as two 2H doublets below
//!   `para_pair_m_from_mhz` (600 MHz; from there on the deposited lists
//!   write it m, a reporting habit);
//! - H on a saturated ring coupled to other ring H (unequal cis/trans J),
//!   except a ring CH whose ring partners are all CH (one cis or trans J
//!   per partner, each kept apart: d, dd, ddd), a ring CH between two
//!   symmetry-equivalent ring CH2 (the two cis H equivalent, the two trans
//!   H too: tt) and a ring CH2 whose only ring partner is a CH2 in a
//!   molecule without stereocentre (the ring's conformers average each
//!   CH2's two H: t).

use super::library::CouplingKind;
use super::shift::Place;
use super::view::{bits, DOUBLE, TRIPLE};
use super::{note, Ctx, Group, Method, Mult, Multiplicity};
use crate::chem::Element;

/// One coupling of a group's representative H to a partner H set.
#[derive(Clone, Copy, Debug)]
struct Cpl {
    atom: u8,
    group: u8,
    count: u8,
    j: f64,
    /// Never merged with another coupling of similar J (a ring partner
    /// whose cis/trans J is not known but differs from the others').
    distinct: bool,
}

const MAX_CPL: usize = 32;
const NONE: u8 = u8::MAX;
/// The partner "group" of a coupling to 19F: F are no H group, and a
/// heteronuclear coupling is first order at any shift difference.
const FLUORINE: u8 = u8::MAX - 1;
/// The same for 31P.
const PHOSPHORUS: u8 = u8::MAX - 2;

/// A coupling to a nucleus other than 1H (first order at any shift
/// difference).
fn heteronuclear(group: u8) -> bool {
    group == FLUORINE || group == PHOSPHORUS
}

impl Ctx<'_> {
    pub(super) fn multiplicities(&mut self, groups: &[Group]) -> Vec<Mult> {
        // Group index per (atom, slot 1/2); unsplit atoms have both equal.
        let mut gid = [[NONE; 2]; super::view::MAX_ATOMS];
        for (i, g) in groups.iter().enumerate() {
            for a in bits(g.atoms) {
                match g.slot {
                    0 => gid[a] = [i as u8; 2],
                    s => gid[a][s as usize - 1] = i as u8,
                }
            }
        }
        let set = &self.lib.settings;
        let (resolved, similar, min_ratio, min_ratio_ab) = (
            set.resolved_min_hz,
            set.similar_j_hz,
            set.first_order_min_ratio,
            set.first_order_min_ratio_ab,
        );
        let mut out = Vec::with_capacity(groups.len());
        // Each group's couplings to F and P, for the para-pair doublets.
        let mut hetero: Vec<Vec<Cpl>> = Vec::with_capacity(groups.len());
        for (gi, g) in groups.iter().enumerate() {
            let mut cpl = [Cpl {
                atom: 0,
                group: 0,
                count: 0,
                j: 0.0,
                distinct: false,
            }; MAX_CPL];
            let mut nc = 0;
            self.couplings(g.rep, g.slot, &gid, &mut cpl, &mut nc);
            let mut notes = 0;
            let mut second_order = false;
            // Keep resolved couplings to other groups.
            let mut kept = [Cpl {
                atom: 0,
                group: 0,
                count: 0,
                j: 0.0,
                distinct: false,
            }; MAX_CPL];
            let mut nk = 0;
            for c in &cpl[..nc] {
                if c.group == gi as u8 || c.group == NONE || c.j < resolved {
                    continue;
                }
                if heteronuclear(c.group) {
                    kept[nk] = *c;
                    nk += 1;
                    continue;
                }
                let p = &groups[c.group as usize];
                // On the shifts as shown (rounded to 0.01 ppm): unrounded,
                // they differ in the last bits with the atom numbering, and
                // a difference near the threshold went either way.
                let dv = (super::round2(g.shift) - super::round2(p.shift)).abs() * self.opts.mhz;
                // AB-type pairs (one H on each side of the coupling) stay
                // first order down to smaller shift differences.
                let ratio = if g.hs == 1 && c.count == 1 {
                    min_ratio_ab
                } else {
                    min_ratio
                };
                if dv < ratio * c.j {
                    second_order = true;
                }
                kept[nk] = *c;
                nk += 1;
            }
            if second_order {
                notes |= note::SECOND_ORDER;
            }
            // Saturated ring H coupled to other ring H: m, unless the H is
            // a ring CH whose ring partners are all CH. Such an H has one
            // J per ring partner, each cis or trans and so unlike the
            // others (d, dd, ddd ...); a ring CH2 partner gives it a cis
            // and a trans J at once, and a ring CH2 group is itself two
            // unlike H: those are m.
            let a = g.rep;
            if self.v.hyb[a] == 3 && self.v.in_ring(a) {
                let on_ring = |c: &Cpl| {
                    let b = c.atom as usize;
                    !heteronuclear(c.group)
                        && self.v.hyb[b] == 3
                        && self.v.rings[..self.v.nrings]
                            .iter()
                            .any(|&r| r >> a & 1 == 1 && r >> b & 1 == 1)
                };
                let ring_partner = kept[..nk].iter().any(on_ring);
                let methines = self.v.h[a] == 1
                    && kept[..nk]
                        .iter()
                        .filter(|c| on_ring(c))
                        .all(|c| self.v.h[c.atom as usize] == 1);
                // A ring CH2 whose only ring partner is a CH2, in a ring of
                // five or more atoms of a molecule without stereocentre: the
                // ring's conformers interconvert fast, the two H of each CH2
                // average to equivalence and the pair reads as a first-order
                // t (X-CH2-CH2-Y of tetralones, chromanes, lactams). Not when
                // either CH2 has a symmetry-equivalent twin (tetralin's
                // AA'XX' chain: m).
                let mut partners = kept[..nk].iter().filter(|c| on_ring(c));
                let averaged = g.notes & note::DIASTEREOTOPIC == 0
                    && self.v.h[a] == 2
                    && g.atoms.count_ones() == 1
                    && match (partners.next(), partners.next()) {
                        (Some(c), None) => {
                            let b = c.atom as usize;
                            self.v.h[b] == 2
                                && groups[c.group as usize].atoms.count_ones() == 1
                                && self.v.smallest_ring_through(a, b).is_some_and(|n| n >= 5)
                        }
                        _ => false,
                    };
                // A ring CH whose ring partners are two symmetry-equivalent
                // CH2 (the CH on a mirror plane of the ring): the two H cis
                // to the CH's substituent are equivalent, and so are the
                // two trans H, and the cis and trans J differ (cyclohexane
                // axial-axial about 11 Hz against axial-equatorial about
                // 4 Hz, cyclopropane cis about 8 against trans about 5;
                // common practice, from memory): tt, one t per pair. Only
                // when the CH has no H partner off the ring.
                // The ring partners' atoms as a bit set (cheap tests first:
                // this runs for every ring H of every candidate).
                let ring_atoms = || {
                    kept[..nk]
                        .iter()
                        .filter(|c| on_ring(c))
                        .fold(0u64, |set, c| set | 1 << c.atom)
                };
                let mirror = self.v.h[a] == 1
                    && g.atoms.count_ones() == 1
                    && ring_atoms().count_ones() == 2
                    && bits(ring_atoms()).all(|b| self.v.h[b] == 2)
                    // No H partner off the ring: a further J on top of the
                    // two t (ttd, ttt) is seldom resolved and written m
                    // (from memory), so such a CH stays m below.
                    && kept[..nk]
                        .iter()
                        .all(|c| on_ring(c) || heteronuclear(c.group))
                    && groups.iter().any(|p| {
                        // One symmetry class holds both partners.
                        p.atoms & ring_atoms() == ring_atoms()
                    });
                if ring_partner && mirror {
                    let first = kept[..nk].iter().find(|c| on_ring(c)).copied();
                    if let Some(c) = first {
                        let mut rest: Vec<Cpl> =
                            kept[..nk].iter().filter(|x| !on_ring(x)).copied().collect();
                        for _ in 0..2 {
                            rest.push(Cpl {
                                count: 2,
                                distinct: true,
                                ..c
                            });
                        }
                        nk = rest.len().min(MAX_CPL);
                        kept[..nk].copy_from_slice(&rest[..nk]);
                    }
                } else if ring_partner && methines && !averaged {
                    for c in kept[..nk].iter_mut() {
                        if on_ring(c) {
                            c.distinct = true;
                        }
                    }
                } else if ring_partner && !averaged {
                    notes |= note::RING_SP3;
                }
            }
            // A diastereotopic CH2 read as one 2H group, coupled to H, and
            // bonded to a stereocentre (its two H differ in shift and couple
            // unequally to their partners: the AB part of an ABX-type
            // system) or coupled to an sp3 CH2 bonded to one (that CH2's
            // two H are such a strongly coupled pair, and the group sees it
            // as a second-order pattern: virtual coupling, as for a half
            // below): m (common practice: the CH2 of 2-butanol).
            let next_to_stereo = |x: usize| {
                self.v
                    .neighbours(x)
                    .any(|(y, _)| self.stereocentres >> y & 1 == 1)
            };
            let abx_whole = g.notes & note::DIASTEREOTOPIC != 0
                && g.slot == 0
                && self.v.h[a] == 2
                && self.v.hyb[a] == 3
                && kept[..nk].iter().any(|c| !heteronuclear(c.group))
                && (next_to_stereo(a)
                    || kept[..nk].iter().any(|c| {
                        let b = c.atom as usize;
                        !heteronuclear(c.group)
                            && self.v.h[b] == 2
                            && self.v.hyb[b] == 3
                            && self.v.element[b] == Element::C
                            && next_to_stereo(b)
                    }));
            let multiplicity;
            let mut j = Vec::new();
            if abx_whole || notes & (note::SECOND_ORDER | note::RING_SP3) != 0 {
                multiplicity = Multiplicity::Multiplet;
            } else if nk == 0 {
                multiplicity = Multiplicity::Singlet;
            } else {
                let (m, js) = merge(&mut kept[..nk], similar);
                multiplicity = m;
                j = js;
            }
            // One H of a diastereotopic CH2 pair read as its own signal.
            let half = (g.half != 0 && g.half == g.atoms && g.hs == 2).then(|| {
                // Symmetry twins of the group coupled to each other, or
                // coupled to a partner group whose own twins are bonded to
                // each other (AA'XX': the twins couple unequally to one
                // partner H and the spin systems do not fall apart).
                let bonded_twins = |atoms: u64| {
                    bits(atoms).any(|x| self.v.neighbours(x).any(|(y, _)| atoms >> y & 1 == 1))
                };
                let twins = g.atoms.count_ones() > 1
                    && (bonded_twins(g.atoms)
                        || kept[..nk].iter().any(|c| {
                            !heteronuclear(c.group) && bonded_twins(groups[c.group as usize].atoms)
                        }));
                self.half_pattern(g, groups, &kept[..nk], twins)
            });
            out.push(Mult {
                multiplicity,
                j,
                notes,
                half,
            });
            hetero.push(
                kept[..nk]
                    .iter()
                    .filter(|c| heteronuclear(c.group))
                    .copied()
                    .collect(),
            );
        }
        self.aromatic_systems(groups, &mut out, &hetero);
        out
    }

    /// The pattern of one H of the diastereotopic CH2 pair `g` read as its
    /// own signal, from its resolved couplings `kept` (common practice: the
    /// two H of such a CH2 are reported as two signals, each split by the
    /// other and by its vicinal H one by one):
    /// - the geminal J to the other H (`geminal_sp3`);
    /// - one J per vicinal H of a CH or CH2 partner, each kept apart: the
    ///   H differs from its twin, so it sits unlike to each partner H
    ///   (gauche or anti in a chain, cis or trans, axial or equatorial on a
    ///   ring) and no two of its J are taken as equal. This holds on a
    ///   saturated ring too, where the whole 2H group is m (unequal cis and
    ///   trans J): read apart, each H is dd next to one ring CH, ddd next
    ///   to a CH2 or between two CH;
    /// - a methyl partner's three H together (free rotation: q), and F or P
    ///   as the whole group couples to them;
    /// - m next to an sp3 CH2: in a molecule with a stereocentre that
    ///   CH2's two H are diastereotopic too, close in shift and strongly
    ///   coupled to each other by their geminal J, and an H coupled to a
    ///   strongly coupled pair shows a second-order pattern (virtual
    ///   coupling; common practice). So a ring CH2 read apart is ddd only
    ///   between two CH, and m beside a CH2;
    /// - not first order (m) when a partner H is closer in shift than the
    ///   AB limit (`first_order_min_ratio_ab` x J; a methyl partner
    ///   `first_order_min_ratio`), when the group's symmetry twins couple
    ///   to each other (AA'XX' systems: magnetically inequivalent);
    /// - m when the H has more than three couplings (geminal and three
    ///   vicinal H or more): sixteen or more lines of unlike J overlap into
    ///   an unresolved multiplet at routine field and are written m (common
    ///   practice; in the NMRShiftDB2 dev lists 15 of the 18 such halves
    ///   are written m, one dddd), and when the pattern has no trade name
    ///   ([`named`]);
    /// - m for a ddd on a ring of eight atoms or more: the ring's many
    ///   conformers average the two vicinal J to like values and the
    ///   lines run together (in the dev lists 4 such halves, in 12- and
    ///   14-membered rings: 3 written m, one td).
    fn half_pattern(
        &self,
        g: &Group,
        groups: &[Group],
        kept: &[Cpl],
        twins: bool,
    ) -> (Multiplicity, Vec<f64>) {
        if twins {
            return (Multiplicity::Multiplet, Vec::new());
        }
        let set = &self.lib.settings;
        let mut parts: Vec<(u8, f64)> = vec![(1, self.lib.j(CouplingKind::GeminalSp3))];
        for c in kept {
            if heteronuclear(c.group) {
                parts.push((c.count, c.j));
                continue;
            }
            let p = &groups[c.group as usize];
            let dv = (super::round2(g.shift) - super::round2(p.shift)).abs() * self.opts.mhz;
            let ratio = if c.count <= 2 {
                set.first_order_min_ratio_ab
            } else {
                set.first_order_min_ratio
            };
            if dv < ratio * c.j {
                return (Multiplicity::Multiplet, Vec::new());
            }
            // A partner sp3 CH2: in a molecule with a stereocentre its two
            // H are themselves diastereotopic, close in shift and coupled
            // to each other by the geminal J, so the H sees a strongly
            // coupled pair (virtual coupling): not first order, m.
            let b = c.atom as usize;
            if self.v.h[b] == 2 && self.v.hyb[b] == 3 && self.v.element[b] == Element::C {
                return (Multiplicity::Multiplet, Vec::new());
            }
            if c.count <= 2 {
                parts.extend(std::iter::repeat_n((1, c.j), c.count as usize));
            } else {
                parts.push((c.count, c.j));
            }
        }
        // Sixteen lines or more of unlike J overlap at routine field; so
        // do the eight of a ddd on a ring of eight atoms or more (medium
        // and large rings: many conformers, so the two vicinal J are
        // averages of like size and the lines run together; such ring
        // CH2 H are mostly written m, from memory).
        let medium_ring = self.v.ring_size[g.rep] >= 8;
        if parts.len() > 3 || (parts.len() == 3 && medium_ring) {
            return (Multiplicity::Multiplet, Vec::new());
        }
        named(&mut parts)
    }

    /// Aromatic rings whose equivalent H are magnetically inequivalent:
    /// AA'XX' para pairs become two doublets (m from `para_pair_m_from_mhz`
    /// on), everything else m.
    fn aromatic_systems(&mut self, groups: &[Group], out: &mut [Mult], hetero: &[Vec<Cpl>]) {
        let mut done_rings = 0u64; // by representative ring's lowest atom
        for g in groups {
            if !matches!(g.method, Method::Benzene | Method::Hetero) {
                continue;
            }
            let Some(r) = self.v.aromatic_ring_of(g.rep) else {
                continue;
            };
            let key = r.trailing_zeros();
            if done_rings >> key & 1 == 1 {
                continue;
            }
            done_rings |= 1u64 << key;
            let members: Vec<usize> = groups
                .iter()
                .enumerate()
                .filter(|(_, h)| {
                    r >> h.rep & 1 == 1 && matches!(h.method, Method::Benzene | Method::Hetero)
                })
                .map(|(i, _)| i)
                .collect();
            let ring_h: u64 = bits(r)
                .filter(|&x| self.v.h[x] > 0)
                .fold(0, |m, x| m | 1u64 << x);
            let inequivalent = members.iter().any(|&i| {
                let h = &groups[i];
                let rep = h.rep;
                bits(h.atoms & r & !(1u64 << rep)).any(|x| {
                    bits(ring_h & !h.atoms).any(|y| {
                        (self.aromatic_j(r, rep, y) - self.aromatic_j(r, x, y)).abs() > 0.05
                    })
                })
            });
            if !inequivalent {
                continue;
            }
            // The two H of each group meta to each other (para-disubstituted);
            // a symmetric ortho-disubstituted ring (AA'BB' with the pairs
            // para and ortho) is m.
            let para_pair = r.count_ones() == 6
                && members.len() == 2
                && members.iter().all(|&i| {
                    let mut x = bits(groups[i].atoms & r);
                    match (x.next(), x.next(), x.next()) {
                        (Some(p), Some(q), None) => self.v.ring_distance(r, p, q) == 2,
                        _ => false,
                    }
                })
                && ring_h.count_ones() == 4;
            if para_pair {
                let (g1, g2) = (&groups[members[0]], &groups[members[1]]);
                let jo = self.lib.j(CouplingKind::AromaticOrtho);
                let jpair = bits(g2.atoms & r)
                    .map(|y| self.aromatic_j(r, g1.rep, y))
                    .fold(0.0, f64::max)
                    .max(f64::MIN_POSITIVE);
                let dv = (super::round2(g1.shift) - super::round2(g2.shift)).abs() * self.opts.mhz;
                let j = if jpair > 0.0 { jpair } else { jo };
                let ok = dv >= self.lib.settings.para_pair_min_ratio * j;
                // A reporting habit: from `para_pair_m_from_mhz` on, the
                // deposited lists write the pair m (the pattern is not first
                // order at any field; below, it is written as two d).
                let high_field = self.opts.mhz >= self.lib.settings.para_pair_m_from_mhz;
                for &i in &members {
                    let m = &mut out[i];
                    m.notes &= !note::SECOND_ORDER;
                    if ok && high_field {
                        m.multiplicity = Multiplicity::Multiplet;
                        m.j.clear();
                        m.notes |= note::PARA_PAIR_M;
                    } else if ok {
                        // The ortho partner, and any F or P on the ring.
                        let mut c = hetero[i].clone();
                        c.push(Cpl {
                            atom: 0,
                            group: 0,
                            count: 1,
                            j,
                            distinct: false,
                        });
                        let (mult, js) = merge(&mut c, self.lib.settings.similar_j_hz);
                        m.multiplicity = mult;
                        m.j = js;
                        m.notes |= note::PARA_PAIR;
                    } else {
                        m.multiplicity = Multiplicity::Multiplet;
                        m.j.clear();
                        m.notes |= note::SECOND_ORDER;
                    }
                }
            } else {
                for &i in &members {
                    let m = &mut out[i];
                    m.multiplicity = Multiplicity::Multiplet;
                    m.j.clear();
                    m.notes = (m.notes & !note::SECOND_ORDER) | note::MAGNETIC;
                }
            }
        }
    }

    /// J between the H on aromatic ring atoms `a` and `y` of ring `r`.
    fn aromatic_j(&self, r: u64, a: usize, y: usize) -> f64 {
        let d = self.v.ring_distance(r, a, y);
        let size = r.count_ones();
        let hetero: u64 = r & self.v.hetero;
        if hetero != 0 {
            if let (Some((t, pa)), Some((_, py))) = (
                self.hetero_template(r, hetero, a),
                self.hetero_template(r, hetero, y),
            ) {
                let (lo, hi) = (pa.min(py) as u8, pa.max(py) as u8);
                if let Some(c) = t
                    .couplings
                    .iter()
                    .find(|c| c.0 == lo && c.1 == hi && c.2 == d as u8)
                {
                    return c.3;
                }
            }
            if size == 5 {
                return if d == 1 {
                    self.lib.j(CouplingKind::AromaticOther)
                } else {
                    0.0
                };
            }
        }
        match d {
            1 if self.beta_pair(r, a, y) => self.lib.j(CouplingKind::AromaticOrthoBeta),
            1 => self.lib.j(CouplingKind::AromaticOrtho),
            2 if self.meta_through_ch(r, a, y) => self.lib.j(CouplingKind::AromaticMetaCh),
            2 => self.lib.j(CouplingKind::AromaticMeta),
            3 => self.lib.j(CouplingKind::AromaticPara),
            _ => 0.0,
        }
    }

    /// Whether ortho atoms `a` and `y` of the six-membered ring `r` are
    /// both beta atoms of a ring ortho-fused to another six-membered
    /// aromatic ring: neither is next to a fusion atom (naphthalene C2/C3).
    /// The bonds of such a ring alternate in length, and the ortho J with
    /// them (naphthalene J12 8.3, J23 6.8 Hz, from memory).
    fn beta_pair(&self, r: u64, a: usize, y: usize) -> bool {
        let v = self.v;
        if r.count_ones() != 6 {
            return false;
        }
        // Atoms of r shared with another all-aromatic six-membered ring.
        let fusion = v.rings[..v.nrings]
            .iter()
            .filter(|&&q| q != r && q.count_ones() == 6 && q & !v.aromatic == 0)
            .map(|&q| q & r)
            .filter(|s| s.count_ones() == 2)
            .fold(0u64, |m, s| m | s);
        let next_to_fusion = |x: usize| v.neighbours(x).any(|(z, _)| fusion >> z & 1 == 1);
        fusion != 0 && !next_to_fusion(a) && !next_to_fusion(y)
    }

    /// Does the ring atom between meta atoms `a` and `y` of ring `r` carry an H?
    fn meta_through_ch(&self, r: u64, a: usize, y: usize) -> bool {
        self.v.neighbours(a).any(|(m, _)| {
            r >> m & 1 == 1 && self.v.h[m] > 0 && self.v.neighbours(m).any(|(z, _)| z == y)
        })
    }

    /// Couplings of one H of atom `a` (slot as in [`Group::slot`]).
    fn couplings(
        &mut self,
        a: usize,
        slot: u8,
        gid: &[[u8; 2]; 64],
        out: &mut [Cpl; MAX_CPL],
        n: &mut usize,
    ) {
        // Couplings pushed that are never merged (by index into `out`).
        let mut distinct_at = 0u32;
        let mut push = |atom: usize, group: u8, count: u8, j: f64, n: &mut usize| {
            if *n < MAX_CPL && count > 0 {
                out[*n] = Cpl {
                    atom: atom as u8,
                    group,
                    count,
                    j,
                    distinct: false,
                };
                *n += 1;
            }
        };
        // Atoms of `element` on atom x, as (first, count).
        let on = |x: usize, element: Element| {
            let mut first = usize::MAX;
            let mut count = 0u8;
            for (f, _) in self.v.neighbours(x) {
                if self.v.element[f] == element {
                    first = first.min(f);
                    count += 1;
                }
            }
            (first, count)
        };
        let fluorines = |x: usize| on(x, Element::F);
        let phosphorus = |x: usize| on(x, Element::P);
        // P(V): a double bond on the P (P=O, P=S).
        let five = |p: usize| self.v.neighbours(p).any(|(_, k)| k == DOUBLE);
        if self.v.is_aromatic(a) {
            if let Some(r) = self.v.aromatic_ring_of(a) {
                for y in bits(r & !(1u64 << a)) {
                    if self.v.h[y] > 0 {
                        let j = self.aromatic_j(r, a, y);
                        push(y, gid[y][0], self.v.h[y], j, n);
                    }
                    // Ring F ortho and meta to the H.
                    let (f, count) = fluorines(y);
                    let kind = match self.v.ring_distance(r, a, y) {
                        1 => Some(CouplingKind::HfAromaticOrtho),
                        2 => Some(CouplingKind::HfAromaticMeta),
                        _ => None,
                    };
                    if let (Some(kind), true) = (kind, count > 0) {
                        push(f, FLUORINE, count, self.lib.j(kind), n);
                    }
                    // P on the neighbouring ring atom.
                    let (p, count) = phosphorus(y);
                    if count > 0 && self.v.ring_distance(r, a, y) == 1 {
                        let j = self.lib.j(CouplingKind::HpAromaticOrtho);
                        push(p, PHOSPHORUS, count, j, n);
                    }
                }
            }
            return;
        }
        if self.v.element[a] == Element::C {
            // Geminal F (CH2F, CHF2) and F on a neighbouring sp3 carbon.
            let (f, count) = fluorines(a);
            let kind = match count {
                1 => Some(CouplingKind::HfGeminalOne),
                2 => Some(CouplingKind::HfGeminalTwo),
                _ => None,
            };
            if let Some(kind) = kind {
                push(f, FLUORINE, count, self.lib.j(kind), n);
            }
            // P on the H's carbon, and P one atom further (C, O or N between).
            let (p, count) = phosphorus(a);
            if count > 0 {
                let kind = if five(p) {
                    CouplingKind::HpGeminalFive
                } else {
                    CouplingKind::HpGeminalThree
                };
                push(p, PHOSPHORUS, count, self.lib.j(kind), n);
            }
            for k in 0..self.v.deg[a] as usize {
                let b = self.v.nbr[a][k] as usize;
                if self.v.bond[a][k] != DOUBLE {
                    let kind = match self.v.element[b] {
                        Element::C => Some(CouplingKind::HpVicinalCarbon),
                        Element::O => Some(CouplingKind::HpVicinalOxygen),
                        Element::N => Some(CouplingKind::HpVicinalNitrogen),
                        _ => None,
                    };
                    let (p, count) = phosphorus(b);
                    if let (Some(kind), true) = (kind, count > 0) {
                        push(p, PHOSPHORUS, count, self.lib.j(kind), n);
                    }
                }
                if self.v.element[b] != Element::C || self.v.hyb[b] != 3 {
                    continue;
                }
                let (f, count) = fluorines(b);
                let kind = match count {
                    1 => CouplingKind::HfVicinalOne,
                    2 => CouplingKind::HfVicinalTwo,
                    3 => CouplingKind::HfVicinalThree,
                    _ => continue,
                };
                push(f, FLUORINE, count, self.lib.j(kind), n);
            }
        }
        for k in 0..self.v.deg[a] as usize {
            let b = self.v.nbr[a][k] as usize;
            let kind = self.v.bond[a][k];
            if self.v.h[b] == 0 || kind == TRIPLE {
                continue;
            }
            if kind == DOUBLE && self.alkene_partner(a) == Some(b) {
                let (p1, p2, _) = self.alkene_places(a, b);
                let i = Self::h_place(&p1, slot);
                let split = self.vinyl_pair(b).is_some();
                // The smallest ring through the C=C, if any: cis J about
                // 10 Hz in six-membered rings, about 5.5 in five-membered.
                let ring = self.v.smallest_ring_through(a, b);
                for (jdx, p) in p2.iter().enumerate() {
                    if *p != Place::H {
                        continue;
                    }
                    let group = if split { gid[b][jdx] } else { gid[b][0] };
                    let kind = match (i == jdx, ring) {
                        (true, Some(5)) => CouplingKind::VinylCisRing5,
                        (true, Some(_)) => CouplingKind::VinylCisRing,
                        (true, None) => CouplingKind::VinylCis,
                        _ => CouplingKind::VinylTrans,
                    };
                    push(b, group, 1, self.lib.j(kind), n);
                }
                continue;
            }
            if kind == DOUBLE {
                continue;
            }
            if let Some(kind) = self.vicinal_kind(a, b) {
                let j = self.lib.j(kind);
                if gid[b][0] != gid[b][1] {
                    // A partner CH2 given as two signals: one H in each.
                    push(b, gid[b][0], 1, j, n);
                    push(b, gid[b][1], 1, j, n);
                } else if matches!(kind, CouplingKind::VicinalSp3 | CouplingKind::VicinalSp3Sp2)
                    // (not the small J of a five-membered ring)
                    && self.abx(a, b)
                {
                    // One J to each H of a CH2 next to a stereocentre.
                    for _ in 0..2 {
                        distinct_at |= 1u32.checked_shl(*n as u32).unwrap_or(0);
                        push(b, gid[b][0], 1, j, n);
                    }
                } else {
                    push(b, gid[b][0], self.v.h[b], j, n);
                }
            }
        }
        if slot != 0 {
            let other = gid[a][2 - slot as usize];
            // A =CH2 whose far carbon carries two carbon substituents has
            // the smaller geminal J of 1,1-dialkyl alkenes.
            let dialkyl = |b: usize| {
                let mut k = 0;
                self.v.neighbours(b).filter(|&(x, _)| x != a).all(|(x, _)| {
                    k += 1;
                    self.v.element[x] == Element::C
                }) && k == 2
            };
            let kind = if self.v.hyb[a] == 3 {
                CouplingKind::GeminalSp3
            } else if self.alkene_partner(a).is_some_and(dialkyl) {
                CouplingKind::GeminalSp2Alkyl
            } else {
                CouplingKind::GeminalSp2
            };
            push(a, other, 1, self.lib.j(kind), n);
        }
        for (i, c) in out[..*n].iter_mut().enumerate() {
            if distinct_at >> i & 1 == 1 {
                c.distinct = true;
            }
        }
    }

    /// Whether the single H on `a` couples to the two H of the CH2 `b`
    /// with two unlike J: `b` is an sp3 carbon next to a stereocentre
    /// (`a` itself or another neighbour), so its two H are diastereotopic
    /// and their rotamer populations differ; the H on `a` is the X of an
    /// ABX system and reads dd, not t (common practice: the CH of malic
    /// acid or of phenylalanine next to its CH2 is a dd). The caller keeps
    /// it to vicinal J between carbons (6-8 Hz, wide enough for the two to
    /// differ visibly); the 1-3 Hz of an aldehyde H stay one t.
    fn abx(&self, a: usize, b: usize) -> bool {
        let v = self.v;
        v.h[a] == 1
            && v.h[b] == 2
            && v.element[b] == Element::C
            && v.hyb[b] == 3
            && v.neighbours(b)
                .any(|(x, _)| self.stereocentres >> x & 1 == 1)
    }

    /// The kind of the three-bond coupling H-a-b-H over a single bond.
    fn vicinal_kind(&self, a: usize, b: usize) -> Option<CouplingKind> {
        let v = self.v;
        let (ea, eb) = (v.element[a], v.element[b]);
        if ea != Element::C || eb != Element::C {
            if ea != Element::C && eb != Element::C {
                return None;
            }
            let x = if ea != Element::C { a } else { b };
            let env = self.env[x] as usize;
            if env == 0 {
                return None;
            }
            let env = env - 1;
            let solvent = &self.lib.solvents[self.opts.solvent];
            if !solvent.couples.contains(&env) {
                return None;
            }
            return match v.element[x] {
                Element::O => Some(CouplingKind::HydroxylCh),
                Element::N => Some(CouplingKind::AmideNhCh),
                _ => None,
            };
        }
        let carbonyl = |c: usize| {
            v.neighbours(c)
                .any(|(o, k)| k == DOUBLE && v.element[o] == Element::O)
        };
        let (ha, hb) = (v.hyb[a], v.hyb[b]);
        if ha == 1 || hb == 1 {
            return None;
        }
        if carbonyl(a) || carbonyl(b) {
            let other = if carbonyl(a) { b } else { a };
            return Some(if v.hyb[other] == 3 {
                CouplingKind::AldehydeSp3
            } else {
                CouplingKind::AldehydeSp2
            });
        }
        Some(match (ha, hb) {
            (3, 3) => CouplingKind::VicinalSp3,
            (2, 2) => CouplingKind::VicinalSp2Sp2,
            // An alkene CH and an sp3 CH on a five-membered ring: the
            // ring holds the C-H bonds near 90 degrees apart, a small J.
            _ if !v.is_aromatic(a)
                && !v.is_aromatic(b)
                && v.smallest_ring_through(a, b) == Some(5) =>
            {
                CouplingKind::VicinalSp3Sp2Ring5
            }
            _ => CouplingKind::VicinalSp3Sp2,
        })
    }
}

/// Merge couplings with similar J (within `similar` Hz of the cluster's
/// largest J) and build the multiplicity, largest J first.
fn merge(c: &mut [Cpl], similar: f64) -> (Multiplicity, Vec<f64>) {
    // Equal J: more H first, then the mergeable ones, so that the result
    // does not depend on the atom numbering (which orders `c`).
    c.sort_by(|x, y| {
        y.j.total_cmp(&x.j)
            .then(y.count.cmp(&x.count))
            .then(x.distinct.cmp(&y.distinct))
    });
    let mut ns: Vec<u8> = Vec::new();
    let mut js: Vec<f64> = Vec::new();
    let mut first = f64::NAN;
    let mut sum = 0.0;
    let mut cnt = 0u32;
    let mut distinct = false;
    for x in c.iter() {
        if cnt > 0 && !distinct && !x.distinct && first - x.j <= similar {
            sum += x.j * x.count as f64;
            cnt += x.count as u32;
            continue;
        }
        if cnt > 0 {
            ns.push(cnt.min(255) as u8);
            js.push(round1(sum / cnt as f64));
        }
        first = x.j;
        sum = x.j * x.count as f64;
        cnt = x.count as u32;
        distinct = x.distinct;
    }
    if cnt > 0 {
        ns.push(cnt.min(255) as u8);
        js.push(round1(sum / cnt as f64));
    }
    // Patterns without a trade name are reported as m (see Multiplicity::label).
    let unnamed = match ns.len() {
        1 => ns[0] > 8,
        2 | 3 => ns.iter().any(|&n| n > 3),
        _ => true,
    };
    if unnamed {
        return (Multiplicity::Multiplet, Vec::new());
    }
    (Multiplicity::Coupled(ns), js)
}

/// The pattern of couplings given one by one, as (equivalent partners, J):
/// each part its own splitting (none merged), largest J first, more
/// partners first on equal J. Patterns without a trade name (more than
/// four parts, or a quartet or more beside others) are m, as
/// [`Multiplicity::label`] would write them.
pub(crate) fn named(parts: &mut [(u8, f64)]) -> (Multiplicity, Vec<f64>) {
    parts.sort_by(|a, b| b.1.total_cmp(&a.1).then(b.0.cmp(&a.0)));
    let unnamed = parts.len() > 4 || (parts.len() > 1 && parts.iter().any(|p| p.0 > 3));
    if unnamed {
        return (Multiplicity::Multiplet, Vec::new());
    }
    if parts.is_empty() {
        return (Multiplicity::Singlet, Vec::new());
    }
    (
        Multiplicity::Coupled(parts.iter().map(|p| p.0).collect()),
        parts.iter().map(|p| p.1).collect(),
    )
}

fn round1(x: f64) -> f64 {
    (x * 10.0).round() / 10.0
}
