//! Structure files: V2000 molfiles (the open CTfile format, as published by
//! its authors: Dalby et al., J. Chem. Inf. Comput. Sci. 1992, 32, 244) with
//! the 2D coordinates of [`crate::depict::layout`], gathered into an SD file
//! with data fields. Double bonds that could be E or Z carry the stereo
//! code "either" (3). Hydrogens stay implicit; each atom's valence field
//! states its total valence (bonds + H) so that a reader takes the H count
//! from the file, not from its own valence model.

use super::Context;
use crate::chem::rings::ring_info;
use crate::chem::{Element, Molecule};
use crate::depict::layout;
use petgraph::graph::NodeIndex;
use std::fmt::Write;

/// Coordinates in Å: a typical C-C bond length (common practice).
const BOND_ANGSTROM: f64 = 1.5;

/// One V2000 molfile (ending with `M  END`), titled `name`.
pub fn molfile(mol: &Molecule, name: &str) -> String {
    let pos = layout(mol);
    let mut s = String::new();
    // Header: title, program line (program name, dimension code), comment.
    let title: String = name.chars().filter(|c| !c.is_control()).take(80).collect();
    let _ = writeln!(s, "{title}");
    let _ = writeln!(s, "  isomrank          2D");
    let _ = writeln!(s);
    let n = mol.atom_count();
    // Nitro groups and N-oxides in the charged form readers expect.
    let (charge, single) = mol.charge_separation();
    let mut bonds = Vec::new();
    for a in 0..n {
        for (b, o) in mol.neighbours(a) {
            if a < b {
                let demoted = single.contains(&(a, b)) || single.contains(&(b, a));
                bonds.push((a, b, if demoted { 1 } else { o }));
            }
        }
    }
    let _ = writeln!(
        s,
        "{:>3}{:>3}  0  0  0  0  0  0  0  0999 V2000",
        n,
        bonds.len()
    );
    for (a, p) in pos.iter().enumerate() {
        let atom = mol.atom(a);
        let valence = (mol.bond_order_sum(a) as i32 + atom.hydrogens as i32
            - charge[a].unsigned_abs() as i32) as u32;
        // Charge field: 3 is +1, 5 is -1 (repeated in the M  CHG line).
        let ccc = match charge[a] {
            1 => 3,
            -1 => 5,
            _ => 0,
        };
        // 15 means a valence of zero in this field.
        let vvv = if valence == 0 { 15 } else { valence };
        let _ = writeln!(
            s,
            "{:>10.4}{:>10.4}{:>10.4} {:<3} 0{:>3}  0  0  0{:>3}  0  0  0  0  0  0",
            p[0] * BOND_ANGSTROM,
            p[1] * BOND_ANGSTROM,
            0.0,
            symbol(atom.element),
            ccc,
            vvv
        );
    }
    // Structures are constitutional: a double bond that could be E or Z
    // (outside rings of fewer than 8 atoms) is marked "either" (stereo
    // field 3), so no reader takes a configuration from the coordinates.
    let rings = ring_info(mol);
    for (a, b, o) in bonds {
        let e = mol
            .graph
            .find_edge(NodeIndex::new(a), NodeIndex::new(b))
            .map(|e| e.index());
        let small_ring = e.is_some_and(|e| rings.bond_in_ring_smaller_than(e, 8));
        let stereo = if o == 2 && !small_ring { 3 } else { 0 };
        let _ = writeln!(s, "{:>3}{:>3}{:>3}{:>3}", a + 1, b + 1, o, stereo);
    }
    let charged: Vec<(usize, i8)> = (0..n)
        .filter(|&a| charge[a] != 0)
        .map(|a| (a, charge[a]))
        .collect();
    for chunk in charged.chunks(8) {
        let _ = write!(s, "M  CHG{:>3}", chunk.len());
        for &(a, c) in chunk {
            let _ = write!(s, " {:>3} {:>3}", a + 1, c);
        }
        s.push('\n');
    }
    s.push_str("M  END\n");
    s
}

fn symbol(e: Element) -> &'static str {
    e.symbol()
}

/// One SD record: the molfile, data fields, `$$$$`.
pub fn record(mol: &Molecule, name: &str, fields: &[(&str, String)]) -> String {
    let mut s = molfile(mol, name);
    for (k, v) in fields {
        let _ = write!(s, "> <{k}>\n{v}\n\n");
    }
    s.push_str("$$$$\n");
    s
}

/// The ranking as an SD file: one record per candidate in table order, with
/// its position, cost, probability, group and canonical SMILES as fields.
pub fn ranking(cx: &Context) -> String {
    let mut s = String::new();
    for c in &cx.ranking.candidates {
        let mut fields = vec![
            ("position", c.position.to_string()),
            ("cost", format!("{:.4}", c.cost)),
            ("probability", format!("{:.6e}", c.probability)),
            ("group", c.group.to_string()),
            ("smiles", c.smiles.clone()),
        ];
        if let Some(n) = &c.name {
            fields.push(("name", n.clone()));
        }
        s.push_str(&record(&c.molecule, &c.smiles, &fields));
    }
    s
}
