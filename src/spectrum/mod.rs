//! Observed 1H NMR data: the multiplet list a chemist reads off a spectrum,
//! parsed from pasted journal-style text or from a TOML/JSON file, checked
//! against the molecular formula (integrals) and screened for solvent and
//! water peaks.
//!
//! Everything downstream (the scorer) sees only [`Spectrum`]: validated,
//! integrals in H units, every multiplet numbered by its entry in the input.

pub mod carbon;
pub mod file;
pub mod integrals;
pub mod journal;
pub mod pattern;
pub mod solvent;

pub use carbon::{CarbonLine, CarbonSpectrum};
pub use pattern::ObservedPattern;
pub use solvent::{SolventPeak, SolventTable};

use crate::chem::Formula;
use crate::error::{Error, Result};
use serde::Serialize;

/// One observed multiplet.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ObservedMultiplet {
    /// 1-based number of the entry in the input (what error messages and the
    /// assignment table refer to).
    pub entry: usize,
    /// Centre of the multiplet, ppm (the midpoint of a range).
    pub shift: f64,
    /// Low and high end when the input gave a range (`7.32-7.15`).
    pub range: Option<(f64, f64)>,
    pub pattern: ObservedPattern,
    /// Coupling constants as given, Hz, largest first.
    pub j_hz: Vec<f64>,
    /// The integral exactly as written (H count or relative number).
    pub integral: Option<f64>,
    /// The integral in H units after normalisation against the formula.
    pub hydrogens: Option<f64>,
    /// Set when the multiplet sits where the solvent's residual or water
    /// peak is expected; the scorer may then leave it unassigned cheaply.
    pub solvent: Option<SolventPeak>,
}

impl ObservedMultiplet {
    /// Distance (ppm) from `shift` to this multiplet: 0 inside a range.
    pub fn distance(&self, shift: f64) -> f64 {
        distance_to(self.shift, self.range, shift)
    }

    /// The shift as a user would quote it: `7.32-7.15` or `4.12`.
    pub fn shift_text(&self) -> String {
        match self.range {
            Some((lo, hi)) => format!("{hi:.2}-{lo:.2}"),
            None => format!("{:.2}", self.shift),
        }
    }
}

/// Distance (ppm) from `x` to a reported signal at `shift`, or to its range
/// when one was given (0 inside it); both nuclei's signals use it.
pub fn distance_to(shift: f64, range: Option<(f64, f64)>, x: f64) -> f64 {
    match range {
        Some((lo, hi)) if x >= lo && x <= hi => 0.0,
        Some((lo, hi)) => (x - lo).abs().min((x - hi).abs()),
        None => (x - shift).abs(),
    }
}

/// How the integrals of a spectrum were given.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum IntegralKind {
    /// Numbers of H (`2H`).
    Hydrogens,
    /// Relative areas, scaled to the formula's H count.
    Relative,
    /// No integral given at all.
    None,
}

/// A parsed, validated observed spectrum.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Spectrum {
    /// Spectrometer frequency for 1H, MHz, when given.
    pub frequency_mhz: Option<f64>,
    /// Solvent as written, when given.
    pub solvent: Option<String>,
    pub multiplets: Vec<ObservedMultiplet>,
    pub integrals: IntegralKind,
    /// Remarks for the user (normalisation, H not observed, solvent peaks).
    pub notes: Vec<String>,
}

impl Spectrum {
    /// Sum of the normalised integrals (H units) over the multiplets that
    /// belong to the compound (not set aside as solvent).
    pub fn observed_hydrogens(&self) -> f64 {
        self.multiplets
            .iter()
            .filter(|m| m.solvent.is_none())
            .filter_map(|m| m.hydrogens)
            .sum()
    }
}

/// The checked observed data: the 1H multiplets (an empty list when only 13C
/// was given) and the 13C lines. At least one of the two is required.
pub fn observed(
    hydrogen: Option<journal::RawSpectrum>,
    carbon_raw: Option<carbon::RawCarbon>,
    formula: &Formula,
    solvents: &SolventTable,
) -> Result<(Spectrum, Option<CarbonSpectrum>)> {
    let spectrum =
        match hydrogen {
            Some(raw) => integrals::build(raw, formula, solvents)?,
            None if carbon_raw.is_some() => Spectrum {
                frequency_mhz: None,
                solvent: carbon_raw.as_ref().and_then(|c| c.solvent.clone()),
                multiplets: Vec::new(),
                integrals: IntegralKind::None,
                notes: vec!["no 1H data: the ranking rests on the 13C list alone".to_string()],
            },
            None => return Err(Error::input(
                "no observed data: give --peaks TEXT (1H), --carbon TEXT (13C) or --spectrum FILE",
            )),
        };
    let default_solvent = spectrum
        .solvent
        .clone()
        .unwrap_or_else(|| solvents.default_solvent().to_string());
    let carbon = carbon_raw
        .map(|c| carbon::build(c, formula, solvents, &default_solvent))
        .transpose()?;
    Ok((spectrum, carbon))
}
