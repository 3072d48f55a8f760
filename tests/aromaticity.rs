//! Aromaticity perception and canonical SMILES on every constitutional isomer
//! of small formulas, checked against RDKit.
//!
//! The isomers come from nauty (Debian package `nauty`), independent of both
//! RDKit and isomerank: `geng` makes the connected skeletons, `vcolg` colours
//! atoms by element, `multig` assigns bond orders 1-3 for the formula's total
//! bond order, and each atom's bond-order sum is checked against its
//! valence (the recipe of the field guide, section 3).

mod chem_reference;
mod common;

use common::nauty_tool;
use isomerank::chem::aromaticity::{perceive, Aromaticity};
use isomerank::chem::kekule::kekule_structures;
use isomerank::chem::smiles::{canonical_smiles, parse_smiles, write_smiles};
use isomerank::chem::{Element, Molecule};
use petgraph::graph::NodeIndex;
use std::collections::{BTreeMap, BTreeSet};
use std::process::{Command, Stdio};

/// Every Kekulé multigraph of a formula given as heavy-atom counts plus H.
fn nauty_isomers(heavy: &[(Element, usize)], hydrogens: usize) -> Vec<Molecule> {
    let n: usize = heavy.iter().map(|&(_, c)| c).sum();
    let valence_sum: usize = heavy.iter().map(|&(e, c)| e.valence() as usize * c).sum();
    assert!(
        (valence_sum - hydrogens).is_multiple_of(2),
        "odd total bond order"
    );
    let bonds = (valence_sum - hydrogens) / 2;
    let counts: Vec<String> = heavy.iter().map(|&(_, c)| c.to_string()).collect();
    let degrees: Vec<String> = heavy
        .iter()
        .map(|&(e, _)| e.valence().to_string())
        .collect();
    let script = format!(
        "{} -cq -D4 {n} {}:{bonds} | {} -q -T -m{} -c{} -D{} | {} -q -V -T -m3 -e{bonds}",
        nauty_tool("geng").display(),
        n - 1,
        nauty_tool("vcolg").display(),
        heavy.len(),
        counts.join(","),
        degrees.join(","),
        nauty_tool("multig").display(),
    );
    let out = Command::new("sh")
        .arg("-c")
        .arg(&script)
        .stdout(Stdio::piped())
        .output()
        .expect("run nauty pipeline");
    assert!(out.status.success(), "nauty pipeline failed: {script}");
    let text = String::from_utf8(out.stdout).expect("utf-8");
    let mut mols = Vec::new();
    for line in text.lines() {
        let f: Vec<usize> = line
            .split_whitespace()
            .map(|x| x.parse().expect("number"))
            .collect();
        let (nv, ne) = (f[0], f[1]);
        let colours = &f[2..2 + nv];
        let edges = &f[2 + nv..];
        assert_eq!(edges.len(), 3 * ne, "multig line: {line}");
        let elements: Vec<Element> = colours.iter().map(|&c| heavy[c].0).collect();
        let mut sum = vec![0usize; nv];
        for k in 0..ne {
            sum[edges[3 * k]] += edges[3 * k + 2];
            sum[edges[3 * k + 1]] += edges[3 * k + 2];
        }
        if (0..nv).any(|v| sum[v] > elements[v].valence() as usize) {
            continue;
        }
        let mut m = Molecule::new();
        for v in 0..nv {
            m.add_atom(elements[v], (elements[v].valence() as usize - sum[v]) as u8);
        }
        for k in 0..ne {
            m.add_bond(
                NodeIndex::new(edges[3 * k]),
                NodeIndex::new(edges[3 * k + 1]),
                edges[3 * k + 2] as u8,
            );
        }
        assert_eq!(m.total_hydrogens() as usize, hydrogens);
        mols.push(m);
    }
    mols
}

/// Kekulé SMILES of a molecule in its own numbering (no aromaticity).
fn kekule_smiles(m: &Molecule) -> String {
    let none = Aromaticity {
        atom: vec![false; m.atom_count()],
        bond: vec![false; m.graph.edge_count()],
    };
    let ranks: Vec<usize> = (0..m.atom_count()).collect();
    write_smiles(m, &none, &ranks)
}

/// Formulas whose isomers hold the classic aromatic, antiaromatic and
/// cross-conjugated rings: benzene and fulvene (C6H6), pyridine (C5H5N),
/// diazines (C4H4N2), furan and thiophene (C4H4O, C4H4S), pyrrole (C4H5N),
/// oxazoles (C3H3NO), cyclopentadienone (C5H4O), benzaldehyde and tropone
/// (C7H6O), styrene and cyclooctatetraene (C8H8), toluene (C7H8),
/// phosphinine (C5H5P), halobenzenes (C6H5Cl), quinones (C6H4O2).
const FORMULAS: &[(&[(Element, usize)], usize)] = &[
    (&[(Element::C, 6)], 6),
    (&[(Element::C, 5), (Element::N, 1)], 5),
    (&[(Element::C, 4), (Element::N, 2)], 4),
    (&[(Element::C, 4), (Element::O, 1)], 4),
    (&[(Element::C, 4), (Element::S, 1)], 4),
    (&[(Element::C, 4), (Element::N, 1)], 5),
    (&[(Element::C, 3), (Element::N, 1), (Element::O, 1)], 3),
    (&[(Element::C, 5), (Element::O, 1)], 4),
    (&[(Element::C, 7), (Element::O, 1)], 6),
    (&[(Element::C, 8)], 8),
    (&[(Element::C, 7)], 8),
    (&[(Element::C, 5), (Element::P, 1)], 5),
    (&[(Element::C, 6), (Element::Cl, 1)], 5),
    (&[(Element::C, 6), (Element::O, 2)], 4),
];

#[test]
fn every_isomer_of_small_formulas_agrees_with_rdkit() {
    let mut inputs = Vec::new();
    let mut per_formula = Vec::new();
    for &(heavy, h) in FORMULAS {
        let mols = nauty_isomers(heavy, h);
        per_formula.push((format!("{heavy:?} H{h}"), mols.len()));
        inputs.extend(mols.iter().map(kekule_smiles));
    }
    eprintln!(
        "isomers per formula: {per_formula:?}, total {}",
        inputs.len()
    );
    // Source: RDKit (PyPI rdkit), default aromaticity model. Per isomer: the
    // same aromatic atoms and bonds; RDKit reads our canonical SMILES as the
    // same compound; 5 random RDKit SMILES give our canonical string.
    let cmp = chem_reference::compare_with_rdkit(&inputs);
    // Source: RDKit (PyPI rdkit). Our relevant cycles are the rings of
    // RDKit's symmetrised SSSR on every one of these isomers.
    assert!(
        cmp.ring_set_differences.is_empty(),
        "{} ring sets differ from RDKit's, e.g. {:?}",
        cmp.ring_set_differences.len(),
        cmp.ring_set_differences.iter().take(5).collect::<Vec<_>>()
    );
    cmp.assert_clean("nauty isomers");
    // Source: RDKit (PyPI rdkit). Our canonical SMILES groups the Kekulé
    // multigraphs into compounds exactly as RDKit's canonical SMILES does
    // (the two Kekulé graphs of o-xylene are one compound).
    let mut ours_to_rdkit: BTreeMap<&str, BTreeSet<&str>> = BTreeMap::new();
    let mut rdkit_to_ours: BTreeMap<&str, BTreeSet<&str>> = BTreeMap::new();
    for m in &cmp.molecules {
        ours_to_rdkit.entry(&m.ours).or_default().insert(&m.rdkit);
        rdkit_to_ours.entry(&m.rdkit).or_default().insert(&m.ours);
    }
    let split: Vec<_> = rdkit_to_ours.iter().filter(|(_, v)| v.len() > 1).collect();
    let merged: Vec<_> = ours_to_rdkit.iter().filter(|(_, v)| v.len() > 1).collect();
    assert!(
        split.is_empty(),
        "compounds RDKit sees as one but we split: {split:?}"
    );
    assert!(
        merged.is_empty(),
        "compounds we merge but RDKit keeps apart: {merged:?}"
    );
    let aromatic = cmp
        .molecules
        .iter()
        .filter(|m| m.aromatic_atoms > 0)
        .count();
    eprintln!(
        "{} multigraphs, {} compounds, {} with aromatic atoms",
        cmp.molecules.len(),
        ours_to_rdkit.len(),
        aromatic
    );
    // The sets must contain aromatic compounds, or the test proves nothing.
    assert!(aromatic > 100);
}

#[test]
fn named_rings_follow_the_huckel_rule() {
    // Common practice (Hückel 4n+2 rule, as RDKit's default model applies it).
    let aromatic = |s: &str| {
        let m = parse_smiles(s).unwrap();
        let a = perceive(&m);
        a.atom.iter().filter(|&&x| x).count()
    };
    for (s, n) in [
        ("C1=CC=CC=C1", 6),          // benzene
        ("C1=CC=NC=C1", 6),          // pyridine
        ("C1=CNC=C1", 5),            // pyrrole
        ("C1=COC=C1", 5),            // furan
        ("C1=CSC=C1", 5),            // thiophene
        ("C1=CN=CN1", 5),            // imidazole
        ("C1=COC=N1", 5),            // oxazole
        ("O=C1NC=CC=C1", 6),         // 2-pyridone
        ("O=C1C=CC=CC=C1", 7),       // tropone: 7 ring atoms
        ("C1=CC2=CC=CC=CC2=C1", 10), // azulene
        ("C1=CC=C2C=CC=CC2=C1", 10), // naphthalene
        ("C1=CC=C2C(=C1)C=CN2", 9),  // indole
        ("C1=CC=CC=CC=CC=C1", 10),   // [10]annulene
        ("C1=CC=C1", 0),             // cyclobutadiene
        ("C1=CC=CC=CC=C1", 0),       // cyclooctatetraene
        ("C1=CC2=CC=CC2=C1", 0),     // pentalene
        ("C=C1C=CC=C1", 0),          // fulvene
        ("O=C1C=CC(=O)C=C1", 0),     // p-benzoquinone
        ("C1C=CC=C1", 0),            // cyclopentadiene
    ] {
        assert_eq!(aromatic(s), n, "{s}");
    }
}

#[test]
fn kekule_structures_of_named_aromatics() {
    // Kekulé structure counts (common practice): benzene 2, naphthalene 3,
    // anthracene 4, phenanthrene 5, pyrene 6, biphenyl 4 (2 x 2); pyrrole 1.
    for (s, n) in [
        ("c1ccccc1", 2),
        ("c1ccc2ccccc2c1", 3),
        ("c1ccc2cc3ccccc3cc2c1", 4),
        ("c1ccc2c(c1)ccc1ccccc12", 5),
        ("c1cc2ccc3cccc4ccc(c1)c2c34", 6),
        ("c1ccc(-c2ccccc2)cc1", 4),
        ("c1cc[nH]c1", 1),
        ("CCO", 1),
    ] {
        let m = parse_smiles(s).unwrap();
        let arom = perceive(&m);
        let forms = kekule_structures(&m, &arom);
        assert_eq!(forms.len(), n, "{s}");
        let canon = canonical_smiles(&m);
        for f in &forms {
            // Every form keeps each atom's bond-order sum and names the same compound.
            let mut k = m.clone();
            for (e, &o) in f.iter().enumerate() {
                k.graph[petgraph::graph::EdgeIndex::new(e)].order = o;
            }
            for v in 0..m.atom_count() {
                assert_eq!(k.bond_order_sum(v), m.bond_order_sum(v), "{s}");
            }
            assert_eq!(canonical_smiles(&k), canon, "{s}");
        }
    }
}
