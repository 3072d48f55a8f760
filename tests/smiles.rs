//! SMILES reader and canonical writer, checked against RDKit and against the
//! OpenSMILES grammar.

mod chem_reference;
mod common;

use isomerank::chem::smiles::{canonical_smiles, parse_smiles};

/// Varied structures written by hand (names from memory): chains, branches,
/// every bond order, halogens, S and P in several valences, small and
/// bridged rings, fused, aromatic and heteroaromatic rings, and the
/// non-aromatic rings the Hückel rule must reject. Kekulé and aromatic input.
const STRUCTURES: &[&str] = &[
    // chains and branches
    "C",
    "CC",
    "CCC",
    "CCCC",
    "CC(C)C",
    "CC(C)(C)C",
    "CCCCCCCC",
    "CC(C)CC(C)(C)C",
    // multiple bonds
    "C=C",
    "CC=CC",
    "C=CC=C",
    "C#C",
    "CC#CC",
    "C=C=C",
    "C#CC#C",
    "CC(=C)C=C",
    "C/C=C/C",
    "F/C=C\\F",
    // oxygen
    "CO",
    "CCO",
    "CC(C)O",
    "COC",
    "CC=O",
    "CC(C)=O",
    "CC(=O)O",
    "CC(=O)OC",
    "OCCO",
    "O=CC=O",
    "OC(=O)C(=O)O",
    "C1CO1",
    "C1CCOC1",
    "C1COCCO1",
    "OC[C@@H](O)CO",
    "O=C(O)CCC(=O)O",
    // nitrogen
    "CN",
    "CCN",
    "CNC",
    "CN(C)C",
    "CC#N",
    "CC(N)=O",
    "NC(=O)N",
    "C=N",
    "CN=C",
    "N#CC#N",
    "C1CCNC1",
    "C1CCNCC1",
    "NN",
    "CN=NC",
    "ON",
    "CON",
    "NCC(=O)O",
    "CC(C)CC(N)C(=O)O",
    // sulfur, several valences
    "CS",
    "CSC",
    "CSSC",
    "CS(C)=O",
    "CS(=O)(=O)C",
    "C1CCSC1",
    "CC(=O)S",
    "S=C(N)N",
    "CS(=O)(=O)O",
    "O=S(=O)(O)O",
    "[SH4]",
    "C[SH3]",
    "CSCCC(N)C(=O)O",
    // phosphorus
    "CP",
    "CP(C)C",
    "CP(=O)(C)C",
    "COP(=O)(OC)OC",
    "OP(O)O",
    "C[PH2]=O",
    "CP(=S)(C)C",
    // halogens
    "CF",
    "CCl",
    "CBr",
    "CI",
    "FC(F)(F)F",
    "ClC(Cl)Cl",
    "BrCCBr",
    "FC=CF",
    "ClC#CCl",
    "IC(I)I",
    "FC(F)=C(F)F",
    "ClC(Cl)(Cl)Cl",
    // saturated, bridged and spiro rings
    "C1CC1",
    "C1CCC1",
    "C1CCCC1",
    "C1CCCCC1",
    "C1CCCCCC1",
    "C1CCCCCCC1",
    "C1CC2CCC1C2",
    "C1C2CC12",
    "C1CC11CC1",
    "C1CCC2(CC1)CCCC2",
    "C1CC2CCC1CC2",
    "C12C3C4C1C5C2C3C45",
    "C1CCC2CCCCC2C1",
    "C1C2CC3CC1CC(C2)C3",
    // unsaturated rings that are not aromatic
    "C1=CC1",
    "C1=CCC1",
    "C1=CCCC1",
    "C1=CCC=C1",
    "C1=CCCCC1",
    "C1CC=CC=C1",
    "C1=CC=CCC=C1",
    "C1=CC=C1",
    "C1=CC=CC=CC=C1",
    "C1=CC2=CC=CC2=C1",
    "C=C1C=CC=C1",
    "O=C1C=CC(=O)C=C1",
    "O=C1C=CC=CC1=O",
    "O=C1C=CC(=O)N1",
    "C1=CC=CC=CC=CC=CC=C1",
    // benzenoid aromatics
    "c1ccccc1",
    "Cc1ccccc1",
    "Cc1ccccc1C",
    "Cc1cccc(C)c1",
    "Cc1ccc(C)cc1",
    "C1=CC=CC=C1",
    "CC1=C(C)C=CC=C1",
    "c1ccc2ccccc2c1",
    "c1ccc2cc3ccccc3cc2c1",
    "c1ccc2c(c1)ccc1ccccc12",
    "c1cc2ccc3cccc4ccc(c1)c2c34",
    "c1ccc(-c2ccccc2)cc1",
    "c1ccccc1c1ccccc1",
    "c1ccc2c(c1)-c1ccccc1-2",
    "c1ccc2c(c1)Cc1ccccc1-2",
    "C1C=Cc2cccc3cccc1c23",
    // substituted benzenes
    "Oc1ccccc1",
    "Nc1ccccc1",
    "O=Cc1ccccc1",
    "OC(=O)c1ccccc1",
    "Clc1ccccc1",
    "Brc1ccc(Br)cc1",
    "Fc1ccccc1F",
    "Ic1ccccc1",
    "N#Cc1ccccc1",
    "C=Cc1ccccc1",
    "C#Cc1ccccc1",
    "COc1ccccc1",
    "CC(=O)c1ccccc1",
    "Cc1ccc(O)cc1",
    "CC(=O)Nc1ccc(O)cc1",
    "CC(=O)Oc1ccccc1C(=O)O",
    "Pc1ccccc1",
    "Sc1ccccc1",
    "CSc1ccccc1",
    "O=S(=O)(O)c1ccccc1",
    // heteroaromatics
    "c1ccncc1",
    "N1=CC=CC=C1",
    "c1ccc2ncccc2c1",
    "c1cnccn1",
    "c1cncnc1",
    "c1ccnnc1",
    "c1cc[nH]c1",
    "C1=CNC=C1",
    "[nH]1cccc1",
    "c1ccoc1",
    "C1=COC=C1",
    "c1ccsc1",
    "c1c[nH]cn1",
    "C1=CN=CN1",
    "c1cocn1",
    "c1cscn1",
    "c1cn[nH]c1",
    "c1nn[nH]n1",
    "c1ncon1",
    "Cn1cccc1",
    "c1ccc2[nH]ccc2c1",
    "c1ccc2occc2c1",
    "c1ccc2sccc2c1",
    "c1ccn2cccc2c1",
    "c1ncc2[nH]cnc2n1",
    "c1ccc2c(c1)oc1ccccc12",
    "c1ccc2c(c1)[nH]c1ccccc12",
    "c1ccpcc1",
    "c1cc[pH]c1",
    // heteroaromatics with exocyclic C=O or C=C, and other Hückel cases
    "O=c1cccc[nH]1",
    "O=C1NC=CC=C1",
    "O=c1cc[nH]cc1",
    "O=c1cccccc1",
    "O=C1C=CC=CC=C1",
    "S=C1C=CC=CC=C1",
    "O=c1ccoc2ccccc12",
    "O=c1ccc2ccccc2o1",
    "O=c1cc[nH]c(=O)[nH]1",
    "Cc1c[nH]c(=O)[nH]c1=O",
    "Nc1ncnc2[nH]cnc12",
    "Cn1cnc2c1c(=O)n(C)c(=O)n2C",
    "O=C1C=C1",
    "O=C1C(=O)C=C1",
    "C=C1C=CC(=C)C=C1",
    "C=C1C=C1",
    "C1=CC2=CC=C1C=C2",
    "C1=CC#CC=C1",
    "C1=CC=C2C=CC=CC=C2C=C1",
    "C1=CC=CC=CC=CC=C1",
    "CN1CCC[C@H]1c1cccnc1",
];

#[test]
fn round_trip_and_random_smiles_agree_with_rdkit() {
    let inputs: Vec<String> = STRUCTURES.iter().map(|s| s.to_string()).collect();
    assert!(inputs.len() >= 100);
    // Source: RDKit (PyPI rdkit). For each structure, RDKit's canonical SMILES
    // of our canonical output equals that of the input, and our canonical
    // SMILES is the same for 5 random SMILES RDKit writes for the molecule.
    let cmp = chem_reference::compare_with_rdkit(&inputs);
    assert_eq!(
        cmp.molecules.len()
            + cmp
                .failures
                .iter()
                .filter(|f| f.contains("reader failed"))
                .count(),
        inputs.len()
    );
    cmp.assert_clean("hand-written structures");
    // Source: RDKit (PyPI rdkit): the same rings as RDKit's symmetrised SSSR
    // (cubane 6, adamantane 4, bicyclo[2.2.2]octane 3, ...).
    assert!(
        cmp.ring_set_differences.is_empty(),
        "{:?}",
        cmp.ring_set_differences
    );
}

#[test]
fn canonical_strings_separate_compounds_like_rdkit() {
    let inputs: Vec<String> = STRUCTURES.iter().map(|s| s.to_string()).collect();
    let cmp = chem_reference::compare_with_rdkit(&inputs);
    // Source: RDKit (PyPI rdkit). Two inputs share our canonical SMILES
    // exactly when they share RDKit's (the list repeats some compounds in
    // Kekulé and aromatic form).
    for a in &cmp.molecules {
        for b in &cmp.molecules {
            assert_eq!(
                a.ours == b.ours,
                a.rdkit == b.rdkit,
                "{} / {}: ours {} {} RDKit {} {}",
                a.input,
                b.input,
                a.ours,
                b.ours,
                a.rdkit,
                b.rdkit
            );
        }
    }
}

fn error(s: &str) -> String {
    match parse_smiles(s) {
        Ok(m) => panic!("{s} was accepted as {}", canonical_smiles(&m)),
        Err(e) => {
            assert_eq!(e.exit_code(), 2, "bad SMILES is an input error");
            e.to_string()
        }
    }
}

#[test]
fn syntax_errors_name_the_column() {
    // Common practice (OpenSMILES grammar, opensmiles.org): branches must be
    // closed, ring-closure digits come in pairs, brackets hold one atom.
    assert_eq!(
        error("CC(C"),
        "SMILES \"CC(C\" : unclosed branch opened at column 3"
    );
    assert_eq!(
        error("CC)C"),
        "SMILES \"CC)C\" : ')' at column 3 closes no branch"
    );
    assert_eq!(
        error("C1CC"),
        "SMILES \"C1CC\" : ring closure 1 opened at column 2 is never closed"
    );
    assert_eq!(
        error("C%12CC"),
        "SMILES \"C%12CC\" : ring closure 12 opened at column 2 is never closed"
    );
    assert!(error("CCCXx").ends_with("unknown atom \"Xx\" at column 4 (supported: C N O S P F Cl Br I, aromatic c n o s p, and these in brackets)"));
    assert!(error("C[Xe]").contains("unknown atom \"Xe\" at column 3"));
    assert!(error("C[CH4").contains("unclosed bracket atom '[' at column 2"));
    assert!(error("CC=").contains("bond '=' at column 3 has no atom after it"));
    assert!(error("=CC").contains("bond '=' at column 1 has no atom before it"));
    assert!(error("C==C").contains("two bond symbols in a row"));
    assert!(error("C()C").contains("empty branch '()' at column 2"));
    assert!(error("C11").contains("ring closure 1 at column 3 closes on the atom that opened it"));
    assert!(error("C12CC12").contains("already bonded"));
    assert!(error("C=1CC#1").contains("disagree"));
    assert!(error("C%1C").contains("two digits"));
    assert!(error("CC C").contains("space at column 3"));
    assert!(error("C&C").contains("unexpected character '&' at column 2"));
    assert!(error("").contains("empty SMILES"));
}

#[test]
fn unsupported_chemistry_is_refused_with_position() {
    // Common practice: the tool handles neutral closed-shell molecules of
    // C H N O S P F Cl Br I only (charges only as the [N+][O-] of a
    // charge-separated N-oxide group).
    assert!(error("C[N+](C)(C)C").contains("charged atom [N+] at column 2 is not supported"));
    assert!(error("C[O-]").contains("charge"));
    assert!(error("[13CH4]").contains("isotope in [13CH4] at column 1"));
    assert!(
        error("[CH2]C").contains("bracket atom [CH2] at column 1 has valence 3; C takes valence 4")
    );
    assert!(error("CC.O").contains("'.' at column 3"));
    assert!(error("C*C").contains("wildcard atom '*' at column 2"));
    assert!(error("CB(C)C").contains("boron 'B' at column 2"));
    assert!(error("C$C").contains("quadruple bond"));
    assert!(error("CN(=O)=O").contains("atom 'N' at column 2 has 5 bonds"));
    assert!(error("CC(C)(C)(C)C").contains("atom 'C' at column 2 has 5 bonds"));
    assert!(error("c1ccccc").contains("ring closure 1 opened at column 2"));
    assert!(error("cC").contains("aromatic atom 'c' at column 1 is not in a ring"));
    // Pyrrole without its NH: five pi atoms cannot pair up.
    let e = error("c1ccnc1");
    assert!(
        e.contains("cannot place alternating double bonds in the aromatic ring at atoms in columns 1, 3, 4, 5, 6"),
        "{e}"
    );
    assert!(e.contains("[nH]"));
}

#[test]
fn stereo_marks_and_explicit_hydrogens_are_read_as_constitution() {
    // Common practice (OpenSMILES): / \ and @ describe stereo only.
    let plain = canonical_smiles(&parse_smiles("CC=CC").unwrap());
    assert_eq!(canonical_smiles(&parse_smiles("C/C=C\\C").unwrap()), plain);
    let a = canonical_smiles(&parse_smiles("N[C@@H](C)C(=O)O").unwrap());
    assert_eq!(a, canonical_smiles(&parse_smiles("NC(C)C(=O)O").unwrap()));
    assert_eq!(
        canonical_smiles(&parse_smiles("[H]OC([H])([H])[H]").unwrap()),
        canonical_smiles(&parse_smiles("CO").unwrap())
    );
    assert_eq!(
        canonical_smiles(&parse_smiles("[CH3:1]O").unwrap()),
        canonical_smiles(&parse_smiles("CO").unwrap())
    );
}

/// Random SMILES-like strings (fixed seed): atoms, bonds, branches and ring
/// digits in plausible places. Many are rejected; those we accept are
/// varied ring systems nobody would write by hand.
fn random_smiles(count: usize) -> Vec<String> {
    const ATOMS: &[&str] = &[
        "C", "C", "C", "c", "c", "c", "c", "c", "c", "c", "n", "n", "o", "s", "N", "O", "S", "P",
        "F", "Cl", "[nH]",
    ];
    const BONDS: &[&str] = &["", "", "", "", "", "=", "#"];
    let mut state = 0x0bad_5eed_1234_5678u64;
    let mut next = move || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        state
    };
    let mut out = Vec::new();
    while out.len() < count {
        let mut s = String::new();
        let mut open = 0;
        let len = 3 + next() % 12;
        for i in 0..len {
            if i > 0 {
                s.push_str(BONDS[(next() % BONDS.len() as u64) as usize]);
            }
            s.push_str(ATOMS[(next() % ATOMS.len() as u64) as usize]);
            match next() % 5 {
                0 | 1 => s.push(char::from(b'1' + (next() % 3) as u8)),
                2 if open > 0 => {
                    s.push(')');
                    open -= 1;
                }
                3 if i + 1 < len => {
                    s.push('(');
                    open += 1;
                }
                _ => {}
            }
        }
        if parse_smiles(&s).is_ok() && !out.contains(&s) {
            out.push(s);
        }
    }
    out
}

#[test]
fn random_ring_systems_agree_with_rdkit() {
    let inputs = random_smiles(3000);
    // Source: RDKit (PyPI rdkit): aromatic flags, round trip and random
    // SMILES invariance as above, on 3000 random ring systems.
    let cmp = chem_reference::compare_with_rdkit(&inputs);
    let aromatic = cmp
        .molecules
        .iter()
        .filter(|m| m.aromatic_atoms > 0)
        .count();
    eprintln!(
        "{} random molecules, {aromatic} with aromatic atoms",
        cmp.molecules.len()
    );
    cmp.assert_clean("random ring systems");
    // The set must hold aromatic molecules, or the test proves little.
    assert!(aromatic > 250);
}
