//! Reports of a ranking: the text table for people and the JSON document for
//! scripts. Both are built as one string before anything is written, so a
//! failure never leaves half a report on stdout.

pub mod drawing;
pub mod files;
pub mod html;
pub mod json;
pub mod sdf;
pub mod spectrum_plot;
pub mod text;

use crate::chem::Formula;
use crate::rank::Ranking;
use crate::score::ScoringModel;
use crate::spectrum::Spectrum;

/// The safety wording that ends every ranking (FIELD-GUIDE 1).
pub const SAFETY: &str = "A ranking is a hypothesis, not an identification: confirm it with an \
authentic reference standard and orthogonal data before acting on it (batch release, safety \
decisions). Handle unknown substances as hazardous and follow the laboratory's safety rules and \
local regulations.";

/// Everything a report shows.
pub struct Context<'a> {
    pub formula: &'a Formula,
    pub spectrum: &'a Spectrum,
    pub ranking: &'a Ranking,
    pub model: &'a ScoringModel,
    /// How the candidates came: "all isomers" or "shortlist".
    pub source: Source,
    /// `--explain N`: the candidate (1-based position) to break down.
    pub explain: Option<usize>,
}

/// Where the candidates came from.
#[derive(Clone, Debug, PartialEq)]
pub enum Source {
    /// Every isomer of the formula; the plausibility rules applied, by name
    /// (empty with `--keep-all`).
    Enumeration { rules: Vec<String> },
    /// A shortlist of this many structures.
    Shortlist,
}
