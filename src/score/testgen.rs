//! Random test instances for the scorer's own checks: small deterministic
//! pseudo-random numbers, observed spectra and predicted multiplet lists.
//! All of it is invented test input, not chemistry.

use crate::predict::{Multiplicity, PredictedSignal};
use crate::spectrum::{IntegralKind, ObservedMultiplet, ObservedPattern, SolventPeak, Spectrum};

/// Small deterministic pseudo-random numbers (xorshift) in [0, 1).
pub(crate) fn rng(state: &mut u64) -> f64 {
    *state ^= *state << 13;
    *state ^= *state >> 7;
    *state ^= *state << 17;
    (*state % 10_000) as f64 / 10_000.0
}

fn pick<'x, T>(st: &mut u64, from: &'x [T]) -> &'x T {
    &from[((rng(st) * from.len() as f64) as usize).min(from.len() - 1)]
}

/// A random observed spectrum of 1 to 6 multiplets: labels with and without
/// br/app, some ranges, some J, integrals mostly given, now and then one on
/// a solvent peak.
pub(crate) fn spectrum(st: &mut u64) -> Spectrum {
    let labels: [&str; 14] = [
        "s", "d", "t", "q", "quint", "sext", "sept", "m", "dd", "dt", "td", "br s", "app t", "br m",
    ];
    let n = 1 + (rng(st) * 6.0) as usize;
    let multiplets =
        (0..n)
            .map(|i| {
                let label = *pick(st, &labels);
                let pattern = ObservedPattern::parse(label).unwrap();
                let shift = rng(st) * 10.0;
                let range = (pattern.multiplicity == Multiplicity::Multiplet && rng(st) < 0.5)
                    .then(|| (shift - rng(st) * 0.3, shift + rng(st) * 0.3));
                let j_hz = match &pattern.multiplicity {
                    Multiplicity::Coupled(ns) => {
                        let k = (rng(st) * (ns.len() + 1) as f64) as usize;
                        let mut j: Vec<f64> = (0..k)
                            .map(|_| *pick(st, &[7.1, 7.0, 1.5, 16.0, 8.2, 2.4]) + rng(st))
                            .collect();
                        j.sort_by(|a, b| b.total_cmp(a));
                        j
                    }
                    _ => vec![],
                };
                let hydrogens = (rng(st) > 0.1)
                    .then(|| (1.0 + (rng(st) * 5.0).floor()) * (0.9 + rng(st) * 0.2));
                let solvent = (pattern.multiplicity == Multiplicity::Singlet && rng(st) < 0.2)
                    .then(|| SolventPeak {
                        kind: "residual".into(),
                        solvent: "CDCl3".into(),
                        shift: 7.26,
                        species: "residual solvent".into(),
                    });
                ObservedMultiplet {
                    entry: i + 1,
                    shift: range.map(|(lo, hi)| (lo + hi) / 2.0).unwrap_or(shift),
                    range,
                    pattern,
                    j_hz,
                    integral: hydrogens,
                    hydrogens,
                    solvent,
                }
            })
            .collect();
    Spectrum {
        frequency_mhz: Some(400.0),
        solvent: None,
        multiplets,
        integrals: IntegralKind::Hydrogens,
        notes: vec![],
    }
}

/// A random predicted list of 1 to 7 groups for `spectrum`: shifts half the
/// time near an observed multiplet, patterns mostly from a small pool (so
/// that patterns repeat, as they do across isomers), sigmas from a few
/// values including one below the model's floor.
pub(crate) fn prediction(st: &mut u64, spectrum: &Spectrum) -> Vec<PredictedSignal> {
    let pool: [(Multiplicity, &[f64]); 15] = [
        (Multiplicity::Singlet, &[]),
        (Multiplicity::Coupled(vec![1]), &[7.0]),
        (Multiplicity::Coupled(vec![1]), &[1.2]),
        (Multiplicity::Coupled(vec![2]), &[7.2]),
        (Multiplicity::Coupled(vec![3]), &[7.1]),
        (Multiplicity::Coupled(vec![1, 1]), &[7.0, 6.8]),
        (Multiplicity::Coupled(vec![1, 1]), &[8.0, 1.5]),
        (Multiplicity::Coupled(vec![1, 2]), &[7.0, 1.2]),
        (Multiplicity::Coupled(vec![4]), &[7.0]),
        (Multiplicity::Coupled(vec![5]), &[7.1]),
        (Multiplicity::Coupled(vec![6]), &[6.9]),
        (Multiplicity::Multiplet, &[]),
        (Multiplicity::Coupled(vec![2]), &[]),
        (Multiplicity::Coupled(vec![7]), &[7.0]),
        // Four couplings: more than a packed pattern key holds.
        (
            Multiplicity::Coupled(vec![1, 1, 1, 1]),
            &[9.0, 7.0, 4.0, 2.0],
        ),
    ];
    let g = 1 + (rng(st) * 7.0) as usize;
    (0..g)
        .map(|_| {
            let (multiplicity, j) = pick(st, &pool).clone();
            let mut j_hz = j.to_vec();
            if rng(st) < 0.1 {
                // An unusual J value: a pattern not seen before.
                j_hz = j_hz.iter().map(|_| rng(st) * 15.0).collect();
            }
            let shift = if rng(st) < 0.5 {
                let o = pick(st, &spectrum.multiplets);
                o.shift + (rng(st) - 0.5) * 0.6
            } else {
                rng(st) * 11.0
            };
            PredictedSignal {
                shift,
                sigma: *pick(st, &[0.03, 0.05, 0.1, 0.2, 0.35, 1.5]),
                hydrogens: 1 + (rng(st) * 4.0) as u32,
                multiplicity,
                j_hz,
                atoms: vec![0],
                exchangeable: rng(st) < 0.15,
                notes: vec![],
                halves: false,
                geminal_hz: 0.0,
                half_pattern: None,
            }
        })
        .collect()
}
