//! From parsed entries to a validated [`Spectrum`]: integrals checked against
//! the molecular formula's H count, relative integrals scaled to it, solvent
//! and water peaks marked.
//!
//! Rules (issue "observed data"): integrals written as H counts (`2H`) must
//! not add up to more than the formula's H (an error showing both numbers);
//! fewer is allowed, because exchangeable H (OH, NH, COOH) are often broad or
//! missing, and is reported in a note. Relative numbers are scaled so that
//! they add up to the formula's H. Solvent-marked multiplets do not count.

use super::journal::{RawEntry, RawSpectrum};
use super::{IntegralKind, ObservedMultiplet, SolventTable, Spectrum};
use crate::chem::Formula;
use crate::error::{Error, Result};

/// Slack on the H total (integration error), in H. Above `formula H + this`
/// the integrals are an error; below `formula H - this` a note says how many
/// H were not observed.
pub const TOTAL_SLACK_H: f64 = 0.5;

/// Build the spectrum: check integral kinds, mark solvent peaks, check and
/// normalise the total against `formula`.
pub fn build(raw: RawSpectrum, formula: &Formula, solvents: &SolventTable) -> Result<Spectrum> {
    if raw.entries.is_empty() {
        return Err(Error::input(
            "no multiplets in the peak list: give at least one entry such as 2.05 (s, 3H)",
        ));
    }
    let kind = integral_kind(&raw.entries)?;
    let mut spectrum = Spectrum {
        frequency_mhz: raw.frequency_mhz,
        solvent: raw.solvent,
        multiplets: raw
            .entries
            .iter()
            .map(|e| ObservedMultiplet {
                entry: e.entry,
                shift: e.shift,
                range: e.range,
                pattern: e.pattern.clone(),
                j_hz: e.j_hz.clone(),
                integral: e.integral.map(|(v, _)| v),
                hydrogens: None,
                solvent: None,
            })
            .collect(),
        integrals: kind,
        notes: Vec::new(),
    };
    solvents.mark(&mut spectrum);
    note_unreported(&mut spectrum);
    let formula_h = formula.hydrogens() as f64;
    let own = |m: &&ObservedMultiplet| m.solvent.is_none();
    match kind {
        IntegralKind::None => {
            spectrum.notes.push(
                "no integrals given: the ranking cannot use the number of H per signal".to_string(),
            );
        }
        IntegralKind::Hydrogens => {
            for m in &mut spectrum.multiplets {
                m.hydrogens = m.integral;
            }
            let total: f64 = spectrum
                .multiplets
                .iter()
                .filter(own)
                .filter_map(|m| m.integral)
                .sum();
            if total > formula_h + TOTAL_SLACK_H {
                return Err(Error::input(format!(
                    "the integrals add up to {} H but {formula} has {} H: check the integrals, or give relative numbers without \"H\" to have them scaled",
                    fmt_h(total),
                    formula.hydrogens()
                )));
            }
            if total < formula_h - TOTAL_SLACK_H {
                spectrum.notes.push(format!(
                    "the integrals add up to {} H of the {} H in {formula}: {} H not observed (exchangeable H such as OH or NH are often broad or missing)",
                    fmt_h(total),
                    formula.hydrogens(),
                    fmt_h(formula_h - total)
                ));
            }
        }
        IntegralKind::Relative => {
            if let Some(m) = spectrum
                .multiplets
                .iter()
                .filter(own)
                .find(|m| m.integral.is_none())
            {
                return Err(Error::input(format!(
                    "entry {} has no integral: relative integrals can only be scaled to the formula's H when every entry has one",
                    m.entry
                )));
            }
            let total: f64 = spectrum
                .multiplets
                .iter()
                .filter(own)
                .filter_map(|m| m.integral)
                .sum();
            if total <= 0.0 {
                return Err(Error::input(
                    "every entry sits on a solvent or water peak: no integral is left to scale to the formula's H",
                ));
            }
            let scale = formula_h / total;
            for m in &mut spectrum.multiplets {
                m.hydrogens = m.integral.map(|v| v * scale);
            }
            spectrum.notes.push(format!(
                "relative integrals scaled to the {} H of {formula} (factor {scale:.3})",
                formula.hydrogens()
            ));
        }
    }
    Ok(spectrum)
}

/// A note naming the entries written without a multiplicity.
fn note_unreported(spectrum: &mut Spectrum) {
    let entries: Vec<String> = spectrum
        .multiplets
        .iter()
        .filter(|m| !m.pattern.reported)
        .map(|m| m.entry.to_string())
        .collect();
    if entries.is_empty() {
        return;
    }
    let which = if entries.len() == spectrum.multiplets.len() {
        "no entry gives a multiplicity".to_string()
    } else if entries.len() == 1 {
        format!("entry {} gives no multiplicity", entries[0])
    } else {
        format!("entries {} give no multiplicity", entries.join(", "))
    };
    spectrum.notes.push(format!(
        "{which}: multiplicity not reported, scored on shift and integral alone (no multiplicity term)"
    ));
}

fn integral_kind(entries: &[RawEntry]) -> Result<IntegralKind> {
    let mut first: Option<(usize, bool)> = None;
    for e in entries {
        if let Some((v, is_h)) = e.integral {
            match first {
                None => first = Some((e.entry, is_h)),
                Some((entry, h)) if h != is_h => {
                    let (this, that) = if is_h {
                        (format!("an H count ({}H)", fmt_h(v)), "a relative number")
                    } else {
                        (format!("a relative number ({})", fmt_h(v)), "an H count")
                    };
                    return Err(Error::input(format!(
                        "entry {} gives {this} but entry {entry} gave {that}: write all integrals the same way",
                        e.entry
                    )));
                }
                _ => {}
            }
        }
    }
    Ok(match first {
        None => IntegralKind::None,
        Some((_, true)) => IntegralKind::Hydrogens,
        Some((_, false)) => IntegralKind::Relative,
    })
}

fn fmt_h(v: f64) -> String {
    if (v - v.round()).abs() < 1e-9 {
        format!("{}", v.round())
    } else {
        format!("{v:.2}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spectrum::journal;

    fn build_text(text: &str, formula: &str) -> Result<Spectrum> {
        build(
            journal::parse(text).unwrap(),
            &Formula::parse(formula).unwrap(),
            &SolventTable::embedded(),
        )
    }

    #[test]
    fn too_many_h_is_an_error_showing_both_numbers() {
        let e = build_text("4.12 (q, 2H), 2.05 (s, 3H), 1.26 (t, 6H)", "C4H8O2")
            .unwrap_err()
            .to_string();
        assert!(e.contains("add up to 11 H but C4H8O2 has 8 H"), "{e}");
    }

    #[test]
    fn too_few_h_is_a_note() {
        let s = build_text("3.70 (q, 2H), 1.22 (t, 3H)", "C2H6O").unwrap();
        assert!(
            s.notes.iter().any(|n| n.contains("1 H not observed")),
            "{:?}",
            s.notes
        );
    }

    #[test]
    fn relative_integrals_scale_to_formula() {
        let s = build_text("4.12 (q, 0.67), 2.05 (s, 1.0), 1.26 (t, 1.0)", "C4H8O2").unwrap();
        let h: Vec<f64> = s.multiplets.iter().map(|m| m.hydrogens.unwrap()).collect();
        assert!(
            (h[0] - 2.0).abs() < 0.01 && (h[1] - 3.0).abs() < 0.01,
            "{h:?}"
        );
        let e = build_text("4.12 (q, 2H), 2.05 (s, 1.0)", "C4H8O2")
            .unwrap_err()
            .to_string();
        assert!(e.contains("entry 2 gives a relative number"), "{e}");
    }

    #[test]
    fn solvent_peak_is_marked_and_left_out_of_the_total() {
        // Gottlieb et al. 1997, Table 1: residual CHCl3 in CDCl3 at 7.26 ppm.
        let s = build_text(
            "1H NMR (CDCl3) δ 7.26 (s, 1H), 4.12 (q, 2H), 2.05 (s, 3H), 1.26 (t, 3H)",
            "C4H8O2",
        )
        .unwrap();
        assert!(s.multiplets[0].solvent.is_some());
        assert!(
            s.notes
                .iter()
                .any(|n| n.contains("residual solvent peak of CDCl3")),
            "{:?}",
            s.notes
        );
        assert_eq!(s.observed_hydrogens(), 8.0);
    }
}
