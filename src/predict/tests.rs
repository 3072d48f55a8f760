//! Unit tests of the predictor's internals on small structures.

use super::view::View;
use super::Predictor;
use crate::chem::smiles::parse_smiles;
use crate::chem::{Element, Molecule};

#[test]
fn kekule_forms_give_one_prediction() {
    // o-xylene written with the ring double bonds in either Kekulé position
    // is one compound (common practice): same signals.
    let p = Predictor::embedded().unwrap();
    let opts = Default::default();
    let build = |shift: usize| {
        let mut m = Molecule::new();
        let ring: Vec<_> = (0..6)
            .map(|i| m.add_atom(Element::C, if i < 2 { 0 } else { 1 }))
            .collect();
        for i in 0..6 {
            let o = if (i + shift).is_multiple_of(2) { 2 } else { 1 };
            m.add_bond(ring[i], ring[(i + 1) % 6], o);
        }
        let a = m.add_atom(Element::C, 3);
        let b = m.add_atom(Element::C, 3);
        m.add_bond(ring[0], a, 1);
        m.add_bond(ring[1], b, 1);
        m
    };
    let x = p.predict(&build(0), &opts);
    let y = p.predict(&build(1), &opts);
    assert_eq!(x, y);
    assert_eq!(x.len(), 3); // CH3 (6H), H3/H6, H4/H5
}

#[test]
fn naphthalene_and_indole_are_aromatic() {
    // Hückel rule on fused rings (common practice).
    for s in ["c1ccc2ccccc2c1", "c1ccc2[nH]ccc2c1"] {
        let m = parse_smiles(s).unwrap();
        let v = View::new(&m).unwrap();
        assert_eq!(v.aromatic.count_ones() as usize, m.atom_count(), "{s}");
    }
    // Cyclohexa-1,3-diene and 1,4-benzoquinone are not.
    for s in ["C1=CC=CCC1", "O=C1C=CC(=O)C=C1"] {
        let v = View::new(&parse_smiles(s).unwrap()).unwrap();
        assert_eq!(v.aromatic, 0, "{s}");
    }
}

/// The increment methods alone (h-groups.toml emptied): the tests below
/// check those methods and the couplings; the fitted group terms are
/// checked against measured spectra in tests/predict_nmrshiftdb_1h.rs.
fn increments_only(test: &str) -> Predictor {
    let dir = std::env::temp_dir().join(format!("isomerank-{test}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(
        dir.join("h-groups.toml"),
        "source = \"none: the increment methods alone\"\nterms = []\n",
    )
    .unwrap();
    let p = Predictor::from_dir(&dir).unwrap();
    std::fs::remove_dir_all(&dir).ok();
    p
}

#[test]
fn ring_alkene_geometry_is_fixed() {
    // Cyclohexene =CH: 5.25 + 0.69 (gem, ring alkyl) - 0.28 (trans, ring
    // alkyl) = 5.66 by the Pascual-Meier-Simon increments (from memory);
    // observed ~5.67 (from memory). No E/Z note for a ring.
    let p = increments_only("ring_alkene_geometry_is_fixed");
    let s = p.predict(&parse_smiles("C1=CCCCC1").unwrap(), &Default::default());
    let ch = s.iter().find(|x| x.atoms.contains(&0)).unwrap();
    assert!((ch.shift - 5.66).abs() < 0.01, "{}", ch.shift);
    assert!(ch.notes.iter().all(|n| !n.contains("E/Z")));
    // An open-chain 1,2-disubstituted alkene says which isomer it assumed.
    let s = p.predict(&parse_smiles("CC=CCl").unwrap(), &Default::default());
    assert!(s.iter().any(|x| x.notes.iter().any(|n| n.contains("E/Z"))));
}

#[test]
fn every_h_is_in_exactly_one_signal() {
    let p = Predictor::embedded().unwrap();
    for s in [
        "CC(=O)OCC",
        "C=CC(=O)OC",
        "OC(=O)c1ccccc1",
        "CC1=CC(=O)CCC1",
        "N#CCC#N",
        "CN1C=CC=C1",
        "C#CCO",
    ] {
        let m = parse_smiles(s).unwrap();
        let sig = p.predict(&m, &Default::default());
        let total: u32 = sig.iter().map(|x| x.hydrogens).sum();
        assert_eq!(total, m.total_hydrogens(), "{s}");
        assert!(sig.windows(2).all(|w| w[0].shift >= w[1].shift), "{s}");
        assert!(sig.iter().all(|x| x.sigma > 0.0), "{s}");
    }
}

/// The class of every bond (both directions) and the environment of every
/// H-bearing atom, looked up through the root index, equal the first match
/// of an exhaustive scan of the library in priority order: the index only
/// saves work. Over every isomer the generator gives for formulas with C,
/// H, N, O, S and halogens (S(IV)/S(VI) included for the sulfur formulas).
#[test]
fn root_index_agrees_with_a_full_scan() {
    use super::library::Library;
    use crate::chem::Formula;
    use crate::enumerate::{self, Options};
    use std::collections::BTreeSet;

    // reference: exhaustive scan of the library in priority order
    fn scan_class(lib: &Library, v: &View, root: usize, parent: usize) -> Option<u8> {
        (0..lib.classes.len())
            .find(|&i| lib.classes[i].pattern.matches(v, root, Some(parent)))
            .map(|i| i as u8)
    }
    // reference: exhaustive scan of the library in priority order
    fn scan_env(lib: &Library, v: &View, atom: usize) -> Option<usize> {
        (0..lib.environments.len()).find(|&i| lib.environments[i].pattern.matches(v, atom, None))
    }

    let lib = Library::embedded().unwrap();
    let mut classes_seen = BTreeSet::new();
    let mut envs_seen = BTreeSet::new();
    let mut checks = 0u64;
    for (f, expanded) in [
        ("C8H8O", false),
        ("C6H8O2", false),
        ("C5H7N", false),
        ("C4H6S", false),
        ("C4H7Cl", false),
        ("C3H4BrF", false),
        ("C4H7NO", false),
        ("C3H6OS", true),
        ("C2H6O2S", true),
    ] {
        let formula = Formula::parse(f).unwrap();
        let opts = Options {
            expanded_valence: expanded,
            ..Options::default()
        };
        let mut n = 0;
        enumerate::for_each_ordered(
            &formula,
            &opts,
            |iso| Some(iso.molecule()),
            |m| {
                n += 1;
                let v = View::new(&m).unwrap();
                for a in 0..v.n {
                    for (b, _) in v.neighbours(a) {
                        let want = scan_class(&lib, &v, a, b);
                        assert_eq!(lib.class_at(&v, a, b), want, "{f}: class at {a} from {b}");
                        classes_seen.insert(want);
                        checks += 1;
                    }
                    if v.h[a] > 0 {
                        let want = scan_env(&lib, &v, a);
                        assert_eq!(lib.environment_at(&v, a), want, "{f}: environment of {a}");
                        envs_seen.insert(want);
                        checks += 1;
                    }
                }
                true
            },
            &mut |_| {},
        )
        .unwrap();
        assert!(n > 0, "{f}: no isomers");
    }
    // The formulas reach most of the library (the comparison is not vacuous).
    assert!(
        classes_seen.len() > 30,
        "{} classes seen",
        classes_seen.len()
    );
    assert!(
        envs_seen.len() > 15,
        "{} environments seen",
        envs_seen.len()
    );
    println!(
        "{checks} lookups; {} classes, {} environments seen",
        classes_seen.len(),
        envs_seen.len()
    );
}

#[test]
fn fluorine_splits_like_hydrogen() {
    // 19F has spin 1/2 and 100% abundance: n equivalent F split an H
    // signal into n+1 lines (common practice). J from couplings.toml (from
    // memory): CHF2 t about 56 Hz, CH2F d about 47 Hz, H-C-CF3 q about 9 Hz.
    let p = increments_only("fluorine_splits_like_hydrogen");
    let opts = Default::default();
    let signal = |smiles: &str, shift_above: f64| {
        let m = parse_smiles(smiles).unwrap();
        // The lowest non-exchangeable signal above `shift_above`.
        p.predict(&m, &opts)
            .into_iter()
            .filter(|s| s.shift > shift_above && !s.exchangeable)
            .min_by(|a, b| a.shift.total_cmp(&b.shift))
            .unwrap_or_else(|| panic!("{smiles}: no signal above {shift_above}"))
    };
    // 1,1-difluoroethane: CHF2 a triplet (2 F) of quartets (CH3).
    let chf2 = signal("CC(F)F", 5.0);
    assert_eq!(chf2.label(), "tq", "{chf2:?}");
    assert_eq!(chf2.j_hz, vec![56.0, 7.0]);
    // The CHF2 H sits near 5.8 ppm (special.toml), not at the 8.7 of
    // Shoolery's sum over two geminal F.
    assert!((chf2.shift - 5.85).abs() < 0.01, "{chf2:?}");
    // Fluoromethylbenzene: CH2F a doublet.
    let ch2f = signal("FCc1ccccc1", 5.0);
    assert_eq!(ch2f.label(), "d", "{ch2f:?}");
    assert_eq!(ch2f.j_hz, vec![47.0]);
    // 2,2,2-trifluoroethanol: CH2 a quartet from the three F.
    let ch2 = signal("OCC(F)(F)F", 3.0);
    assert_eq!(ch2.label(), "q", "{ch2:?}");
    assert_eq!(ch2.j_hz, vec![9.0]);
}

#[test]
fn phosphorus_splits_like_hydrogen() {
    // 31P has spin 1/2 and 100% abundance (common practice). J and shifts
    // from couplings.toml and sp3.toml (from memory): dimethyl
    // methylphosphonate P-CH3 1.48 (d, about 17.5 Hz) and OCH3 3.74 (d,
    // about 11 Hz); P(III) couplings to P-CH3 are small (2-4 Hz).
    let p = increments_only("phosphorus_splits_like_hydrogen");
    let opts = Default::default();
    let signals = |smiles: &str| {
        let mut v = p.predict(&parse_smiles(smiles).unwrap(), &opts);
        v.sort_by(|a, b| b.shift.total_cmp(&a.shift));
        v
    };
    let dmmp = signals("CP(=O)(OC)OC");
    assert_eq!(dmmp.len(), 2, "{dmmp:?}");
    let (och3, pch3) = (&dmmp[0], &dmmp[1]);
    assert_eq!((och3.label(), och3.j_hz.clone()), ("d".into(), vec![8.0]));
    assert_eq!((pch3.label(), pch3.j_hz.clone()), ("d".into(), vec![17.0]));
    assert!((3.6..=3.9).contains(&och3.shift), "{och3:?}");
    assert!((1.35..=1.65).contains(&pch3.shift), "{pch3:?}");
    // Diethyl ethylphosphonate: the P-ethyl CH3 couples to P over three
    // bonds (dt), its CH2 to P over two (dq); the O-CH2 couples to P (about
    // 8 Hz) and CH3 (7 Hz) alike, an apparent quintet.
    let labels: Vec<String> = signals("CCP(=O)(OCC)OCC")
        .iter()
        .map(|s| s.label())
        .collect();
    assert_eq!(labels, ["quint", "dq", "t", "dt"]);
    // Trimethylphosphine: a small P-CH3 doublet.
    let pme3 = signals("CP(C)C");
    assert_eq!(pme3[0].label(), "d");
    assert!(pme3[0].j_hz[0] < 6.0, "{:?}", pme3[0]);
}

#[test]
fn para_pair_keeps_its_fluorine_couplings() {
    // A 4-fluorophenyl ring (common practice; 4-fluoroacetophenone from
    // memory: 7.98 dd, J about 8.8 and 5.4 Hz; 7.13 apparent t, J about
    // 8.6 Hz): the two doublets of the para pair are split again by F.
    let p = Predictor::embedded().unwrap();
    let opts = Default::default();
    let mut v = p.predict(&parse_smiles("CC(=O)c1ccc(F)cc1").unwrap(), &opts);
    v.retain(|s| s.shift > 6.0);
    v.sort_by(|a, b| b.shift.total_cmp(&a.shift));
    let labels: Vec<String> = v.iter().map(|s| s.label()).collect();
    assert_eq!(labels, ["dd", "t"]);
    // Without F the para pair stays two doublets.
    let mut v = p.predict(&parse_smiles("CC(=O)c1ccc(Cl)cc1").unwrap(), &opts);
    v.retain(|s| s.shift > 6.0);
    let labels: Vec<String> = v.iter().map(|s| s.label()).collect();
    assert_eq!(labels, ["d", "d"]);
}

#[test]
fn chelated_phenol_oh_is_far_downfield() {
    // A phenol OH hydrogen-bonded to an ortho C=O sits near 10.8-12.3 ppm
    // (methyl salicylate 10.8, from memory); a free phenol OH near 4-8.
    let p = Predictor::embedded().unwrap();
    let opts = Default::default();
    let oh = |smiles: &str| {
        let m = parse_smiles(smiles).unwrap();
        p.predict(&m, &opts)
            .into_iter()
            .find(|s| s.exchangeable)
            .unwrap()
            .shift
    };
    let chelated = oh("COC(=O)c1ccccc1O");
    assert!((10.4..=12.5).contains(&chelated), "{chelated}");
    // The C=O para to the OH cannot chelate.
    let free = oh("COC(=O)c1ccc(O)cc1");
    assert!((4.0..=8.0).contains(&free), "{free}");
}
