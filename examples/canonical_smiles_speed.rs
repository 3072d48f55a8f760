//! Speed of the chemistry core on typical small molecules: SMILES reading,
//! ring perception + aromaticity, and canonical SMILES writing, each timed
//! over many random renumberings of the same molecules (which also checks
//! that the canonical string does not depend on the numbering).
//!
//! Run: `cargo run --release --example canonical_smiles_speed`

use isomerank::chem::aromaticity::perceive;
use isomerank::chem::smiles::{canonical_smiles, parse_smiles};
use isomerank::chem::Molecule;
use petgraph::graph::NodeIndex;
use petgraph::visit::EdgeRef;
use std::time::Instant;

const MOLECULES: &[&str] = &[
    "CCCCCC",
    "CC(C)CC(C)(C)C",
    "CCOC(C)=O",
    "CC(=O)Nc1ccc(O)cc1",
    "CC(=O)Oc1ccccc1C(=O)O",
    "Cn1cnc2c1c(=O)n(C)c(=O)n2C",
    "c1ccc2ccccc2c1",
    "c1ccc2c(c1)ccc1ccccc12",
    "O=c1cccccc1",
    "c1ccc2cccc-2cc1",
    "C12C3C4C1C5C2C3C45",
    "C1C2CC3CC1CC(C2)C3",
    "Cc1ccc(C)cc1",
    "C=CC(=O)OC",
    "c1ccc(-c2ccccc2)cc1",
    "CSCCC(N)C(=O)O",
    "COP(=O)(OC)OC",
    "Clc1ccc(Br)cc1",
    "c1cc[nH]c1",
    "O=C1C=CC(=O)C=C1",
];

/// Shuffle atom numbers with a small xorshift generator (deterministic).
fn renumber(m: &Molecule, state: &mut u64) -> Molecule {
    let n = m.atom_count();
    let mut perm: Vec<usize> = (0..n).collect();
    for i in (1..n).rev() {
        *state ^= *state << 13;
        *state ^= *state >> 7;
        *state ^= *state << 17;
        perm.swap(i, (*state % (i as u64 + 1)) as usize);
    }
    let mut inv = vec![0; n];
    for (new, &old) in perm.iter().enumerate() {
        inv[old] = new;
    }
    let mut out = Molecule::new();
    for &old in &perm {
        let a = m.atom(old);
        out.add_atom(a.element, a.hydrogens);
    }
    let mut edges: Vec<_> = m.graph.edge_references().collect();
    edges.reverse();
    for e in edges {
        out.add_bond(
            NodeIndex::new(inv[e.source().index()]),
            NodeIndex::new(inv[e.target().index()]),
            e.weight().order,
        );
    }
    out
}

fn main() {
    let rounds = 2000;
    let mut state = 0x9e37_79b9_7f4a_7c15u64;
    let parsed: Vec<Molecule> = MOLECULES
        .iter()
        .map(|s| parse_smiles(s).expect("valid"))
        .collect();
    let expected: Vec<String> = parsed.iter().map(canonical_smiles).collect();
    let inputs: Vec<Vec<Molecule>> = parsed
        .iter()
        .map(|m| (0..rounds).map(|_| renumber(m, &mut state)).collect())
        .collect();
    let count = (MOLECULES.len() * rounds) as f64;

    let t = Instant::now();
    for _ in 0..rounds {
        for s in MOLECULES {
            std::hint::black_box(parse_smiles(s).expect("valid"));
        }
    }
    let read = t.elapsed().as_secs_f64() / count;

    let t = Instant::now();
    for ms in &inputs {
        for m in ms {
            std::hint::black_box(perceive(m));
        }
    }
    let arom = t.elapsed().as_secs_f64() / count;

    let t = Instant::now();
    for (ms, want) in inputs.iter().zip(&expected) {
        for m in ms {
            let c = canonical_smiles(m);
            assert_eq!(&c, want, "canonical SMILES changed with the numbering");
        }
    }
    let write = t.elapsed().as_secs_f64() / count;
    println!("{} molecules x {rounds} renumberings", MOLECULES.len());
    println!(
        "read SMILES:                {:8.2} us per molecule",
        read * 1e6
    );
    println!(
        "rings + aromaticity:        {:8.2} us per molecule",
        arom * 1e6
    );
    println!(
        "canonical SMILES (all):     {:8.2} us per molecule",
        write * 1e6
    );
}
