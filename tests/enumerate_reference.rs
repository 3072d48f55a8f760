//! Isomer enumeration checked against an independent reference:
//! tests/reference/nauty_isomers.py (nauty's geng | vcolg | multig for the
//! coloured bond multigraphs, RDKit canonical SMILES to merge Kekule forms).
//!
//! For each formula, `isomerank isomers F --count` must equal the reference
//! count, and (up to a size limit, or whenever the counts differ) the full
//! output, rewritten as RDKit canonical SMILES, must be the reference's set
//! with no compound twice. A failure lists compounds found on one side only.

mod common;

use common::*;
use std::collections::BTreeSet;

/// Above this many isomers the full sets are compared only when the counts
/// differ (canonicalising ~7e5 SMILES in RDKit costs about a minute).
const SET_COMPARE_LIMIT: u64 = 200_000;

/// Compare isomerank with the nauty+RDKit reference for one formula.
/// `ours` are flags for isomerank, `theirs` for nauty_isomers.py.
fn compare(formula: &str, ours: &[&str], theirs: &[&str]) {
    let reference = reference_smiles(formula, theirs);
    let expected = reference.len() as u64;
    // Source: nauty (Debian package nauty: geng, vcolg, multig) + RDKit (PyPI rdkit),
    // tests/reference/nauty_isomers.py.
    let count = isomers_count(formula, ours);
    if count == expected && count > SET_COMPARE_LIMIT {
        return;
    }
    let mut args = vec![formula];
    args.extend_from_slice(ours);
    let output = isomers_ok(&args);
    let lines = output.lines().count() as u64;
    let canonical = rdkit_canonical(&output);
    let invalid: Vec<&String> = canonical
        .iter()
        .filter(|s| s.starts_with("!INVALID"))
        .take(5)
        .collect();
    let unique: BTreeSet<&String> = canonical.iter().collect();
    let report = set_difference_report(&canonical, &reference, 8);
    assert!(
        count == expected
            && lines == count
            && invalid.is_empty()
            && unique.len() as u64 == lines
            && unique.len() == reference.len()
            && unique.iter().zip(reference.iter()).all(|(a, b)| *a == b),
        "isomers {formula} {ours:?}: --count says {count}, the output has {lines} lines \
         ({} distinct compounds by RDKit); the nauty+RDKit reference has {expected}.\n\
         unreadable lines: {invalid:?}\n{report}",
        unique.len()
    );
}

fn standard(formula: &str) {
    compare(formula, &[], &[]);
}

macro_rules! against_reference {
    ($($name:ident => $formula:literal;)*) => {
        $(
            #[test]
            fn $name() {
                standard($formula);
            }
        )*
    };
}

// Standard valences (C 4, N 3, O 2, S 2, P 3, halogens 1). The comments give
// the reference count as measured with nauty 2.8.6 and RDKit 2026.3.6; the
// test computes it afresh each run.
against_reference! {
    one_heavy_atom_ch4 => "CH4";                 // 1
    one_heavy_atom_h2o => "H2O";                 // 1
    alkane_c4h10 => "C4H10";                     // 2
    alkane_c6h14 => "C6H14";                     // 5
    alkene_or_ring_c5h10 => "C5H10";             // 10
    alkene_or_ring_c6h12 => "C6H12";             // 25
    diene_yne_c4h6 => "C4H6";                    // 9
    benzene_formula_c6h6 => "C6H6";              // 217
    toluene_formula_c7h8 => "C7H8";              // 1031
    xylene_formula_c8h10 => "C8H10";             // 4678 (4679 Kekule multigraphs)
    carbonyl_ether_c4h8o => "C4H8O";             // 26
    c5h10o => "C5H10O";                          // 74
    c6h10o => "C6H10O";                          // 747
    acid_ester_c2h4o2 => "C2H4O2";               // 10
    acid_ester_c3h6o2 => "C3H6O2";               // 34
    c4h6o2 => "C4H6O2";                          // 263
    phenol_formula_c6h6o => "C6H6O";             // 2237
    benzaldehyde_formula_c7h6o => "C7H6O";       // 15781
    furan_formula_c4h4o => "C4H4O";              // 62
    amine_ch5n => "CH5N";                        // 1
    amine_c3h9n => "C3H9N";                      // 4
    nitrile_c4h7n => "C4H7N";                    // 85
    pyridine_formula_c5h5n => "C5H5N";           // 685
    diazine_formula_c4h4n2 => "C4H4N2";          // 1004
    oxazole_formula_c3h3no => "C3H3NO";          // 136
    amide_c5h9no => "C5H9NO";                    // 3390
    amino_alcohol_c2h7no => "C2H7NO";            // 8
    thiophene_formula_c4h4s => "C4H4S";          // 62
    thiol_sulfide_c3h6s => "C3H6S";              // 9
    disulfide_ch4s2 => "CH4S2";                  // 2
    phosphine_c3h9p => "C3H9P";                  // 4
    chloride_c3h7cl => "C3H7Cl";                 // 2
    trichloride_c2h3cl3 => "C2H3Cl3";            // 2
    chlorobenzene_formula_c6h5cl => "C6H5Cl";    // 685
    bromide_c4h9br => "C4H9Br";                  // 4
    iodide_c2h5i => "C2H5I";                     // 1
    difluoride_c3h4f2 => "C3H4F2";               // 7
    mixed_halide_c2h2clf => "C2H2ClF";           // 2
    big_c8h8o => "C8H8O";                        // 112380
    bigger_c9h10o => "C9H10O";                   // 697293
    big_hydrocarbon_c11h14 => "C11H14";          // 949675 (950064 Kekule multigraphs)
}

// Expanded valences (S 2/4/6, P 3/5), read as SMILES reads implicit H: an atom
// takes the lowest allowed valence not below its bond-order sum (S(IV) has a
// bond-order sum of 3 or 4, never CH3-SH3=O). Reference counts (nauty 2.8.6,
// RDKit 2026.3.6): C2H6S 3, C2H6OS 19, C2H6O2S 86, CH4O3S 50, C3H9OP 31.
/// Tests comparing `isomers F FLAG` with `nauty_isomers.py F FLAG`.
macro_rules! against_reference_with {
    ($flag:literal; $($name:ident => $formula:literal;)*) => {
        $(
            #[test]
            fn $name() {
                compare($formula, &[$flag], &[$flag]);
            }
        )*
    };
}

against_reference_with! { "--expanded-valence";
    expanded_valence_c2h6s => "C2H6S";
    expanded_valence_c2h6os => "C2H6OS";
    expanded_valence_c2h6o2s => "C2H6O2S";
    expanded_valence_ch4o3s => "CH4O3S";
    expanded_valence_c3h9op => "C3H9OP";
}

// Charge-separated neutral groups (nitro, nitrate, azine and amine
// N-oxides, nitrones, azoxy), built with --charge-separated: the reference
// gives N valence 3 or 5 and keeps a 5-valent N only as such a group, built
// charged in RDKit (nauty_isomers.py --charge-separated). Reference counts
// (nauty 2.8.6, RDKit 2026.9.1), standard valences only / with the groups:
// CH3NO2 15/17, C2H5NO2 84/91, C2H5NO 22/23, C3H9NO 21/22, C2H4N2O 194,
// C2H6N2O2 588, C5H5NO 7685/8031.
against_reference_with! { "--charge-separated";
    charge_separated_ch3no2 => "CH3NO2";
    charge_separated_c2h5no2 => "C2H5NO2";
    charge_separated_c2h5no => "C2H5NO";
    charge_separated_c3h9no => "C3H9NO";
    charge_separated_c2h4n2o => "C2H4N2O";
    charge_separated_c2h6n2o2 => "C2H6N2O2";
    charge_separated_c5h5no => "C5H5NO";
}

/// The charge-separated reference holds the textbook compounds of each
/// group and adds nothing to formulas without N and O.
#[test]
fn charge_separated_reference_holds_the_named_groups() {
    let canon = |s: &str| rdkit_canonical(s)[0].clone();
    // Source: common practice (nitromethane, methyl nitrite, methyl nitrate,
    // pyridine N-oxide, trimethylamine N-oxide, azoxymethane, the nitrone
    // CH2=N(CH3)O, N-nitrodimethylamine are all CAS-registered compounds).
    for (formula, smiles) in [
        ("CH3NO2", "C[N+](=O)[O-]"),
        ("CH3NO3", "CO[N+](=O)[O-]"),
        ("C5H5NO", "[O-][n+]1ccccc1"),
        ("C3H9NO", "C[N+](C)(C)[O-]"),
        ("C2H6N2O", "CN=[N+](C)[O-]"),
        ("C2H5NO", "C=[N+](C)[O-]"),
        ("C2H6N2O2", "CN(C)[N+](=O)[O-]"),
    ] {
        let set = reference_smiles(formula, &["--charge-separated"]);
        assert!(set.contains(&canon(smiles)), "{formula}: {smiles} missing");
    }
    assert_eq!(
        reference_smiles("C6H6", &["--charge-separated"]),
        reference_smiles("C6H6", &[])
    );
}

/// The reference itself against published and textbook numbers, so that a
/// broken reference cannot pass the comparisons above.
#[test]
fn reference_reproduces_published_counts() {
    // Source: FIELD-GUIDE section 3 (C8H10: 4679 Kekule multigraphs, 4678 compounds).
    assert_eq!(reference_count("C8H10", &[]), 4678);
    // Source: from memory, the well-known 217 constitutional isomers of C6H6.
    assert_eq!(reference_count("C6H6", &[]), 217);
    // Source: OEIS A000602 (alkanes CnH2n+2), n = 1..14.
    let a000602 = [1, 1, 1, 2, 3, 5, 9, 18, 35, 75, 159, 355, 802, 1858];
    for (i, &want) in a000602.iter().enumerate() {
        let n = i + 1;
        let formula = format!("C{n}H{}", 2 * n + 2);
        assert_eq!(reference_count(&formula, &[]), want, "{formula}");
    }
    // Source: OEIS A000598 (alkyl groups CnH2n+1, so alcohols CnH2n+1OH), n = 1..8.
    let a000598 = [1, 1, 2, 4, 8, 17, 39, 89];
    for (i, &want) in a000598.iter().enumerate() {
        let n = i + 1;
        let formula = format!("C{n}H{}O", 2 * n + 2);
        let smiles = reference_smiles(&formula, &[]).join("\n");
        let alcohols: u64 = run_reference_script("count_alcohols.py", &[], &smiles)
            .trim()
            .parse()
            .unwrap();
        assert_eq!(alcohols, want, "alcohols among {formula}");
    }
}
