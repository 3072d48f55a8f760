//! `isomerank predict SMILES`: the predicted 1H multiplet list and 13C list
//! of one structure, in journal style (highest shift first) or as JSON.

use super::output;
use crate::chem::smiles::{canonical_smiles, parse_smiles};
use crate::predict::{PredictedCarbon, PredictedSignal, Predictor};
use crate::Result;
use serde::Serialize;
use std::fmt::Write;
use std::path::PathBuf;

#[derive(clap::Args)]
#[command(after_help = "Examples:
  isomerank predict 'CC(=O)OC'                     journal-style text
  isomerank predict 'OCc1ccccc1' --solvent DMSO-d6  OH couples to CH2 in DMSO
  isomerank predict 'CC=O' --mhz 60 --format json
  isomerank predict 'CCO' --library my-tables/     my TOML files replace the built-in ones
  isomerank predict 'OCc1ccccc1' --svg benzyl.svg   also write a 2D drawing

Shifts are estimates from additive increment tables (sigma = typical error);
multiplicities are first order. A prediction is a hypothesis, not a spectrum.")]
pub struct Args {
    /// The structure as SMILES, e.g. CC(=O)OC.
    pub smiles: String,
    /// Solvent: CDCl3, DMSO-d6, acetone-d6, C6D6, CD3CN, CD3OD, D2O or CD2Cl2 (as named in the library's solvents.toml).
    #[arg(long, default_value = "CDCl3")]
    pub solvent: String,
    /// Spectrometer 1H frequency in MHz (decides first order against m).
    #[arg(long, default_value_t = 400.0)]
    pub mhz: f64,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
    /// Folder of fragment-library TOML files replacing the built-in ones.
    #[arg(long, value_name = "DIR")]
    pub library: Option<PathBuf>,
    /// Also write a 2D drawing of the structure (SVG) to FILE.
    #[arg(long, value_name = "FILE")]
    pub svg: Option<PathBuf>,
    /// Number the atoms in the drawing (1-based, in SMILES order).
    #[arg(long, requires = "svg")]
    pub atom_numbers: bool,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Format {
    Text,
    Json,
}

#[derive(Serialize)]
struct JsonOut<'a> {
    smiles: String,
    formula: String,
    signals: Vec<JsonSignal<'a>>,
    carbon: &'a [PredictedCarbon],
}

#[derive(Serialize)]
struct JsonSignal<'a> {
    shift: f64,
    sigma: f64,
    hydrogens: u32,
    multiplicity: String,
    j_hz: &'a [f64],
    atoms: &'a [usize],
    exchangeable: bool,
    notes: &'a [String],
}

pub fn run(args: Args) -> Result<()> {
    let predictor = match &args.library {
        Some(dir) => Predictor::from_dir(dir)?,
        None => Predictor::embedded()?,
    };
    let opts = predictor.options(&args.solvent, args.mhz)?;
    let mol = parse_smiles(&args.smiles)?;
    let signals = predictor.try_predict(&mol, &opts)?;
    let carbons = predictor.try_predict_carbon(&mol, &opts)?;
    let solvent = &predictor.library().solvents[opts.solvent].name;
    if let Some(path) = &args.svg {
        let draw = crate::report::drawing::DrawOptions {
            atom_numbers: args.atom_numbers,
            title: Some(canonical_smiles(&mol)),
            ..Default::default()
        };
        crate::report::files::write_whole(
            path,
            &crate::report::drawing::structure_svg(&mol, &draw),
        )?;
    }
    let text = match args.format {
        Format::Json => {
            let out = JsonOut {
                smiles: canonical_smiles(&mol),
                formula: mol.formula().to_string(),
                signals: signals
                    .iter()
                    .map(|s| JsonSignal {
                        shift: s.shift,
                        sigma: s.sigma,
                        hydrogens: s.hydrogens,
                        multiplicity: s.label(),
                        j_hz: &s.j_hz,
                        atoms: &s.atoms,
                        exchangeable: s.exchangeable,
                        notes: &s.notes,
                    })
                    .collect(),
                carbon: &carbons,
            };
            let mut t = serde_json::to_string_pretty(&out)
                .map_err(|e| crate::Error::Internal(format!("JSON output: {e}")))?;
            t.push('\n');
            t
        }
        Format::Text => journal_text(
            &canonical_smiles(&mol),
            &mol.formula().to_string(),
            solvent,
            opts.mhz,
            &signals,
            &carbons,
        ),
    };
    output::print_all(&text)
}

/// Journal style: `δ 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H)`, the 13C
/// line `13C NMR δ 170.9 (C), 60.5 (CH2), 21.1 (CH3), 14.2 (CH3)` and notes.
pub fn journal_text(
    smiles: &str,
    formula: &str,
    solvent: &str,
    mhz: f64,
    signals: &[PredictedSignal],
    carbons: &[PredictedCarbon],
) -> String {
    let mut t = String::new();
    let _ = writeln!(
        t,
        "{smiles} ({formula}), predicted 1H NMR ({mhz:.0} MHz, {solvent})"
    );
    if signals.is_empty() {
        t.push_str("no hydrogens: no 1H signals\n");
        t.push_str(&carbon_line(carbons));
        return t;
    }
    let parts: Vec<String> = signals
        .iter()
        .map(|s| {
            let mut p = format!("{:.2} ({}", s.shift, s.label());
            if !s.j_hz.is_empty() {
                let js: Vec<String> = s.j_hz.iter().map(|j| format!("{j:.1}")).collect();
                let _ = write!(p, ", J = {} Hz", js.join(", "));
            }
            let _ = write!(p, ", {}H)", s.hydrogens);
            p
        })
        .collect();
    let _ = writeln!(t, "δ {}", parts.join(", "));
    t.push_str(&carbon_line(carbons));
    for s in signals {
        for n in &s.notes {
            let _ = writeln!(t, "note {:.2} ppm ({}H): {n}", s.shift, s.hydrogens);
        }
    }
    let _ =
        writeln!(
        t,
        "shifts are increment estimates (sigma {:.2}-{:.2} ppm); confirm with a reference spectrum",
        signals.iter().map(|s| s.sigma).fold(f64::INFINITY, f64::min),
        signals.iter().map(|s| s.sigma).fold(0.0, f64::max)
    );
    t
}

/// The 13C list in journal style: `13C NMR δ 128.6 (CH, 2C), 21.4 (CH3)`
/// (attached H as C, CH, CH2, CH3, CH4; the count when a class holds more
/// than one carbon), with its sigma range; a line saying so when there is
/// no carbon.
pub fn carbon_line(carbons: &[PredictedCarbon]) -> String {
    if carbons.is_empty() {
        return "no carbon: no 13C signals\n".into();
    }
    let parts: Vec<String> = carbons
        .iter()
        .map(|c| {
            let h = match c.hydrogens {
                0 => "C".to_string(),
                1 => "CH".to_string(),
                n => format!("CH{n}"),
            };
            if c.carbons > 1 {
                format!("{:.1} ({h}, {}C)", c.shift, c.carbons)
            } else {
                format!("{:.1} ({h})", c.shift)
            }
        })
        .collect();
    let lo = carbons
        .iter()
        .map(|c| c.sigma)
        .fold(f64::INFINITY, f64::min);
    let hi = carbons.iter().map(|c| c.sigma).fold(0.0, f64::max);
    format!(
        "13C NMR δ {}\n13C shifts are increment estimates (sigma {lo:.1}-{hi:.1} ppm)\n",
        parts.join(", ")
    )
}
