//! First-order multiplicity rules and their application to simple
//! structures: the n+1 rule with binomial (Pascal's triangle) intensities,
//! (n+1)(m+1) patterns for different J, collapse of similar J in alkyl
//! chains, exchangeable H in CDCl3 and DMSO-d6, aldehyde, vinyl and aromatic
//! patterns. Each expectation is a fact of the trade (common practice) or a
//! handbook spectrum (from memory), as marked.

use isomerank::chem::smiles::parse_smiles;
use isomerank::predict::{Multiplicity, PredictOptions, PredictedSignal, Predictor};

fn predict(smiles: &str, solvent: &str) -> Vec<PredictedSignal> {
    let p = Predictor::embedded().unwrap();
    let opts = p.options(solvent, 400.0).unwrap();
    p.predict(&parse_smiles(smiles).unwrap(), &opts)
}

/// The signal on atom `a` (0-based index in the SMILES).
fn on(sig: &[PredictedSignal], a: usize) -> &PredictedSignal {
    sig.iter()
        .find(|s| s.atoms.contains(&a))
        .unwrap_or_else(|| panic!("no signal on atom {a}"))
}

fn summary(s: &PredictedSignal) -> String {
    format!("{} {}H", s.label(), s.hydrogens)
}

#[test]
fn pascal_triangle_intensities() {
    // n equivalent neighbours give n+1 lines with binomial intensities
    // (Pascal's triangle; common practice).
    let rows: [(u8, &[u64]); 6] = [
        (1, &[1, 1]),
        (2, &[1, 2, 1]),
        (3, &[1, 3, 3, 1]),
        (4, &[1, 4, 6, 4, 1]),
        (5, &[1, 5, 10, 10, 5, 1]),
        (6, &[1, 6, 15, 20, 15, 6, 1]),
    ];
    for (n, row) in rows {
        let m = Multiplicity::Coupled(vec![n]);
        assert_eq!(m.intensities().unwrap(), row, "n = {n}");
        assert_eq!(m.lines(), Some(n as u32 + 1));
    }
    // Two different J: (n+1)(m+1) lines; a dd is four equal lines, a td
    // three pairs 1:1:2:2:1:1 (common practice).
    assert_eq!(
        Multiplicity::Coupled(vec![1, 1]).intensities().unwrap(),
        [1, 1, 1, 1]
    );
    assert_eq!(
        Multiplicity::Coupled(vec![2, 1]).intensities().unwrap(),
        [1, 1, 2, 2, 1, 1]
    );
    assert_eq!(Multiplicity::Coupled(vec![3, 1]).lines(), Some(8));
    // Labels (common practice).
    let labels = [
        (vec![1], "d"),
        (vec![2], "t"),
        (vec![3], "q"),
        (vec![4], "quint"),
        (vec![5], "sext"),
        (vec![6], "sept"),
        (vec![7], "oct"),
        (vec![1, 1], "dd"),
        (vec![1, 2], "dt"),
        (vec![2, 1], "td"),
        (vec![1, 3], "dq"),
        (vec![3, 1], "qd"),
        (vec![2, 2], "tt"),
        (vec![1, 1, 1], "ddd"),
    ];
    for (ns, l) in labels {
        assert_eq!(Multiplicity::Coupled(ns).label(), l);
    }
    assert_eq!(Multiplicity::Singlet.label(), "s");
}

#[test]
fn alkyl_chains_follow_n_plus_one() {
    // Ethyl: CH2 q, CH3 t; isopropyl CH sept, CH3 d; tert-butyl s
    // (common practice).
    let s = predict("CCOC(C)=O", "CDCl3");
    assert_eq!(summary(on(&s, 1)), "q 2H");
    assert_eq!(summary(on(&s, 0)), "t 3H");
    assert_eq!(summary(on(&s, 4)), "s 3H");
    let s = predict("CC(C)Cl", "CDCl3");
    assert_eq!(summary(on(&s, 1)), "sept 1H");
    assert_eq!(summary(on(&s, 0)), "d 6H");
    let s = predict("CC(C)(C)O", "CDCl3");
    assert_eq!(summary(on(&s, 0)), "s 9H");
    // 1-bromopropane: the middle CH2 between CH3 and CH2 (similar J) is a
    // sextet, not a qt (common practice).
    let s = predict("CCCBr", "CDCl3");
    assert_eq!(summary(on(&s, 1)), "sext 2H");
    assert_eq!(summary(on(&s, 2)), "t 2H");
    assert_eq!(summary(on(&s, 0)), "t 3H");
    // Integrals are the H counts and add up to the formula's H.
    let total: u32 = s.iter().map(|x| x.hydrogens).sum();
    assert_eq!(total, 7);
}

#[test]
fn exchangeable_h_depend_on_the_solvent() {
    // In CDCl3 the OH of ethanol is a broad singlet and does not split the
    // CH2 (a clean q); in DMSO-d6 OH couples to CH2: OH t, CH2 qd
    // (common practice; ethanol in DMSO-d6 from memory: 4.35 t, 3.44 qd).
    let s = predict("CCO", "CDCl3");
    assert_eq!(summary(on(&s, 2)), "br s 1H");
    assert!(on(&s, 2).exchangeable);
    assert_eq!(summary(on(&s, 1)), "q 2H");
    let s = predict("CCO", "DMSO-d6");
    assert_eq!(summary(on(&s, 2)), "t 1H");
    assert_eq!(summary(on(&s, 1)), "qd 2H");
    assert!(
        on(&s, 2).shift > 3.9,
        "alcohol OH moves downfield in DMSO-d6"
    );
    // Carboxylic acid OH: 10-13 ppm, broad (common practice).
    let s = predict("CC(=O)O", "CDCl3");
    let oh = on(&s, 3);
    assert!(oh.shift >= 10.0 && oh.shift <= 13.0 && oh.label() == "br s");
}

#[test]
fn aldehyde_vinyl_and_aromatic_patterns() {
    // Propanal: CHO t with small J (1-3 Hz), CH2 qd (common practice).
    let s = predict("CCC=O", "CDCl3");
    let cho = on(&s, 2);
    assert_eq!(summary(cho), "t 1H");
    assert!(cho.j_hz[0] >= 1.0 && cho.j_hz[0] <= 3.0);
    assert_eq!(summary(on(&s, 1)), "qd 2H");
    assert!(cho.shift >= 9.4 && cho.shift <= 10.1);
    // Styrene: =CH dd (trans 12-18, cis 6-12 Hz); the two =CH2 H separate
    // signals, each d of the vinyl J with a small geminal J (common practice).
    let s = predict("C=Cc1ccccc1", "CDCl3");
    let ch = on(&s, 1);
    assert_eq!(summary(ch), "dd 1H");
    assert!(ch.j_hz[0] >= 12.0 && ch.j_hz[0] <= 18.0 && ch.j_hz[1] >= 6.0 && ch.j_hz[1] <= 12.0);
    let ch2: Vec<_> = s.iter().filter(|x| x.atoms == [0]).collect();
    assert_eq!(ch2.len(), 2);
    assert!(ch2.iter().all(|x| x.hydrogens == 1));
    // Para-disubstituted ring: two 2H doublets, J ortho 7-9 Hz (common practice).
    let s = predict("COc1ccc(C=O)cc1", "CDCl3");
    for a in [3, 4] {
        let x = on(&s, a);
        assert_eq!(summary(x), "d 2H");
        assert!(x.j_hz[0] >= 7.0 && x.j_hz[0] <= 9.0);
    }
    // Monosubstituted benzene: reported as m (decision documented in
    // fragment-library/README.md), 5 ring H in all.
    let s = predict("CC(=O)c1ccccc1", "CDCl3");
    let ring: Vec<_> = s.iter().filter(|x| x.shift > 7.0).collect();
    assert!(ring.iter().all(|x| x.label() == "m"));
    assert_eq!(ring.iter().map(|x| x.hydrogens).sum::<u32>(), 5);
}

#[test]
fn ring_size_sets_the_cis_vinyl_j() {
    // Cyclopent-2-enone (O=C1C=CCC1): H3 (atom 3) dt, J = 5.6 and 2.7 Hz;
    // cyclohex-2-enone (O=C1C=CCCC1): H3 dt, J = 10.1 and 4.0 Hz (from
    // memory; the ring-size series of cis J in cycloalkenes, 5-7 Hz in
    // five-membered rings and 8.8-11 in six-membered, is in the handbooks).
    let j_cis = |smiles: &str| {
        let s = predict(smiles, "CDCl3");
        let h3 = on(&s, 3);
        assert_eq!(summary(h3), "dt 1H", "{smiles}");
        h3.j_hz[0]
    };
    let five = j_cis("O=C1C=CCC1");
    assert!((5.0..=7.0).contains(&five), "cyclopentenone cis J {five}");
    let six = j_cis("O=C1C=CCCC1");
    assert!((8.8..=11.0).contains(&six), "cyclohexenone cis J {six}");
}

#[test]
fn small_shift_difference_gives_m() {
    // Interior CH2 of hexane lie within a few Hz of each other: not first
    // order, m (common practice: shift difference below ~10 J).
    let s = predict("CCCCCC", "CDCl3");
    assert_eq!(on(&s, 2).label(), "m");
    // The same pair at a very high field stays m; a CH3 0.3 ppm away from
    // its CH2 is a clean t at 400 MHz but m at 60 MHz (18 Hz < 10 x 7 Hz).
    assert_eq!(on(&s, 0).label(), "t");
    let p = Predictor::embedded().unwrap();
    let low = PredictOptions {
        mhz: 60.0,
        ..p.options("CDCl3", 400.0).unwrap()
    };
    let s60 = p.predict(&parse_smiles("CCCCCC").unwrap(), &low);
    assert_eq!(on(&s60, 0).label(), "m");
}

#[test]
fn diastereotopic_and_rotamer_notes() {
    // 2-Butanol has a stereocentre: its CH2 is diastereotopic (common practice).
    let s = predict("CC(O)CC", "CDCl3");
    assert!(on(&s, 3).notes.iter().any(|n| n.contains("diastereotopic")));
    // Butane has none.
    let s = predict("CCCC", "CDCl3");
    assert!(s
        .iter()
        .all(|x| x.notes.iter().all(|n| !n.contains("diastereotopic"))));
    // DMF: two N-CH3 singlets (slow amide rotation; Gottlieb 1997 lists 2.96 and 2.88).
    let s = predict("O=CN(C)C", "CDCl3");
    let nme: Vec<_> = s
        .iter()
        .filter(|x| x.atoms == [3] || x.atoms == [4])
        .collect();
    assert_eq!(nme.len(), 2);
}
