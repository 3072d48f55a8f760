//! The fragment library: increment tables, coupling constants, solvents and
//! the rooted patterns that name substituent classes, read from the TOML
//! files of `fragment-library/` and compiled once into flat lookup tables.
//!
//! The files are embedded in the binary (`include_str!`); a folder given with
//! `--library DIR` replaces any file it holds (same file name), so a user can
//! extend or correct a table without rebuilding. Every row must carry a
//! `source`; a row without one, an unknown class name, or a pattern that does
//! not parse is a load error naming the file and the entry.
//!
//! Compilation resolves each class's fallback chain (`parent`) against each
//! table once, so that the hot path looks a substituent up by index.

use super::pattern::Pattern;
use super::root_index::RootIndex;
use super::view::View;
use crate::error::{Error, Result};
use serde::Deserialize;
use std::hash::BuildHasherDefault;
use std::path::Path;

/// The library files, by name, with their embedded text.
pub const FILES: [(&str, &str); 15] = [
    (
        "substituents.toml",
        include_str!("../../fragment-library/substituents.toml"),
    ),
    ("sp3.toml", include_str!("../../fragment-library/sp3.toml")),
    (
        "alkene.toml",
        include_str!("../../fragment-library/alkene.toml"),
    ),
    (
        "benzene.toml",
        include_str!("../../fragment-library/benzene.toml"),
    ),
    (
        "heteroaromatic.toml",
        include_str!("../../fragment-library/heteroaromatic.toml"),
    ),
    (
        "special.toml",
        include_str!("../../fragment-library/special.toml"),
    ),
    (
        "couplings.toml",
        include_str!("../../fragment-library/couplings.toml"),
    ),
    (
        "solvents.toml",
        include_str!("../../fragment-library/solvents.toml"),
    ),
    (
        "h-groups.toml",
        include_str!("../../fragment-library/h-groups.toml"),
    ),
    (
        "carbon-sp3.toml",
        include_str!("../../fragment-library/carbon-sp3.toml"),
    ),
    (
        "carbon-alkene.toml",
        include_str!("../../fragment-library/carbon-alkene.toml"),
    ),
    (
        "carbon-benzene.toml",
        include_str!("../../fragment-library/carbon-benzene.toml"),
    ),
    (
        "carbon-heteroaromatic.toml",
        include_str!("../../fragment-library/carbon-heteroaromatic.toml"),
    ),
    (
        "carbon-special.toml",
        include_str!("../../fragment-library/carbon-special.toml"),
    ),
    (
        "README.md",
        include_str!("../../fragment-library/README.md"),
    ),
];

/// Kinds of H-H coupling the library gives a J for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CouplingKind {
    VicinalSp3,
    VicinalSp3Sp2,
    /// H-C(sp3)-C(sp2)=C in a five-membered ring (cyclopent-2-enone H3/H4).
    VicinalSp3Sp2Ring5,
    VicinalSp2Sp2,
    VinylCis,
    VinylTrans,
    VinylCisRing,
    /// Cis H-C=C-H in a five-membered ring (cyclopentene, cyclopent-2-enone).
    VinylCisRing5,
    GeminalSp2,
    /// =CH2 on an alkene carbon that carries two carbon substituents.
    GeminalSp2Alkyl,
    /// The two H of a CH2 on an sp3 carbon, when they give two signals.
    GeminalSp3,
    AromaticOrtho,
    /// Ortho H pair on the two beta atoms of a ring ortho-fused to another
    /// six-membered aromatic ring (naphthalene H2/H3).
    AromaticOrthoBeta,
    AromaticMeta,
    /// Meta H on a benzene-type ring whose atom between them carries an H.
    AromaticMetaCh,
    AromaticPara,
    AromaticOther,
    AldehydeSp3,
    AldehydeSp2,
    Allylic,
    HydroxylCh,
    AmideNhCh,
    /// H-C-F: one F on the H's carbon (CH2F), two (CHF2).
    HfGeminalOne,
    HfGeminalTwo,
    /// H-C-C-F by the number of F on the far carbon (1, 2, 3).
    HfVicinalOne,
    HfVicinalTwo,
    HfVicinalThree,
    /// Ring H to ring F: ortho (three bonds) and meta (four bonds).
    HfAromaticOrtho,
    HfAromaticMeta,
    /// H-C-P: P(V) (a P=O or P=S bond) and P(III).
    HpGeminalFive,
    HpGeminalThree,
    /// H-C-C-P, H-C-O-P, H-C-N-P.
    HpVicinalCarbon,
    HpVicinalOxygen,
    HpVicinalNitrogen,
    /// Ring H to P on the neighbouring ring atom (three bonds).
    HpAromaticOrtho,
}

/// Number of coupling kinds (the rows couplings.toml must have).
pub const COUPLING_KINDS: usize = 35;

impl CouplingKind {
    pub const ALL: [(CouplingKind, &'static str); COUPLING_KINDS] = [
        (CouplingKind::VicinalSp3, "vicinal_sp3"),
        (CouplingKind::VicinalSp3Sp2, "vicinal_sp3_sp2"),
        (CouplingKind::VicinalSp3Sp2Ring5, "vicinal_sp3_sp2_ring5"),
        (CouplingKind::VicinalSp2Sp2, "vicinal_sp2_sp2"),
        (CouplingKind::VinylCis, "vinyl_cis"),
        (CouplingKind::VinylTrans, "vinyl_trans"),
        (CouplingKind::VinylCisRing, "vinyl_cis_ring"),
        (CouplingKind::VinylCisRing5, "vinyl_cis_ring5"),
        (CouplingKind::GeminalSp2, "geminal_sp2"),
        (CouplingKind::GeminalSp2Alkyl, "geminal_sp2_alkyl"),
        (CouplingKind::GeminalSp3, "geminal_sp3"),
        (CouplingKind::AromaticOrtho, "aromatic_ortho"),
        (CouplingKind::AromaticOrthoBeta, "aromatic_ortho_beta"),
        (CouplingKind::AromaticMeta, "aromatic_meta"),
        (CouplingKind::AromaticMetaCh, "aromatic_meta_ch"),
        (CouplingKind::AromaticPara, "aromatic_para"),
        (CouplingKind::AromaticOther, "aromatic_other"),
        (CouplingKind::AldehydeSp3, "aldehyde_sp3"),
        (CouplingKind::AldehydeSp2, "aldehyde_sp2"),
        (CouplingKind::Allylic, "allylic"),
        (CouplingKind::HydroxylCh, "hydroxyl_ch"),
        (CouplingKind::AmideNhCh, "amide_nh_ch"),
        (CouplingKind::HfGeminalOne, "hf_geminal_one"),
        (CouplingKind::HfGeminalTwo, "hf_geminal_two"),
        (CouplingKind::HfVicinalOne, "hf_vicinal_one"),
        (CouplingKind::HfVicinalTwo, "hf_vicinal_two"),
        (CouplingKind::HfVicinalThree, "hf_vicinal_three"),
        (CouplingKind::HfAromaticOrtho, "hf_aromatic_ortho"),
        (CouplingKind::HfAromaticMeta, "hf_aromatic_meta"),
        (CouplingKind::HpGeminalFive, "hp_geminal_five"),
        (CouplingKind::HpGeminalThree, "hp_geminal_three"),
        (CouplingKind::HpVicinalCarbon, "hp_vicinal_carbon"),
        (CouplingKind::HpVicinalOxygen, "hp_vicinal_oxygen"),
        (CouplingKind::HpVicinalNitrogen, "hp_vicinal_nitrogen"),
        (CouplingKind::HpAromaticOrtho, "hp_aromatic_ortho"),
    ];
}

/// Index of a substituent class in [`Library::classes`].
pub type ClassId = u8;

pub struct Class {
    pub name: String,
    pub pattern: Pattern,
    pub parent: Option<ClassId>,
}

pub struct Sp3Table {
    pub methyl: f64,
    pub methylene: f64,
    pub methine: f64,
    pub methane: f64,
    /// Beauchamp-Marquez (alpha, beta, gamma) per class, parents resolved.
    pub abg: Vec<Option<[f64; 3]>>,
    /// Shoolery constant per class, parents resolved.
    pub shoolery: Vec<Option<f64>>,
    /// Direct CH3-X shift per class (no parent fallback: exact group only).
    pub methyl_direct: Vec<Option<f64>>,
    /// Added to the alpha constant when the carbon is a CH (no parent
    /// fallback: exact group only); the flag: only on a ring carbon.
    pub methine_alpha: Vec<Option<(f64, bool)>>,
    pub shoolery_alkyl: f64,
    /// Ring correction by ring size (index = size).
    pub ring: [Option<f64>; 9],
    pub sigma: f64,
    pub sigma_per_extra_alpha: f64,
    pub sigma_methyl_direct: f64,
    pub sigma_unknown: f64,
}

pub struct IncrementTable {
    pub base: f64,
    pub sigma: f64,
    pub sigma_unknown: f64,
    pub sigma_per_extra: f64,
    /// Three increments per class (alkene: gem, cis, trans; benzene:
    /// ortho, meta, para), parents resolved.
    pub z: Vec<Option<[f64; 3]>>,
    /// Alkene only: the endocyclic alkyl row.
    pub alkyl_ring: Option<[f64; 3]>,
    /// Benzene only: the row for a ring-fusion atom whose other ring
    /// continues through an aromatic carbon (naphthalene-like fusion).
    pub fusion: Option<[f64; 3]>,
    /// Benzene only: the row for a ring-fusion atom whose other ring, a
    /// five-membered one, continues through a pyrrole-type N (the benzo
    /// ring of indole, carbazole, benzimidazole N1); without it the N takes
    /// its substituent class's row (`aromatic_n`, falling back to `aryl`).
    pub fusion_pyrrole_n: Option<[f64; 3]>,
}

pub struct HeteroRing {
    pub name: String,
    pub size: usize,
    /// Ring heteroatom as an element with the aromatic flag.
    pub heteroatom: crate::chem::Element,
    /// The heteroatom is the N of an N-oxide (`n+` in the table, `[n+][O-]`).
    pub oxide: bool,
    pub sigma: f64,
    /// Shift per position (index = position number).
    pub shift: [Option<f64>; 5],
    /// (low position, high position, ring distance, J)
    pub couplings: Vec<(u8, u8, u8, f64)>,
}

pub struct HeteroTable {
    pub rings: Vec<HeteroRing>,
    /// Rings with more than one heteroatom: per ring size, the increments
    /// of each further pyridine-type N (two ring bonds, no H) by ring
    /// distance 1, 2, 3 from the H's carbon, and the sigma added.
    pub extra_nitrogen: Vec<(usize, [f64; 3], f64)>,
    pub generic_shift: f64,
    pub generic_sigma: f64,
    pub substituted_extra_sigma: f64,
}

pub struct Environment {
    pub name: String,
    pub pattern: Pattern,
    pub shift: f64,
    pub sigma: f64,
    pub range: (f64, f64),
    pub exchangeable: bool,
}

pub struct Solvent {
    pub name: String,
    pub aliases: Vec<String>,
    pub residual: f64,
    pub water: f64,
    /// Shift of benzene in this solvent (base of the benzene increments).
    pub benzene: Option<f64>,
    /// Environment indices whose H couple in this solvent.
    pub couples: Vec<usize>,
    /// (environment index, shift, sigma)
    pub exchange_shift: Vec<(usize, f64, f64)>,
    /// OH/NH/COOH H exchange with the solvent's deuterium (CD3OD, D2O).
    pub exchanges: bool,
}

pub struct CouplingSettings {
    pub resolved_min_hz: f64,
    pub similar_j_hz: f64,
    pub first_order_min_ratio: f64,
    /// The same for an AB-type coupling: one H on each side.
    pub first_order_min_ratio_ab: f64,
    pub para_pair_min_ratio: f64,
    /// From this spectrometer frequency on, a para pair is written m.
    pub para_pair_m_from_mhz: f64,
}

/// The compiled library.
pub struct Library {
    pub classes: Vec<Class>,
    /// Classes that can match at a root atom, in priority order (parent excluded).
    pub class_index: RootIndex,
    /// The same for the special environments (all neighbours usable).
    pub env_index: RootIndex,
    pub sp3: Sp3Table,
    pub alkene: IncrementTable,
    pub benzene: IncrementTable,
    pub hetero: HeteroTable,
    pub environments: Vec<Environment>,
    pub fallback: [(f64, f64); 4],
    pub j: [f64; COUPLING_KINDS],
    pub settings: CouplingSettings,
    pub solvents: Vec<Solvent>,
    /// 13C increment tables (`carbon-*.toml`).
    pub carbon: super::carbon::CarbonTable,
    /// 1H group terms (`h-groups.toml`).
    pub h_groups: HGroupTable,
}

/// Farthest distance (bonds from the H-bearing carbon) of a 1H group term.
pub const H_GROUP_DIST: usize = 3;

/// 1H group terms: a correction in ppm added to the shift of an H on a
/// carbon for each atom group (an atom's 13C atom type with its neighbours'
/// types and bonds, `carbon::group_name`) at 0 to [`H_GROUP_DIST`] bonds
/// from that carbon, keyed by the carbon's family (`carbon::FAMILIES`); and
/// the same kind of terms that apply only in one solvent.
/// A term written with the atom type alone (`C.ar`, no parenthesis) holds
/// for every group of that type: its key is the type with [`H_TYPE_ONLY`]
/// set, so that it never equals a group key.
#[derive(Default)]
pub struct HGroupTable {
    pub terms: HGroupTerms,
    /// Per solvent (index into [`Library::solvents`]): its own terms.
    pub solvent_terms: Vec<(usize, HGroupTerms)>,
}

/// (family << [`H_FAMILY_SHIFT`] | group key or type key) -> ppm by
/// distance: one lookup gives an atom's terms at every distance.
pub type HGroupTerms =
    std::collections::HashMap<u64, [f64; H_GROUP_DIST + 1], BuildHasherDefault<KeyHasher>>;

/// The bit that marks a type-only key (group keys use at most 6 + 7 x 6 bits).
pub const H_TYPE_ONLY: u64 = 1 << 63;
/// Where the family sits in a term key.
pub const H_FAMILY_SHIFT: u32 = 56;

/// A hasher for keys that are already well spread u64 (one multiply and a
/// shift; the table's keys are packed codes, not user input).
#[derive(Default)]
pub struct KeyHasher(u64);

impl std::hash::Hasher for KeyHasher {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.write_u64(b as u64);
        }
    }
    fn write_u64(&mut self, x: u64) {
        let h = (self.0 ^ x).wrapping_mul(0x9e37_79b9_7f4a_7c15);
        self.0 = h ^ h >> 29;
    }
}

/// Every atom within [`H_GROUP_DIST`] bonds of carbon `c`, with its distance
/// (breadth-first levels, each atom at its shortest distance; 0 is `c`).
pub fn h_group_terms(v: &View, c: usize, mut f: impl FnMut(usize, usize)) {
    let mut seen = 1u64 << c;
    let mut level = 1u64 << c;
    for d in 0..=H_GROUP_DIST {
        for x in super::view::bits(level) {
            f(d, x);
        }
        let mut next = 0u64;
        for x in super::view::bits(level) {
            next |= v.adj[x];
        }
        level = next & !seen;
        seen |= level;
    }
}

impl HGroupTable {
    pub fn is_empty(&self) -> bool {
        self.terms.is_empty() && self.solvent_terms.is_empty()
    }

    /// Per atom of the molecule, the terms (group and type-only, general
    /// and for `solvent`) it gives, by distance, to an H on a carbon of
    /// family `family`. `types`: the 13C atom types (`carbon::atom_type`).
    pub fn atom_rows(
        &self,
        v: &View,
        types: &[u8],
        family: usize,
        solvent: usize,
        rows: &mut [[f64; H_GROUP_DIST + 1]],
    ) {
        let extra = self
            .solvent_terms
            .iter()
            .find(|s| s.0 == solvent)
            .map(|s| &s.1);
        let fam = (family as u64) << H_FAMILY_SHIFT;
        for (x, row) in rows.iter_mut().enumerate().take(v.n) {
            *row = [0.0; H_GROUP_DIST + 1];
            let group = fam | super::carbon::group_key(v, types, x);
            let ty = fam | H_TYPE_ONLY | types[x] as u64;
            for t in std::iter::once(&self.terms).chain(extra) {
                for key in [group, ty] {
                    if let Some(r) = t.get(&key) {
                        for (a, b) in row.iter_mut().zip(r) {
                            *a += b;
                        }
                    }
                }
            }
        }
    }

    /// The correction for the H on carbon `c` from the atom rows of its
    /// family ([`HGroupTable::atom_rows`]).
    ///
    /// Summed in whole nano-ppm, so that the result does not depend on the
    /// order the atoms are numbered in (a float sum does, and the signals are
    /// rounded afterwards: the generator's numbering and a SMILES's must give
    /// the same shifts).
    pub fn correction(v: &View, c: usize, rows: &[[f64; H_GROUP_DIST + 1]]) -> f64 {
        let mut sum = 0i64;
        h_group_terms(v, c, |d, x| sum += (rows[x][d] * 1e9).round() as i64);
        sum as f64 * 1e-9
    }
}

// ---- file schemas ----

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ClassesFile {
    class: Vec<ClassRow>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ClassRow {
    name: String,
    pattern: String,
    parent: Option<String>,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Sourced<T> {
    #[serde(alias = "shift")]
    value: T,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Sp3File {
    base: Sp3Base,
    substituent: Vec<AbgRow>,
    shoolery: Vec<ShooleryRow>,
    methyl: Vec<MethylRow>,
    #[serde(default)]
    methine: Vec<MethineRow>,
    ring: Vec<RingRow>,
    sigma: Sp3Sigma,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct MethineRow {
    class: String,
    alpha: f64,
    #[serde(default)]
    ring_only: bool,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Sp3Base {
    methyl: Sourced<f64>,
    methylene: Sourced<f64>,
    methine: Sourced<f64>,
    methane: Sourced<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Sp3Sigma {
    additive: Sourced<f64>,
    per_extra_alpha: Sourced<f64>,
    methyl_direct: Sourced<f64>,
    unknown_substituent: Sourced<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct AbgRow {
    class: String,
    alpha: f64,
    beta: f64,
    gamma: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ShooleryRow {
    class: String,
    constant: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct MethylRow {
    class: String,
    shift: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RingRow {
    size: usize,
    correction: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct AlkeneFile {
    base: Sourced<f64>,
    sigma: Sourced<f64>,
    unknown_substituent_sigma: Sourced<f64>,
    substituent: Vec<AlkeneRow>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct AlkeneRow {
    class: String,
    gem: f64,
    cis: f64,
    trans: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct BenzeneFile {
    base: Sourced<f64>,
    sigma: Sourced<f64>,
    per_extra_substituent: Sourced<f64>,
    unknown_substituent_sigma: Sourced<f64>,
    substituent: Vec<BenzeneRow>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct BenzeneRow {
    class: String,
    ortho: f64,
    meta: f64,
    para: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct HeteroFile {
    substituted_extra_sigma: Sourced<f64>,
    generic: HeteroGeneric,
    ring: Vec<HeteroRingRow>,
    #[serde(default)]
    extra_nitrogen: Vec<ExtraNitrogenRow>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ExtraNitrogenRow {
    size: usize,
    increments: [f64; 3],
    sigma: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct HeteroGeneric {
    shift: f64,
    sigma: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct HeteroRingRow {
    name: String,
    size: usize,
    heteroatom: String,
    sigma: f64,
    positions: Vec<PositionRow>,
    source: String,
    coupling: Vec<HeteroCouplingRow>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct PositionRow {
    position: usize,
    shift: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct HeteroCouplingRow {
    positions: [u8; 2],
    distance: u8,
    j: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SpecialFile {
    environment: Vec<EnvRow>,
    fallback: FallbackRows,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct EnvRow {
    name: String,
    pattern: String,
    shift: f64,
    sigma: f64,
    range: [f64; 2],
    exchangeable: bool,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FallbackRows {
    sp3: FallbackRow,
    sp2: FallbackRow,
    sp: FallbackRow,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FallbackRow {
    shift: f64,
    sigma: f64,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct CouplingFile {
    coupling: Vec<CouplingRow>,
    settings: SettingsRows,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct CouplingRow {
    kind: String,
    j: f64,
    range: [f64; 2],
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SettingsRows {
    resolved_min_hz: Sourced<f64>,
    similar_j_hz: Sourced<f64>,
    first_order_min_ratio: Sourced<f64>,
    first_order_min_ratio_ab: Sourced<f64>,
    para_pair_min_ratio: Sourced<f64>,
    para_pair_m_from_mhz: Sourced<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SolventFile {
    solvent: Vec<SolventRow>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SolventRow {
    name: String,
    aliases: Vec<String>,
    residual: f64,
    /// Read by the spectrum side (stray-peak recognition) only.
    #[serde(default)]
    #[allow(dead_code)]
    residual_multiplicity: Option<String>,
    /// The solvent's own 13C lines; read by the spectrum side only.
    #[serde(default)]
    #[allow(dead_code)]
    carbon: Vec<f64>,
    #[serde(default)]
    exchanges: bool,
    water: f64,
    benzene: Option<f64>,
    couples: Vec<String>,
    source: String,
    #[serde(default)]
    exchange_shift: Vec<ExchangeRow>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ExchangeRow {
    environment: String,
    shift: f64,
    sigma: f64,
    source: String,
}

/// h-groups.toml: one source for the whole fit, then rows
/// `[family, distance, group, ppm, n]` (n: the H the fit saw the term on);
/// a group is a full group name or an atom type alone.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct HGroupFile {
    source: String,
    terms: Vec<HGroupRow>,
    #[serde(default)]
    solvent: Vec<HGroupSolvent>,
}

type HGroupRow = (String, u8, String, f64, u32);

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct HGroupSolvent {
    name: String,
    terms: Vec<HGroupRow>,
}

fn load_h_groups(r: &Reader, solvents: &[Solvent]) -> Result<HGroupTable> {
    let file = "h-groups.toml";
    let f: HGroupFile = r.parse(file)?;
    need_source(file, "source", &f.source)?;
    let read = |rows: &[HGroupRow], what: &str| {
        let mut map = HGroupTerms::default();
        for (i, (family, d, group, ppm, _)) in rows.iter().enumerate() {
            let bad = |why: String| {
                Error::input(format!(
                    "fragment library {file}: {what} row {} ({family} {d} {group}): {why}",
                    i + 1
                ))
            };
            let fam = super::carbon::family_index(family)
                .ok_or_else(|| bad(format!("unknown family \"{family}\"")))?;
            if *d as usize > H_GROUP_DIST {
                return Err(bad(format!("distance above {H_GROUP_DIST}")));
            }
            let key = if group.contains('(') {
                super::carbon::parse_group(group)
            } else {
                super::carbon::type_index(group).map(|t| H_TYPE_ONLY | t as u64)
            }
            .ok_or_else(|| bad("the group does not parse".to_string()))?;
            if !ppm.is_finite() {
                return Err(bad("the shift is not a number".to_string()));
            }
            let row = map
                .entry((fam as u64) << H_FAMILY_SHIFT | key)
                .or_insert([f64::NAN; H_GROUP_DIST + 1]);
            if !row[*d as usize].is_nan() {
                return Err(bad("given twice".to_string()));
            }
            row[*d as usize] = *ppm;
        }
        // Distances a group has no row for add nothing.
        for row in map.values_mut() {
            for x in row.iter_mut().filter(|x| x.is_nan()) {
                *x = 0.0;
            }
        }
        Ok(map)
    };
    let mut table = HGroupTable {
        terms: read(&f.terms, "terms")?,
        solvent_terms: Vec::new(),
    };
    for s in &f.solvent {
        let i = solvents
            .iter()
            .position(|x| x.name == s.name)
            .ok_or_else(|| {
                Error::input(format!(
                    "fragment library {file}: unknown solvent \"{}\" (see solvents.toml)",
                    s.name
                ))
            })?;
        table
            .solvent_terms
            .push((i, read(&s.terms, &format!("solvent {}", s.name))?));
    }
    Ok(table)
}

/// Reads library files: the embedded copy, or a replacement from a folder.
struct Reader<'a> {
    dir: Option<&'a Path>,
}

impl Reader<'_> {
    fn text(&self, name: &str) -> Result<String> {
        if let Some(dir) = self.dir {
            let p = dir.join(name);
            if p.exists() {
                return std::fs::read_to_string(&p)
                    .map_err(|e| Error::input(format!("cannot read {}: {e}", p.display())));
            }
        }
        let (_, t) = FILES
            .iter()
            .find(|(n, _)| *n == name)
            .expect("library file is embedded");
        Ok(t.to_string())
    }

    fn parse<T: serde::de::DeserializeOwned>(&self, name: &str) -> Result<T> {
        let text = self.text(name)?;
        toml::from_str(&text).map_err(|e| Error::input(format!("fragment library {name}: {e}")))
    }
}

pub(crate) fn need_source(file: &str, entry: &str, s: &str) -> Result<()> {
    if s.trim().is_empty() {
        return Err(Error::input(format!(
            "fragment library {file}: entry {entry} has an empty source; every row needs a citation, \"common practice\" or \"from memory\""
        )));
    }
    Ok(())
}

impl Library {
    /// The library compiled from the files embedded in the binary.
    pub fn embedded() -> Result<Library> {
        Library::load(Reader { dir: None })
    }

    /// The embedded library with any file present in `dir` replacing its
    /// embedded namesake.
    pub fn from_dir(dir: &Path) -> Result<Library> {
        if !dir.is_dir() {
            return Err(Error::input(format!(
                "--library {}: not a folder (give a folder holding fragment-library TOML files)",
                dir.display()
            )));
        }
        Library::load(Reader { dir: Some(dir) })
    }

    fn load(r: Reader) -> Result<Library> {
        let cf: ClassesFile = r.parse("substituents.toml")?;
        let mut classes: Vec<Class> = Vec::new();
        for (i, row) in cf.class.iter().enumerate() {
            need_source("substituents.toml", &row.name, &row.source)?;
            let pattern = Pattern::parse(&row.pattern).map_err(|e| {
                Error::input(format!(
                    "fragment library substituents.toml: class {}: {e}",
                    row.name
                ))
            })?;
            if classes.iter().any(|c| c.name == row.name) {
                return Err(Error::input(format!(
                    "fragment library substituents.toml: class {} defined twice (entry {})",
                    row.name,
                    i + 1
                )));
            }
            classes.push(Class {
                name: row.name.clone(),
                pattern,
                parent: None,
            });
        }
        if classes.len() > 250 {
            return Err(Error::input(
                "fragment library substituents.toml: at most 250 classes",
            ));
        }
        for row in &cf.class {
            if let Some(p) = &row.parent {
                let pid = class_id(&classes, "substituents.toml", p)?;
                let me = class_id(&classes, "substituents.toml", &row.name)?;
                classes[me as usize].parent = Some(pid);
            }
        }
        // Parent chains must end (no cycles).
        for (i, _) in classes.iter().enumerate() {
            let mut c = Some(i as ClassId);
            let mut steps = 0;
            while let Some(x) = c {
                c = classes[x as usize].parent;
                steps += 1;
                if steps > classes.len() {
                    return Err(Error::input(format!(
                        "fragment library substituents.toml: the parent chain of {} loops",
                        classes[i].name
                    )));
                }
            }
        }
        let nc = classes.len();

        // sp3
        let f: Sp3File = r.parse("sp3.toml")?;
        let file = "sp3.toml";
        for (k, s) in [
            ("base.methyl", &f.base.methyl.source),
            ("base.methylene", &f.base.methylene.source),
            ("base.methine", &f.base.methine.source),
            ("base.methane", &f.base.methane.source),
            ("sigma.additive", &f.sigma.additive.source),
            ("sigma.per_extra_alpha", &f.sigma.per_extra_alpha.source),
            ("sigma.methyl_direct", &f.sigma.methyl_direct.source),
            (
                "sigma.unknown_substituent",
                &f.sigma.unknown_substituent.source,
            ),
        ] {
            need_source(file, k, s)?;
        }
        let mut abg = vec![None; nc];
        for row in &f.substituent {
            need_source(file, &row.class, &row.source)?;
            abg[class_id(&classes, file, &row.class)? as usize] =
                Some([row.alpha, row.beta, row.gamma]);
        }
        let mut shoolery = vec![None; nc];
        let mut shoolery_alkyl = None;
        for row in &f.shoolery {
            need_source(file, &row.class, &row.source)?;
            shoolery[class_id(&classes, file, &row.class)? as usize] = Some(row.constant);
            if row.class == "alkyl" {
                shoolery_alkyl = Some(row.constant);
            }
        }
        let mut methyl_direct = vec![None; nc];
        for row in &f.methyl {
            need_source(file, &row.class, &row.source)?;
            methyl_direct[class_id(&classes, file, &row.class)? as usize] = Some(row.shift);
        }
        let mut methine_alpha = vec![None; nc];
        for row in &f.methine {
            need_source(file, &row.class, &row.source)?;
            methine_alpha[class_id(&classes, file, &row.class)? as usize] =
                Some((row.alpha, row.ring_only));
        }
        let mut ring = [None; 9];
        for row in &f.ring {
            need_source(file, &format!("ring size {}", row.size), &row.source)?;
            if !(3..=8).contains(&row.size) {
                return Err(Error::input(format!(
                    "fragment library {file}: ring size {} (3-8 only)",
                    row.size
                )));
            }
            ring[row.size] = Some(row.correction);
        }
        let sp3 = Sp3Table {
            methyl: f.base.methyl.value,
            methylene: f.base.methylene.value,
            methine: f.base.methine.value,
            methane: f.base.methane.value,
            abg: resolve(&classes, &abg),
            shoolery: resolve(&classes, &shoolery),
            methyl_direct,
            methine_alpha,
            shoolery_alkyl: shoolery_alkyl.ok_or_else(|| {
                Error::input(format!(
                    "fragment library {file}: needs a [[shoolery]] row for class alkyl"
                ))
            })?,
            ring,
            sigma: f.sigma.additive.value,
            sigma_per_extra_alpha: f.sigma.per_extra_alpha.value,
            sigma_methyl_direct: f.sigma.methyl_direct.value,
            sigma_unknown: f.sigma.unknown_substituent.value,
        };

        // alkene
        let f: AlkeneFile = r.parse("alkene.toml")?;
        let file = "alkene.toml";
        need_source(file, "base", &f.base.source)?;
        need_source(file, "sigma", &f.sigma.source)?;
        need_source(
            file,
            "unknown_substituent_sigma",
            &f.unknown_substituent_sigma.source,
        )?;
        let mut z = vec![None; nc];
        let mut alkyl_ring = None;
        for row in &f.substituent {
            need_source(file, &row.class, &row.source)?;
            let v = [row.gem, row.cis, row.trans];
            if row.class == "alkyl_ring" {
                alkyl_ring = Some(v);
            } else {
                z[class_id(&classes, file, &row.class)? as usize] = Some(v);
            }
        }
        let alkene = IncrementTable {
            base: f.base.value,
            sigma: f.sigma.value,
            sigma_unknown: f.unknown_substituent_sigma.value,
            sigma_per_extra: 0.0,
            z: resolve(&classes, &z),
            alkyl_ring,
            fusion: None,
            fusion_pyrrole_n: None,
        };

        // benzene
        let f: BenzeneFile = r.parse("benzene.toml")?;
        let file = "benzene.toml";
        need_source(file, "base", &f.base.source)?;
        need_source(file, "sigma", &f.sigma.source)?;
        need_source(
            file,
            "per_extra_substituent",
            &f.per_extra_substituent.source,
        )?;
        need_source(
            file,
            "unknown_substituent_sigma",
            &f.unknown_substituent_sigma.source,
        )?;
        let mut z = vec![None; nc];
        let mut fusion = None;
        let mut fusion_pyrrole_n = None;
        for row in &f.substituent {
            need_source(file, &row.class, &row.source)?;
            let v = [row.ortho, row.meta, row.para];
            if row.class == "ring_fusion" {
                fusion = Some(v);
            } else if row.class == "ring_fusion_pyrrole_n" {
                fusion_pyrrole_n = Some(v);
            } else {
                z[class_id(&classes, file, &row.class)? as usize] = Some(v);
            }
        }
        let benzene = IncrementTable {
            base: f.base.value,
            sigma: f.sigma.value,
            sigma_unknown: f.unknown_substituent_sigma.value,
            sigma_per_extra: f.per_extra_substituent.value,
            z: resolve(&classes, &z),
            alkyl_ring: None,
            fusion,
            fusion_pyrrole_n,
        };

        // heteroaromatic
        let f: HeteroFile = r.parse("heteroaromatic.toml")?;
        let file = "heteroaromatic.toml";
        need_source(
            file,
            "substituted_extra_sigma",
            &f.substituted_extra_sigma.source,
        )?;
        need_source(file, "generic", &f.generic.source)?;
        let mut rings = Vec::new();
        for row in &f.ring {
            need_source(file, &row.name, &row.source)?;
            let heteroatom = match row.heteroatom.as_str() {
                "n" | "n+" => crate::chem::Element::N,
                "o" => crate::chem::Element::O,
                "s" => crate::chem::Element::S,
                other => {
                    return Err(Error::input(format!(
                        "fragment library {file}: ring {}: heteroatom \"{other}\" (use n, n+ for an N-oxide, o or s)",
                        row.name
                    )))
                }
            };
            if row.size != 5 && row.size != 6 {
                return Err(Error::input(format!(
                    "fragment library {file}: ring {}: size 5 or 6",
                    row.name
                )));
            }
            let mut shift = [None; 5];
            for p in &row.positions {
                if !(2..=4).contains(&p.position) {
                    return Err(Error::input(format!(
                        "fragment library {file}: ring {}: position {} (2-4)",
                        row.name, p.position
                    )));
                }
                shift[p.position] = Some(p.shift);
            }
            let mut couplings = Vec::new();
            for c in &row.coupling {
                need_source(file, &format!("{} coupling", row.name), &c.source)?;
                let (a, b) = (
                    c.positions[0].min(c.positions[1]),
                    c.positions[0].max(c.positions[1]),
                );
                couplings.push((a, b, c.distance, c.j));
            }
            rings.push(HeteroRing {
                name: row.name.clone(),
                size: row.size,
                heteroatom,
                oxide: row.heteroatom == "n+",
                sigma: row.sigma,
                shift,
                couplings,
            });
        }
        let mut extra_nitrogen = Vec::new();
        for row in &f.extra_nitrogen {
            need_source(
                file,
                &format!("extra_nitrogen size {}", row.size),
                &row.source,
            )?;
            extra_nitrogen.push((row.size, row.increments, row.sigma));
        }
        let hetero = HeteroTable {
            rings,
            extra_nitrogen,
            generic_shift: f.generic.shift,
            generic_sigma: f.generic.sigma,
            substituted_extra_sigma: f.substituted_extra_sigma.value,
        };

        // special environments
        let f: SpecialFile = r.parse("special.toml")?;
        let file = "special.toml";
        let mut environments = Vec::new();
        for row in &f.environment {
            need_source(file, &row.name, &row.source)?;
            let pattern = Pattern::parse(&row.pattern).map_err(|e| {
                Error::input(format!(
                    "fragment library {file}: environment {}: {e}",
                    row.name
                ))
            })?;
            environments.push(Environment {
                name: row.name.clone(),
                pattern,
                shift: row.shift,
                sigma: row.sigma,
                range: (row.range[0], row.range[1]),
                exchangeable: row.exchangeable,
            });
        }
        if environments.len() > 250 {
            return Err(Error::input(format!(
                "fragment library {file}: at most 250 environments"
            )));
        }
        for (k, fr) in [
            ("sp3", &f.fallback.sp3),
            ("sp2", &f.fallback.sp2),
            ("sp", &f.fallback.sp),
        ] {
            need_source(file, &format!("fallback.{k}"), &fr.source)?;
        }
        let fallback = [
            (f.fallback.sp3.shift, f.fallback.sp3.sigma),
            (f.fallback.sp.shift, f.fallback.sp.sigma),
            (f.fallback.sp2.shift, f.fallback.sp2.sigma),
            (f.fallback.sp3.shift, f.fallback.sp3.sigma),
        ];

        // couplings
        let f: CouplingFile = r.parse("couplings.toml")?;
        let file = "couplings.toml";
        let mut j = [f64::NAN; COUPLING_KINDS];
        for row in &f.coupling {
            need_source(file, &row.kind, &row.source)?;
            let Some(pos) = CouplingKind::ALL.iter().position(|(_, n)| *n == row.kind) else {
                let known: Vec<_> = CouplingKind::ALL.iter().map(|(_, n)| *n).collect();
                return Err(Error::input(format!(
                    "fragment library {file}: unknown coupling kind \"{}\" (known: {})",
                    row.kind,
                    known.join(", ")
                )));
            };
            if row.range[0] > row.j || row.j > row.range[1] {
                return Err(Error::input(format!(
                    "fragment library {file}: {}: J {} outside its range {:?}",
                    row.kind, row.j, row.range
                )));
            }
            j[pos] = row.j;
        }
        if let Some(k) = j.iter().position(|x| x.is_nan()) {
            return Err(Error::input(format!(
                "fragment library {file}: no row for coupling kind {}",
                CouplingKind::ALL[k].1
            )));
        }
        let s = &f.settings;
        for (k, src) in [
            ("resolved_min_hz", &s.resolved_min_hz.source),
            ("similar_j_hz", &s.similar_j_hz.source),
            ("first_order_min_ratio", &s.first_order_min_ratio.source),
            (
                "first_order_min_ratio_ab",
                &s.first_order_min_ratio_ab.source,
            ),
            ("para_pair_min_ratio", &s.para_pair_min_ratio.source),
            ("para_pair_m_from_mhz", &s.para_pair_m_from_mhz.source),
        ] {
            need_source(file, k, src)?;
        }
        let settings = CouplingSettings {
            resolved_min_hz: s.resolved_min_hz.value,
            similar_j_hz: s.similar_j_hz.value,
            first_order_min_ratio: s.first_order_min_ratio.value,
            first_order_min_ratio_ab: s.first_order_min_ratio_ab.value,
            para_pair_min_ratio: s.para_pair_min_ratio.value,
            para_pair_m_from_mhz: s.para_pair_m_from_mhz.value,
        };

        // solvents
        let f: SolventFile = r.parse("solvents.toml")?;
        let file = "solvents.toml";
        let env_id = |name: &str| -> Result<usize> {
            environments.iter().position(|e| e.name == name).ok_or_else(|| {
                Error::input(format!("fragment library {file}: unknown environment \"{name}\" (see special.toml)"))
            })
        };
        let mut solvents = Vec::new();
        for row in &f.solvent {
            need_source(file, &row.name, &row.source)?;
            let couples = row
                .couples
                .iter()
                .map(|c| env_id(c))
                .collect::<Result<Vec<_>>>()?;
            let mut exchange_shift = Vec::new();
            for x in &row.exchange_shift {
                need_source(file, &format!("{} {}", row.name, x.environment), &x.source)?;
                exchange_shift.push((env_id(&x.environment)?, x.shift, x.sigma));
            }
            solvents.push(Solvent {
                name: row.name.clone(),
                aliases: row.aliases.iter().map(|a| a.to_lowercase()).collect(),
                residual: row.residual,
                water: row.water,
                benzene: row.benzene,
                couples,
                exchange_shift,
                exchanges: row.exchanges,
            });
        }
        if solvents.is_empty() {
            return Err(Error::input(format!("fragment library {file}: no solvent")));
        }

        let carbon_texts = super::carbon::CARBON_FILES
            .iter()
            .map(|&name| Ok((name, r.text(name)?)))
            .collect::<Result<Vec<_>>>()?;
        let carbon = super::carbon::load(&carbon_texts)?;
        let h_groups = load_h_groups(&r, &solvents)?;

        let class_index = RootIndex::build(
            &classes.iter().map(|c| &c.pattern).collect::<Vec<_>>(),
            true,
        );
        let env_index = RootIndex::build(
            &environments.iter().map(|e| &e.pattern).collect::<Vec<_>>(),
            false,
        );
        Ok(Library {
            classes,
            class_index,
            env_index,
            sp3,
            alkene,
            benzene,
            hetero,
            environments,
            fallback,
            j,
            settings,
            solvents,
            carbon,
            h_groups,
        })
    }

    /// The substituent class of the group hanging from `parent` at `root`:
    /// the first class, in priority order, whose pattern matches there.
    #[inline]
    pub fn class_at(&self, v: &View, root: usize, parent: usize) -> Option<ClassId> {
        self.class_index
            .first_match(v, root, Some(parent), |i| &self.classes[i].pattern)
            .map(|i| i as ClassId)
    }

    /// The special environment of the H on `atom`: the first, in priority
    /// order, whose pattern matches with its root there.
    #[inline]
    pub fn environment_at(&self, v: &View, atom: usize) -> Option<usize> {
        self.env_index
            .first_match(v, atom, None, |i| &self.environments[i].pattern)
    }

    pub fn j(&self, kind: CouplingKind) -> f64 {
        self.j[kind as usize]
    }

    /// Find a solvent by name or alias (case-insensitive).
    pub fn solvent(&self, name: &str) -> Option<usize> {
        let l = name.to_lowercase();
        self.solvents
            .iter()
            .position(|s| s.name.to_lowercase() == l || s.aliases.contains(&l))
    }

    pub fn class_named(&self, name: &str) -> Option<ClassId> {
        self.classes
            .iter()
            .position(|c| c.name == name)
            .map(|i| i as ClassId)
    }
}

fn class_id(classes: &[Class], file: &str, name: &str) -> Result<ClassId> {
    classes
        .iter()
        .position(|c| c.name == name)
        .map(|i| i as ClassId)
        .ok_or_else(|| {
            Error::input(format!(
                "fragment library {file}: unknown substituent class \"{name}\" (classes are defined in substituents.toml)"
            ))
        })
}

/// For every class, the row of the nearest class up its parent chain.
fn resolve<T: Copy>(classes: &[Class], rows: &[Option<T>]) -> Vec<Option<T>> {
    (0..classes.len())
        .map(|i| {
            let mut c = Some(i as ClassId);
            while let Some(x) = c {
                if let Some(v) = rows[x as usize] {
                    return Some(v);
                }
                c = classes[x as usize].parent;
            }
            None
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn embedded_library_loads() {
        let lib = Library::embedded().unwrap();
        assert!(lib.classes.len() > 30);
        let hydroxyl = lib.class_named("hydroxyl").unwrap() as usize;
        // Beauchamp & Marquez 1997 (Colby table): HO- alpha 2.3, beta 0.3,
        // gamma 0.1 (the ester row was refit on measured spectra since).
        assert_eq!(lib.sp3.abg[hydroxyl], Some([2.3, 0.3, 0.1]));
        // Parent fallback: vinyloxy has its own Beauchamp-Marquez row...
        let ethyl = lib.class_named("ethyl").unwrap() as usize;
        // ...and ethyl falls back to alkyl in the alkene table.
        assert_eq!(lib.alkene.z[ethyl], Some([0.45, -0.22, -0.28]));
        assert_eq!(lib.solvent("dmso"), Some(1));
    }

    #[test]
    fn bad_folder_is_named() {
        let e = Library::from_dir(Path::new("/nonexistent-folder"))
            .err()
            .unwrap();
        assert!(e.to_string().contains("not a folder"));
    }

    #[test]
    fn bad_h_group_rows_are_named() {
        let dir = std::env::temp_dir().join(format!("isomerank-h-groups-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let row = |r: &str| format!("source = \"x\"\nterms = [{r}]\n");
        let cases = [
            (
                row(r#"["sp9", 0, "C.sp3.1", 0.1, 1]"#),
                "row 1 (sp9 0 C.sp3.1): unknown family",
            ),
            (row(r#"["sp3", 4, "C.sp3.1", 0.1, 1]"#), "distance above 3"),
            (
                row(r#"["sp3", 0, "C.sp3.1(Q)", 0.1, 1]"#),
                "the group does not parse",
            ),
            (
                row(r#"["sp3", 1, "C.sp3.1", 0.1, 1], ["sp3", 1, "C.sp3.1", 0.2, 1]"#),
                "row 2 (sp3 1 C.sp3.1): given twice",
            ),
            ("source = \"\"\nterms = []\n".to_string(), "empty source"),
            (
                "source = \"x\"\nterms = []\n[[solvent]]\nname = \"XYZ\"\nterms = []\n".to_string(),
                "unknown solvent \"XYZ\"",
            ),
        ];
        for (text, want) in &cases {
            std::fs::write(dir.join("h-groups.toml"), text).unwrap();
            let e = Library::from_dir(&dir).err().expect(want).to_string();
            assert!(e.contains("h-groups.toml") && e.contains(want), "{e}");
        }
        // The same distance of one group in two rows is refused, two
        // distances of one group are two terms.
        std::fs::write(
            dir.join("h-groups.toml"),
            row(r#"["sp3", 1, "C.sp3.1", 0.1, 1], ["sp3", 2, "C.sp3.1", 0.2, 1]"#),
        )
        .unwrap();
        let lib = Library::from_dir(&dir).unwrap();
        let key = 0u64 << H_FAMILY_SHIFT
            | H_TYPE_ONLY
            | super::super::carbon::type_index("C.sp3.1").unwrap() as u64;
        assert_eq!(lib.h_groups.terms[&key], [0.0, 0.1, 0.2, 0.0]);
        std::fs::remove_dir_all(&dir).ok();
    }
}
