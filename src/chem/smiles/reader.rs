//! SMILES reader: text to a Kekulé [`Molecule`].
//!
//! Follows the OpenSMILES specification (opensmiles.org) for the grammar:
//! organic-subset atoms with implicit hydrogens from the lowest normal valence
//! that fits (S 2/4/6, P 3/5, others their standard valence), bracket atoms
//! with an explicit H count, branches, ring closures `0`-`9` and `%nn`, bond
//! symbols `- = # :` and `/ \` (double-bond stereo is ignored: read as single).
//! Chirality marks and atom classes in brackets are accepted and ignored,
//! since the tool works with constitution only.
//!
//! Charges are read in one form only, the charge-separated neutral N-oxide
//! group chemists' toolkits write (`C[N+](=O)[O-]`, `[O-][n+]1ccccc1`,
//! `C[N+](C)(C)[O-]`): each `[N+]` must be single-bonded to exactly one
//! `[O-]` with no other bond, and the pair is read as the pentavalent
//! N=O the generator builds (see `enumerate::generator::Kind::oxide_n`).
//!
//! Rejected with a message naming the column: other charges, isotopes, radicals
//! (a bracket atom whose valence is not a normal one), elements outside
//! C H N O S P F Cl Br I, wildcard `*`, disconnected parts `.`, quadruple
//! bonds, and every syntax error. Columns count characters from 1.
//!
//! Aromatic (lower-case) atoms are kekulised: an aromatic atom needs a double
//! bond when its standard valence exceeds its bond count (aromatic bonds
//! counted once), as in OpenSMILES; the double bonds are then placed by a
//! perfect matching ([`crate::chem::kekule::kekulise`]). Aromatic atoms take
//! only their standard valence (no lower-case S(IV) or P(V), which RDKit
//! refuses too), and an implicit bond between two aromatic atoms outside a
//! ring is single (biphenyl written without `-`).

use crate::chem::element::Element;
use crate::chem::kekule::kekulise;
use crate::chem::molecule::Molecule;
use crate::chem::rings::ring_info;
use crate::error::{Error, Result};
use petgraph::graph::NodeIndex;
use petgraph::visit::EdgeRef;
use std::collections::BTreeMap;

/// Largest number of atoms (hydrogens written as atoms included) a SMILES
/// may have; far above the molecules the tool ranks, and it bounds the work
/// ring perception does on an arbitrary input.
pub const MAX_SMILES_ATOMS: usize = 500;

/// An atom as written.
#[derive(Clone, Debug)]
struct RawAtom {
    element: Element,
    aromatic: bool,
    /// H count from a bracket atom; `None` for the organic subset.
    bracket_h: Option<u8>,
    /// Formal charge from a bracket atom (+1 or -1, or 0).
    charge: i8,
    /// Column (1-based) of the atom's first character.
    col: usize,
    /// The atom's text, for messages.
    text: String,
}

/// A bond as written.
#[derive(Clone, Debug)]
struct RawBond {
    a: usize,
    b: usize,
    /// The bond symbol, `None` when implicit.
    symbol: Option<char>,
}

/// Parse a SMILES string into a Kekulé [`Molecule`]. Surrounding whitespace
/// is ignored. Every error is an [`Error::Input`] naming the column.
pub fn parse_smiles(text: &str) -> Result<Molecule> {
    let trimmed = text.trim();
    let fail = |msg: String| Error::input(format!("SMILES \"{trimmed}\" : {msg}"));
    let (atoms, bonds) = parse_syntax(trimmed).map_err(fail)?;
    build(&atoms, &bonds).map_err(fail)
}

/// What the previous token was, for checks such as "empty branch".
#[derive(Copy, Clone, PartialEq, Eq)]
enum Last {
    Start,
    Atom,
    Bond,
    Open,
    Close,
    Ring,
}

/// An open ring closure: (atom, bond symbol with its column, column of the digit).
type OpenRing = (usize, Option<(char, usize)>, usize);

fn parse_syntax(s: &str) -> std::result::Result<(Vec<RawAtom>, Vec<RawBond>), String> {
    let chars: Vec<char> = s.chars().collect();
    if chars.is_empty() {
        return Err("empty SMILES: give at least one atom, e.g. CCO".into());
    }
    let mut atoms: Vec<RawAtom> = Vec::new();
    let mut bonds: Vec<RawBond> = Vec::new();
    let mut prev: Option<usize> = None;
    let mut pending: Option<(char, usize)> = None;
    let mut branches: Vec<(usize, usize)> = Vec::new(); // (atom, column of '(')
    let mut rings: BTreeMap<u32, OpenRing> = BTreeMap::new();
    let mut last = Last::Start;
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        let col = i + 1;
        match c {
            '(' => {
                if prev.is_none() {
                    return Err(format!("branch '(' at column {col} has no atom before it"));
                }
                if let Some((b, bc)) = pending {
                    return Err(format!(
                        "bond '{b}' at column {bc} must follow the '(' of a branch, not precede it"
                    ));
                }
                if last == Last::Open {
                    return Err(format!(
                        "branch at column {col} opens directly inside another branch"
                    ));
                }
                branches.push((prev.expect("checked"), col));
                last = Last::Open;
                i += 1;
            }
            ')' => {
                if let Some((b, bc)) = pending {
                    return Err(format!("bond '{b}' at column {bc} has no atom after it"));
                }
                let Some((atom, _)) = branches.pop() else {
                    return Err(format!("')' at column {col} closes no branch"));
                };
                if last == Last::Open {
                    return Err(format!("empty branch '()' at column {}", col - 1));
                }
                prev = Some(atom);
                last = Last::Close;
                i += 1;
            }
            '-' | '=' | '#' | ':' | '/' | '\\' | '$' => {
                if c == '$' {
                    return Err(format!(
                        "quadruple bond '$' at column {col} is not supported"
                    ));
                }
                if let Some((b, bc)) = pending {
                    return Err(format!(
                        "two bond symbols in a row, '{b}' at column {bc} and '{c}' at column {col}"
                    ));
                }
                if prev.is_none() {
                    return Err(format!("bond '{c}' at column {col} has no atom before it"));
                }
                pending = Some((c, col));
                last = Last::Bond;
                i += 1;
            }
            '0'..='9' | '%' => {
                let (num, len) = if c == '%' {
                    let d1 = chars.get(i + 1).filter(|d| d.is_ascii_digit());
                    let d2 = chars.get(i + 2).filter(|d| d.is_ascii_digit());
                    match (d1, d2) {
                        (Some(a), Some(b)) => (a.to_digit(10).unwrap() * 10 + b.to_digit(10).unwrap(), 3),
                        _ => {
                            return Err(format!(
                                "ring closure '%' at column {col} must be followed by two digits, e.g. %10"
                            ))
                        }
                    }
                } else {
                    (c.to_digit(10).expect("digit"), 1)
                };
                let Some(here) = prev else {
                    return Err(format!(
                        "ring closure {num} at column {col} has no atom before it"
                    ));
                };
                if last == Last::Open || last == Last::Close {
                    return Err(format!(
                        "ring closure {num} at column {col} must follow an atom directly, not a branch"
                    ));
                }
                if let Some((other, open_bond, open_col)) = rings.remove(&num) {
                    if other == here {
                        return Err(format!(
                            "ring closure {num} at column {col} closes on the atom that opened it at column {open_col}"
                        ));
                    }
                    let symbol = match (open_bond, pending) {
                        (Some((a, ac)), Some((b, bc))) if a != b && !(is_single(a) && is_single(b)) => {
                            return Err(format!(
                                "ring closure {num}: bond '{a}' at column {ac} and bond '{b}' at column {bc} disagree"
                            ))
                        }
                        (Some((a, _)), _) => Some(a),
                        (None, Some((b, _))) => Some(b),
                        (None, None) => None,
                    };
                    if bonds
                        .iter()
                        .any(|x| (x.a == other && x.b == here) || (x.a == here && x.b == other))
                    {
                        return Err(format!(
                            "ring closure {num} at column {col} bonds two atoms that are already bonded"
                        ));
                    }
                    bonds.push(RawBond {
                        a: other,
                        b: here,
                        symbol,
                    });
                } else {
                    rings.insert(num, (here, pending, col));
                }
                pending = None;
                last = Last::Ring;
                i += len;
            }
            '.' => {
                return Err(format!(
                    "'.' at column {col} separates disconnected parts; give one connected molecule"
                ))
            }
            '*' => {
                return Err(format!(
                    "wildcard atom '*' at column {col} is not supported"
                ))
            }
            '[' => {
                let (atom, len) = parse_bracket(&chars, i)?;
                add_atom(&mut atoms, &mut bonds, &mut prev, &mut pending, atom);
                last = Last::Atom;
                i += len;
            }
            c if c.is_ascii_alphabetic() => {
                let (atom, len) = parse_organic(&chars, i)?;
                add_atom(&mut atoms, &mut bonds, &mut prev, &mut pending, atom);
                last = Last::Atom;
                i += len;
            }
            c if c.is_whitespace() => {
                return Err(format!(
                    "space at column {col}: a SMILES has no spaces inside it"
                ))
            }
            c => return Err(format!("unexpected character '{c}' at column {col}")),
        }
        if atoms.len() > MAX_SMILES_ATOMS {
            return Err(format!(
                "more than {MAX_SMILES_ATOMS} atoms (at column {col}); the tool handles smaller molecules"
            ));
        }
    }
    if let Some((b, bc)) = pending {
        return Err(format!("bond '{b}' at column {bc} has no atom after it"));
    }
    if let Some(&(_, col)) = branches.last() {
        return Err(format!("unclosed branch opened at column {col}"));
    }
    if let Some((num, (_, _, col))) = rings.iter().min_by_key(|(_, v)| v.2) {
        return Err(format!(
            "ring closure {num} opened at column {col} is never closed"
        ));
    }
    Ok((atoms, bonds))
}

fn is_single(c: char) -> bool {
    matches!(c, '-' | '/' | '\\')
}

fn add_atom(
    atoms: &mut Vec<RawAtom>,
    bonds: &mut Vec<RawBond>,
    prev: &mut Option<usize>,
    pending: &mut Option<(char, usize)>,
    atom: RawAtom,
) {
    let idx = atoms.len();
    atoms.push(atom);
    if let Some(p) = *prev {
        bonds.push(RawBond {
            a: p,
            b: idx,
            symbol: pending.take().map(|(c, _)| c),
        });
    }
    *prev = Some(idx);
}

/// An organic-subset atom at `chars[i]`: returns it and its length.
fn parse_organic(chars: &[char], i: usize) -> std::result::Result<(RawAtom, usize), String> {
    let col = i + 1;
    let c = chars[i];
    let next = chars.get(i + 1).copied();
    let (element, aromatic, len) = match (c, next) {
        ('C', Some('l')) => (Element::Cl, false, 2),
        ('B', Some('r')) => (Element::Br, false, 2),
        ('C', _) => (Element::C, false, 1),
        ('N', _) => (Element::N, false, 1),
        ('O', _) => (Element::O, false, 1),
        ('S', _) => (Element::S, false, 1),
        ('P', _) => (Element::P, false, 1),
        ('F', _) => (Element::F, false, 1),
        ('I', _) => (Element::I, false, 1),
        ('c', _) => (Element::C, true, 1),
        ('n', _) => (Element::N, true, 1),
        ('o', _) => (Element::O, true, 1),
        ('s', _) => (Element::S, true, 1),
        ('p', _) => (Element::P, true, 1),
        ('B', _) | ('b', _) => {
            return Err(format!(
                "boron '{c}' at column {col} is not supported (elements: C H N O S P F Cl Br I)"
            ))
        }
        ('H', _) => {
            return Err(format!(
                "hydrogen 'H' at column {col} must be written in brackets, e.g. [H] or [CH4]"
            ))
        }
        _ => {
            let mut sym = c.to_string();
            if c.is_ascii_uppercase() {
                sym.extend(
                    chars[i + 1..]
                        .iter()
                        .take_while(|x| x.is_ascii_lowercase())
                        .take(2),
                );
            }
            return Err(format!(
                "unknown atom \"{sym}\" at column {col} (supported: C N O S P F Cl Br I, aromatic c n o s p, and these in brackets)"
            ));
        }
    };
    let text: String = chars[i..i + len].iter().collect();
    Ok((
        RawAtom {
            element,
            aromatic,
            bracket_h: None,
            charge: 0,
            col,
            text,
        },
        len,
    ))
}

/// A bracket atom starting with `[` at `chars[start]`: returns it and its length.
fn parse_bracket(chars: &[char], start: usize) -> std::result::Result<(RawAtom, usize), String> {
    let open_col = start + 1;
    let Some(close) = chars[start..]
        .iter()
        .position(|&c| c == ']')
        .map(|p| start + p)
    else {
        return Err(format!("unclosed bracket atom '[' at column {open_col}"));
    };
    let text: String = chars[start..=close].iter().collect();
    let mut i = start + 1;
    if i < close && chars[i].is_ascii_digit() {
        return Err(format!(
            "isotope in {text} at column {open_col} is not supported (write the element alone)"
        ));
    }
    // Element symbol: upper case with optional lower case, or aromatic lower case.
    let (element, aromatic) = {
        let c = chars.get(i).copied().filter(|_| i < close);
        let Some(c) = c else {
            return Err(format!("empty bracket atom {text} at column {open_col}"));
        };
        if c.is_ascii_uppercase() {
            // In brackets a lower-case letter after an upper-case one belongs
            // to the element symbol ("[Co]" is cobalt).
            let sym: String = match chars.get(i + 1) {
                Some(x) if x.is_ascii_lowercase() && i + 1 < close => format!("{c}{x}"),
                _ => c.to_string(),
            };
            let Some(e) = Element::from_symbol(&sym) else {
                return Err(format!(
                    "unknown atom \"{sym}\" at column {} (supported: C H N O S P F Cl Br I)",
                    i + 1
                ));
            };
            i += sym.len();
            (e, false)
        } else {
            let two: String = chars[i..close.min(i + 2)].iter().collect();
            if two == "se" || two == "as" || two == "te" {
                return Err(format!(
                    "unknown atom \"{two}\" at column {} (supported aromatic atoms: c n o s p)",
                    i + 1
                ));
            }
            let e = match c {
                'c' => Element::C,
                'n' => Element::N,
                'o' => Element::O,
                's' => Element::S,
                'p' => Element::P,
                'b' => {
                    return Err(format!(
                        "boron 'b' at column {} is not supported (elements: C H N O S P F Cl Br I)",
                        i + 1
                    ))
                }
                _ => {
                    return Err(format!(
                        "unknown atom \"{c}\" at column {} in bracket atom {text}",
                        i + 1
                    ))
                }
            };
            i += 1;
            (e, true)
        }
    };
    // Chirality (ignored): '@', '@@', or '@' followed by a class and number.
    if i < close && chars[i] == '@' {
        i += 1;
        if i < close && chars[i] == '@' {
            i += 1;
        }
        let class: String = chars[i..close.min(i + 2)].iter().collect();
        if ["TH", "AL", "SP", "TB", "OH"].contains(&class.as_str()) {
            i += 2;
            while i < close && chars[i].is_ascii_digit() {
                i += 1;
            }
        }
    }
    let mut h = 0u8;
    if i < close && chars[i] == 'H' {
        i += 1;
        h = 1;
        if i < close && chars[i].is_ascii_digit() {
            h = chars[i].to_digit(10).expect("digit") as u8;
            i += 1;
        }
    }
    let mut charge = 0i8;
    if i < close && (chars[i] == '+' || chars[i] == '-') {
        let sign = chars[i];
        let col = i + 1;
        i += 1;
        if i < close && chars[i] == '1' {
            i += 1;
        }
        if i < close && (chars[i] == '+' || chars[i] == '-' || chars[i].is_ascii_digit()) {
            return Err(format!(
                "charge in {text} at column {col} is not supported (only [N+] with [O-], the \
                 charge-separated N-oxide form)"
            ));
        }
        charge = if sign == '+' { 1 } else { -1 };
    }
    if i < close && chars[i] == ':' {
        // Atom class: accepted and ignored.
        i += 1;
        if !(i < close && chars[i].is_ascii_digit()) {
            return Err(format!(
                "atom class ':' in {text} at column {i} needs a number"
            ));
        }
        while i < close && chars[i].is_ascii_digit() {
            i += 1;
        }
    }
    if i < close {
        return Err(format!(
            "unexpected character '{}' in bracket atom {text} at column {}",
            chars[i],
            i + 1
        ));
    }
    if element == Element::H && aromatic {
        return Err(format!("unknown atom \"h\" at column {}", start + 2));
    }
    Ok((
        RawAtom {
            element,
            aromatic,
            bracket_h: Some(h),
            charge,
            col: open_col,
            text,
        },
        close - start + 1,
    ))
}

/// Turn the written atoms and bonds into a Kekulé molecule: fold explicit
/// hydrogens into counts, check valences, fill implicit hydrogens, kekulise.
fn build(atoms: &[RawAtom], bonds: &[RawBond]) -> std::result::Result<Molecule, String> {
    let n = atoms.len();
    // Bonds per atom, and the bond order each written bond stands for
    // (aromatic bonds 0 for now).
    let mut degree = vec![0usize; n];
    for b in bonds {
        degree[b.a] += 1;
        degree[b.b] += 1;
    }
    // Explicit hydrogen atoms become counts on their heavy neighbour.
    let mut extra_h = vec![0u32; n];
    for (i, a) in atoms.iter().enumerate() {
        if a.element != Element::H {
            continue;
        }
        if a.bracket_h != Some(0) {
            return Err(format!(
                "hydrogen atom {} at column {} may not carry hydrogens",
                a.text, a.col
            ));
        }
        let mine: Vec<&RawBond> = bonds.iter().filter(|b| b.a == i || b.b == i).collect();
        if mine.len() != 1 {
            return Err(format!(
                "hydrogen atom {} at column {} must be bonded to exactly one heavy atom",
                a.text, a.col
            ));
        }
        let b = mine[0];
        let other = if b.a == i { b.b } else { b.a };
        if atoms[other].element == Element::H {
            return Err(format!(
                "hydrogen atom {} at column {} is bonded to another hydrogen; give a molecule with a heavy atom",
                a.text, a.col
            ));
        }
        if b.symbol.is_some_and(|s| !is_single(s)) {
            return Err(format!(
                "hydrogen atom {} at column {} must have a single bond",
                a.text, a.col
            ));
        }
        extra_h[other] += 1;
    }
    // Charges: each [N+] single-bonded to exactly one [O-] that has no
    // other bond; the pair is read as a pentavalent N=O.
    let mut oxide_bond = vec![false; bonds.len()];
    for (i, a) in atoms.iter().enumerate() {
        if a.charge == 0 {
            continue;
        }
        let mine: Vec<usize> = (0..bonds.len())
            .filter(|&k| bonds[k].a == i || bonds[k].b == i)
            .collect();
        let other = |k: usize| {
            if bonds[k].a == i {
                bonds[k].b
            } else {
                bonds[k].a
            }
        };
        let single = |k: usize| bonds[k].symbol.is_none_or(is_single);
        let ok = match (a.element, a.charge) {
            (Element::O, -1) => {
                a.bracket_h == Some(0)
                    && mine.len() == 1
                    && single(mine[0])
                    && atoms[other(mine[0])].element == Element::N
                    && atoms[other(mine[0])].charge == 1
            }
            (Element::N, 1) => {
                let oxides: Vec<usize> = mine
                    .iter()
                    .copied()
                    .filter(|&k| {
                        let o = other(k);
                        atoms[o].element == Element::O && atoms[o].charge == -1
                    })
                    .collect();
                if oxides.len() == 1 {
                    oxide_bond[oxides[0]] = true;
                }
                a.bracket_h == Some(0) && oxides.len() == 1
            }
            _ => false,
        };
        if !ok {
            return Err(format!(
                "charged atom {} at column {} is not supported: charges are read only as an \
                 [N+] without H single-bonded to one [O-] that has no other bond (nitro \
                 C[N+](=O)[O-], N-oxide [O-][n+]1ccccc1)",
                a.text, a.col
            ));
        }
    }
    // Heavy atoms keep their written order.
    let mut new_index = vec![usize::MAX; n];
    let mut mol = Molecule::new();
    let mut heavy: Vec<usize> = Vec::new();
    for (i, a) in atoms.iter().enumerate() {
        if a.element != Element::H {
            new_index[i] = heavy.len();
            heavy.push(i);
            mol.add_atom(a.element, 0);
        }
    }
    if heavy.is_empty() {
        return Err(
            "no heavy atom: give a molecule with at least one C N O S P F Cl Br or I".into(),
        );
    }
    // Bonds: aromatic when ':' or implicit between two aromatic atoms; such a
    // bond outside a ring is read as single (as RDKit does for biphenyl written
    // without '-').
    let mut aromatic_written = Vec::new();
    for (k, b) in bonds.iter().enumerate() {
        let (x, y) = (new_index[b.a], new_index[b.b]);
        if x == usize::MAX || y == usize::MAX {
            continue;
        }
        if oxide_bond[k] {
            mol.add_bond(NodeIndex::new(x), NodeIndex::new(y), 2);
            aromatic_written.push(false);
            continue;
        }
        let both_aromatic = atoms[b.a].aromatic && atoms[b.b].aromatic;
        let (order, aromatic) = match b.symbol {
            None if both_aromatic => (1, true),
            Some(':') if both_aromatic => (1, true),
            None | Some(':') | Some('-') | Some('/') | Some('\\') => (1, false),
            Some('=') => (2, false),
            Some('#') => (3, false),
            Some(other) => unreachable!("bond symbol {other} is filtered by the tokenizer"),
        };
        mol.add_bond(NodeIndex::new(x), NodeIndex::new(y), order);
        aromatic_written.push(aromatic);
    }
    let rings = ring_info(&mol);
    let aromatic_bond: Vec<bool> = aromatic_written
        .iter()
        .zip(&rings.bond_in_ring)
        .map(|(&a, &r)| a && r)
        .collect();
    // Bond count each atom shows to the valence rule: aromatic bonds count 1.
    let mut needs_pi = vec![false; heavy.len()];
    for (k, &i) in heavy.iter().enumerate() {
        let a = &atoms[i];
        if a.aromatic && !rings.atom_in_ring[k] {
            return Err(format!(
                "aromatic atom '{}' at column {} is not in a ring (write aromatic atoms only in rings, or use upper case)",
                a.text, a.col
            ));
        }
        let node = NodeIndex::new(k);
        let written: u32 = mol
            .graph
            .edges(node)
            .map(|e| e.weight().order as u32)
            .sum::<u32>()
            + extra_h[i];
        // Aromatic atoms keep their standard valence: an aromatic ring atom
        // is never S(IV) or P(V) (the aromaticity rule excludes them), so a
        // lower-case atom that would need one is a mistake, as RDKit holds.
        let standard = [a.element.valence()];
        let allowed: &[u8] = if a.charge == 1 {
            &[5]
        } else if a.aromatic {
            &standard
        } else {
            a.element.valences(true)
        };
        let (h, pi) = match a.bracket_h {
            None => {
                let Some(&v) = allowed.iter().find(|&&v| v as u32 >= written) else {
                    if a.aromatic {
                        return Err(format!(
                            "aromatic atom '{}' at column {} has {} bonds; in an aromatic ring {} takes valence {}",
                            a.text,
                            a.col,
                            written,
                            a.text,
                            a.element.valence()
                        ));
                    }
                    return Err(format!(
                        "atom '{}' at column {} has {} bonds, more than {} can take ({}; charged forms are not supported)",
                        a.text,
                        a.col,
                        written,
                        a.element,
                        valence_list(allowed)
                    ));
                };
                let v = v as u32;
                let pi = a.aromatic && v > written;
                (v - written - pi as u32, pi)
            }
            Some(bh) => {
                let total = written + bh as u32;
                let ok = |t: u32| allowed.iter().any(|&v| v as u32 == t);
                if ok(total) {
                    (bh as u32, false)
                } else if a.aromatic && ok(total + 1) {
                    (bh as u32, true)
                } else {
                    return Err(format!(
                        "bracket atom {} at column {} has valence {}; {} takes {} (charges and radicals are not supported)",
                        a.text,
                        a.col,
                        total + a.aromatic as u32,
                        a.element,
                        valence_list(allowed)
                    ));
                }
            }
        };
        needs_pi[k] = pi;
        mol.graph[node].hydrogens = (h + extra_h[i]) as u8;
    }
    if let Err(unmatched) = kekulise(&mut mol, &aromatic_bond, &needs_pi) {
        // Report the whole aromatic system around the first unplaceable atom.
        let mut system = vec![unmatched[0]];
        let mut k = 0;
        while k < system.len() {
            let v = system[k];
            for e in mol.graph.edges(NodeIndex::new(v)) {
                let u = if e.source().index() == v {
                    e.target().index()
                } else {
                    e.source().index()
                };
                if aromatic_bond[e.id().index()] && !system.contains(&u) {
                    system.push(u);
                }
            }
            k += 1;
        }
        system.sort_unstable();
        let cols: Vec<String> = system
            .iter()
            .map(|&v| atoms[heavy[v]].col.to_string())
            .collect();
        let hint = if system
            .iter()
            .any(|&v| atoms[heavy[v]].element == Element::N && atoms[heavy[v]].bracket_h.is_none())
        {
            " (a pyrrole-type nitrogen needs its hydrogen written, e.g. [nH])"
        } else {
            ""
        };
        return Err(format!(
            "cannot place alternating double bonds in the aromatic ring at atoms in columns {}{hint}",
            cols.join(", ")
        ));
    }
    Ok(mol)
}

fn valence_list(v: &[u8]) -> String {
    let parts: Vec<String> = v.iter().map(|x| x.to_string()).collect();
    format!("valence {}", parts.join(" or "))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn charge_separated_n_oxides_read_as_pentavalent_n_and_round_trip() {
        use crate::chem::smiles::canonical_smiles;
        // Common practice: the forms chemists' toolkits write (RDKit's
        // canonical SMILES of nitromethane, pyridine N-oxide, nitrobenzene).
        let m = parse_smiles("C[N+](=O)[O-]").unwrap();
        let orders: Vec<u8> = m.graph.edge_weights().map(|b| b.order).collect();
        assert_eq!(orders, [1, 2, 2]);
        assert_eq!(canonical_smiles(&m), "C[N+](=O)[O-]");
        let a = canonical_smiles(&parse_smiles("[O-][n+]1ccccc1").unwrap());
        assert_eq!(a, "[O-][n+]1ccccc1");
        assert_eq!(
            canonical_smiles(&parse_smiles("c1cc[n+]([O-])cc1").unwrap()),
            a
        );
        assert_eq!(
            canonical_smiles(&parse_smiles("O=[N+]([O-])c1ccccc1").unwrap()),
            canonical_smiles(&parse_smiles("[O-][N+](=O)C1=CC=CC=C1").unwrap())
        );
        for bad in [
            "[NH4+]",
            "C[N+](C)(C)C",
            "C[O-]",
            "C[N+]([O-])([O-])C",
            "C[N++](=O)[O-]",
        ] {
            let e = parse_smiles(bad).unwrap_err().to_string();
            assert!(e.contains("charge"), "{bad}: {e}");
        }
    }

    fn ok(s: &str) -> Molecule {
        parse_smiles(s).unwrap_or_else(|e| panic!("{s}: {e}"))
    }

    #[test]
    fn reads_chains_branches_and_rings() {
        let m = ok("CC(=O)O");
        assert_eq!(m.atom_count(), 4);
        assert_eq!(m.formula().to_string(), "C2H4O2");
        let m = ok("C1CCCCC1");
        assert_eq!(m.graph.edge_count(), 6);
        assert_eq!(m.total_hydrogens(), 12);
        let m = ok("C%10CC%10");
        assert_eq!(m.graph.edge_count(), 3);
        let m = ok("[H]C([H])([H])[H]");
        assert_eq!(m.atom_count(), 1);
        assert_eq!(m.total_hydrogens(), 4);
    }

    #[test]
    fn implicit_hydrogens_use_lowest_fitting_valence() {
        // OpenSMILES normal valences: S 2/4/6, P 3/5.
        assert_eq!(ok("CS(C)=O").formula().to_string(), "C2H6OS");
        assert_eq!(ok("CS(=O)(=O)C").formula().to_string(), "C2H6O2S");
        assert_eq!(ok("OP(O)(O)=O").formula().to_string(), "H3O4P");
        assert_eq!(ok("[SH4]").total_hydrogens(), 4);
    }

    #[test]
    fn aromatic_input_is_kekulised() {
        let m = ok("c1ccccc1");
        assert_eq!(m.formula().to_string(), "C6H6");
        let doubles = m.graph.edge_weights().filter(|b| b.order == 2).count();
        assert_eq!(doubles, 3);
        assert_eq!(ok("c1cc[nH]c1").formula().to_string(), "C4H5N");
        assert_eq!(ok("O=c1cccc[nH]1").formula().to_string(), "C5H5NO");
        assert_eq!(ok("c1ccsc1").formula().to_string(), "C4H4S");
        assert_eq!(ok("c1ccccc1-c1ccccc1").formula().to_string(), "C12H10");
        assert_eq!(ok("c1ccccc1c1ccccc1").formula().to_string(), "C12H10");
    }

    #[test]
    fn errors_name_the_column() {
        let e = |s: &str| parse_smiles(s).unwrap_err().to_string();
        assert_eq!(
            e("CC(C"),
            "SMILES \"CC(C\" : unclosed branch opened at column 3"
        );
        assert!(
            e("CCCXx").contains("unknown atom \"Xx\" at column 4"),
            "{}",
            e("CCCXx")
        );
        assert_eq!(
            e("C1CC"),
            "SMILES \"C1CC\" : ring closure 1 opened at column 2 is never closed"
        );
        assert!(e("c1cccc1").contains("cannot place alternating double bonds"));
        assert!(e("C[N+](C)(C)C").contains("charge"));
        assert!(e("CC.O").contains("column 3"));
        assert!(e("[13CH4]").contains("isotope"));
        assert!(e("[CH3]").contains("valence 3"));
    }

    /// Random strings that follow the SMILES grammar loosely: atoms, bonds,
    /// branches and ring digits in plausible places, so that many parse and
    /// exercise ring perception, kekulisation and the writer.
    fn grammar_like(next: &mut impl FnMut() -> u64) -> String {
        const ATOMS: &[&str] = &[
            "C", "C", "C", "c", "c", "c", "n", "o", "s", "N", "O", "S", "P", "F", "Cl", "[nH]", "p",
        ];
        const BONDS: &[&str] = &["", "", "", "", "=", "#", "-", ":"];
        let mut s = String::new();
        let mut open_branches = 0;
        let len = 1 + next() % 14;
        for i in 0..len {
            if i > 0 {
                s.push_str(BONDS[(next() % BONDS.len() as u64) as usize]);
            }
            s.push_str(ATOMS[(next() % ATOMS.len() as u64) as usize]);
            match next() % 6 {
                0 => s.push(char::from(b'1' + (next() % 3) as u8)),
                1 if open_branches > 0 => {
                    s.push(')');
                    open_branches -= 1;
                }
                2 if i + 1 < len => {
                    s.push('(');
                    open_branches += 1;
                }
                _ => {}
            }
        }
        s
    }

    #[test]
    fn grammar_like_random_smiles_round_trip() {
        let mut state = 0x1234_5678_9abc_def1u64;
        let mut next = || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            state
        };
        let mut parsed = 0;
        for _ in 0..30_000 {
            let s = grammar_like(&mut next);
            if let Ok(m) = parse_smiles(&s) {
                parsed += 1;
                let c = crate::chem::smiles::canonical_smiles(&m);
                let back = parse_smiles(&c).unwrap_or_else(|e| panic!("{s} -> {c}: {e}"));
                assert_eq!(back.formula(), m.formula(), "{s} -> {c}");
                assert_eq!(crate::chem::smiles::canonical_smiles(&back), c, "{s}");
            }
        }
        assert!(parsed > 1000, "only {parsed} random SMILES parsed");
    }

    #[test]
    fn random_strings_never_panic() {
        // Deterministic pseudo-random strings over the SMILES alphabet.
        let alphabet: Vec<char> = "CNOSPFIBrlcnosp()[]=#-:/\\%0123456789H@+.*x "
            .chars()
            .collect();
        let mut state = 0x2545_f491_4f6c_dd1du64;
        let mut next = || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            state
        };
        for _ in 0..20_000 {
            let len = (next() % 20) as usize;
            let s: String = (0..len)
                .map(|_| alphabet[(next() % alphabet.len() as u64) as usize])
                .collect();
            // Whatever parses must write and read back to the same string.
            if let Ok(m) = parse_smiles(&s) {
                let c = crate::chem::smiles::canonical_smiles(&m);
                let back = parse_smiles(&c).unwrap_or_else(|e| panic!("{s} -> {c}: {e}"));
                assert_eq!(crate::chem::smiles::canonical_smiles(&back), c, "{s}");
            }
        }
    }
}
