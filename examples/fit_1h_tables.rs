//! Residuals of the 1H predictor on the NMRShiftDB2 dev lists, per kind of H,
//! on two halves of the compounds: the FIT half (even NMRShiftDB2 id) and the
//! CHECK half (odd id). For each kind: n, mean residual (observed minus
//! predicted), mean absolute error, the root mean square residual, and on
//! the check half the mean absolute error after removing the fit half's
//! mean residual (the cross-validated gain of a constant correction for that
//! kind). The table corrections and sigmas of fragment-library/ that cite
//! "refit on NMRShiftDB2 dev" were read off this output (see
//! fragment-library/README.md, "Refit on measured spectra").
//!
//!     cargo run --profile test --example fit_1h_tables [MIN_N]
//!
//! `LIBRARY=DIR` reads the tables found in DIR instead of the embedded ones
//! (as `--library`), `FINE=1` splits the sp3 kinds by the atoms one bond
//! further out, `SIGMA_HALF=check` prints the sigma table on the check half
//! (held out when DIR's group terms were fitted on the even ids).
//!
//! Pairs come from the sorted per-H comparison of tests/common/nmrshiftdb.rs
//! (the same as tests/predict_nmrshiftdb_1h.rs). Kinds with fewer than MIN_N
//! (default 8) H in the fit half are not printed.

#[path = "../tests/common/nmrshiftdb.rs"]
mod nmrshiftdb;

use isomerank::chem::aromaticity;
use isomerank::chem::{Element, Molecule};
use isomerank::predict::Predictor;
use nmrshiftdb::{cases, compare_all};
use std::collections::BTreeMap;

/// A coarse kind for the H of `atom`: aromatic rings by size, ring
/// heteroatoms and fusion; alkene; sp3 by H count and the heavy atoms on
/// the carbon; other.
fn kind(mol: &Molecule, aro: &[bool], atom: usize) -> String {
    let a = mol.atom(atom);
    let nb: Vec<(usize, u8)> = mol.neighbours(atom).collect();
    if aro[atom] {
        let ring = smallest_aromatic_ring(mol, aro, atom);
        let mut het: Vec<String> = ring
            .iter()
            .filter(|&&x| mol.atom(x).element != Element::C)
            .map(|&x| {
                let e = mol.atom(x);
                let deg = mol.neighbours(x).count() + e.hydrogens as usize;
                format!("{}{}", e.element.symbol().to_lowercase(), deg)
            })
            .collect();
        het.sort();
        let fused = ring
            .iter()
            .any(|&x| mol.neighbours(x).filter(|&(y, _)| aro[y]).count() > 2);
        let subs = ring
            .iter()
            .map(|&x| {
                mol.neighbours(x)
                    .filter(|&(y, _)| !ring.contains(&y))
                    .count()
            })
            .sum::<usize>();
        return format!(
            "aro{}[{}]{}{}",
            ring.len(),
            het.join(","),
            if fused { " fused" } else { "" },
            if subs == 0 { " H-only" } else { "" }
        );
    }
    let double = nb.iter().any(|&(_, o)| o == 2);
    if a.element == Element::C && double {
        let to_c = nb
            .iter()
            .any(|&(y, o)| o == 2 && mol.atom(y).element == Element::C);
        return if to_c {
            "alkene".into()
        } else {
            "C=X H".into()
        };
    }
    if a.element == Element::C && nb.iter().any(|&(_, o)| o == 3) {
        return "alkyne".into();
    }
    let mut around: Vec<String> = nb
        .iter()
        .map(|&(y, _)| {
            let e = mol.atom(y);
            let sp2 = mol.neighbours(y).any(|(_, o)| o >= 2) || aro[y];
            // An O whose other neighbour is a carbonyl C: ester O (acyloxy).
            let acyl = e.element == Element::O
                && mol.neighbours(y).any(|(z, _)| {
                    z != atom
                        && mol
                            .neighbours(z)
                            .any(|(w, o)| o == 2 && mol.atom(w).element == Element::O)
                });
            format!(
                "{}{}",
                e.element.symbol(),
                if e.element == Element::C && sp2 {
                    "="
                } else if acyl {
                    "ac"
                } else {
                    ""
                }
            )
        })
        .collect();
    around.sort();
    // One shell further for a carbon with a single heteroatom (or sp2 C)
    // neighbour: what that neighbour carries (`FINE=1`).
    let mut far = String::new();
    if std::env::var("FINE").is_ok() {
        let mut v: Vec<String> = Vec::new();
        for &(y, _) in &nb {
            let ey = mol.atom(y).element;
            if ey == Element::C && !aro[y] && !mol.neighbours(y).any(|(_, o)| o >= 2) {
                continue;
            }
            for (z, o) in mol.neighbours(y) {
                if z == atom {
                    continue;
                }
                v.push(format!(
                    "{}{}{}",
                    mol.atom(z).element.symbol(),
                    if aro[z] { "ar" } else { "" },
                    ["", "", "=", "#"][o as usize]
                ));
            }
        }
        v.sort();
        far = format!(" <{}>", v.join(","));
    }
    format!("CH{} [{}]{far}", a.hydrogens, around.join(","))
}

fn smallest_aromatic_ring(mol: &Molecule, aro: &[bool], atom: usize) -> Vec<usize> {
    // Breadth-first search over aromatic atoms for the shortest cycle through atom.
    let n = mol.atom_count();
    let mut best: Option<Vec<usize>> = None;
    for (first, _) in mol.neighbours(atom).filter(|&(y, _)| aro[y]) {
        let mut prev = vec![usize::MAX; n];
        prev[first] = atom;
        let mut queue = std::collections::VecDeque::from([first]);
        while let Some(x) = queue.pop_front() {
            for (y, _) in mol.neighbours(x) {
                if !aro[y] || y == prev[x] || (x == first && y == atom) {
                    continue;
                }
                if y == atom {
                    let mut path = vec![x];
                    let mut z = x;
                    while prev[z] != atom {
                        z = prev[z];
                        path.push(z);
                    }
                    path.push(atom);
                    if best.as_ref().is_none_or(|b| path.len() < b.len()) {
                        best = Some(path);
                    }
                    queue.clear();
                    break;
                }
                if prev[y] == usize::MAX && y != atom {
                    prev[y] = x;
                    queue.push_back(y);
                }
            }
        }
    }
    best.unwrap_or_else(|| vec![atom])
}

/// Ring-fusion counts of the H on `atom` in an all-carbon aromatic
/// six-ring: how many fusion atoms (three aromatic neighbours, the outer one
/// a carbon) lie ortho, meta and para to it. None when the ring is not such.
fn fusion_counts(mol: &Molecule, aro: &[bool], atom: usize) -> Option<[f64; 3]> {
    let ring = smallest_aromatic_ring(mol, aro, atom);
    if ring.len() != 6 || ring.iter().any(|&x| mol.atom(x).element != Element::C) {
        return None;
    }
    let at = ring.iter().position(|&x| x == atom)?;
    let mut n = [0.0; 3];
    let mut any = false;
    for (i, &y) in ring.iter().enumerate() {
        let outer: Vec<usize> = mol
            .neighbours(y)
            .map(|(z, _)| z)
            .filter(|z| !ring.contains(z))
            .collect();
        let fused = outer.len() == 1
            && aro[outer[0]]
            && mol.atom(outer[0]).element == Element::C
            && mol.neighbours(y).filter(|&(z, _)| aro[z]).count() == 3
            // the bond y-outer is a ring bond: the outer atom reaches
            // another atom of this ring within four aromatic bonds, not
            // through y.
            && reaches_ring(mol, aro, outer[0], y, &ring);
        if fused {
            any |= count_at_distance(&mut n, i, at);
        }
    }
    any.then_some(n)
}

/// Count ring position `i` in `n` as ortho, meta or para to position `at`
/// of a six-ring (true when it is one of them).
fn count_at_distance(n: &mut [f64; 3], i: usize, at: usize) -> bool {
    let d = (i as isize - at as isize).unsigned_abs();
    let d = d.min(6 - d);
    if (1..=3).contains(&d) {
        n[d - 1] += 1.0;
        true
    } else {
        false
    }
}

/// Pyrrole-type-N fusion counts of the H on `atom` in an all-carbon
/// aromatic six-ring: how many fusion atoms whose other ring, of five
/// atoms, goes on through a pyrrole-type aromatic N (three connections,
/// indole's C7a) lie ortho, meta and para to it (shift.rs's
/// `fused_pyrrole_n`). None when there is none.
fn pyrrole_n_fusion_counts(mol: &Molecule, aro: &[bool], atom: usize) -> Option<[f64; 3]> {
    let ring = smallest_aromatic_ring(mol, aro, atom);
    if ring.len() != 6 || ring.iter().any(|&x| mol.atom(x).element != Element::C) {
        return None;
    }
    let at = ring.iter().position(|&x| x == atom)?;
    let mut n = [0.0; 3];
    let mut any = false;
    for (i, &y) in ring.iter().enumerate() {
        for (z, _) in mol.neighbours(y) {
            let pyrrole_n = !ring.contains(&z)
                && aro[z]
                && mol.atom(z).element == Element::N
                && mol.neighbours(z).count() + mol.atom(z).hydrogens as usize == 3
                && five_ring_through(mol, aro, y, z);
            if pyrrole_n {
                any |= count_at_distance(&mut n, i, at);
            }
        }
    }
    any.then_some(n)
}

/// Whether the bond y-z lies on an aromatic ring of five atoms: a path of
/// three more aromatic atoms leads from z back to y.
fn five_ring_through(mol: &Molecule, aro: &[bool], y: usize, z: usize) -> bool {
    mol.neighbours(z).any(|(a, _)| {
        a != y
            && aro[a]
            && mol.neighbours(a).any(|(b, _)| {
                b != z
                    && b != y
                    && aro[b]
                    && mol.neighbours(b).any(|(c, _)| {
                        c != a && c != z && aro[c] && mol.neighbours(c).any(|(w, _)| w == y)
                    })
            })
    })
}

/// For the H on `atom` in an aromatic ring with several heteroatoms, the
/// ring size and how many further pyridine-type N (beyond the principal
/// heteroatom, chosen as shift.rs chooses it) lie at ring distance 1, 2, 3.
fn extra_nitrogen_counts(mol: &Molecule, aro: &[bool], atom: usize) -> Option<(usize, [f64; 3])> {
    let ring = smallest_aromatic_ring(mol, aro, atom);
    let het: Vec<usize> = (0..ring.len())
        .filter(|&i| mol.atom(ring[i]).element != Element::C)
        .collect();
    if het.len() < 2 {
        return None;
    }
    let at = ring.iter().position(|&x| x == atom)?;
    let dist = |i: usize| {
        let d = (i as isize - at as isize).unsigned_abs();
        d.min(ring.len() - d)
    };
    let pyridine_type = |x: usize| {
        mol.atom(x).element == Element::N
            && mol.neighbours(x).count() + mol.atom(x).hydrogens as usize == 2
    };
    let rank = |x: usize| {
        if mol.atom(x).element != Element::N {
            0
        } else if !pyridine_type(x) {
            1
        } else {
            2
        }
    };
    let principal = *het
        .iter()
        .min_by_key(|&&i| (rank(ring[i]), dist(i)))
        .unwrap();
    let mut n = [0.0; 3];
    for &i in &het {
        if i == principal {
            continue;
        }
        if !pyridine_type(ring[i]) {
            return None;
        }
        n[dist(i).clamp(1, 3) - 1] += 1.0;
    }
    Some((ring.len(), n))
}

fn reaches_ring(mol: &Molecule, aro: &[bool], from: usize, avoid: usize, ring: &[usize]) -> bool {
    let mut seen = vec![from, avoid];
    let mut front = vec![from];
    for _ in 0..4 {
        let mut next = Vec::new();
        for &x in &front {
            for (w, _) in mol.neighbours(x) {
                if ring.contains(&w) && w != avoid {
                    return true;
                }
                if aro[w] && !seen.contains(&w) {
                    seen.push(w);
                    next.push(w);
                }
            }
        }
        front = next;
    }
    false
}

/// One observation of a three-increment fit: counts and target.
type Row3 = ([f64; 3], f64);

/// Least squares for y = x . b with three unknowns (normal equations).
fn least_squares3(rows: &[([f64; 3], f64)]) -> [f64; 3] {
    let mut a = [[0.0; 4]; 3];
    for (x, y) in rows {
        for i in 0..3 {
            for j in 0..3 {
                a[i][j] += x[i] * x[j];
            }
            a[i][3] += x[i] * y;
        }
    }
    // Gaussian elimination with a small ridge for unused columns.
    for (i, row) in a.iter_mut().enumerate() {
        row[i] += 1e-9;
    }
    for c in 0..3 {
        let p = (c..3)
            .max_by(|&x, &y| a[x][c].abs().total_cmp(&a[y][c].abs()))
            .unwrap();
        a.swap(c, p);
        let pivot = a[c];
        for (r, row) in a.iter_mut().enumerate() {
            if r != c {
                let f = row[c] / pivot[c];
                for (x, p) in row.iter_mut().zip(pivot.iter()).skip(c) {
                    *x -= f * p;
                }
            }
        }
    }
    [a[0][3] / a[0][0], a[1][3] / a[1][1], a[2][3] / a[2][2]]
}

/// The method group a kind belongs to, as the sigmas of fragment-library/
/// are set: benzene rings, other aromatic rings, alkene H, CH3 on a
/// heteroatom or sp2 carbon (the CH3-X table), other sp3 H, the rest.
fn method_group(kind: &str) -> &'static str {
    if kind.starts_with("aro6[]") {
        "benzene.toml sigma"
    } else if kind.starts_with("aro") {
        "heteroaromatic.toml ring sigma"
    } else if kind.starts_with("alkene") {
        "alkene.toml sigma"
    } else if kind.starts_with("CH3 [") && !kind.starts_with("CH3 [C]") {
        "sp3.toml sigma.methyl_direct"
    } else if kind.starts_with("CH") {
        "sp3.toml sigma.additive"
    } else {
        "other (special.toml, fallback)"
    }
}

#[derive(Default)]
struct Acc {
    fit: Vec<f64>,
    check: Vec<f64>,
}

/// The increments the library now gives a ring-fusion atom (ortho, meta,
/// para): its `fusion` row, read from benzene.toml.
fn fusion_in_library(predictor: &Predictor) -> [f64; 3] {
    predictor
        .library()
        .benzene
        .fusion
        .unwrap_or([0.37, 0.20, 0.10])
}

/// The increments the library now gives a pyrrole-type-N fusion atom: its
/// `fusion_pyrrole_n` row, or the `aryl` row the N's class falls back to.
fn pyrrole_n_fusion_in_library(predictor: &Predictor) -> [f64; 3] {
    predictor
        .library()
        .benzene
        .fusion_pyrrole_n
        .unwrap_or([0.37, 0.20, 0.10])
}

/// `EXPORT=FILE`: one JSON line per compound for scripts/fit_1h_groups.py:
/// its id, whether the spectrum is in DMSO-d6, the observed C-bound H
/// shifts, and per predicted non-exchangeable group its H count, shift,
/// the part of that shift the current h-groups.toml gives, whether it is
/// aromatic, and its group terms (family, distance, group name).
fn export(predictor: &Predictor, done: &[nmrshiftdb::Compared], path: &str) {
    use isomerank::predict::{carbon, library, view::View};
    use std::io::Write;
    let solvent = |dmso: bool| {
        let name = if dmso { "DMSO-d6" } else { "CDCl3" };
        predictor.options(name, 400.0).unwrap().solvent
    };
    let mut out = std::io::BufWriter::new(std::fs::File::create(path).unwrap());
    for c in done {
        let v = View::new(&c.molecule).unwrap();
        let types: Vec<u8> = (0..v.n).map(|a| carbon::atom_type(&v, a)).collect();
        let dmso = c.pairs.first().is_some_and(|p| p.dmso);
        let aro = aromaticity::perceive(&c.molecule).atom;
        let mut groups = Vec::new();
        for s in c.signals.iter().filter(|s| !s.exchangeable) {
            let a = s.atoms[0];
            let mut terms = Vec::new();
            let mut corr = 0.0;
            if v.element[a] == Element::C {
                let family = carbon::family_of(&v, a);
                library::h_group_terms(&v, a, |d, x| {
                    terms.push(serde_json::json!([
                        carbon::FAMILIES[family],
                        d,
                        carbon::group_name(&v, &types, x)
                    ]))
                });
                let mut rows = vec![[0.0; library::H_GROUP_DIST + 1]; v.n];
                let table = &predictor.library().h_groups;
                table.atom_rows(&v, &types, family, solvent(dmso), &mut rows);
                corr = library::HGroupTable::correction(&v, a, &rows);
            }
            groups.push(serde_json::json!({
                "n": s.hydrogens,
                "shift": s.shift,
                "corr": corr,
                "aromatic": s.atoms.iter().any(|&x| aro[x]),
                "terms": terms,
            }));
        }
        let observed: Vec<f64> = c.pairs.iter().map(|p| p.observed).collect();
        let line = serde_json::json!({
            "id": c.case.id,
            "dmso": dmso,
            "observed": observed,
            "groups": groups,
        });
        writeln!(out, "{line}").unwrap();
    }
}

fn mean(v: &[f64]) -> f64 {
    v.iter().sum::<f64>() / v.len().max(1) as f64
}

fn main() {
    let min_n: usize = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(8);
    // LIBRARY=DIR: tables from DIR replace the embedded ones (to try a
    // change without rebuilding).
    let predictor = match std::env::var("LIBRARY") {
        Ok(dir) => Predictor::from_dir(std::path::Path::new(&dir)).unwrap(),
        Err(_) => Predictor::embedded().unwrap(),
    };
    let (done, skipped) = compare_all(&predictor, &cases());
    if let Ok(path) = std::env::var("EXPORT") {
        export(&predictor, &done, &path);
        return;
    }
    let mut by_kind: BTreeMap<String, Acc> = BTreeMap::new();
    // Fusion fit: (counts, residual + current fusion increments) per half.
    let fusion_now = fusion_in_library(&predictor);
    let (mut fusion_fit, mut fusion_check) = (Vec::new(), Vec::new());
    let pyrrole_now = pyrrole_n_fusion_in_library(&predictor);
    let (mut pyrrole_fit, mut pyrrole_check) = (Vec::new(), Vec::new());
    // Extra-N fit per ring size 5 and 6: (counts, residual + current increments).
    let mut extra: BTreeMap<usize, (Vec<Row3>, Vec<Row3>)> = BTreeMap::new();
    let extra_now = |size: usize| {
        predictor
            .library()
            .hetero
            .extra_nitrogen
            .iter()
            .find(|x| x.0 == size)
            .map(|x| x.1)
            .unwrap_or([0.0; 3])
    };
    let (mut fit_all, mut check_all) = (Vec::new(), Vec::new());
    // Per method group (fit half, or the check half with SIGMA_HALF=check):
    // residual and predicted sigma.
    let sigma_on_check = std::env::var("SIGMA_HALF").is_ok_and(|v| v == "check");
    let mut groups: BTreeMap<&'static str, Vec<(f64, f64)>> = BTreeMap::new();
    for c in &done {
        let aro = aromaticity::perceive(&c.molecule).atom;
        for p in &c.pairs {
            let atom = c.signals[p.signal].atoms[0];
            let mut k = kind(&c.molecule, &aro, atom);
            if p.dmso {
                k.push_str(" (DMSO-d6)");
            }
            let r = p.observed - p.predicted;
            if let Some(n) = fusion_counts(&c.molecule, &aro, atom) {
                let now: f64 = (0..3).map(|i| n[i] * fusion_now[i]).sum();
                let row = (n, r + now);
                if c.case.id % 2 == 0 {
                    fusion_fit.push(row);
                } else {
                    fusion_check.push(row);
                }
            }
            if let Some(n) = pyrrole_n_fusion_counts(&c.molecule, &aro, atom) {
                let now: f64 = (0..3).map(|i| n[i] * pyrrole_now[i]).sum();
                let row = (n, r + now);
                if c.case.id % 2 == 0 {
                    pyrrole_fit.push(row);
                } else {
                    pyrrole_check.push(row);
                }
            }
            if let Some((size, n)) = extra_nitrogen_counts(&c.molecule, &aro, atom) {
                let now = extra_now(size);
                let row = (n, r + (0..3).map(|i| n[i] * now[i]).sum::<f64>());
                let e = extra.entry(size).or_default();
                if c.case.id % 2 == 0 {
                    e.0.push(row);
                } else {
                    e.1.push(row);
                }
            }
            if (c.case.id % 2 == 0) != sigma_on_check {
                groups
                    .entry(method_group(&k))
                    .or_default()
                    .push((r, p.sigma));
            }
            let acc = by_kind.entry(k).or_default();
            if c.case.id % 2 == 0 {
                acc.fit.push(r);
                fit_all.push(r);
            } else {
                acc.check.push(r);
                check_all.push(r);
            }
        }
    }
    println!(
        "{} compounds ({} skipped); fit half {} H, check half {} H",
        done.len(),
        skipped.len(),
        fit_all.len(),
        check_all.len()
    );
    let abs = |v: &[f64]| mean(&v.iter().map(|r| r.abs()).collect::<Vec<_>>());
    println!("MAE fit {:.3}, check {:.3}", abs(&fit_all), abs(&check_all));
    let err = |rows: &[([f64; 3], f64)], b: [f64; 3]| {
        mean(
            &rows
                .iter()
                .map(|(n, y)| (y - (0..3).map(|i| n[i] * b[i]).sum::<f64>()).abs())
                .collect::<Vec<_>>(),
        )
    };
    // One line per fusion row: its H, the values now and their error, the
    // least-squares values on the fit half and their error on both halves.
    let report = |what: &str, fit: &[([f64; 3], f64)], check: &[([f64; 3], f64)], now: [f64; 3]| {
        let b = least_squares3(fit);
        println!(
            "{what} (H on all-carbon aromatic six-rings, {} fit H, {} check H): now ortho {:+.2} meta {:+.2} para {:+.2}, MAE fit {:.3} check {:.3}; fitted ortho {:+.2} meta {:+.2} para {:+.2}, MAE fit {:.3} check {:.3}",
            fit.len(),
            check.len(),
            now[0],
            now[1],
            now[2],
            err(fit, now),
            err(check, now),
            b[0],
            b[1],
            b[2],
            err(fit, b),
            err(check, b)
        );
    };
    report("ring fusion", &fusion_fit, &fusion_check, fusion_now);
    report(
        "pyrrole-type N fusion",
        &pyrrole_fit,
        &pyrrole_check,
        pyrrole_now,
    );
    // Sigmas: the robust standard deviation of the residuals (1.4826 x the
    // median absolute residual, which long tails from mis-paired H or
    // deposition errors do not inflate) against the sigmas predicted now.
    println!("sigma per method group ({} half): n, robust SD of residuals, RMS, median predicted sigma, RMS of residual/sigma", if sigma_on_check { "check" } else { "fit" });
    for (g, v) in &groups {
        let mut a: Vec<f64> = v.iter().map(|x| x.0.abs()).collect();
        a.sort_by(|x, y| x.total_cmp(y));
        let mut sg: Vec<f64> = v.iter().map(|x| x.1).collect();
        sg.sort_by(|x, y| x.total_cmp(y));
        let rms = (v.iter().map(|x| x.0 * x.0).sum::<f64>() / v.len() as f64).sqrt();
        let z = (v.iter().map(|x| (x.0 / x.1).powi(2)).sum::<f64>() / v.len() as f64).sqrt();
        println!(
            "  {g:<34} {:>5} {:>6.3} {:>6.3} {:>6.3} {:>6.2}",
            v.len(),
            1.4826 * a[a.len() / 2],
            rms,
            sg[sg.len() / 2],
            z
        );
    }
    for (size, (fit, check)) in &extra {
        let now = extra_now(*size);
        let b = least_squares3(fit);
        println!(
            "further pyridine-type N in {size}-rings ({} fit H, {} check H): now {:+.2} {:+.2} {:+.2}, MAE fit {:.3} check {:.3}; fitted {:+.2} {:+.2} {:+.2}, MAE fit {:.3} check {:.3}",
            fit.len(),
            check.len(),
            now[0],
            now[1],
            now[2],
            err(fit, now),
            err(check, now),
            b[0],
            b[1],
            b[2],
            err(fit, b),
            err(check, b)
        );
    }
    let labels: Vec<_> = done.iter().flat_map(|c| c.labels.iter()).collect();
    let sorted: Vec<_> = done.iter().flat_map(|c| c.labels_sorted.iter()).collect();
    let agree_in = |labels: &[&nmrshiftdb::Label], half: u64| {
        let v: Vec<_> = labels.iter().filter(|l| l.id % 2 == half).collect();
        let ok = v.iter().filter(|l| nmrshiftdb::labels_agree(l)).count();
        format!(
            "{ok}/{} = {:.1}%",
            v.len(),
            100.0 * ok as f64 / v.len().max(1) as f64
        )
    };
    println!(
        "multiplicity labels (assignment pairing): fit half {}, check half {}",
        agree_in(&labels, 0),
        agree_in(&labels, 1)
    );
    println!(
        "multiplicity labels (sorted pairing): fit half {}, check half {}",
        agree_in(&sorted, 0),
        agree_in(&sorted, 1)
    );
    if std::env::var("LABELS").is_ok() {
        let mut count: BTreeMap<String, usize> = BTreeMap::new();
        for l in labels.iter().filter(|l| !nmrshiftdb::labels_agree(l)) {
            let why = l
                .notes
                .iter()
                .find(|n| !n.starts_with("shifts are"))
                .map(|n| n.chars().take(60).collect::<String>())
                .unwrap_or_default();
            *count
                .entry(format!("{} -> {}: {why}", l.predicted, l.observed))
                .or_default() += 1;
        }
        let mut v: Vec<_> = count.into_iter().collect();
        v.sort_by_key(|x| std::cmp::Reverse(x.1));
        for (k, n) in v.iter().take(25) {
            println!("  {n:>4} {k}");
        }
    }
    let mut rows: Vec<(&String, &Acc)> = by_kind
        .iter()
        .filter(|(_, a)| a.fit.len() >= min_n)
        .collect();
    rows.sort_by(|a, b| {
        let wa = a.1.fit.iter().map(|r| r.abs()).sum::<f64>();
        let wb = b.1.fit.iter().map(|r| r.abs()).sum::<f64>();
        wb.total_cmp(&wa)
    });
    println!(
        "{:<40} {:>5} {:>7} {:>6} {:>6} | {:>5} {:>6} {:>9}",
        "kind", "n fit", "mean", "MAE", "RMS", "n chk", "MAE", "corrected"
    );
    for (k, a) in rows {
        let m = mean(&a.fit);
        let rms = (a.fit.iter().map(|r| r * r).sum::<f64>() / a.fit.len() as f64).sqrt();
        let corrected: Vec<f64> = a.check.iter().map(|r| r - m).collect();
        println!(
            "{:<40} {:>5} {:>+7.3} {:>6.3} {:>6.3} | {:>5} {:>6.3} {:>9.3}",
            k,
            a.fit.len(),
            m,
            abs(&a.fit),
            rms,
            a.check.len(),
            abs(&a.check),
            abs(&corrected)
        );
    }
}
