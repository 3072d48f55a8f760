//! Reports of a ranking: the text table for people and the JSON document for
//! scripts. Both are built as one string before anything is written, so a
//! failure never leaves half a report on stdout.

pub mod drawing;
pub mod files;
pub mod html;
pub mod json;
pub mod sdf;
pub mod shard;
pub mod spectrum_plot;
pub mod text;

use crate::chem::Formula;
use crate::rank::Ranking;
use crate::score::ScoringModel;
use crate::spectrum::{CarbonSpectrum, Spectrum};

/// The safety wording that ends every ranking (FIELD-GUIDE 1).
pub const SAFETY: &str = "A ranking is a hypothesis, not an identification: confirm it with an \
authentic reference standard and orthogonal data before acting on it (batch release, safety \
decisions). Handle unknown substances as hazardous and follow the laboratory's safety rules and \
local regulations.";

/// Everything a report shows.
pub struct Context<'a> {
    pub formula: &'a Formula,
    pub spectrum: &'a Spectrum,
    /// The observed 13C lines, when given.
    pub carbon: Option<&'a CarbonSpectrum>,
    pub ranking: &'a Ranking,
    pub model: &'a ScoringModel,
    /// How the candidates came: "all isomers" or "shortlist".
    pub source: Source,
    /// `--explain N`: the candidate (1-based position) to break down.
    pub explain: Option<usize>,
}

/// The leading candidates (positions: the first ones that together hold
/// most of the probability) and the extra observations that would separate
/// them, leaving out what the data already give (see
/// `rank::evidence::leading_evidence`). Empty when the first alone leads.
pub fn leading(cx: &Context) -> (Vec<usize>, Vec<String>) {
    use crate::rank::evidence::{leading_evidence, Given};
    let given = Given::of(cx.spectrum).with_carbon(cx.carbon.is_some());
    leading_evidence(&cx.ranking.candidates, given)
}

/// The sentence that opens the leading candidates' evidence.
pub fn leading_heading(cx: &Context, members: &[usize]) -> String {
    let share: f64 = members
        .iter()
        .map(|&p| cx.ranking.candidates[p - 1].probability)
        .sum();
    let names: Vec<String> = members.iter().map(|p| format!("#{p}")).collect();
    format!(
        "To separate the leading candidates {} (together {:.0} % of the probability):",
        names.join(", "),
        100.0 * share
    )
}

/// Which candidates an enumeration considered, in words, with the counts:
/// every isomer, or those meeting the named constraints (text and HTML
/// reports).
pub fn candidate_set(cx: &Context, constraints: &[String]) -> String {
    let formula = cx.formula;
    let which = if constraints.is_empty() {
        format!("every constitutional isomer of {formula}")
    } else {
        format!(
            "the constitutional isomers of {formula} that meet {} (built inside the search)",
            constraints.join(", ")
        )
    };
    let r = cx.ranking;
    let excluded = if r.excluded > 0 {
        format!(", {} excluded by plausibility rules", r.excluded)
    } else {
        String::new()
    };
    format!("{which}: {} considered{excluded}", r.considered)
}

/// The absolute fit verdict on the first candidate (see
/// [`crate::rank::verdict`]), when there is one and any observed line.
pub fn verdict(
    cx: &Context,
) -> Option<(
    crate::rank::verdict::Verdict,
    crate::rank::verdict::FitTable,
)> {
    let first = cx.ranking.candidates.first()?;
    let lines = cx.spectrum.multiplets.len() + cx.carbon.map_or(0, |c| c.lines.len());
    let table = crate::rank::verdict::FitTable::embedded().for_data(cx.carbon.is_some());
    let v = table.verdict(first.cost, cx.model.ranking.cost_scale, lines)?;
    Some((v, table))
}

/// The one-line reason for a candidate's place: the costliest terms of its
/// 1H and 13C parts together.
pub fn reason(cx: &Context, c: &crate::rank::Ranked) -> String {
    let e = crate::score::explain(&c.predicted, cx.spectrum, cx.model, &c.scored);
    let extra = match (cx.carbon, &c.carbon_scored) {
        (Some(cs), Some(sc)) => {
            let ce = crate::score::carbon::explain(&c.carbons, cs, cx.model, sc);
            crate::score::carbon::worst_terms(&c.carbons, cs, &ce)
        }
        _ => Vec::new(),
    };
    crate::score::reason_with(&c.predicted, cx.spectrum, &e, extra)
}

/// Where the candidates came from.
#[derive(Clone, Debug, PartialEq)]
pub enum Source {
    /// Every isomer of the formula; the plausibility rules applied, by name
    /// (empty with `--keep-all`).
    Enumeration {
        rules: Vec<String>,
        /// The constraints the search was bounded by (empty: none), by name.
        constraints: Vec<String>,
    },
    /// A shortlist of this many structures.
    Shortlist,
}

/// The option that stopped a partial run (`default-cap`: no cap was given
/// and the run outgrew its estimate, see `cli::limits`).
pub fn stop_option(stop: crate::enumerate::Stop) -> &'static str {
    match stop {
        crate::enumerate::Stop::Candidates => "--max-candidates",
        crate::enumerate::Stop::Time => "--time-limit",
        crate::enumerate::Stop::DefaultCap => "default-cap",
    }
}

/// What stopped a partial run, in words for the text outputs.
pub fn stop_words(stop: crate::enumerate::Stop) -> &'static str {
    match stop {
        crate::enumerate::Stop::DefaultCap => {
            "the default cap (no --max-candidates or --time-limit was given, and the search outgrew the estimate made before the run: the command's candidate cap or 20 minutes; give one of them to go further)"
        }
        other => stop_option(other),
    }
}
