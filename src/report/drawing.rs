//! A structure diagram as SVG, from the coordinates of [`crate::depict`].
//!
//! Drawn as chemists draw skeletal formulas (common practice): carbon
//! atoms are vertices without a label, every other atom is written with its
//! hydrogens on the side away from its bonds (OH, HO, NH2, H2N), an
//! aldehyde or formyl carbon shows its H on a short bond (CHO), double bonds
//! in rings have their second line inside the ring, terminal double bonds
//! (C=O) are drawn as two centred lines. Aromatic rings are drawn in the
//! Kekulé form the molecule stores, the one style for every ring.
//! Optional: atom numbers (1-based, atom order of the structure) and
//! highlighted atom sets (the H groups of an assignment).

use crate::chem::rings::ring_info;
use crate::chem::{Element, Molecule};
use crate::depict::geom::{add, norm, scale, sub, Point};
use crate::depict::layout::layout;
use std::fmt::Write;

/// Pixels per bond length.
const BOND_PX: f64 = 36.0;
const FONT_PX: f64 = 15.0;
/// Distance between the lines of a double bond, in bond lengths.
const DOUBLE_GAP: f64 = 0.17;

/// A set of atoms marked on the drawing, with a short label.
#[derive(Clone, Debug)]
pub struct Highlight {
    pub atoms: Vec<usize>,
    pub label: String,
    /// CSS colour.
    pub colour: String,
}

/// Drawing options.
#[derive(Clone, Debug, Default)]
pub struct DrawOptions {
    /// Write each atom's 1-based number beside it.
    pub atom_numbers: bool,
    pub highlights: Vec<Highlight>,
    /// Title for the `<title>` element (e.g. the SMILES).
    pub title: Option<String>,
}

/// Colours for highlighted groups, in order (readable on white, distinct).
pub const GROUP_COLOURS: [&str; 8] = [
    "#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#ff7f0e", "#17becf", "#8c564b", "#e377c2",
];

fn element_colour(e: Element) -> &'static str {
    match e {
        Element::O => "#c00000",
        Element::N => "#1030c0",
        Element::S => "#a08000",
        Element::P => "#d06000",
        Element::F | Element::Cl => "#008a00",
        Element::Br => "#8b2500",
        Element::I => "#6a0dad",
        _ => "#000000",
    }
}

fn escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// A complete SVG document of `mol`, laid out by [`layout`].
pub fn structure_svg(mol: &Molecule, opts: &DrawOptions) -> String {
    let pos = layout(mol);
    structure_svg_at(mol, &pos, opts)
}

/// A complete SVG document of `mol` at the given coordinates.
pub fn structure_svg_at(mol: &Molecule, pos: &[Point], opts: &DrawOptions) -> String {
    let n = mol.atom_count();
    let (mut minx, mut maxx, mut miny, mut maxy) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
    if n > 0 {
        minx = pos.iter().map(|p| p[0]).fold(f64::INFINITY, f64::min);
        maxx = pos.iter().map(|p| p[0]).fold(f64::NEG_INFINITY, f64::max);
        miny = pos.iter().map(|p| p[1]).fold(f64::INFINITY, f64::min);
        maxy = pos.iter().map(|p| p[1]).fold(f64::NEG_INFINITY, f64::max);
    }
    let margin = 0.9;
    let w = (maxx - minx + 2.0 * margin) * BOND_PX;
    let h = (maxy - miny + 2.0 * margin) * BOND_PX;
    // Screen coordinates: y down.
    let px = |p: Point| -> (f64, f64) {
        (
            (p[0] - minx + margin) * BOND_PX,
            (maxy - p[1] + margin) * BOND_PX,
        )
    };
    let mut s = String::new();
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{w:.0}" height="{h:.0}" viewBox="0 0 {w:.1} {h:.1}" font-family="DejaVu Sans, Arial, Helvetica, sans-serif">"#
    );
    if let Some(t) = &opts.title {
        let _ = writeln!(s, "<title>{}</title>", escape(t));
    }
    let _ = writeln!(
        s,
        r#"<rect x="0" y="0" width="{w:.1}" height="{h:.1}" fill="white"/>"#
    );
    let labelled: Vec<bool> = (0..n).map(|i| needs_label(mol, i)).collect();
    // Nitro groups and N-oxides drawn as chemists draw them: N+ and O-.
    let (charge, single) = mol.charge_separation();
    let demoted = |a: usize, b: usize| {
        single
            .iter()
            .any(|&(v, u)| (v, u) == (a, b) || (u, v) == (a, b))
    };
    let exterior: Vec<Point> = (0..n).map(|i| exterior(mol, pos, i)).collect();

    // Highlights under everything.
    for hl in &opts.highlights {
        for &a in &hl.atoms {
            if a >= n {
                continue;
            }
            let (x, y) = px(pos[a]);
            let _ = writeln!(
                s,
                r#"<circle cx="{x:.1}" cy="{y:.1}" r="{:.1}" fill="{}" fill-opacity="0.28"/>"#,
                BOND_PX * 0.36,
                hl.colour
            );
        }
        if let Some(&a) = hl.atoms.iter().find(|&&a| a < n) {
            let p = add(pos[a], scale(exterior[a], 0.62));
            let (x, y) = px(p);
            let _ = writeln!(
                s,
                r#"<text x="{x:.1}" y="{:.1}" font-size="{:.0}" font-weight="bold" fill="{}" text-anchor="middle">{}</text>"#,
                y + FONT_PX * 0.35,
                FONT_PX * 0.85,
                hl.colour,
                escape(&hl.label)
            );
        }
    }

    // Bonds.
    let rings = ring_info(mol);
    let ring_list: Vec<Vec<usize>> = rings.rings().map(|r| r.to_vec()).collect();
    let _ = writeln!(
        s,
        r#"<g stroke="black" stroke-width="1.6" stroke-linecap="round">"#
    );
    for a in 0..n {
        for (b, order) in mol.neighbours(a) {
            if b < a {
                continue;
            }
            let (mut p, mut q) = (pos[a], pos[b]);
            // Trim at labelled atoms.
            let dir = norm(sub(q, p));
            if labelled[a] {
                p = add(p, scale(dir, 0.3));
            }
            if labelled[b] {
                q = sub(q, scale(dir, 0.3));
            }
            let perp = [-dir[1], dir[0]];
            let mut lines: Vec<(Point, Point)> = Vec::new();
            let order = if demoted(a, b) { 1 } else { order };
            match order {
                2 => {
                    let inner = double_side(mol, pos, &ring_list, &labelled, a, b);
                    match inner {
                        Some(side) => {
                            lines.push((p, q));
                            let off = scale(perp, side * DOUBLE_GAP);
                            let shorten = 0.14;
                            let p2 = add(
                                add(p, off),
                                scale(dir, if labelled[a] { 0.0 } else { shorten }),
                            );
                            let q2 = sub(
                                add(q, off),
                                scale(dir, if labelled[b] { 0.0 } else { shorten }),
                            );
                            lines.push((p2, q2));
                        }
                        None => {
                            let off = scale(perp, DOUBLE_GAP / 2.0);
                            lines.push((add(p, off), add(q, off)));
                            lines.push((sub(p, off), sub(q, off)));
                        }
                    }
                }
                3 => {
                    let off = scale(perp, DOUBLE_GAP);
                    lines.push((p, q));
                    lines.push((add(p, off), add(q, off)));
                    lines.push((sub(p, off), sub(q, off)));
                }
                _ => lines.push((p, q)),
            }
            for (u, v) in lines {
                let (x1, y1) = px(u);
                let (x2, y2) = px(v);
                let _ = writeln!(
                    s,
                    r#"<line x1="{x1:.1}" y1="{y1:.1}" x2="{x2:.1}" y2="{y2:.1}"/>"#
                );
            }
        }
    }
    // Explicit H of aldehyde / formyl carbons (CHO).
    for a in 0..n {
        if is_formyl(mol, a) {
            let p = add(pos[a], scale(exterior[a], 0.62));
            let (x1, y1) = px(pos[a]);
            let (x2, y2) = px(add(pos[a], scale(exterior[a], 0.42)));
            let _ = writeln!(
                s,
                r#"<line x1="{x1:.1}" y1="{y1:.1}" x2="{x2:.1}" y2="{y2:.1}"/>"#
            );
            let (x, y) = px(p);
            let _ = writeln!(
                s,
                r#"<text x="{x:.1}" y="{:.1}" font-size="{FONT_PX:.0}" text-anchor="middle" stroke="none">H</text>"#,
                y + FONT_PX * 0.36
            );
        }
    }
    s.push_str("</g>\n");

    // Atom labels.
    for a in 0..n {
        if !labelled[a] {
            continue;
        }
        let atom = mol.atom(a);
        let (x, y) = px(pos[a]);
        let sym = atom.element.symbol();
        let colour = element_colour(atom.element);
        let hs = atom.hydrogens;
        let baseline = y + FONT_PX * 0.36;
        let sub_size = FONT_PX * 0.7;
        let hpart = match hs {
            0 => String::new(),
            1 => "H".to_string(),
            k => format!(
                r#"H<tspan font-size="{sub_size:.0}" dy="{:.1}">{k}</tspan>"#,
                FONT_PX * 0.25
            ),
        };
        // H to the left when the bonds point right (HO-, H2N-).
        let h_left = hs > 0 && exterior[a][0] < -0.3 && mol.neighbours(a).count() > 0;
        let _ = writeln!(
            s,
            r#"<text x="{x:.1}" y="{baseline:.1}" font-size="{FONT_PX:.0}" text-anchor="middle" fill="{colour}">{sym}</text>"#
        );
        if charge[a] != 0 {
            // The charge as a superscript at the label's upper right.
            let sign = if charge[a] > 0 { "+" } else { "\u{2212}" };
            let cx = x + FONT_PX * (0.36 * sym.len() as f64 + 0.2);
            let cy = baseline - FONT_PX * 0.55;
            let _ = writeln!(
                s,
                r#"<text x="{cx:.1}" y="{cy:.1}" font-size="{sub_size:.0}" text-anchor="middle" fill="{colour}">{sign}</text>"#
            );
        }
        if hs > 0 {
            let half = FONT_PX * 0.36 * sym.len() as f64;
            if h_left {
                let hx = x - half;
                let _ = writeln!(
                    s,
                    r#"<text x="{hx:.1}" y="{baseline:.1}" font-size="{FONT_PX:.0}" text-anchor="end" fill="{colour}">{hpart}</text>"#
                );
            } else {
                let hx = x + half;
                let _ = writeln!(
                    s,
                    r#"<text x="{hx:.1}" y="{baseline:.1}" font-size="{FONT_PX:.0}" text-anchor="start" fill="{colour}">{hpart}</text>"#
                );
            }
        }
    }
    if opts.atom_numbers {
        for a in 0..n {
            let off = if labelled[a] { 0.55 } else { 0.38 };
            let (x, y) = px(add(pos[a], scale(exterior[a], off)));
            let _ = writeln!(
                s,
                r##"<text x="{x:.1}" y="{:.1}" font-size="{:.0}" fill="#777" text-anchor="middle">{}</text>"##,
                y + FONT_PX * 0.25,
                FONT_PX * 0.62,
                a + 1
            );
        }
    }
    s.push_str("</svg>\n");
    s
}

/// Whether atom `a` is written as text: every atom but carbon, and a carbon
/// with no heavy neighbour (methane).
fn needs_label(mol: &Molecule, a: usize) -> bool {
    mol.atom(a).element != Element::C || mol.neighbours(a).count() == 0
}

/// A carbon with one H, a double bond to O and one other neighbour.
fn is_formyl(mol: &Molecule, a: usize) -> bool {
    let atom = mol.atom(a);
    atom.element == Element::C
        && atom.hydrogens == 1
        && mol.neighbours(a).count() == 2
        && mol
            .neighbours(a)
            .any(|(b, o)| o == 2 && mol.atom(b).element == Element::O)
}

/// The side (+1 / -1 along the left normal of a->b) of a double bond's
/// second line, or `None` for two centred lines.
fn double_side(
    mol: &Molecule,
    pos: &[Point],
    rings: &[Vec<usize>],
    labelled: &[bool],
    a: usize,
    b: usize,
) -> Option<f64> {
    let dir = norm(sub(pos[b], pos[a]));
    let perp = [-dir[1], dir[0]];
    let side_of = |p: Point| {
        let v = sub(p, pos[a]);
        v[0] * perp[0] + v[1] * perp[1]
    };
    // In a ring: towards the centre of the smallest ring holding the bond.
    let ring = rings
        .iter()
        .filter(|r| {
            let k = r.len();
            (0..k).any(|i| {
                let (x, y) = (r[i], r[(i + 1) % k]);
                (x == a && y == b) || (x == b && y == a)
            })
        })
        .min_by_key(|r| r.len());
    if let Some(r) = ring {
        let c = r.iter().fold([0.0, 0.0], |acc, &x| add(acc, pos[x]));
        let c = scale(c, 1.0 / r.len() as f64);
        return Some(if side_of(c) >= 0.0 { 1.0 } else { -1.0 });
    }
    let da = mol.neighbours(a).count();
    let db = mol.neighbours(b).count();
    if (da == 1 && labelled[a]) || (db == 1 && labelled[b]) || (da == 1 && db == 1) {
        return None;
    }
    // Towards the side holding more of the other neighbours.
    let mut sum = 0.0;
    for (x, end) in [(a, b), (b, a)] {
        for (y, _) in mol.neighbours(x) {
            if y != end {
                sum += side_of(pos[y]).signum();
            }
        }
    }
    if sum.abs() < 0.5 {
        None
    } else {
        Some(sum.signum())
    }
}

/// Unit vector pointing away from atom `a`'s bonds.
fn exterior(mol: &Molecule, pos: &[Point], a: usize) -> Point {
    let mut s = [0.0, 0.0];
    let mut first = None;
    for (b, _) in mol.neighbours(a) {
        let v = norm(sub(pos[b], pos[a]));
        first.get_or_insert(v);
        s = add(s, v);
    }
    if s[0].abs() + s[1].abs() < 1e-6 {
        return match first {
            Some(v) => [-v[1], v[0]],
            None => [0.0, 1.0],
        };
    }
    norm(scale(s, -1.0))
}
