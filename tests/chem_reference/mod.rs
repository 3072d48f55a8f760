//! Comparison of isomerank's SMILES reader, aromaticity perception and
//! canonical writer with RDKit (PyPI `rdkit`, through
//! tests/reference/rdkit_smiles_check.py), shared by tests/smiles.rs and
//! tests/aromaticity.rs.
#![allow(dead_code)]

use crate::common::run_reference_script;
use isomerank::chem::aromaticity::perceive;
use isomerank::chem::rings::ring_info;
use isomerank::chem::smiles::{canonical_smiles, parse_smiles};
use petgraph::visit::EdgeRef;

/// One molecule as both sides see it.
pub struct Compared {
    pub input: String,
    pub ours: String,
    pub rdkit: String,
    pub aromatic_atoms: usize,
}

/// Outcome of a comparison run: every disagreement as a readable line.
pub struct Comparison {
    pub molecules: Vec<Compared>,
    pub failures: Vec<String>,
    /// Molecules whose ring set (our relevant cycles) differs from RDKit's
    /// symmetrised SSSR; reported, not a failure by itself.
    pub ring_set_differences: Vec<String>,
}

impl Comparison {
    /// Fail the test listing (up to 40) disagreements.
    pub fn assert_clean(&self, what: &str) {
        if !self.failures.is_empty() {
            let shown: Vec<&String> = self.failures.iter().take(40).collect();
            panic!(
                "{what}: {} disagreements with RDKit out of {} molecules:\n{}",
                self.failures.len(),
                self.molecules.len(),
                shown
                    .iter()
                    .map(|s| s.as_str())
                    .collect::<Vec<_>>()
                    .join("\n")
            );
        }
    }
}

/// Read every SMILES with our reader and compare with RDKit: aromatic atom
/// and bond flags, our canonical SMILES naming the same compound, and our
/// canonical SMILES being the same for RDKit's random SMILES of the molecule.
pub fn compare_with_rdkit(inputs: &[String]) -> Comparison {
    let mut failures = Vec::new();
    let mut lines = String::new();
    let mut ours = Vec::new();
    for (i, s) in inputs.iter().enumerate() {
        let mol = match parse_smiles(s) {
            Ok(m) => m,
            Err(e) => {
                failures.push(format!("{s}: our reader failed: {e}"));
                ours.push(None);
                continue;
            }
        };
        let arom = perceive(&mol);
        let flags: String = arom
            .atom
            .iter()
            .map(|&a| if a { '1' } else { '0' })
            .collect();
        let mut bonds: Vec<String> = mol
            .graph
            .edge_references()
            .filter(|e| arom.bond[e.id().index()])
            .map(|e| {
                let (a, b) = (e.source().index(), e.target().index());
                format!("{}-{}", a.min(b), a.max(b))
            })
            .collect();
        bonds.sort();
        let can = canonical_smiles(&mol);
        lines.push_str(&format!("{i}\t{s}\t{can}\n"));
        let mut rings: Vec<String> = ring_info(&mol)
            .rings()
            .map(|r| {
                let mut r = r.to_vec();
                r.sort_unstable();
                r.iter()
                    .map(|a| a.to_string())
                    .collect::<Vec<_>>()
                    .join(".")
            })
            .collect();
        rings.sort();
        ours.push(Some((can, flags, bonds.join(","), rings.join(","))));
    }
    let out = run_reference_script("rdkit_smiles_check.py", &[], &lines);
    let mut molecules = Vec::new();
    let mut ring_set_differences = Vec::new();
    for line in out.lines() {
        let f: Vec<&str> = line.split('\t').collect();
        assert_eq!(f.len(), 7, "malformed reference line: {line}");
        let i: usize = f[0].parse().expect("id");
        let input = &inputs[i];
        let (can, flags, bonds, rings) = ours[i].clone().expect("parsed");
        if f[1].starts_with("ERROR") {
            failures.push(format!("{input}: RDKit cannot read the input"));
            continue;
        }
        if f[3] != flags {
            failures.push(format!(
                "{input}: aromatic atoms ours {flags} RDKit {} (rings RDKit {})",
                f[3], f[5]
            ));
        }
        if f[4] != bonds {
            failures.push(format!(
                "{input}: aromatic bonds ours [{bonds}] RDKit [{}]",
                f[4]
            ));
        }
        if f[5] != rings {
            ring_set_differences.push(format!("{input}: rings ours [{rings}] RDKit [{}]", f[5]));
        }
        if f[2] != f[1] {
            failures.push(format!(
                "{input}: our canonical {can} is {} to RDKit, the input {}",
                f[2], f[1]
            ));
        }
        for r in f[6].split(' ') {
            match parse_smiles(r) {
                Ok(m) => {
                    let c = canonical_smiles(&m);
                    if c != can {
                        failures.push(format!(
                            "{input}: RDKit random SMILES {r} gives {c}, the input {can}"
                        ));
                    }
                }
                Err(e) => {
                    failures.push(format!("{input}: RDKit random SMILES {r} unreadable: {e}"))
                }
            }
        }
        molecules.push(Compared {
            input: input.clone(),
            ours: can,
            rdkit: f[1].to_string(),
            aromatic_atoms: flags.matches('1').count(),
        });
    }
    Comparison {
        molecules,
        failures,
        ring_set_differences,
    }
}
