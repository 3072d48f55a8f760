//! Groups of equivalent H: one group per automorphism orbit of H-bearing
//! atoms (topological equivalence), with the splits that the graph alone
//! does not show and the flags the reader needs:
//!
//! - slow rotation about an amide C-N bond makes the two N-substituents of a
//!   tertiary amide inequivalent (DMF shows two N-CH3 singlets; common practice);
//! - the two H of a =CH2 differ when the far alkene carbon carries two
//!   different substituents (cis/trans to them);
//! - a CH2 in a molecule with a stereocentre (an sp3 atom with four
//!   different substituents, decided by the orbits of its neighbours) is
//!   diastereotopic: flagged, kept as one group;
//! - in such a molecule, two methyls on a prochiral carbon (isopropyl,
//!   gem-dimethyl: the carbon's other two places differ) and the two H of
//!   a CH2 whose two neighbours differ are diastereotopic pairs, which are
//!   anisochronous and usually resolved, though not always (common
//!   practice). Such a group stays one group with `half` set (at most
//!   [`MAX_HALVES`] per molecule, methyl pairs first, then CH2 pairs with
//!   the fewest vicinal H); without a stereocentre, a ring CH2 whose ring
//!   holds an sp3 carbon with two different places off the ring is such a
//!   pair too (its H cis and trans to the substituent); the scorer reads it
//!   either as one group or as two halves, whichever explains the data
//!   better (src/score/halves.rs). The 13C list marks the methyl pairs'
//!   carbon classes the same way (src/predict/carbon.rs).

use super::view::{bits, View, DOUBLE};
use super::{note, Ctx, Group, Method};
use crate::chem::Element;

/// At most this many groups (and 13C classes) of one molecule are marked
/// as diastereotopic pairs: the scorer tries every way of reading them
/// (2^k assignments), so k stays small.
pub const MAX_HALVES: usize = 3;

impl Ctx<'_> {
    pub(super) fn build_groups(&mut self, groups: &mut Vec<Group>) {
        groups.clear();
        self.split_amide_rotamers();
        self.has_stereocentre = self.find_stereocentre();
        let n = self.v.n;
        // One group per orbit, in atom order.
        let mut group_of_orbit = [u8::MAX; 256];
        for a in 0..n {
            if self.v.h[a] == 0 {
                continue;
            }
            let o = self.orb[a] as usize;
            if group_of_orbit[o] != u8::MAX {
                groups[group_of_orbit[o] as usize].atoms |= 1u64 << a;
                continue;
            }
            group_of_orbit[o] = groups.len() as u8;
            groups.push(Group {
                atoms: 1u64 << a,
                rep: a,
                hs: self.v.h[a],
                slot: 0,
                method: Method::Fallback,
                shift: 0.0,
                sigma: 0.0,
                exchangeable: false,
                notes: 0,
                half: 0,
            });
        }
        // Environment of each group's atoms (same for the whole orbit).
        for g in groups.iter_mut() {
            let a = g.rep;
            let found = self.lib.environment_at(self.v, a);
            if let Some(i) = found {
                g.method = Method::Special(i);
                g.exchangeable = self.lib.environments[i].exchangeable;
                for x in bits(g.atoms) {
                    self.env[x] = i as u8 + 1;
                }
            }
        }
        // =CH2 whose two H differ: one group per H position.
        for i in 0..groups.len() {
            let g = &mut groups[i];
            if g.hs == 2 && self.vinyl_pair(g.rep).is_some() {
                g.hs = 1;
                g.slot = 1;
                g.notes |= note::VINYL_PAIR;
                let mut h2 = g.clone();
                h2.slot = 2;
                groups.push(h2);
            }
        }
        for g in groups.iter_mut() {
            if g.atoms & self.rotamer != 0 {
                g.notes |= note::AMIDE_ROTAMER;
            }
        }
        // Without a stereocentre, a ring CH2 is still diastereotopic when
        // its ring carries a ring atom whose two faces differ (below).
        let faces = if self.has_stereocentre {
            0
        } else {
            self.face_rings()
        };
        if self.has_stereocentre || faces != 0 {
            for g in groups.iter_mut() {
                if self.has_stereocentre
                    && g.hs == 2
                    && self.v.hyb[g.rep] == 3
                    && self.v.element[g.rep] == Element::C
                {
                    g.notes |= note::DIASTEREOTOPIC;
                }
            }
            // Diastereotopic pairs: methyl pairs first, then CH2.
            let mut marked = 0;
            for g in groups.iter_mut() {
                if self.has_stereocentre && marked < MAX_HALVES && g.hs == 3 && g.slot == 0 {
                    g.half = methyl_pair_half(self.v, &self.orb, g.atoms);
                    marked += usize::from(g.half != 0);
                }
            }
            // CH2 pairs with the fewest vicinal H first (ties in atom
            // order): an isolated CH2 (no H on either neighbour) reads as
            // an AB pair, two doublets, which is how such a pair is most
            // often written apart; a CH2 among many vicinal H gives
            // overlapping multiplets that are written whole or m.
            let vicinal_h = |g: &Group| -> u32 {
                self.v
                    .neighbours(g.rep)
                    .map(|(x, _)| u32::from(self.v.h[x]))
                    .sum()
            };
            let mut order: Vec<usize> = (0..groups.len())
                .take_while(|_| marked < MAX_HALVES) // none once the cap is full
                .filter(|&i| {
                    let g = &groups[i];
                    let face = g.hs == 2
                        && bits(g.atoms).all(|a| {
                            faces >> a & 1 == 1
                                && self.v.hyb[a] == 3
                                && self.v.element[a] == Element::C
                        });
                    (g.notes & note::DIASTEREOTOPIC != 0 || face)
                        && bits(g.atoms).all(|a| {
                            let mut nb = self.v.neighbours(a).map(|(x, _)| self.orb[x]);
                            matches!((nb.next(), nb.next(), nb.next()), (Some(x), Some(y), None) if x != y)
                        })
                })
                .collect();
            order.sort_by_key(|&i| vicinal_h(&groups[i]));
            for i in order {
                if marked < MAX_HALVES {
                    groups[i].half = groups[i].atoms;
                    marked += 1;
                }
            }
        }
    }

    /// For a =CH2 carbon whose far carbon has two different substituent
    /// places, the far carbon; else None.
    pub(super) fn vinyl_pair(&self, a: usize) -> Option<usize> {
        let v = self.v;
        if v.h[a] != 2 || v.element[a] != Element::C || v.is_aromatic(a) {
            return None;
        }
        let (c2, kind) = v.neighbours(a).find(|&(_, k)| k == DOUBLE)?;
        if kind != DOUBLE || v.element[c2] != Element::C || v.deg[a] != 1 {
            return None;
        }
        let mut others = [0usize; 2];
        let mut count = 0;
        for (x, _) in v.neighbours(c2) {
            if x != a {
                if count < 2 {
                    others[count] = x;
                }
                count += 1;
            }
        }
        match (count, v.h[c2]) {
            (1, 1) => Some(c2),
            (2, 0) if self.orb[others[0]] != self.orb[others[1]] => Some(c2),
            _ => None,
        }
    }

    /// The atoms of the rings (smallest cycles) that hold a face atom: an
    /// sp3 ring carbon whose two places off the ring differ (an H and a
    /// heavy atom, or two heavy atoms in different orbits), such as C4 of
    /// a 4-substituted piperidine or C1 of a cyclopropyl ketone. The two
    /// faces of such a ring differ, so the two H of each ring CH2 are cis
    /// and trans to the substituent: diastereotopic without any
    /// stereocentre (common practice: the axial/equatorial or cis/trans
    /// H pairs of 4-substituted cyclohexanes and piperidines and of
    /// cyclopropyl groups are given as two signals).
    fn face_rings(&self) -> u64 {
        let v = self.v;
        let mut out = 0u64;
        for &r in &v.rings[..v.nrings] {
            let face = bits(r).any(|x| {
                if v.hyb[x] != 3 || v.element[x] != Element::C || v.deg[x] + v.h[x] != 4 {
                    return false;
                }
                let mut off = [u8::MAX; 2];
                let mut k = 0;
                for (y, _) in v.neighbours(x) {
                    if r >> y & 1 == 0 {
                        if k == 2 {
                            return false;
                        }
                        off[k] = self.orb[y];
                        k += 1;
                    }
                }
                match (v.h[x], k) {
                    (1, 1) => true,
                    (0, 2) => off[0] != off[1],
                    _ => false,
                }
            });
            if face {
                out |= r;
            }
        }
        out
    }

    fn find_stereocentre(&mut self) -> bool {
        self.stereocentres = stereocentres(self.v, &self.orb);
        self.stereocentres != 0
    }

    /// Tertiary amides: give the branch on one N-substituent fresh orbit ids
    /// so that the two N-substituents form separate groups.
    fn split_amide_rotamers(&mut self) {
        let n = self.v.n;
        let mut fresh: u16 = 64;
        for nn in 0..n {
            let v = self.v;
            if v.element[nn] != Element::N || v.is_aromatic(nn) || v.deg[nn] != 3 || v.hyb[nn] != 3
            {
                continue;
            }
            let nbrs: Vec<usize> = v.neighbours(nn).map(|(x, _)| x).collect();
            let carbonyl = nbrs.iter().position(|&c| {
                v.element[c] == Element::C
                    && v.neighbours(c)
                        .any(|(o, k)| k == DOUBLE && v.element[o] == Element::O)
            });
            let Some(ci) = carbonyl else { continue };
            let rest: Vec<usize> = nbrs
                .iter()
                .enumerate()
                .filter(|&(i, _)| i != ci)
                .map(|(_, &x)| x)
                .collect();
            let (r1, r2) = (rest[0], rest[1]);
            if self.orb[r1] != self.orb[r2] {
                continue;
            }
            // Branch reachable from r2 without passing through N.
            let branch = v.branch(r2, nn);
            if branch >> r1 & 1 == 1 {
                continue; // the two substituents form a ring
            }
            // Fresh ids for the branch's orbits (consistently per old id).
            let mut map = [u16::MAX; 256];
            for x in bits(branch) {
                let old = self.orb[x] as usize;
                if map[old] == u16::MAX {
                    map[old] = fresh;
                    fresh += 1;
                }
                if map[old] > 255 {
                    return; // more rotamer branches than ids: keep the plain orbits
                }
                self.orb[x] = map[old] as u8;
            }
            // Both branches carry the note.
            self.rotamer |= branch | self.v.branch(r1, nn);
        }
    }
}

/// Is there an sp3 carbon with four different substituents? Neighbours in
/// different orbits head different branches (an automorphism fixing the
/// centre would map one onto the other), so distinct orbits suffice.
pub(super) fn has_stereocentre(v: &View, orb: &[u8]) -> bool {
    stereocentres(v, orb) != 0
}

/// The stereocentres of [`has_stereocentre`] as an atom mask.
pub(super) fn stereocentres(v: &View, orb: &[u8]) -> u64 {
    (0..v.n)
        .filter(|&x| {
            if v.hyb[x] != 3 || v.element[x] != Element::C || v.deg[x] + v.h[x] != 4 || v.h[x] > 1 {
                return false;
            }
            let mut seen = [u8::MAX; 4];
            for (k, (b, _)) in v.neighbours(x).enumerate() {
                let o = orb[b];
                if seen[..k].contains(&o) {
                    return false;
                }
                seen[k] = o;
            }
            true
        })
        .fold(0u64, |m, x| m | 1u64 << x)
}

/// For an orbit `atoms` of methyl carbons: when every methyl sits on a
/// prochiral sp3 carbon that carries exactly two of them and whose other
/// two places differ (an H and a heavy atom, or two heavy atoms in
/// different orbits), the first methyl of each such pair (a half of the
/// orbit); else 0. The caller checks for a stereocentre: only then are the
/// two methyls diastereotopic.
pub(super) fn methyl_pair_half(v: &View, orb: &[u8], atoms: u64) -> u64 {
    let mut half = 0u64;
    for m in bits(atoms) {
        if v.element[m] != Element::C || v.h[m] != 3 || v.deg[m] != 1 {
            return 0;
        }
        let Some((p, _)) = v.neighbours(m).next() else {
            return 0;
        };
        if v.element[p] != Element::C || v.hyb[p] != 3 || v.deg[p] + v.h[p] != 4 {
            return 0;
        }
        let mut pair = 0u64;
        let mut others = [u8::MAX; 2];
        let mut k = 0;
        for (x, _) in v.neighbours(p) {
            if atoms >> x & 1 == 1 {
                pair |= 1u64 << x;
            } else if k < 2 {
                others[k] = orb[x];
                k += 1;
            } else {
                return 0;
            }
        }
        let differ = match (v.h[p], k) {
            (1, 1) => true,
            (0, 2) => others[0] != others[1],
            _ => false,
        };
        if pair.count_ones() != 2 || !differ {
            return 0;
        }
        half |= pair & pair.wrapping_neg();
    }
    half
}
