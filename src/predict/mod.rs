//! Prediction of a structure's 1H multiplet list: equivalent-H groups and
//! integrals (automorphism orbits), chemical shifts from published additive
//! increments, and first-order multiplicities (n+1 rule).
//!
//! ```text
//! HeavyAtoms ──> View (neighbour tables, rings, aromaticity)    view.rs
//!            ──> groups of equivalent H (orbits, splits, flags)  groups.rs
//!            ──> shift + sigma per group (library tables)        shift.rs
//!            ──> [gate: predict_gated stops here on request]
//!            ──> J and multiplicity per group                    coupling.rs
//!            ──> Vec<PredictedSignal>, highest shift first
//! ```
//!
//! The input is anything with [`HeavyAtoms`]: a [`Molecule`], or the
//! generator's compact isomer. Orbits come from a canonical labelling, or
//! from the generator's list of skeleton automorphisms when one is passed.
//!
//! A [`Predictor`] is built once from the fragment library (embedded, or a
//! folder) and shared; [`Predictor::predict`] is cheap enough for the inner
//! loop of ranking (no subgraph search per candidate: patterns are tiny
//! rooted trees found through an index by the root's neighbourhood
//! (`root_index.rs`), and every substituent class is memoised per bond).
//! A ranking calls [`Predictor::predict_gated`] instead.
//!
//! API for callers (the ranker):
//!
//! ```no_run
//! use isomerank::predict::{PredictOptions, Predictor};
//! let p = Predictor::embedded()?;                    // once; Sync, share it
//! let mut opts = p.options("CDCl3", 400.0)?;         // solvent, MHz
//! opts.notes = false;                                // skip note strings in hot loops
//! let mol = isomerank::chem::smiles::parse_smiles("CCOC(C)=O")?;
//! for s in p.predict(&mol, &opts) {                  // highest shift first
//!     println!("{:.2} +- {:.2} {} {}H", s.shift, s.sigma, s.label(), s.hydrogens);
//! }
//! let classes = p.symmetry_classes(&mol)?;           // per-atom symmetry class (13C count)
//! let cdcl3 = &p.library().solvents[opts.solvent];   // residual / water peaks
//! println!("{} {}", cdcl3.residual, cdcl3.water);
//! # Ok::<(), isomerank::Error>(())
//! ```
//!
//! `predict` keeps its working storage per thread; `predict_with` takes a
//! caller-owned [`Scratch`]. Measured throughput: `examples/bench_predict.rs`.

pub mod carbon;
pub(crate) mod coupling;
mod groups;
pub mod library;
pub mod pattern;
mod root_index;
mod shift;
pub mod signal;
pub mod view;

pub use library::Library;
pub use signal::{Multiplicity, PredictedCarbon, PredictedSignal};

use crate::chem::canon::{CanonGraph, Canonizer};
use crate::chem::{Element, HeavyAtoms, Molecule};
use crate::error::{Error, Result};
use std::cell::RefCell;
use std::path::Path;
use view::View;

/// What the prediction should assume about the measurement.
#[derive(Clone, Debug, PartialEq)]
pub struct PredictOptions {
    /// Index of the solvent in the library (see [`Predictor::options`]).
    pub solvent: usize,
    /// Spectrometer frequency for 1H, MHz (decides when a pattern is first order).
    pub mhz: f64,
    /// Fill `notes` (diastereotopic, exchangeable, ...). The ranker may switch
    /// this off to save the string allocations.
    pub notes: bool,
    /// Predict the 13C list as well in [`Predictor::predict_gated`] (the
    /// gate sees it). Off by default: 1H-only ranking does no 13C work.
    pub carbon: bool,
}

impl Default for PredictOptions {
    /// CDCl3 (the first solvent of the library), 400 MHz, with notes.
    fn default() -> Self {
        PredictOptions {
            solvent: 0,
            mhz: 400.0,
            notes: true,
            carbon: false,
        }
    }
}

/// The predictor: the compiled fragment library.
pub struct Predictor {
    lib: Library,
}

/// Reusable working storage: the molecule view, canonical labelling
/// buffers and group lists (so a warmed-up prediction allocates only the
/// signals it returns).
pub struct Scratch {
    canon: Canonizer,
    graph: Box<CanonGraph>,
    view: Box<View>,
    groups: Vec<Group>,
    estimates: Vec<ShiftEstimate>,
    carbons: Vec<PredictedCarbon>,
}

impl Default for Scratch {
    fn default() -> Self {
        Scratch {
            canon: Canonizer::default(),
            graph: Box::new(CanonGraph::new(0)),
            view: Box::new(View::empty()),
            groups: Vec::new(),
            estimates: Vec::new(),
            carbons: Vec::new(),
        }
    }
}

thread_local! {
    static SCRATCH: RefCell<Scratch> = RefCell::new(Scratch::default());
}

impl Predictor {
    /// The predictor over the library embedded in the binary.
    pub fn embedded() -> Result<Predictor> {
        Ok(Predictor {
            lib: Library::embedded()?,
        })
    }

    /// The embedded library with the files found in `dir` replacing theirs.
    pub fn from_dir(dir: &Path) -> Result<Predictor> {
        Ok(Predictor {
            lib: Library::from_dir(dir)?,
        })
    }

    pub fn library(&self) -> &Library {
        &self.lib
    }

    /// Options for a solvent named as in the library (case-insensitive, with
    /// aliases such as "dmso") and a spectrometer frequency.
    pub fn options(&self, solvent: &str, mhz: f64) -> Result<PredictOptions> {
        let Some(s) = self.lib.solvent(solvent) else {
            let known: Vec<_> = self.lib.solvents.iter().map(|s| s.name.as_str()).collect();
            return Err(Error::input(format!(
                "unknown solvent \"{solvent}\" (known: {})",
                known.join(", ")
            )));
        };
        if !(mhz.is_finite() && (20.0..=2000.0).contains(&mhz)) {
            return Err(Error::input(format!(
                "spectrometer frequency {mhz} MHz is out of range (give 20-2000, e.g. 400)"
            )));
        }
        Ok(PredictOptions {
            solvent: s,
            mhz,
            notes: true,
            carbon: false,
        })
    }

    /// Topological symmetry classes of the heavy atoms (automorphism orbits
    /// of the molecular graph, aromatic bonds as one bond colour): class id
    /// per atom, equal ids for equivalent atoms. The H groups of a
    /// prediction are these classes before the amide and =CH2 splits; the
    /// carbon classes count the expected 13C signals.
    pub fn symmetry_classes(&self, mol: &Molecule) -> Result<Vec<usize>> {
        self.with_orbits(mol, |v, orb| {
            orb[..v.n].iter().map(|&o| o as usize).collect()
        })
    }

    /// Run `f` on `mol`'s view and orbit ids (canonical labelling), with
    /// this thread's working storage.
    fn with_orbits<R>(&self, mol: &Molecule, f: impl FnOnce(&View, &[u8]) -> R) -> Result<R> {
        SCRATCH.with(|s| {
            let s = &mut *s.borrow_mut();
            s.view.fill(mol).map_err(Error::input)?;
            let opts = PredictOptions::default();
            let mut ctx = Ctx::new(&self.lib, &s.view, &opts);
            ctx.orbits(&mut s.canon, &mut s.graph, None);
            Ok(f(&s.view, &ctx.orb))
        })
    }

    /// Predicted 13C list, one [`PredictedCarbon`] per carbon symmetry
    /// class, highest shift first. A molecule the predictor cannot hold
    /// gives an empty list; [`Predictor::try_predict_carbon`] says why.
    pub fn predict_carbon(&self, mol: &Molecule, opts: &PredictOptions) -> Vec<PredictedCarbon> {
        self.try_predict_carbon(mol, opts).unwrap_or_default()
    }

    /// Predicted 13C list, or an input error naming what cannot be predicted.
    /// Only the symmetry classes and the carbon increments are computed (no
    /// 1H groups).
    pub fn try_predict_carbon(
        &self,
        mol: &Molecule,
        opts: &PredictOptions,
    ) -> Result<Vec<PredictedCarbon>> {
        let _ = opts; // the 13C list does not depend on solvent or frequency (yet)
        self.with_orbits(mol, |v, orb| {
            let mut out = Vec::new();
            carbon::CarbonCtx::new(&self.lib.carbon, v).predict(orb, &mut out);
            out
        })
    }

    /// Predicted signals, highest shift first. A molecule the predictor
    /// cannot hold (more than 64 heavy atoms, explicit H atoms) gives an
    /// empty list; [`Predictor::try_predict`] says why.
    pub fn predict(&self, mol: &Molecule, opts: &PredictOptions) -> Vec<PredictedSignal> {
        self.try_predict(mol, opts).unwrap_or_default()
    }

    /// Predicted signals, or an input error naming what cannot be predicted.
    pub fn try_predict(
        &self,
        mol: &Molecule,
        opts: &PredictOptions,
    ) -> Result<Vec<PredictedSignal>> {
        SCRATCH.with(|s| self.predict_with(mol, opts, &mut s.borrow_mut()))
    }

    /// As [`Predictor::try_predict`] with caller-owned working storage.
    pub fn predict_with(
        &self,
        mol: &Molecule,
        opts: &PredictOptions,
        scratch: &mut Scratch,
    ) -> Result<Vec<PredictedSignal>> {
        let opts = &PredictOptions {
            carbon: false,
            ..opts.clone()
        };
        let all = self.predict_gated(mol, opts, None, scratch, &mut |_, _| true)?;
        Ok(all
            .expect("an open gate always lets the prediction finish")
            .signals)
    }

    /// Prediction in two steps, for the inner loop of a ranking. After the
    /// groups and their shifts are known (before multiplicities and J, which
    /// cost about a third of the work), `gate` sees one [`ShiftEstimate`]
    /// per group, rounded as the final signals are, and the 13C list when
    /// `opts.carbon` (empty otherwise; shifts rounded to 0.1 ppm); when it
    /// returns false the prediction stops and `Ok(None)` comes back. A
    /// ranking passes a lower bound of the score there and skips the rest
    /// for hopeless candidates.
    ///
    /// `symmetry`: every non-identity automorphism of the molecule's skeleton
    /// (the simple graph of its bonds with atoms coloured by element), in the
    /// molecule's atom numbering, as the generator lists them
    /// (`enumerate::Isomer::skeleton_automorphisms`); the equivalent-H groups
    /// then come from that list without a canonical labelling. The caller
    /// vouches that the list is the whole group; `None` computes it.
    pub fn predict_gated(
        &self,
        mol: &(impl HeavyAtoms + ?Sized),
        opts: &PredictOptions,
        symmetry: Option<&[[u8; 64]]>,
        scratch: &mut Scratch,
        gate: &mut dyn FnMut(&[ShiftEstimate], &[PredictedCarbon]) -> bool,
    ) -> Result<Option<Prediction>> {
        if opts.solvent >= self.lib.solvents.len() {
            return Err(Error::input(format!(
                "solvent index {} is not in the library",
                opts.solvent
            )));
        }
        scratch.view.fill(mol).map_err(Error::input)?;
        let mut ctx = Ctx::new(&self.lib, &scratch.view, opts);
        ctx.orbits(&mut scratch.canon, &mut scratch.graph, symmetry);
        // Carbon classes are the plain orbits: read them before the amide
        // rotation split refines `orb` for the H groups.
        if opts.carbon {
            carbon::CarbonCtx::new(&self.lib.carbon, &scratch.view)
                .predict(&ctx.orb, &mut scratch.carbons);
        } else {
            scratch.carbons.clear();
        }
        let groups = &mut scratch.groups;
        ctx.build_groups(groups);
        ctx.shifts(groups);
        scratch.estimates.clear();
        scratch
            .estimates
            .extend(groups.iter().map(|g| ShiftEstimate {
                shift: round2(g.shift),
                sigma: round2(g.sigma),
                hydrogens: g.hydrogens(),
                exchangeable: g.exchangeable,
                halves: g.half != 0,
            }));
        if !gate(&scratch.estimates, &scratch.carbons) {
            return Ok(None);
        }
        let mult = ctx.multiplicities(groups);
        Ok(Some(Prediction {
            signals: ctx.signals(groups, mult),
            carbons: scratch.carbons.clone(),
        }))
    }

    /// [`Predictor::predict_gated`] with this thread's working storage.
    pub fn predict_gated_here(
        &self,
        mol: &(impl HeavyAtoms + ?Sized),
        opts: &PredictOptions,
        symmetry: Option<&[[u8; 64]]>,
        gate: &mut dyn FnMut(&[ShiftEstimate], &[PredictedCarbon]) -> bool,
    ) -> Result<Option<Prediction>> {
        SCRATCH.with(|s| self.predict_gated(mol, opts, symmetry, &mut s.borrow_mut(), gate))
    }
}

/// A full prediction: the 1H multiplet list and the 13C list (empty
/// unless [`PredictOptions::carbon`]), each highest shift first.
#[derive(Clone, Debug, PartialEq)]
pub struct Prediction {
    pub signals: Vec<PredictedSignal>,
    pub carbons: Vec<PredictedCarbon>,
}

/// One group's shift as the gate of [`Predictor::predict_gated`] sees it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ShiftEstimate {
    pub shift: f64,
    pub sigma: f64,
    pub hydrogens: u32,
    pub exchangeable: bool,
    /// The group is a diastereotopic pair that may be read as two halves
    /// (see [`PredictedSignal::halves`]).
    pub halves: bool,
}

impl ShiftEstimate {
    /// What the gate saw of a finished signal (its shift, sigma, H count
    /// and flags).
    pub fn of(s: &PredictedSignal) -> ShiftEstimate {
        ShiftEstimate {
            shift: s.shift,
            sigma: s.sigma,
            hydrogens: s.hydrogens,
            exchangeable: s.exchangeable,
            halves: s.halves,
        }
    }
}

/// Shifts and sigmas are reported to 0.01 ppm. The table values have at
/// most three decimals, so a sum can land exactly on a half (1.405); float
/// sums in another atom order differ in the last bits and would round that
/// half either way. Snapping to 1e-7 ppm first makes the result independent
/// of the atom numbering.
pub(super) fn round2(x: f64) -> f64 {
    let snapped = (x * 1e7).round();
    (snapped / 1e5).round() / 100.0
}

/// Notes a group can carry (bit flags, turned into words at the end).
pub(crate) mod note {
    pub const DIASTEREOTOPIC: u32 = 1;
    pub const EXCHANGEABLE: u32 = 1 << 1;
    pub const EXCHANGE_COUPLES: u32 = 1 << 2;
    pub const EZ_ASSUMED: u32 = 1 << 3;
    pub const AMIDE_ROTAMER: u32 = 1 << 4;
    pub const MONO_RING: u32 = 1 << 5;
    pub const SECOND_ORDER: u32 = 1 << 6;
    pub const MAGNETIC: u32 = 1 << 7;
    pub const PARA_PAIR: u32 = 1 << 8;
    pub const RING_SP3: u32 = 1 << 9;
    pub const UNKNOWN_SUBSTITUENT: u32 = 1 << 10;
    pub const FALLBACK: u32 = 1 << 11;
    pub const SHOOLERY: u32 = 1 << 12;
    pub const VINYL_PAIR: u32 = 1 << 13;
    pub const RANGE: u32 = 1 << 14;
    pub const PARA_PAIR_M: u32 = 1 << 15;
}

/// How a group's shift was obtained.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Method {
    /// A special environment (index into `Library::environments`).
    Special(usize),
    Benzene,
    Hetero,
    Alkene,
    Sp3,
    Fallback,
}

/// One group of equivalent H (one predicted signal).
#[derive(Clone, Debug)]
pub(crate) struct Group {
    /// Heavy atoms carrying the H of this group.
    pub atoms: u64,
    /// Representative atom (the lowest index).
    pub rep: usize,
    /// H per atom that belong to this group.
    pub hs: u8,
    /// 0: all H of the atom; 1/2: one H of a =CH2 whose two H differ
    /// (1 = cis to the reference substituent of the far carbon, 2 = trans).
    pub slot: u8,
    pub method: Method,
    pub shift: f64,
    pub sigma: f64,
    pub exchangeable: bool,
    pub notes: u32,
    /// A diastereotopic pair that may be read as two halves: the atoms of
    /// the first half (two methyls per prochiral carbon: one of each
    /// pair), or all the atoms (a CH2's two H: one H of each atom per
    /// half); 0 when the group is no such pair.
    pub half: u64,
}

impl Group {
    pub fn hydrogens(&self) -> u32 {
        self.atoms.count_ones() * self.hs as u32
    }
}

/// The multiplicity found for one group.
#[derive(Clone, Debug)]
pub(crate) struct Mult {
    pub multiplicity: Multiplicity,
    pub j: Vec<f64>,
    pub notes: u32,
    /// For a diastereotopic CH2 pair: one H's pattern read apart.
    pub half: Option<(Multiplicity, Vec<f64>)>,
}

/// Everything known about one candidate while it is predicted.
pub(crate) struct Ctx<'a> {
    pub lib: &'a Library,
    pub v: &'a View,
    pub opts: &'a PredictOptions,
    /// Orbit id per atom (refined by the amide-rotation split).
    pub orb: [u8; view::MAX_ATOMS],
    /// Substituent class memo per (parent atom, neighbour slot): the class
    /// of the group at that neighbour seen from the parent; 255 not
    /// computed, 254 no class.
    memo: [[u8; view::MAX_DEGREE]; view::MAX_ATOMS],
    /// Special environment per atom (index + 1; 0 none), filled by grouping.
    pub env: [u8; view::MAX_ATOMS],
    pub has_stereocentre: bool,
    /// The stereocentres (atom mask; see `groups::stereocentres`).
    pub stereocentres: u64,
    /// Atoms of tertiary-amide N-substituents split by slow C-N rotation.
    pub rotamer: u64,
    /// Per alkene carbon with two heavy substituents: how their reference
    /// keys compare (0 not yet known; 1, 2, 3: less, equal, greater), see
    /// `Ctx::alkene_reference_order`.
    reference_order: [std::cell::Cell<u8>; view::MAX_ATOMS],
}

const MEMO_UNSET: u8 = 255;
const MEMO_NONE: u8 = 254;

impl<'a> Ctx<'a> {
    fn new(lib: &'a Library, v: &'a View, opts: &'a PredictOptions) -> Ctx<'a> {
        Ctx {
            lib,
            v,
            opts,
            orb: [0; view::MAX_ATOMS],
            memo: [[MEMO_UNSET; view::MAX_DEGREE]; view::MAX_ATOMS],
            env: [0; view::MAX_ATOMS],
            has_stereocentre: false,
            stereocentres: 0,
            rotamer: 0,
            reference_order: [const { std::cell::Cell::new(0) }; view::MAX_ATOMS],
        }
    }

    /// Automorphism orbits of the molecular graph (vertex colour: element
    /// and H count; edge colour: bond order, aromatic bonds as one colour so
    /// that Kekulé forms do not break the ring's symmetry).
    ///
    /// With `skeleton` (every non-identity automorphism of the simple graph
    /// of the bonds, atoms coloured by element, as the generator lists them)
    /// the orbits come from the automorphisms that also keep every bond kind
    /// and H count: those are exactly the molecule's automorphisms, and the
    /// list is the whole group, so the orbit of `a` is the set of its images.
    /// That needs no canonical labelling. The labelling still runs when the
    /// orbit ids must be canonical positions (see [`Ctx::needs_canonical_ids`]).
    fn orbits(&mut self, canon: &mut Canonizer, g: &mut CanonGraph, skeleton: Option<&[[u8; 64]]>) {
        if let Some(auts) = skeleton {
            self.orbits_from(auts);
            if !self.needs_canonical_ids() {
                return;
            }
        }
        self.canonical_orbits(canon, g);
    }

    /// Orbit id = the smallest atom index of the orbit.
    fn orbits_from(&mut self, auts: &[[u8; 64]]) {
        let v = self.v;
        let n = v.n;
        for a in 0..n {
            self.orb[a] = a as u8;
        }
        'perm: for g in auts {
            for a in 0..n {
                let ga = g[a] as usize;
                if v.h[ga] != v.h[a] {
                    continue 'perm;
                }
                for (b, kind) in v.neighbours(a) {
                    if v.bond_between(ga, g[b] as usize) != kind {
                        continue 'perm;
                    }
                }
            }
            for (o, &ga) in self.orb[..n].iter_mut().zip(&g[..n]) {
                *o = (*o).min(ga);
            }
        }
    }

    /// Whether some rule reads the order of two orbit ids (not only their
    /// equality): the E/Z reference of an alkene carbon whose two heavy
    /// substituents tie on `alkene_reference_key` but are not equivalent
    /// falls back to the lower orbit id, which must then be a canonical
    /// position (the same whatever the input's atom numbering).
    fn needs_canonical_ids(&self) -> bool {
        let v = self.v;
        (0..v.n).any(|c2| {
            if v.element[c2] != Element::C || v.deg[c2] != 3 {
                return false;
            }
            // Only an alkene H on c1 with one heavy substituent is placed
            // cis or trans to c2's reference (`shift::alkene_places`).
            v.neighbours(c2).any(|(c1, k)| {
                k == view::DOUBLE
                    && v.element[c1] == Element::C
                    && v.h[c1] >= 1
                    && v.deg[c1] == 2
                    && {
                        let mut others = v.neighbours(c2).map(|x| x.0).filter(|&x| x != c1);
                        let (x, y) = (others.next(), others.next());
                        matches!((x, y), (Some(x), Some(y)) if self.orb[x] != self.orb[y]
                        && self.alkene_reference_order(c2, x, y).is_eq())
                    }
            })
        })
    }

    /// Orbits from a canonical labelling; orbit id = the canonical position
    /// of the orbit's first atom.
    fn canonical_orbits(&mut self, canon: &mut Canonizer, g: &mut CanonGraph) {
        let v = self.v;
        // Reuse the graph: clear only the rows in use, then set each bond's
        // bit in its colour layer (a fresh graph has no edges to remove).
        g.n = v.n;
        for layer in g.adj.iter_mut() {
            layer[..v.n].fill(0);
        }
        for a in 0..v.n {
            g.colour[a] = (v.element[a].heavy_index().unwrap_or(0) as u32) << 4 | v.h[a] as u32;
            for (b, kind) in v.neighbours(a) {
                g.adj[kind as usize - 1][a] |= 1u64 << b;
            }
        }
        if v.n == 0 {
            return;
        }
        canon.run(g);
        let order = canon.order();
        let mut done = 0u64;
        for (p, &va) in order.iter().enumerate() {
            if done >> va & 1 == 1 {
                continue;
            }
            let m = canon.orbit_at(p);
            for u in view::bits(m) {
                self.orb[u] = p as u8;
            }
            done |= m;
        }
    }

    /// The substituent class of the group hanging from `parent` at `root`
    /// (memoised per bond).
    pub fn class_of(&mut self, root: usize, parent: usize) -> Option<library::ClassId> {
        let k = (0..self.v.deg[parent] as usize)
            .find(|&k| self.v.nbr[parent][k] as usize == root)
            .expect("root is a neighbour of parent");
        self.class_via(parent, k)
    }

    /// [`Ctx::class_of`] for the group at `parent`'s neighbour slot `k`
    /// (callers walking `parent`'s neighbours know the slot: no search).
    pub fn class_via(&mut self, parent: usize, k: usize) -> Option<library::ClassId> {
        match self.memo[parent][k] {
            MEMO_UNSET => {
                let root = self.v.nbr[parent][k] as usize;
                let found = self.lib.class_at(self.v, root, parent);
                self.memo[parent][k] = found.unwrap_or(MEMO_NONE);
                found
            }
            MEMO_NONE => None,
            m => Some(m),
        }
    }

    fn signals(&self, groups: &[Group], mult: Vec<Mult>) -> Vec<PredictedSignal> {
        let mut out: Vec<PredictedSignal> = groups
            .iter()
            .zip(mult)
            .map(|(g, m)| PredictedSignal {
                shift: round2(g.shift),
                sigma: round2(g.sigma),
                hydrogens: g.hydrogens(),
                multiplicity: m.multiplicity,
                j_hz: m.j,
                // A methyl pair's first half first (PredictedSignal::halves).
                atoms: if g.half != 0 && g.half != g.atoms {
                    view::bits(g.half)
                        .chain(view::bits(g.atoms & !g.half))
                        .collect()
                } else {
                    view::bits(g.atoms).collect()
                },
                exchangeable: g.exchangeable,
                halves: g.half != 0,
                // A CH2 pair (g.half == g.atoms; a methyl pair splits its
                // atoms): each H of it split by the other when read apart.
                geminal_hz: if g.half != 0 && g.half == g.atoms && g.hs == 2 {
                    self.lib.j(library::CouplingKind::GeminalSp3)
                } else {
                    0.0
                },
                half_pattern: m.half,
                notes: if self.opts.notes {
                    self.note_words(g, g.notes | m.notes)
                } else {
                    Vec::new()
                },
            })
            .collect();
        out.sort_by(|a, b| {
            b.shift
                .partial_cmp(&a.shift)
                .unwrap_or(std::cmp::Ordering::Equal)
                .then(a.atoms.cmp(&b.atoms))
        });
        out
    }

    fn note_words(&self, g: &Group, flags: u32) -> Vec<String> {
        let solvent = &self.lib.solvents[self.opts.solvent].name;
        let exchanged = self.lib.solvents[self.opts.solvent].exchanges;
        let mut w = Vec::new();
        let mut add = |bit: u32, text: String| {
            if flags & bit != 0 {
                w.push(text);
            }
        };
        add(
            note::EXCHANGEABLE,
            if exchanged {
                format!("exchangeable H: exchanges with the deuterium of {solvent}, usually not observed (it joins the HOD peak)")
            } else {
                format!("exchangeable H: broad, concentration-dependent, may be missing; does not couple in {solvent}")
            },
        );
        add(
            note::EXCHANGE_COUPLES,
            format!(
                "exchangeable H: couples to neighbouring C-H in {solvent}; may be broad or missing"
            ),
        );
        if let Method::Special(i) = g.method {
            let e = &self.lib.environments[i];
            add(
                note::RANGE,
                format!(
                    "{}: handbook range {:.1}-{:.1} ppm",
                    e.name.replace('_', " "),
                    e.range.0,
                    e.range.1
                ),
            );
        }
        add(
            note::DIASTEREOTOPIC,
            "diastereotopic CH2 (the molecule has a stereocentre): the two H may give two signals or a complex multiplet".into(),
        );
        add(
            note::EZ_ASSUMED,
            "E/Z not given: predicted for the isomer with the main substituents trans".into(),
        );
        add(
            note::AMIDE_ROTAMER,
            "slow rotation about the amide C-N bond: the two N-substituents give separate signals"
                .into(),
        );
        add(
            note::VINYL_PAIR,
            "the two =CH2 hydrogens differ (cis/trans to the far substituent) and give separate signals".into(),
        );
        add(
            note::MONO_RING,
            "monosubstituted benzene ring: ortho, meta and para H often overlap as one 5H multiplet".into(),
        );
        add(
            note::PARA_PAIR,
            "para-disubstituted ring (AA'BB'): reported as two 2H doublets by common practice"
                .into(),
        );
        add(
            note::PARA_PAIR_M,
            format!(
                "para-disubstituted ring (AA'BB'/AA'XX', not first order): at {:.0} MHz and above its two 2H signals are mostly written m in deposited lists, below as two doublets",
                self.lib.settings.para_pair_m_from_mhz
            ),
        );
        add(
            note::MAGNETIC,
            "ring H equivalent by symmetry but coupled unequally to their partners: second-order pattern, reported as m".into(),
        );
        add(
            note::RING_SP3,
            "H on a saturated ring: unequal cis/trans couplings give a complex multiplet".into(),
        );
        add(
            note::SECOND_ORDER,
            format!(
                "shift difference to a coupled group is under {:.0} x J ({:.0} x J for a pair of single H) at {:.0} MHz: not first order, reported as m",
                self.lib.settings.first_order_min_ratio,
                self.lib.settings.first_order_min_ratio_ab,
                self.opts.mhz
            ),
        );
        add(
            note::SHOOLERY,
            "shift from Shoolery's rule (two or more functional groups on this carbon)".into(),
        );
        add(
            note::UNKNOWN_SUBSTITUENT,
            "a neighbouring group has no increment in the library: larger uncertainty".into(),
        );
        add(
            note::FALLBACK,
            "no increment rule covers this H: rough estimate from its hybridisation".into(),
        );
        w
    }
}

#[cfg(test)]
pub(crate) mod tests;
