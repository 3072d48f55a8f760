//! Plausibility rules: named, individually selectable filters that remove
//! structures a chemist would not expect to isolate under ordinary conditions.
//!
//! Each rule states its reason; the enumerator counts how many isomers each
//! rule flags (a structure can be flagged by several rules; each counts it).
//! Counting (`isomers`) applies none unless asked; ranking applies all by
//! default and names them in its output.

use super::generator::bits;
use super::Isomer;
use crate::chem::aromaticity::{Aromaticity, Perceiver};
use crate::chem::canon::MAX_ATOMS;
use crate::chem::flat::FlatMolecule;
use crate::chem::rings::RingInfo;
use crate::chem::Element;
use crate::error::{Error, Result};

mod large_rings;

/// One plausibility rule.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Rule {
    SmallRingTriple,
    SmallRingCumulated,
    Bredt,
    Enol,
    Peroxide,
    Hydrate,
    Iminol,
    Hypohalite,
    Thione,
    NhImine,
    SulfurYlide,
    SulfurMultiple,
    // Strained small-ring skeletons (see `small_rings`).
    SmallRingCage,
    FusedSmallRings,
    AntiaromaticThreeRing,
    // Rings of many atoms that all carry a multiple bond (see `large_rings`).
    LargeConjugatedRing,
    Cumulene,
}

impl Rule {
    pub const ALL: [Rule; 17] = [
        Rule::SmallRingTriple,
        Rule::SmallRingCumulated,
        Rule::Bredt,
        Rule::Enol,
        Rule::Peroxide,
        Rule::Hydrate,
        Rule::Iminol,
        Rule::Hypohalite,
        Rule::Thione,
        Rule::NhImine,
        Rule::SulfurYlide,
        Rule::SulfurMultiple,
        Rule::SmallRingCage,
        Rule::FusedSmallRings,
        Rule::AntiaromaticThreeRing,
        Rule::LargeConjugatedRing,
        Rule::Cumulene,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Rule::SmallRingTriple => "small-ring-triple",
            Rule::SmallRingCumulated => "small-ring-cumulated",
            Rule::Bredt => "bredt",
            Rule::Enol => "enol",
            Rule::Peroxide => "peroxide",
            Rule::Hydrate => "hydrate",
            Rule::Iminol => "iminol",
            Rule::Hypohalite => "hypohalite",
            Rule::Thione => "thione",
            Rule::NhImine => "nh-imine",
            Rule::SulfurYlide => "sulfur-ylide",
            Rule::SulfurMultiple => "sulfur-multiple",
            Rule::SmallRingCage => "small-ring-cage",
            Rule::FusedSmallRings => "fused-small-rings",
            Rule::AntiaromaticThreeRing => "antiaromatic-three-ring",
            Rule::LargeConjugatedRing => "large-conjugated-ring",
            Rule::Cumulene => "cumulene",
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
                "no enol or ynol (OH on a non-aromatic C=C or C#C carbon): these tautomerise to \
                 the carbonyl compound, which is enumerated separately; phenols and other \
                 hydroxy arenes are aromatic and kept, and so are enols whose C=C carries a \
                 C=O, C=S, C=N or C#N next to it (1,3-dicarbonyl and 1,2-dione enols, \
                 tetronic acids, reductones, aryl pyruvic acids), which conjugation and an \
                 internal hydrogen bond stabilise (common practice)"
            }
            Rule::Peroxide => {
                "no O-O bond except in a hydroperoxide on an sp3 carbon, a peroxy acid, \
                 perester or diacyl peroxide (an O-O next to a C=O) and a cyclic peroxide \
                 of 4 or more ring atoms (dioxetanes, 1,2-dioxolanes, endoperoxides, \
                 trioxanes): other peroxides (open-chain dialkyl peroxides, dioxiranes, \
                 O-O-O chains, O-O bonded to N, S, P or a halogen, hydroperoxides on sp2 \
                 carbon) are rare, unstable and hazardous as unknowns (common practice)"
            }
            Rule::Hydrate => {
                "no carbonyl hydrate or adduct at an sp3 carbon: two OH, an OH and a halogen, \
                 an OH and an O, N or S over a bond on no ring, or an OH and two more O on one \
                 carbon lose water, HX or an alcohol to give the carbonyl compound, which is \
                 enumerated; the last is a hemi-ortho-ester, the tetrahedral intermediate of \
                 ester hydrolysis, which gives the ester, lactone or carbonate even when its O \
                 are ring atoms; cyclic hemiacetals and hemiaminals (sugars, lactols), whose \
                 O or N shares a ring with the carbon, are kept (common practice)"
            }
            Rule::Iminol => {
                "no imidic acid or thiol tautomer: OH or SH on a non-aromatic C=N carbon, or SH on \
                 a non-aromatic C=C or C#C carbon, tautomerises to the amide, thioamide or \
                 thiocarbonyl compound, which is enumerated; hydroxy- and mercapto-azines and \
                 azoles are aromatic and kept (common practice)"
            }
            Rule::Hypohalite => {
                "no O-halogen bond: hypohalites and their esters are unstable oxidants, not \
                 isolable unknowns (common practice)"
            }
            Rule::Thione => {
                "no mercapto tautomer of a heteroarene: SH on an aromatic carbon next to a \
                 pyridine-type ring N (2-mercaptopyridines, -imidazoles, -thiazoles, \
                 mercaptotriazoles) gives way to the thione with the H on that N, which is \
                 enumerated (Katritzky & Lagowski, Prototropic tautomerism of heteroaromatic \
                 compounds II and IV, Adv. Heterocycl. Chem. 1963, vols 1 and 2, \
                 doi:10.1016/S0065-2725(08)60746-1 for IV; the thione forms predominate in \
                 solution; volume of II from memory)"
            }
            Rule::NhImine => {
                "no N-unsubstituted imine C=NH of an aldehyde or ketone (no N, O or S on the \
                 carbon): such imines hydrolyse, trimerise or tautomerise to the enamine and are \
                 rarely isolated; amidines, guanidines, imidates and thioimidates are kept \
                 (common practice)"
            }
            Rule::SulfurYlide => {
                "no S(IV) or S(VI) with a double or triple bond to carbon (sulfur ylides \
                 written as ylenes, sulfines, S-C triple bonds): reactive species, isolable only when strongly stabilised; \
                 sulfoxides, sulfones and sulfilimines are kept (only with the expanded \
                 valences) (common practice)"
            }
            Rule::SulfurMultiple => {
                "no double or triple bond between two sulfur atoms (S=S, S#S) and no triple bond \
                 at sulfur (S#N, S#S): thiosulfoxides and disulfur multiple bonds are transient \
                 species, not stable neutral compounds; disulfides R-S-S-R are kept (only with \
                 the expanded valences) (common practice)"
            }
            Rule::SmallRingCage => {
                "no atom in three or more rings of 3 or 4 atoms (tetrahedrane, prismane, cubane, \
                 [1.1.1]propellane, bicyclo[1.1.1]pentane cages): strain energies of about \
                 68-170 kcal/mol (Wiberg, Angew. Chem. Int. Ed. Engl. 1986, 25, 312, values from \
                 memory); made on purpose, never met as unknowns by chance (common practice)"
            }
            Rule::FusedSmallRings => {
                "no two rings of 3 or 4 atoms sharing a bond (bicyclo[1.1.0]butane, \
                 bicyclo[2.1.0]pentane, bicyclo[2.2.0]hexane, Dewar benzene, and every cage): \
                 strain energies of about 51-66 kcal/mol for the bicycles alone (Wiberg, Angew. \
                 Chem. Int. Ed. Engl. 1986, 25, 312, values from memory); rare, reactive \
                 targets of synthesis, not likely unknowns (common practice)"
            }
            Rule::AntiaromaticThreeRing => {
                "no ring of 3 atoms holding a double bond and, as its third atom, an O, an N \
                 with single bonds only, or an S with no double bond (oxirenes, 1H-azirines, \
                 thiirenes, oxazirines, 1H-diazirines): the lone pair and the pi bond make a \
                 4-pi-electron antiaromatic ring, known only as a transient or matrix-isolated \
                 species (common practice); cyclopropenes, cyclopropenones, 2H-azirines, \
                 3H-diazirines and thiirene S-oxides and S,S-dioxides (the S bears a double \
                 bond) are kept"
            }
            Rule::LargeConjugatedRing => {
                "no ring of 8 or more atoms in which every atom carries a double or triple \
                 bond (a ring here: a relevant cycle, one that is not the sum of smaller rings; \
                 Plotkin 1971, Vismara 1997, from memory): annulenes from [8] (cyclooctatetraene, \
                 rare and made on purpose) up, dehydroannulenes, 8-ring polyenes fused to \
                 other rings and other large cyclic polyenes and polyynes are made on purpose, \
                 unstable or fleeting, not likely unknowns (common practice); tropones, \
                 tropolones and azulenes (rings of 7), the perimeters of naphthalene, pyrene \
                 or acenaphthylene and the ten-ring of 1,6-methano[10]annulene (sums of \
                 smaller rings) are kept"
            }
            Rule::Cumulene => {
                "no three or more cumulated double bonds in a row (two bonded carbons that each \
                 carry two double bonds: butatrienes C=C=C=C and longer cumulenes, \
                 propadienones C=C=C=O, carbon suboxide): such cumulenes are reactive, \
                 oligomerise and are made on purpose, mostly with aryl or bulky ends, not \
                 likely unknowns (common practice); allenes, ketenes, ketenimines, \
                 isocyanates and carbodiimides (one cumulated atom) are kept"
            }
        }
    }

    pub fn from_name(name: &str) -> Option<Rule> {
        Rule::ALL.iter().copied().find(|r| r.name() == name)
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

/// Largest ring that still counts as small for the ring rules: a triple
/// bond or an allene-type atom needs a ring of at least 8 atoms (common
/// practice, see [`Rule::reason`]).
const SMALL_RING: usize = 8;
/// Fawcett's limit: a bridgehead double bond needs S >= 7 bridge atoms.
const BREDT_MIN_S: u32 = 7;

/// Checks the rules on a stream of isomers. What depends on the skeleton
/// alone (which bonds lie on a ring, on a small ring, which atoms are
/// bridgeheads of a small bridged bicyclic) is worked out once per skeleton,
/// when first needed: the generator hands over all bond-order assignments of
/// one skeleton in a row, so consecutive isomers usually share it.
pub struct Checker {
    /// The skeleton the remembered facts belong to (`n == usize::MAX`: none).
    n: usize,
    nb: [u64; MAX_ATOMS],
    /// Atoms whose ring masks are known.
    ring_known: u64,
    /// Per atom, the neighbours it shares a ring with / a ring of fewer than
    /// `SMALL_RING` atoms with.
    ring_nb: [u64; MAX_ATOMS],
    small_nb: [u64; MAX_ATOMS],
    /// Atoms whose bridgehead verdict is known, and those found bridgeheads.
    bridgehead_known: u64,
    bridgehead: u64,
    /// Whether the small-ring verdicts are known for this skeleton, and
    /// them: (an atom in three or more small rings, two small rings share
    /// a bond).
    small_known: bool,
    small: (bool, bool),
    /// Work space: the skeleton's small rings as atom sets.
    small_rings: Vec<u64>,
    /// What the large-ring rule remembers of the skeleton.
    large: large_rings::LargeRings,
    /// Aromaticity perception for the enol rule (phenols are not enols).
    flat: FlatMolecule,
    rings: RingInfo,
    perceiver: Perceiver,
    aromatic: Aromaticity,
}

impl Default for Checker {
    fn default() -> Checker {
        Checker {
            n: usize::MAX,
            nb: [0; MAX_ATOMS],
            ring_known: 0,
            ring_nb: [0; MAX_ATOMS],
            small_nb: [0; MAX_ATOMS],
            bridgehead_known: 0,
            bridgehead: 0,
            small_known: false,
            small: (false, false),
            small_rings: Vec::new(),
            large: large_rings::LargeRings::default(),
            flat: FlatMolecule::default(),
            rings: RingInfo::default(),
            perceiver: Perceiver::default(),
            aromatic: Aromaticity::default(),
        }
    }
}

impl Checker {
    /// Whether `iso` breaks `rule`.
    pub fn flags(&mut self, rule: Rule, iso: &Isomer) -> bool {
        self.skeleton(iso);
        match rule {
            Rule::SmallRingTriple => self.small_ring_triple(iso),
            Rule::SmallRingCumulated => self.small_ring_cumulated(iso),
            Rule::Bredt => self.bredt(iso),
            Rule::Enol => self.enol(iso),
            Rule::Peroxide => self.peroxide(iso),
            Rule::Hydrate => self.hydrate(iso),
            Rule::Iminol => self.iminol(iso),
            Rule::Hypohalite => hypohalite(iso),
            Rule::Thione => self.thione(iso),
            Rule::NhImine => nh_imine(iso),
            Rule::SulfurYlide => sulfur_ylide(iso),
            Rule::SulfurMultiple => sulfur_multiple(iso),
            Rule::SmallRingCage => self.small_ring_verdicts(iso).0,
            Rule::FusedSmallRings => self.small_ring_verdicts(iso).1,
            Rule::AntiaromaticThreeRing => antiaromatic_three_ring(iso),
            Rule::LargeConjugatedRing => self.large.flags(iso),
            Rule::Cumulene => cumulene(iso),
        }
    }

    /// Forget the remembered facts when `iso` has another skeleton.
    fn skeleton(&mut self, iso: &Isomer) {
        let n = iso.atoms();
        if self.n == n && self.nb[..n] == iso.node.nb[..n] {
            return;
        }
        self.n = n;
        self.nb[..n].copy_from_slice(&iso.node.nb[..n]);
        self.ring_known = 0;
        self.bridgehead_known = 0;
        self.bridgehead = 0;
        self.small_known = false;
        self.large.reset();
    }

    /// The skeleton's small rings (chordless cycles of 3 or 4 atoms) and
    /// the two verdicts on them: some atom lies in three or more
    /// ([`Rule::SmallRingCage`]); two of them share a bond
    /// ([`Rule::FusedSmallRings`]). In a chordless ring two bonded atoms
    /// are ring neighbours, so two rings share a bond exactly when their
    /// common atoms include a bonded pair. Once per skeleton.
    fn small_ring_verdicts(&mut self, iso: &Isomer) -> (bool, bool) {
        if self.small_known {
            return self.small;
        }
        let nb = &iso.node.nb;
        let n = iso.atoms();
        let rings = &mut self.small_rings;
        rings.clear();
        for x in 0..n {
            let higher = !((2u64 << x) - 1);
            for y in bits(nb[x] & higher) {
                // Triangles x < y < z.
                for z in bits(nb[x] & nb[y] & !((2u64 << y) - 1)) {
                    rings.push(1u64 << x | 1u64 << y | 1u64 << z);
                }
                // Chordless squares x-y-w-z with x the lowest atom and y < z
                // its two ring neighbours: y, z not bonded, w (opposite x)
                // not bonded to x.
                for z in bits(nb[x] & !nb[y] & !((2u64 << y) - 1)) {
                    for w in bits(nb[y] & nb[z] & !nb[x] & higher) {
                        rings.push(1u64 << x | 1u64 << y | 1u64 << z | 1u64 << w);
                    }
                }
            }
        }
        let cage = (0..n).any(|a| rings.iter().filter(|&&r| r >> a & 1 == 1).count() >= 3);
        let fused = rings.iter().enumerate().any(|(i, &r)| {
            rings[i + 1..].iter().any(|&q| {
                let shared = r & q;
                shared.count_ones() >= 2 && bits(shared).any(|a| nb[a] & shared != 0)
            })
        });
        self.small = (cage, fused);
        self.small_known = true;
        self.small
    }

    /// The ring masks of atom `x` (bonds on a ring; bonds on a small ring).
    fn rings_of(&mut self, iso: &Isomer, x: usize) -> (u64, u64) {
        if self.ring_known >> x & 1 == 0 {
            let (mut ring, mut small) = (0, 0);
            for y in bits(iso.node.nb[x]) {
                if let Some(size) = smallest_ring_with_bond(iso, x, y) {
                    ring |= 1u64 << y;
                    if size < SMALL_RING {
                        small |= 1u64 << y;
                    }
                }
            }
            self.ring_nb[x] = ring;
            self.small_nb[x] = small;
            self.ring_known |= 1u64 << x;
        }
        (self.ring_nb[x], self.small_nb[x])
    }

    fn small_ring_triple(&mut self, iso: &Isomer) -> bool {
        let triple = &iso.node.g.adj[2];
        (0..iso.atoms()).any(|x| triple[x] != 0 && self.rings_of(iso, x).1 & triple[x] != 0)
    }

    /// An atom with two or more double bonds, one of them on a small ring.
    fn small_ring_cumulated(&mut self, iso: &Isomer) -> bool {
        (0..iso.atoms()).any(|x| {
            let double = pi_doubles(iso, x);
            double.count_ones() >= 2 && self.rings_of(iso, x).1 & double != 0
        })
    }

    /// A double bond at a bridgehead of a small bridged bicyclic.
    fn bredt(&mut self, iso: &Isomer) -> bool {
        (0..iso.atoms()).any(|x| pi_doubles(iso, x) != 0 && self.is_small_bridgehead(iso, x))
    }

    fn is_small_bridgehead(&mut self, iso: &Isomer, x: usize) -> bool {
        if self.bridgehead_known >> x & 1 == 0 {
            let verdict =
                self.rings_of(iso, x).0.count_ones() >= 3 && small_bicyclic_at(&iso.node.nb, x);
            self.bridgehead |= (verdict as u64) << x;
            self.bridgehead_known |= 1u64 << x;
        }
        self.bridgehead >> x & 1 == 1
    }

    /// OH on a carbon with a triple bond to carbon, or with a double bond
    /// to carbon that no acceptor conjugates (see [`enol_acceptors`]; an
    /// aromatic acceptor carbon does not count), unless that carbon is
    /// aromatic (a phenol or a hydroxy heteroarene is no enol).
    fn enol(&mut self, iso: &Isomer) -> bool {
        let adj = &iso.node.g.adj;
        let mut plain = tautomer_carbons(iso, Element::O, |y| (adj[2][y], Element::C));
        // Enol carbons whose acceptors are all ring atoms: they count as
        // conjugated only when some acceptor is not aromatic.
        let mut pending: Vec<(usize, u64)> = Vec::new();
        for x in 0..iso.atoms() {
            if iso.element(x) != Element::O || iso.hydrogens(x) != 1 {
                continue;
            }
            for a in bits(iso.node.nb[x]).filter(|&a| iso.element(a) == Element::C) {
                for b in bits(adj[1][a]).filter(|&b| iso.element(b) == Element::C) {
                    let acceptors = enol_acceptors(iso, x, a, b);
                    if acceptors == 0 {
                        plain |= 1u64 << a;
                    } else if bits(acceptors).all(|c| self.rings_of(iso, c).0 != 0) {
                        pending.push((a, acceptors));
                    }
                }
            }
        }
        if pending.is_empty() {
            return self.any_not_aromatic(iso, plain);
        }
        self.perceive_aromatic(iso);
        let aromatic = &self.aromatic.atom;
        bits(plain).any(|c| !aromatic[c])
            || pending
                .iter()
                .any(|&(a, acc)| !aromatic[a] && bits(acc).all(|c| aromatic[c]))
    }

    /// An O-O bond, unless it is single, neither O has another O or an
    /// atom other than C as its other neighbour, and the bond is on a
    /// ring of 4 or more atoms, or one O's other neighbour is a carbon with a double bond to
    /// O (peroxy acid, perester, diacyl peroxide), or one O carries the H
    /// and the other's neighbour is a carbon with single bonds only (a
    /// hydroperoxide on an sp3 carbon).
    fn peroxide(&mut self, iso: &Isomer) -> bool {
        let adj = &iso.node.g.adj;
        let pairs: Vec<(usize, usize)> = bonds(iso)
            .filter(|&(a, b, _)| iso.element(a) == Element::O && iso.element(b) == Element::O)
            .map(|(a, b, _)| (a, b))
            .collect();
        for (a, b) in pairs {
            if iso.order(a, b) != 1 {
                return true;
            }
            // Each O's other heavy neighbour (an O has at most one more).
            let other = |o: usize, p: usize| bits(iso.node.nb[o] & !(1u64 << p)).next();
            let ends = [other(a, b), other(b, a)];
            if ends.iter().flatten().any(|&y| iso.element(y) != Element::C) {
                return true;
            }
            if self.rings_of(iso, a).0 >> b & 1 == 1 {
                // A dioxirane (O-O in a 3-ring) is a reagent made and used
                // in solution, not an isolable unknown.
                if smallest_ring_with_bond(iso, a, b) == Some(3) {
                    return true;
                }
                continue;
            }
            let acyl = |c: usize| bits(adj[1][c]).any(|y| iso.element(y) == Element::O);
            let saturated = |c: usize| (adj[1][c] | adj[2][c]) == 0;
            let kept = match ends {
                [Some(c), Some(d)] => acyl(c) || acyl(d),
                [Some(c), None] | [None, Some(c)] => acyl(c) || saturated(c),
                [None, None] => false,
            };
            if !kept {
                return true;
            }
        }
        false
    }

    /// OH or SH on a carbon with a double bond to N, or SH on a carbon with
    /// a double or triple bond to carbon, unless that carbon is aromatic.
    fn iminol(&mut self, iso: &Isomer) -> bool {
        let adj = &iso.node.g.adj;
        let carbons = tautomer_carbons(iso, Element::O, |y| (adj[1][y], Element::N))
            | tautomer_carbons(iso, Element::S, |y| (adj[1][y], Element::N))
            | tautomer_carbons(iso, Element::S, |y| (adj[1][y] | adj[2][y], Element::C));
        self.any_not_aromatic(iso, carbons)
    }

    /// SH on an aromatic carbon with an aromatic ring neighbour N that has
    /// two heavy neighbours and no H (pyridine-type: the H can move to it).
    fn thione(&mut self, iso: &Isomer) -> bool {
        let mut pairs: Vec<(usize, usize)> = Vec::new();
        for x in 0..iso.atoms() {
            if iso.element(x) != Element::S || iso.hydrogens(x) != 1 {
                continue;
            }
            for c in bits(iso.node.nb[x]) {
                if iso.element(c) != Element::C {
                    continue;
                }
                for n in bits(iso.node.nb[c] & !(1u64 << x)) {
                    if iso.element(n) == Element::N
                        && iso.hydrogens(n) == 0
                        && iso.node.nb[n].count_ones() == 2
                    {
                        pairs.push((c, n));
                    }
                }
            }
        }
        if pairs.is_empty() {
            return false;
        }
        // Both on a ring before aromaticity is perceived (only ring atoms
        // can be aromatic).
        pairs.retain(|&(c, n)| self.rings_of(iso, c).0 >> n & 1 == 1);
        if pairs.is_empty() {
            return false;
        }
        self.perceive_aromatic(iso);
        pairs
            .iter()
            .any(|&(c, n)| self.aromatic.atom[c] && self.aromatic.atom[n])
    }

    /// Whether some atom of `carbons` is not aromatic. Only a ring atom can
    /// be aromatic, so aromaticity is perceived only when one is on a ring.
    fn any_not_aromatic(&mut self, iso: &Isomer, carbons: u64) -> bool {
        if carbons == 0 {
            return false;
        }
        let mut on_ring = 0u64;
        for c in bits(carbons) {
            if self.rings_of(iso, c).0 != 0 {
                on_ring |= 1u64 << c;
            }
        }
        if on_ring != carbons {
            return true;
        }
        self.perceive_aromatic(iso);
        bits(carbons).any(|c| !self.aromatic.atom[c])
    }

    /// Perceive the aromatic atoms of `iso` into `self.aromatic`.
    fn perceive_aromatic(&mut self, iso: &Isomer) {
        // Ring bonds depend on the skeleton alone (as in the SMILES writer).
        if self.flat.set_heavy_atoms(iso) {
            self.rings.perceive_ring_bonds(&self.flat);
        }
        self.perceiver
            .perceive(&self.flat, &mut self.rings, &mut self.aromatic);
    }

    /// An sp3 carbon with two OH, an OH and a halogen, an OH and two more O
    /// (a hemi-ortho-ester, ring or not), or an OH and another O, N or S
    /// bonded to it by a bond on no ring (a cyclic hemiacetal has its O on
    /// the ring with the carbon; 1-methoxycyclobutanol has not).
    fn hydrate(&mut self, iso: &Isomer) -> bool {
        let adj = &iso.node.g.adj;
        let sp3_carbons = (0..iso.atoms())
            .filter(|&c| iso.element(c) == Element::C && adj[1][c] | adj[2][c] == 0);
        for c in sp3_carbons {
            let (mut oh, mut halogen, mut hetero, mut ether) = (0, 0, 0u64, 0);
            for y in bits(iso.node.nb[c]) {
                match iso.element(y) {
                    Element::O if iso.hydrogens(y) == 1 => oh += 1,
                    Element::F | Element::Cl | Element::Br | Element::I => halogen += 1,
                    Element::O => {
                        hetero |= 1u64 << y;
                        ether += 1;
                    }
                    Element::N | Element::S => hetero |= 1u64 << y,
                    _ => {}
                }
            }
            if oh == 0 {
                continue;
            }
            if oh >= 2
                || halogen >= 1
                || ether >= 2
                || hetero != 0 && hetero & !self.rings_of(iso, c).0 != 0
            {
                return true;
            }
        }
        false
    }
}

/// The double-bond partners of atom `x`, leaving out the N=O of a
/// charge-separated N-oxide group (pentavalent N, see
/// [`super::generator::Kind::oxide_n`]): it stands for the single bond of
/// [N+]-[O-], so pyridine N-oxide has no cumulated atom and quinuclidine
/// N-oxide no bridgehead double bond.
fn pi_doubles(iso: &Isomer, x: usize) -> u64 {
    let double = iso.node.g.adj[1][x];
    let oxide = |a: usize| iso.problem.kinds[iso.node.kind[a] as usize].oxide;
    if oxide(x) {
        double
            & !bits(double)
                .filter(|&o| iso.element(o) == Element::O)
                .fold(0, |m, o| m | 1u64 << o)
    } else if iso.element(x) == Element::O && bits(double).any(oxide) {
        0
    } else {
        double
    }
}

/// The carbons that carry an X-H group (X = `hetero` with one H) and have a
/// multiple bond to an atom of the element the closure names: `multiple(c)`
/// gives c's neighbours over the bonds in question and that element.
fn tautomer_carbons(
    iso: &Isomer,
    hetero: Element,
    multiple: impl Fn(usize) -> (u64, Element),
) -> u64 {
    let mut out = 0u64;
    for x in 0..iso.atoms() {
        if iso.element(x) != hetero || iso.hydrogens(x) != 1 {
            continue;
        }
        for c in bits(iso.node.nb[x]) {
            if iso.element(c) != Element::C {
                continue;
            }
            let (partners, element) = multiple(c);
            if bits(partners & !(1u64 << x)).any(|y| iso.element(y) == element) {
                out |= 1u64 << c;
            }
        }
    }
    out
}

/// Whether atom `x` is a bridgehead of a bridged bicyclic system with fewer
/// than `BREDT_MIN_S` bridge atoms: some atom z not bonded to x is joined to
/// it by three internally disjoint paths whose inner atoms number S < 7 in
/// all (Fawcett's S). Each bridge then has at most 4 atoms, so every simple
/// path of at most 5 bonds from x is listed and the triples with a common
/// end are tried: the smallest S is found, not only some S.
fn small_bicyclic_at(nb: &[u64; MAX_ATOMS], x: usize) -> bool {
    const MAX_BONDS: u32 = BREDT_MIN_S - 2;
    // (end atom, inner atoms) of every path of 2..=MAX_BONDS bonds.
    let mut paths: Vec<(usize, u64)> = Vec::new();
    fn walk(
        nb: &[u64; MAX_ATOMS],
        x: usize,
        v: usize,
        inner: u64,
        bonds: u32,
        out: &mut Vec<(usize, u64)>,
    ) {
        if bonds == MAX_BONDS {
            return;
        }
        for u in bits(nb[v] & !inner & !(1u64 << x)) {
            if bonds >= 1 && nb[x] >> u & 1 == 0 {
                out.push((u, inner | 1u64 << v));
            }
            walk(nb, x, u, inner | 1u64 << v, bonds + 1, out);
        }
    }
    for v in bits(nb[x]) {
        walk(nb, x, v, 0, 1, &mut paths);
    }
    paths.sort_unstable_by_key(|p| p.0);
    paths.chunk_by(|a, b| a.0 == b.0).any(|same_end| {
        same_end.iter().enumerate().any(|(i, p)| {
            same_end[i + 1..].iter().enumerate().any(|(j, q)| {
                p.1 & q.1 == 0
                    && same_end[i + j + 2..].iter().any(|r| {
                        p.1 & r.1 == 0
                            && q.1 & r.1 == 0
                            && (p.1 | q.1 | r.1).count_ones() < BREDT_MIN_S
                    })
            })
        })
    })
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

/// The acceptors that conjugate the enol O-H at `o` on carbon `a`,
/// double-bonded to carbon `b`: the neighbours of `a` or `b` (other than
/// `o`, `a`, `b`) that are carbons with a double bond to O, S or N or a
/// triple bond to N (to an atom other than those three): the C=C-C=O of a
/// 1,3-dicarbonyl enol or a vinylogous acid, the HO-C-C=O of a 1,2-dione
/// enol, reductone or pyruvic acid enol, the C=C-C#N of a cyano enol.
fn enol_acceptors(iso: &Isomer, o: usize, a: usize, b: usize) -> u64 {
    let adj = &iso.node.g.adj;
    let own = 1u64 << o | 1u64 << a | 1u64 << b;
    let acceptor = |c: usize| {
        iso.element(c) == Element::C
            && (bits(adj[1][c] & !own)
                .any(|y| matches!(iso.element(y), Element::O | Element::S | Element::N))
                || bits(adj[2][c] & !own).any(|y| iso.element(y) == Element::N))
    };
    bits((iso.node.nb[a] | iso.node.nb[b]) & !own)
        .filter(|&c| acceptor(c))
        .fold(0, |m, c| m | 1u64 << c)
}

/// A carbon double-bonded to an N that carries one H and nothing else,
/// with no N, O or S among the carbon's other neighbours.
fn nh_imine(iso: &Isomer) -> bool {
    let double = &iso.node.g.adj[1];
    (0..iso.atoms()).any(|n| {
        iso.element(n) == Element::N
            && iso.hydrogens(n) == 1
            && iso.node.nb[n].count_ones() == 1
            && bits(double[n]).any(|c| {
                iso.element(c) == Element::C
                    && !bits(iso.node.nb[c] & !(1u64 << n))
                        .any(|y| matches!(iso.element(y), Element::N | Element::O | Element::S))
            })
    })
}

/// An S with a double or triple bond to carbon and a valence above 2.
fn sulfur_ylide(iso: &Isomer) -> bool {
    let adj = &iso.node.g.adj;
    (0..iso.atoms()).any(|s| {
        iso.element(s) == Element::S
            && bits(adj[1][s] | adj[2][s]).any(|c| iso.element(c) == Element::C)
            && bits(iso.node.nb[s])
                .map(|y| u32::from(iso.order(s, y)))
                .sum::<u32>()
                + u32::from(iso.hydrogens(s))
                > 2
    })
}

/// A double or triple bond between two S, or a triple bond at an S.
fn sulfur_multiple(iso: &Isomer) -> bool {
    let adj = &iso.node.g.adj;
    (0..iso.atoms()).any(|s| {
        iso.element(s) == Element::S
            && (adj[2][s] != 0 || bits(adj[1][s]).any(|y| iso.element(y) == Element::S))
    })
}

/// A triangle x-y-z with a double bond y=z whose third atom x is an O, an
/// N with single bonds only, or an S with no double or triple bond (its
/// lone pair joins the pi bond: 4 pi electrons in a 3-ring). The N of a
/// charge-separated N-oxide holds its O by a double bond here (see
/// [`pi_doubles`]) and has no lone pair: not flagged.
fn antiaromatic_three_ring(iso: &Isomer) -> bool {
    let adj = &iso.node.g.adj;
    (0..iso.atoms()).any(|x| {
        let donor = match iso.element(x) {
            Element::O => true,
            Element::N | Element::S => adj[1][x] | adj[2][x] == 0,
            _ => false,
        };
        donor && bits(iso.node.nb[x]).any(|y| adj[1][y] & iso.node.nb[x] & !(1u64 << y) != 0)
    })
}

/// Two bonded carbons that each have two double bonds (X=C=C=Y). A carbon
/// with two double bonds has no other bond, so the bond between them is
/// double; how many double bonds an atom has is the same in every Kekulé
/// form, so the verdict is too.
fn cumulene(iso: &Isomer) -> bool {
    let double = &iso.node.g.adj[1];
    let cumulated = (0..iso.atoms())
        .filter(|&c| iso.element(c) == Element::C && double[c].count_ones() == 2)
        .fold(0u64, |m, c| m | 1u64 << c);
    bits(cumulated).any(|c| double[c] & cumulated != 0)
}

fn hypohalite(iso: &Isomer) -> bool {
    let halogen = |e: Element| matches!(e, Element::F | Element::Cl | Element::Br | Element::I);
    bonds(iso).any(|(a, b, _)| {
        let (x, y) = (iso.element(a), iso.element(b));
        x == Element::O && halogen(y) || y == Element::O && halogen(x)
    })
}
