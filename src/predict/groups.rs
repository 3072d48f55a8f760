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
//!   diastereotopic: flagged, kept as one group.

use super::view::{bits, DOUBLE};
use super::{note, Ctx, Group, Method};
use crate::chem::Element;

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
        if self.has_stereocentre {
            for g in groups.iter_mut() {
                if g.hs == 2 && self.v.hyb[g.rep] == 3 && self.v.element[g.rep] == Element::C {
                    g.notes |= note::DIASTEREOTOPIC;
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

    /// Is there an sp3 atom with four different substituents? Neighbours in
    /// different orbits head different branches (an automorphism fixing the
    /// centre would map one onto the other), so distinct orbits suffice.
    fn find_stereocentre(&self) -> bool {
        let v = self.v;
        (0..v.n).any(|x| {
            if v.hyb[x] != 3 || v.element[x] != Element::C || v.deg[x] + v.h[x] != 4 || v.h[x] > 1 {
                return false;
            }
            let mut seen = [u8::MAX; 4];
            for (k, (b, _)) in v.neighbours(x).enumerate() {
                let o = self.orb[b];
                if seen[..k].contains(&o) {
                    return false;
                }
                seen[k] = o;
            }
            true
        })
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
