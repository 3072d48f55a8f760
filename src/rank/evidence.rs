//! What extra evidence would separate candidates the 1H data cannot: the
//! number of 13C signals (one per symmetry class of carbon atoms), 13C
//! signals in the carbonyl region, DEPT counts (carbon classes by attached
//! H), a predicted multiplicity one candidate has and another lacks, a
//! coupling constant that differs, and the 2D experiments that would decide:
//! COSY (which multiplets couple: H on neighbouring atoms, 3J) and HMBC
//! (which H sit two or three bonds from a carbon without H or a C=O carbon,
//! the long-range C-H correlations that place a group on one carbonyl or
//! another). All of these are read from the candidates' structures and
//! predictions, as a chemist plans the next experiment (common practice).

use crate::chem::{Element, Molecule};
use crate::predict::PredictedSignal;
use std::collections::VecDeque;

/// What the evidence finder needs of one group member.
pub struct Member<'a> {
    /// How the member is named in the output (`#3 CCOC(C)=O`).
    pub label: String,
    pub predicted: &'a [PredictedSignal],
    /// Number of expected 13C signals (carbon symmetry classes), if known.
    pub carbon_signals: Option<usize>,
    /// The structure (atom numbers of `predicted` refer to it), for DEPT,
    /// the carbonyl region, COSY and HMBC.
    pub molecule: Option<&'a Molecule>,
}

/// Couplings at least this large are resolved in a routine spectrum; smaller
/// ones are not worth proposing as evidence (common practice).
const RESOLVED_J_HZ: f64 = 3.0;
/// Predicted J closer than this do not separate candidates (handbook ranges
/// overlap by about that much; common practice).
const J_SEPARATION_HZ: f64 = 3.0;

/// What the observed data already give: evidence of these kinds is not
/// proposed again (measuring J is no advice when J was reported).
#[derive(Clone, Copy, Debug, Default)]
pub struct Given {
    /// The data report at least one coupling constant.
    pub j: bool,
    /// The data include a 13C list (signal count and regions are known).
    pub carbon: bool,
}

impl Given {
    pub fn of(spectrum: &crate::spectrum::Spectrum) -> Given {
        Given {
            j: spectrum.multiplets.iter().any(|o| !o.j_hz.is_empty()),
            carbon: false,
        }
    }

    /// The same, with a 13C list given or not.
    pub fn with_carbon(self, carbon: bool) -> Given {
        Given { carbon, ..self }
    }
}

/// Sentences saying what would tell the members apart (empty when nothing
/// in these three kinds of evidence does).
pub fn separating_evidence(members: &[Member]) -> Vec<String> {
    separating_evidence_given(members, Given::default())
}

/// [`separating_evidence`] without the kinds of evidence the data already
/// give.
pub fn separating_evidence_given(members: &[Member], given: Given) -> Vec<String> {
    let mut out = Vec::new();
    if members.len() < 2 {
        return out;
    }
    // 13C signal count (not when the data hold a 13C list).
    let counts: Vec<Option<usize>> = members.iter().map(|m| m.carbon_signals).collect();
    if !given.carbon && counts.iter().all(Option::is_some) {
        let mut distinct: Vec<usize> = counts.iter().flatten().copied().collect();
        distinct.sort_unstable();
        distinct.dedup();
        if distinct.len() > 1 {
            let parts: Vec<String> = members
                .iter()
                .map(|m| format!("{} {}", m.label, m.carbon_signals.unwrap_or(0)))
                .collect();
            out.push(format!(
                "13C NMR: number of carbon signals expected (carbon symmetry classes): {}",
                parts.join(", ")
            ));
        } else {
            out.push(format!(
                "13C NMR signal count does not help: {} carbon signals expected for each",
                distinct[0]
            ));
        }
    }
    // DEPT counts and the carbonyl region, from the structures.
    let carbons: Option<Vec<Carbons>> = members
        .iter()
        .map(|m| m.molecule.map(Carbons::of))
        .collect();
    if let Some(c) = carbons {
        if c.iter().any(|x| x.dept != c[0].dept) {
            let parts: Vec<String> = members
                .iter()
                .zip(&c)
                .map(|(m, x)| format!("{} {}", m.label, x.dept_text()))
                .collect();
            out.push(format!(
                "DEPT-135 and DEPT-90 (carbon classes by attached H): {}",
                parts.join("; ")
            ));
        }
        if !given.carbon && c.iter().any(|x| x.carbonyl != c[0].carbonyl) {
            let parts: Vec<String> = members
                .iter()
                .zip(&c)
                .map(|(m, x)| format!("{} {}", m.label, x.carbonyl))
                .collect();
            out.push(format!(
                "13C NMR: signals of C=O carbons expected above 160 ppm: {}",
                parts.join(", ")
            ));
        }
    }
    // Multiplicities: compare the (H count, pattern) lists with the first.
    let first = &members[0];
    let sig = |p: &[PredictedSignal]| {
        let mut v: Vec<(u32, String)> = p
            .iter()
            .map(|s| (s.hydrogens, s.multiplicity.label()))
            .collect();
        v.sort();
        v
    };
    let a = sig(first.predicted);
    for m in &members[1..] {
        let b = sig(m.predicted);
        let only_a: Vec<String> = minus(&a, &b)
            .iter()
            .map(|(h, l)| format!("{h}H {l}"))
            .collect();
        let only_b: Vec<String> = minus(&b, &a)
            .iter()
            .map(|(h, l)| format!("{h}H {l}"))
            .collect();
        if !only_a.is_empty() || !only_b.is_empty() {
            out.push(format!(
                "multiplicity: {} predicts {} where {} predicts {}",
                first.label,
                or_none(&only_a),
                m.label,
                or_none(&only_b)
            ));
        }
        // Coupling constants (unless the data give J already).
        if given.j {
            continue;
        }
        let ja = resolved_j(first.predicted);
        let jb = resolved_j(m.predicted);
        let differs = |x: &[f64], y: &[f64]| {
            x.iter()
                .find(|&&j| y.iter().all(|&k| (j - k).abs() >= J_SEPARATION_HZ))
                .copied()
        };
        if let Some(j) = differs(&ja, &jb).or_else(|| differs(&jb, &ja)) {
            out.push(format!(
                "coupling constant: a J of about {j:.0} Hz is expected for {} but not for {} (measure J)",
                if ja.contains(&j) { &first.label } else { &m.label },
                if ja.contains(&j) { &m.label } else { &first.label },
            ));
        }
    }
    for m in &members[1..] {
        out.extend(two_d(first, m));
    }
    out
}

/// Carbon classes of a structure by attached H, and its C=O carbon classes.
#[derive(Clone, Debug, PartialEq)]
struct Carbons {
    /// [CH3, CH2, CH, C] classes (a CH4 class counts as CH3).
    dept: [usize; 4],
    carbonyl: usize,
}

impl Carbons {
    fn of(mol: &Molecule) -> Carbons {
        let mut dept = [0; 4];
        let mut carbonyl = 0;
        for i in super::carbon::carbon_classes(mol) {
            let k = match mol.atom(i).hydrogens {
                0 => 3,
                1 => 2,
                2 => 1,
                _ => 0,
            };
            dept[k] += 1;
            if carbon_kind(mol, i) == "C=O" {
                carbonyl += 1;
            }
        }
        Carbons { dept, carbonyl }
    }

    fn dept_text(&self) -> String {
        let names = ["CH3", "CH2", "CH", "C"];
        (0..4)
            .map(|k| format!("{} {}", self.dept[k], names[k]))
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// How a chemist names a carbon in an HMBC cross peak.
fn carbon_kind(mol: &Molecule, i: usize) -> &'static str {
    let mut double_o = false;
    let mut multiple = 0;
    for (j, o) in mol.neighbours(i) {
        if o == 2 && mol.atom(j).element == Element::O {
            double_o = true;
        }
        if o >= 2 {
            multiple = multiple.max(o);
        }
    }
    if double_o {
        "C=O"
    } else if multiple == 3 {
        "C≡C or C≡N"
    } else if multiple == 2 {
        "C=C or aromatic"
    } else {
        "sp3"
    }
}

/// What a 1H signal looks like, to name it in a cross peak.
fn signal_name(s: &PredictedSignal) -> String {
    format!("{}H {} near {:.1} ppm", s.hydrogens, s.label(), s.shift)
}

/// Heavy atoms within `reach` bonds of any of `from` (not `from` itself).
fn within(mol: &Molecule, from: &[usize], reach: usize) -> Vec<usize> {
    let mut d = vec![usize::MAX; mol.atom_count()];
    let mut q = VecDeque::new();
    for &a in from {
        d[a] = 0;
        q.push_back(a);
    }
    while let Some(x) = q.pop_front() {
        if d[x] == reach {
            continue;
        }
        for (y, _) in mol.neighbours(x) {
            if d[y] == usize::MAX {
                d[y] = d[x] + 1;
                q.push_back(y);
            }
        }
    }
    (0..mol.atom_count())
        .filter(|&i| d[i] != usize::MAX && d[i] > 0)
        .collect()
}

/// A 1H signal as compared across candidates: H count and multiplicity.
/// Shifts are left out on purpose: the observed 1H list already shows where
/// the signals are, so a cross peak decides only when the structures put it
/// between different kinds of signal (a 3H t to a C=O carbon in one, none
/// in the other).
#[derive(Clone, Debug, PartialEq)]
struct Key {
    hydrogens: u32,
    label: String,
}

impl Key {
    fn of(s: &PredictedSignal) -> Key {
        Key {
            hydrogens: s.hydrogens,
            label: s.label(),
        }
    }

    fn same(&self, o: &Key) -> bool {
        self == o
    }
}

/// A 2D cross peak: one or two 1H signals and what they show (`partner`:
/// the second 1H signal of a COSY peak; `carbon`: the carbon kind of an
/// HMBC peak), with its wording.
struct Peak {
    h: Key,
    partner: Option<Key>,
    carbon: &'static str,
    /// HMBC: how many carbons of that kind, as seen from one atom of the
    /// group.
    carbons: usize,
    text: String,
}

impl Peak {
    fn same(&self, o: &Peak) -> bool {
        let pair = match (&self.partner, &o.partner) {
            (Some(a), Some(b)) => {
                (self.h.same(&o.h) && a.same(b)) || (self.h.same(b) && a.same(&o.h))
            }
            (None, None) => self.h.same(&o.h),
            _ => false,
        };
        pair && self.carbon == o.carbon && self.carbons == o.carbons
    }
}

/// COSY cross peaks of a candidate: pairs of predicted 1H signals whose H
/// sit on neighbouring atoms (3J).
fn cosy(m: &Member) -> Vec<Peak> {
    let Some(mol) = m.molecule else {
        return Vec::new();
    };
    let p = m.predicted;
    let mut out = Vec::new();
    for (x, a) in p.iter().enumerate() {
        for b in &p[x + 1..] {
            if a.exchangeable || b.exchangeable {
                continue;
            }
            let near = within(mol, &a.atoms, 1);
            if b.atoms.iter().any(|t| near.contains(t)) {
                out.push(Peak {
                    h: Key::of(a),
                    partner: Some(Key::of(b)),
                    carbon: "",
                    carbons: 0,
                    text: format!("the {} and the {}", signal_name(a), signal_name(b)),
                });
            }
        }
    }
    out
}

/// HMBC cross peaks of a candidate: from each predicted 1H signal to the
/// carbons without H, and the C=O carbons, two or three bonds from its H
/// (one or two bonds from the atom carrying them), by carbon kind and
/// number (a CH3 next to two ring carbons without H, or one).
fn hmbc(m: &Member) -> Vec<Peak> {
    let Some(mol) = m.molecule else {
        return Vec::new();
    };
    let mut out = Vec::new();
    for s in m.predicted.iter().filter(|s| !s.exchangeable) {
        let mut kinds: Vec<&'static str> = within(mol, &s.atoms, 2)
            .into_iter()
            .filter(|&c| mol.atom(c).element == Element::C)
            .filter(|&c| mol.atom(c).hydrogens == 0 || carbon_kind(mol, c) == "C=O")
            .map(|c| carbon_kind(mol, c))
            .collect();
        kinds.sort_unstable();
        let mut k = 0;
        while k < kinds.len() {
            let kind = kinds[k];
            // Atoms of one signal's group are equivalent: the carbons seen
            // from one of them count (a CH3's peaks, not three times).
            let n = within(mol, &s.atoms[..1], 2)
                .into_iter()
                .filter(|&c| mol.atom(c).element == Element::C)
                .filter(|&c| mol.atom(c).hydrogens == 0 || carbon_kind(mol, c) == "C=O")
                .filter(|&c| carbon_kind(mol, c) == kind)
                .count();
            out.push(Peak {
                h: Key::of(s),
                partner: None,
                carbon: kind,
                carbons: n,
                text: format!(
                    "from the {} to {n} {kind} carbon{}",
                    signal_name(s),
                    if n == 1 { "" } else { "s" }
                ),
            });
            while k < kinds.len() && kinds[k] == kind {
                k += 1;
            }
        }
    }
    out
}

/// The 2D experiments that tell `b` from `a`: a COSY or HMBC cross peak one
/// predicts and the other does not, between kinds of 1H signal both
/// predict (the first such, from either side).
pub fn two_d(a: &Member, b: &Member) -> Vec<String> {
    // A cross peak decides only between signals both candidates predict:
    // the other candidate has the same kinds of signal but not the peak.
    let keys = |m: &Member| -> Vec<Key> { m.predicted.iter().map(Key::of).collect() };
    let (ka, kb) = (keys(a), keys(b));
    let lone = |x: &[Peak], y: &[Peak], other: &[Key]| {
        let has = |k: &Key| other.iter().any(|o| o.same(k));
        x.iter()
            .filter(|p| has(&p.h) && p.partner.as_ref().is_none_or(has))
            .find(|p| !y.iter().any(|q| q.same(p)))
            .map(|p| p.text.clone())
    };
    let mut out = Vec::new();
    for (name, what, pa, pb) in [
        ("COSY", "between", cosy(a), cosy(b)),
        ("HMBC", "", hmbc(a), hmbc(b)),
    ] {
        let found = match lone(&pa, &pb, &kb) {
            Some(t) => Some((t, a, b)),
            None => lone(&pb, &pa, &ka).map(|t| (t, b, a)),
        };
        if let Some((t, has, lacks)) = found {
            let tail = if name == "HMBC" { " (2-3 bonds)" } else { "" };
            let sep = if what.is_empty() { "" } else { " " };
            out.push(format!(
                "{name}: {} predicts cross peaks {what}{sep}{t}{tail}; {} does not",
                has.label, lacks.label
            ));
        }
    }
    out
}

/// Share of the probability the leading candidates hold together, and the
/// most of them compared (the report's reader plans one or two more
/// experiments, not a survey).
pub const LEADING_SHARE: f64 = 0.95;
pub const LEADING_MOST: usize = 4;

/// How many candidates lead: from the first, in order, until together they
/// hold at least `share` of the probability (at most `most`); 0 when the
/// first alone holds it.
pub fn leading(probabilities: &[f64], share: f64, most: usize) -> usize {
    let mut sum = 0.0;
    for (k, p) in probabilities.iter().enumerate().take(most) {
        sum += p;
        if sum >= share {
            return if k == 0 { 0 } else { k + 1 };
        }
    }
    probabilities.len().min(most)
}

/// The leading candidates of a ranking (positions) and what would separate
/// them, whether or not the data put them in one group: a close first and
/// second (0.89 / 0.11) are worth an experiment too.
pub fn leading_evidence(candidates: &[super::Ranked], given: Given) -> (Vec<usize>, Vec<String>) {
    let probs: Vec<f64> = candidates.iter().map(|c| c.probability).collect();
    let n = leading(&probs, LEADING_SHARE, LEADING_MOST);
    if n < 2 {
        return (Vec::new(), Vec::new());
    }
    let members: Vec<Member> = candidates[..n]
        .iter()
        .map(|c| Member {
            label: format!("#{}", c.position),
            predicted: &c.predicted,
            carbon_signals: Some(c.carbon_signals),
            molecule: Some(&c.molecule),
        })
        .collect();
    (
        candidates[..n].iter().map(|c| c.position).collect(),
        separating_evidence_given(&members, given),
    )
}

fn resolved_j(p: &[PredictedSignal]) -> Vec<f64> {
    p.iter()
        .flat_map(|s| s.j_hz.iter().copied())
        .filter(|j| j.abs() >= RESOLVED_J_HZ)
        .map(f64::abs)
        .collect()
}

/// Multiset difference a - b of sorted lists.
fn minus(a: &[(u32, String)], b: &[(u32, String)]) -> Vec<(u32, String)> {
    let mut rest = b.to_vec();
    let mut out = Vec::new();
    for x in a {
        if let Some(i) = rest.iter().position(|y| y == x) {
            rest.remove(i);
        } else {
            out.push(x.clone());
        }
    }
    out
}

fn or_none(v: &[String]) -> String {
    if v.is_empty() {
        "nothing else".to_string()
    } else {
        v.join(", ")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::predict::Multiplicity;

    fn sig(h: u32, m: Multiplicity, j: &[f64]) -> PredictedSignal {
        PredictedSignal {
            shift: 1.0,
            sigma: 0.2,
            hydrogens: h,
            multiplicity: m,
            j_hz: j.to_vec(),
            atoms: vec![],
            exchangeable: false,
            notes: vec![],
            halves: false,
            geminal_hz: 0.0,
            half_pattern: None,
        }
    }

    #[test]
    fn cis_and_trans_alkenes_are_told_apart_by_j() {
        // Vinyl trans J 12-18 Hz, cis 6-12 Hz (FIELD-GUIDE 4, common practice).
        let d = || Multiplicity::Coupled(vec![1]);
        let trans = [sig(1, d(), &[16.0]), sig(1, d(), &[16.0])];
        let cis = [sig(1, d(), &[10.0]), sig(1, d(), &[10.0])];
        let ev = separating_evidence(&[
            Member {
                label: "#1".into(),
                predicted: &trans,
                carbon_signals: Some(2),
                molecule: None,
            },
            Member {
                label: "#2".into(),
                predicted: &cis,
                carbon_signals: Some(2),
                molecule: None,
            },
        ]);
        assert!(ev.iter().any(|e| e.contains("J of about 16 Hz")), "{ev:?}");
        assert!(ev.iter().any(|e| e.contains("does not help")), "{ev:?}");
    }

    #[test]
    fn no_j_advice_when_j_was_given() {
        // The same trans/cis pair: with J reported, J is no advice.
        let d = || Multiplicity::Coupled(vec![1]);
        let trans = [sig(1, d(), &[16.0]), sig(1, d(), &[16.0])];
        let cis = [sig(1, d(), &[10.0]), sig(1, d(), &[10.0])];
        let members = [("#1", &trans[..]), ("#2", &cis[..])].map(|(label, predicted)| Member {
            label: label.into(),
            predicted,
            carbon_signals: Some(2),
            molecule: None,
        });
        let ev = separating_evidence_given(
            &members,
            Given {
                j: true,
                carbon: false,
            },
        );
        assert!(!ev.iter().any(|e| e.contains("J of about")), "{ev:?}");
        assert!(ev.iter().any(|e| e.contains("does not help")), "{ev:?}");
    }

    #[test]
    fn carbon_counts_and_multiplicities_differ() {
        let a = [sig(3, Multiplicity::Coupled(vec![2]), &[7.0])];
        let b = [sig(3, Multiplicity::Coupled(vec![1]), &[7.0])];
        let ev = separating_evidence(&[
            Member {
                label: "#1".into(),
                predicted: &a,
                carbon_signals: Some(4),
                molecule: None,
            },
            Member {
                label: "#2".into(),
                predicted: &b,
                carbon_signals: Some(3),
                molecule: None,
            },
        ]);
        assert!(ev[0].contains("#1 4, #2 3"), "{ev:?}");
        assert!(ev[1].contains("3H t") && ev[1].contains("3H d"), "{ev:?}");
    }

    /// Members predicted by the embedded tables for these SMILES.
    fn predicted(smiles: &[&str]) -> Vec<(Molecule, Vec<PredictedSignal>)> {
        let p = crate::predict::Predictor::embedded().unwrap();
        smiles
            .iter()
            .map(|s| {
                let m = crate::chem::smiles::parse_smiles(s).unwrap();
                let sig = p.predict(&m, &Default::default());
                (m, sig)
            })
            .collect()
    }

    fn members(v: &[(Molecule, Vec<PredictedSignal>)]) -> Vec<Member<'_>> {
        v.iter()
            .enumerate()
            .map(|(k, (m, p))| Member {
                label: format!("#{}", k + 1),
                predicted: p,
                carbon_signals: Some(super::super::carbon::carbon_signals(m)),
                molecule: Some(m),
            })
            .collect()
    }

    #[test]
    fn dept_counts_tell_a_chain_from_a_tert_butyl() {
        // Butan-1-ol: CH3, three CH2; 2-methylpropan-2-ol: one CH3 class
        // (three equivalent CH3) and one quaternary C (hand count, common
        // practice).
        let v = predicted(&["CCCCO", "CC(C)(C)O"]);
        let ev = separating_evidence(&members(&v));
        assert!(
            ev.iter().any(|e| e
                == "DEPT-135 and DEPT-90 (carbon classes by attached H): #1 1 CH3, 3 CH2, 0 CH, 0 C; #2 1 CH3, 0 CH2, 0 CH, 1 C"),
            "{ev:?}"
        );
        // With a 13C list given, its count and regions are not proposed;
        // DEPT still is (a shift list does not give H counts).
        let ev = separating_evidence_given(
            &members(&v),
            Given {
                j: false,
                carbon: true,
            },
        );
        assert!(!ev.iter().any(|e| e.starts_with("13C NMR")), "{ev:?}");
        assert!(ev.iter().any(|e| e.starts_with("DEPT")), "{ev:?}");
    }

    #[test]
    fn hmbc_places_the_ethyl_group() {
        // Ethyl acetate against methyl propanoate (common practice): the
        // ester's CH3 of an ethyl on C=O (CH3-CH2-C(=O)) is three bonds from
        // the carbonyl carbon and shows an HMBC cross peak to it; the
        // O-ethyl's CH3 (CH3-CH2-O-C(=O)) is four bonds away and does not.
        let v = predicted(&["CCOC(C)=O", "CCC(=O)OC"]);
        let ev = separating_evidence(&members(&v));
        let hmbc: Vec<&String> = ev.iter().filter(|e| e.starts_with("HMBC")).collect();
        assert_eq!(hmbc.len(), 1, "{ev:?}");
        assert!(
            hmbc[0].starts_with("HMBC: #2 predicts cross peaks from the 3H t near")
                && hmbc[0].ends_with("to 1 C=O carbon (2-3 bonds); #1 does not"),
            "{ev:?}"
        );
        // Both have one C=O carbon: the carbonyl region does not separate.
        assert!(!ev.iter().any(|e| e.contains("above 160 ppm")), "{ev:?}");
    }

    #[test]
    fn hmbc_between_like_signals_and_the_carbonyl_region() {
        // Methyl butanoate against propyl acetate (common practice): the
        // same kinds of 1H signal (3H t, 2H sext, 2H t, 3H s); the middle
        // CH2 (sext) is three bonds from the C=O carbon in the first and
        // four in the second, so only the first shows that HMBC peak.
        let v = predicted(&["CCCC(=O)OC", "CCCOC(C)=O"]);
        let ev = separating_evidence(&members(&v));
        assert!(
            ev.iter().any(
                |e| e.starts_with("HMBC: #1 predicts cross peaks from the 2H sext near")
                    && e.ends_with("to 1 C=O carbon (2-3 bonds); #2 does not")
            ),
            "{ev:?}"
        );
        // Pentan-3-one against pent-4-en-2-ol differ in C=O carbons (1
        // against 0).
        let v = predicted(&["CCC(=O)CC", "C=CCC(C)O"]);
        let ev = separating_evidence(&members(&v));
        assert!(
            ev.iter()
                .any(|e| e == "13C NMR: signals of C=O carbons expected above 160 ppm: #1 1, #2 0"),
            "{ev:?}"
        );
    }

    #[test]
    fn leading_candidates_hold_most_of_the_probability() {
        // 0.89 and 0.11: both lead (their sum reaches 0.95); a lone 0.97
        // leads alone (nothing to separate); never more than four.
        assert_eq!(leading(&[0.89, 0.11], 0.95, 4), 2);
        assert_eq!(leading(&[0.97, 0.02, 0.01], 0.95, 4), 0);
        assert_eq!(leading(&[0.3, 0.2, 0.2, 0.1, 0.1, 0.1], 0.95, 4), 4);
    }
}
