//! `isomerank demo`: the main job on an embedded scenario that we invented
//! (scenario and data are made up for the demonstration; the values are
//! typical of such a spectrum, not a measurement).

use super::rank::{execute, print_all, Format, Job};
use crate::chem::Formula;
use crate::error::Result;
use crate::spectrum::{integrals, journal, SolventTable};

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

#[derive(clap::Args)]
pub struct Args {
    /// Output format of the ranking.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
}

pub fn run(args: Args) -> Result<()> {
    let formula = Formula::parse(FORMULA)?;
    let spectrum = integrals::build(journal::parse(PEAKS)?, &formula, &SolventTable::embedded())?;
    let job = Job {
        formula,
        spectrum,
        top: 5,
        explain: Some(1),
        format: args.format,
        keep_all: false,
        expanded_valence: false,
    };
    let report = execute(&job, None)?;
    let text = match args.format {
        Format::Text => format!("{SCENARIO}\n{report}"),
        // JSON and SDF stay one document; the scenario goes to stderr.
        Format::Json | Format::Sdf => {
            eprint!("{SCENARIO}");
            report
        }
    };
    print_all(&text)
}
