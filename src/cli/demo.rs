//! `isomerank demo`: the main job on embedded scenarios that we invented
//! (scenarios and data are made up for the demonstration; the values are
//! typical of such spectra, not measurements): an ester drum identified by
//! 1H, and a xylene drum where 1H alone picks the wrong isomer and the 13C
//! list with DEPT counts settles it.

use super::rank::{execute, print_all, Format, Job};
use crate::chem::Formula;
use crate::error::Result;
use crate::spectrum::{self, carbon, journal, SolventTable};

/// The invented scenario, shown before the ranking.
pub const SCENARIO: &str = "\
Demo - an invented scenario with invented data (not a measurement):
A quality lab receives a drum labelled as an ester for a solvent blend. Its
formula, C5H10O2, is confirmed by high-resolution MS, but several esters share
it (propyl acetate, isopropyl acetate, ethyl propanoate, methyl butanoate, ...).
The lab's 1H NMR of the batch reads:

  1H NMR (400 MHz, CDCl3) δ 4.99 (sept, J = 6.3 Hz, 1H), 2.02 (s, 3H),
  1.23 (d, J = 6.3 Hz, 6H)

Which structure explains it? The same job on your own data:
  isomerank rank C5H10O2 --peaks '1H NMR (400 MHz, CDCl3) δ ...' --top 5 --explain 1
";

/// The invented peak list.
pub const PEAKS: &str =
    "1H NMR (400 MHz, CDCl3) δ 4.99 (sept, J = 6.3 Hz, 1H), 2.02 (s, 3H), 1.23 (d, J = 6.3 Hz, 6H)";
pub const FORMULA: &str = "C5H10O2";

/// The second invented scenario: 1H alone against 1H with 13C.
pub const SCENARIO_13C: &str = "\
Demo, part 2 - an invented scenario with invented data (not a measurement):
A drum of solvent is labelled \"xylene, single isomer\" (C8H10). Its 1H NMR
shows one aromatic multiplet and one methyl singlet, which o-, m- and
p-xylene all give when the aromatic region is not resolved:

  1H NMR (400 MHz, CDCl3) δ 7.08-7.02 (m, 4H), 2.31 (s, 6H)

Ranked on 1H alone, the ranking leans to the wrong isomer. The lab adds a 13C
spectrum with DEPT (three lines: one C, one CH, one CH3):

  13C NMR (101 MHz, CDCl3) δ 134.8 (C), 129.1 (CH), 21.1 (CH3)

The same job on your own data:
  isomerank rank C8H10 --peaks '1H NMR ...' --carbon '13C NMR ...' --explain 1
";
pub const PEAKS_13C_CASE: &str = "1H NMR (400 MHz, CDCl3) δ 7.08-7.02 (m, 4H), 2.31 (s, 6H)";
pub const CARBON: &str = "13C NMR (101 MHz, CDCl3) δ 134.8 (C), 129.1 (CH), 21.1 (CH3)";
pub const FORMULA_13C_CASE: &str = "C8H10";

#[derive(clap::Args)]
pub struct Args {
    /// Output format of the ranking.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
}

pub fn run(args: Args) -> Result<()> {
    let solvents = SolventTable::embedded();
    let job = |formula: &str, peaks: &str, carbon: Option<&str>, top: usize, explain| {
        let formula = Formula::parse(formula)?;
        let carbon = carbon.map(carbon::parse).transpose()?;
        let (spectrum, carbon) =
            spectrum::observed(Some(journal::parse(peaks)?), carbon, &formula, &solvents)?;
        Ok::<_, crate::Error>(Job {
            formula,
            spectrum,
            carbon,
            top,
            explain,
            format: args.format,
            keep_all: false,
            expanded_valence: false,
            charge_separated: false,
            constraints: Default::default(),
            run: Default::default(),
        })
    };
    let (ester, _) = execute(&job(FORMULA, PEAKS, None, 5, Some(1))?, None)?;
    let (h_only, _) = execute(&job(FORMULA_13C_CASE, PEAKS_13C_CASE, None, 3, None)?, None)?;
    let (both, _) = execute(
        &job(FORMULA_13C_CASE, PEAKS_13C_CASE, Some(CARBON), 3, Some(1))?,
        None,
    )?;
    let text = match args.format {
        Format::Text => format!(
            "{SCENARIO}\n{ester}\n{SCENARIO_13C}\n--- 1H alone ---\n{h_only}\n--- 1H and 13C ---\n{both}"
        ),
        // JSON stays one document: the three rankings in order; the
        // scenarios go to stderr.
        // SDF likewise: one file of the three rankings' molfiles.
        Format::Json | Format::Sdf => {
            eprint!("{SCENARIO}\n{SCENARIO_13C}");
            format!("[\n{},\n{},\n{}]\n", ester.trim_end(), h_only.trim_end(), both.trim_end())
        }
    };
    print_all(&text)
}
