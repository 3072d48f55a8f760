//! Ranking: score every candidate (all isomers of a formula, streamed from
//! the generator, or a shortlist) in parallel, keep a bounded top-k, turn
//! costs into probabilities (softmax over every candidate considered), group
//! the candidates the data cannot separate and say what would separate them.
//!
//! The structure-specific steps (prediction, SMILES, 13C symmetry classes)
//! come in as functions in [`Steps`], so that this module depends only on
//! the molecule types, the predicted signals and the scorer. The inner loop
//! (DEVELOPERS.md, "The ranking's inner loop"): predict from the compact
//! isomer with the generator's automorphisms, stop after the shifts when a
//! bound shows the candidate cannot beat the cutoff, score the rest through
//! [`score::Prepared`](crate::score::Prepared).

pub mod carbon;
pub mod evidence;
pub mod groups;
pub mod topk;

use crate::chem::{Formula, HeavyAtoms, Molecule};
use crate::enumerate;
use crate::error::{Error, Result};
use crate::predict::{PredictedSignal, ShiftEstimate};
use crate::score::{Prepared, Scored, ScoringModel};
use crate::spectrum::Spectrum;
use rayon::prelude::*;
use topk::{Collector, Outcome};

/// A structure's predicted 1H multiplet list, in the two steps of
/// [`crate::predict::Predictor::predict_gated`]: the skeleton's
/// automorphisms when the generator has them, and a gate that sees the
/// groups' shifts first and may stop the prediction (`None` back).
pub type PredictFn<'a> = dyn Fn(
        &dyn HeavyAtoms,
        Option<&[[u8; 64]]>,
        &mut dyn FnMut(&[ShiftEstimate]) -> bool,
    ) -> Option<Vec<PredictedSignal>>
    + Sync
    + 'a;

/// The structure-specific steps the ranker calls.
pub struct Steps<'a> {
    /// Predicted 1H multiplet list of a structure.
    pub predict: &'a PredictFn<'a>,
    /// Canonical SMILES of a structure.
    pub smiles: &'a (dyn Fn(&Molecule) -> String + Sync),
    /// Number of 13C signals expected (carbon symmetry classes).
    pub carbon_signals: &'a (dyn Fn(&Molecule) -> usize + Sync),
}

/// Run `f` with the standard steps: `predictor`'s 1H prediction under `opts`,
/// our canonical SMILES, and 13C signal counts from carbon symmetry classes.
/// (A callback, because `Steps` borrows the closures it is built from.)
pub fn with_standard_steps<R>(
    predictor: &crate::predict::Predictor,
    opts: &crate::predict::PredictOptions,
    f: impl FnOnce(&Steps) -> R,
) -> R {
    let predict = |m: &dyn HeavyAtoms,
                   symmetry: Option<&[[u8; 64]]>,
                   gate: &mut dyn FnMut(&[ShiftEstimate]) -> bool| {
        predictor
            .predict_gated_here(m, opts, symmetry, gate)
            .unwrap_or(Some(Vec::new()))
    };
    let smiles = |m: &Molecule| crate::chem::smiles::canonical_smiles(m);
    let carbons = |m: &Molecule| carbon::carbon_signals(m);
    let steps = Steps {
        predict: &predict,
        smiles: &smiles,
        carbon_signals: &carbons,
    };
    f(&steps)
}

/// What to rank against and how many to keep.
pub struct Settings<'a> {
    pub spectrum: &'a Spectrum,
    pub model: &'a ScoringModel,
    /// Length of the table (`--top`).
    pub top: usize,
}

/// One candidate of a shortlist.
pub struct ShortlistItem {
    pub molecule: Molecule,
    pub smiles: String,
    pub name: Option<String>,
}

/// A ranked candidate.
#[derive(Clone, Debug)]
pub struct Ranked {
    /// 1-based position in the ranking.
    pub position: usize,
    pub smiles: String,
    pub name: Option<String>,
    pub cost: f64,
    pub probability: f64,
    /// 1-based group number: equal numbers cannot be told apart by the data.
    pub group: usize,
    pub predicted: Vec<PredictedSignal>,
    pub scored: Scored,
    pub carbon_signals: usize,
    /// The structure (atom numbers of `predicted` refer to it): for
    /// drawings and structure files.
    pub molecule: Molecule,
}

/// A group of candidates the data cannot separate.
#[derive(Clone, Debug)]
pub struct Group {
    pub id: usize,
    /// Positions (1-based) of the members shown in the table.
    pub members: Vec<usize>,
    /// Candidates beyond the table that also belong to this group.
    pub beyond_table: usize,
    pub evidence: Vec<String>,
}

/// The result of a ranking.
#[derive(Clone, Debug)]
pub struct Ranking {
    pub candidates: Vec<Ranked>,
    pub groups: Vec<Group>,
    /// Candidates scored or skipped (after the plausibility rules).
    pub considered: u64,
    /// Candidates skipped by the cutoff (provably far below the top).
    pub skipped: u64,
    /// Candidates removed by plausibility rules before scoring.
    pub excluded: u64,
    /// Per rule: name and how many it removed.
    pub rules: Vec<(String, u64)>,
}

impl Ranking {
    /// How many isomers the plausibility rule `name` removed (0 if not applied).
    pub fn removed_by(&self, name: &str) -> u64 {
        self.rules
            .iter()
            .find(|(k, _)| k == name)
            .map(|x| x.1)
            .unwrap_or(0)
    }
}

struct Payload {
    molecule: Molecule,
    smiles: String,
    name: Option<String>,
    predicted: Vec<PredictedSignal>,
    scored: Scored,
}

impl Payload {
    /// A candidate that may rank, keyed by its SMILES for ties.
    fn outcome(self) -> Outcome<Box<Payload>> {
        Outcome::Scored {
            cost: self.scored.cost,
            key: self.smiles.clone(),
            item: Box::new(self),
        }
    }
}

/// Predict and score one structure; `None` when it cannot beat `cutoff`.
/// The prediction stops after the shifts when even a score without its
/// multiplicity and J terms (never negative) cannot beat `cutoff`
/// ([`score::Prepared::may_beat`]).
fn evaluate(
    molecule: &dyn HeavyAtoms,
    symmetry: Option<&[[u8; 64]]>,
    steps: &Steps,
    prepared: &Prepared,
    cutoff: f64,
) -> Option<(Vec<PredictedSignal>, Scored)> {
    let mut gate = |est: &[ShiftEstimate]| prepared.may_beat(est, cutoff);
    let predicted = (steps.predict)(molecule, symmetry, &mut gate)?;
    let scored = prepared.score(&predicted, cutoff)?;
    Some((predicted, scored))
}

/// Rank a shortlist that arrives in chunks, in input order (a reader that
/// parses the next chunk only when asked, so a list of a million SMILES
/// never has to be held as molecules at once). Each chunk is predicted and
/// scored in parallel under the cutoff published after the chunks before
/// it, then handed to the collector in order, so the result does not depend
/// on the thread count. Only candidates that may still reach the table keep
/// their payload (prediction, molecule), so memory holds one chunk and the
/// top-k. The first error a chunk reports ends the ranking with that error.
///
/// A short list (fewer than `settings.top` candidates) is scored completely:
/// the cutoff stays infinite until k candidates are known.
pub fn rank_shortlist_chunks(
    chunks: &mut dyn Iterator<Item = Result<Vec<ShortlistItem>>>,
    steps: &Steps,
    settings: &Settings,
) -> Result<Ranking> {
    let mut collector = Collector::new(settings.top, settings.model.ranking.skip_margin);
    let prepared = Prepared::new(settings.spectrum, settings.model);
    let shared = collector.cutoff();
    for chunk in chunks {
        let chunk = chunk?;
        let (cutoff, top_k) = (shared.get(), shared.top_k());
        let outcomes: Vec<Outcome<Box<Payload>>> = chunk
            .into_par_iter()
            .map(
                |it| match evaluate(&it.molecule, None, steps, &prepared, cutoff) {
                    Some((_, scored)) if scored.cost > top_k => {
                        Outcome::CostOnly { cost: scored.cost }
                    }
                    Some((predicted, scored)) => Payload {
                        molecule: it.molecule,
                        smiles: it.smiles,
                        name: it.name,
                        predicted,
                        scored,
                    }
                    .outcome(),
                    None => Outcome::Skipped,
                },
            )
            .collect();
        for o in outcomes {
            collector.push(o);
        }
    }
    Ok(finish(collector, steps, settings, 0, Vec::new()))
}

/// Progress callback: (candidates scored so far, fraction of the search done).
pub type ProgressFn<'a> = dyn FnMut(u64, f64) + 'a;

/// Rank every isomer of `formula` the generator gives under `options`.
pub fn rank_formula(
    formula: &Formula,
    options: &enumerate::Options,
    steps: &Steps,
    settings: &Settings,
    progress: &mut ProgressFn,
) -> Result<Ranking> {
    let mut collector = Collector::new(settings.top, settings.model.ranking.skip_margin);
    let prepared = Prepared::new(settings.spectrum, settings.model);
    let cutoff = collector.cutoff();
    // Results wait in the generator's chunk buffer until emitted in order,
    // so they are kept small: a skipped candidate is no result at all, a
    // cost-only one a number, and the payload is boxed.
    let run = topk::new_run();
    let k = settings.top.max(1);
    let map = |iso: &enumerate::Isomer| -> Option<Outcome<Box<Payload>>> {
        let limit = topk::task_cutoff(
            run,
            iso.task(),
            k,
            settings.model.ranking.skip_margin,
            &cutoff,
        );
        Some(
            // Predicted from the generator's compact form: the molecule is
            // built only for a candidate that may rank.
            match evaluate(iso, iso.skeleton_automorphisms(), steps, &prepared, limit) {
                Some((_, scored))
                    if scored.cost > cutoff.top_k()
                        || !topk::local_admits(run, iso.task(), k, scored.cost) =>
                {
                    Outcome::CostOnly { cost: scored.cost }
                }
                Some((predicted, scored)) => {
                    // SMILES only for candidates that may rank (it costs a
                    // canonical labelling).
                    let molecule = iso.molecule();
                    let smiles = (steps.smiles)(&molecule);
                    Payload {
                        molecule,
                        smiles,
                        name: None,
                        predicted,
                        scored,
                    }
                    .outcome()
                }
                None => return None,
            },
        )
    };
    let mut emitted = 0u64;
    let summary = enumerate::for_each_ordered(
        formula,
        options,
        map,
        |o| {
            emitted += 1;
            collector.push(o);
            true
        },
        &mut |p: enumerate::Progress| {
            let frac = if p.tasks_total == 0 {
                1.0
            } else {
                p.tasks_done as f64 / p.tasks_total as f64
            };
            progress(p.isomers, frac);
        },
    )?;
    let considered = summary.generated - summary.excluded;
    collector.add_skipped(considered.saturating_sub(emitted));
    if considered == 0 {
        return Err(Error::input(format!(
            "no isomer of {formula} is left to rank (the plausibility rules removed all of them; --keep-all turns them off)"
        )));
    }
    let rules = summary
        .flagged
        .iter()
        .map(|(r, n)| (r.name().to_string(), *n))
        .collect();
    Ok(finish(collector, steps, settings, summary.excluded, rules))
}

fn finish(
    collector: Collector<Box<Payload>>,
    steps: &Steps,
    settings: &Settings,
    excluded: u64,
    rules: Vec<(String, u64)>,
) -> Ranking {
    let margin = settings.model.ranking.indistinguishable_margin;
    let mut top = collector.finish();
    let costs: Vec<f64> = top.entries.iter().map(|e| e.0).collect();
    let ids = groups::group_ids(&costs, margin);
    let candidates: Vec<Ranked> = std::mem::take(&mut top.entries)
        .into_iter()
        .zip(&ids)
        .enumerate()
        .map(|(i, ((cost, probability, p), &group))| Ranked {
            position: i + 1,
            carbon_signals: (steps.carbon_signals)(&p.molecule),
            molecule: p.molecule,
            smiles: p.smiles,
            name: p.name,
            cost,
            probability,
            group,
            predicted: p.predicted,
            scored: p.scored,
        })
        .collect();
    // Groups with their members; the last group may continue past the table.
    let mut out_groups: Vec<Group> = Vec::new();
    for c in &candidates {
        match out_groups.last_mut() {
            Some(g) if g.id == c.group => g.members.push(c.position),
            _ => out_groups.push(Group {
                id: c.group,
                members: vec![c.position],
                beyond_table: 0,
                evidence: Vec::new(),
            }),
        }
    }
    if let Some(last) = out_groups.last_mut() {
        let anchor = candidates[last.members[0] - 1].cost;
        let last_shown = candidates[*last.members.last().unwrap_or(&1) - 1].cost;
        // Counted candidates after the last one shown and within the margin
        // of the group's first member (ties with the last shown cost are
        // not counted: they may be shown members).
        let within = top.count_between(anchor, anchor + margin);
        let shown = top.count_between(anchor, last_shown);
        last.beyond_table = within.saturating_sub(shown) as usize;
    }
    for g in &mut out_groups {
        if g.members.len() < 2 {
            continue;
        }
        let members: Vec<evidence::Member> = g
            .members
            .iter()
            .map(|&pos| {
                let c = &candidates[pos - 1];
                evidence::Member {
                    label: format!("#{pos}"),
                    predicted: &c.predicted,
                    carbon_signals: Some(c.carbon_signals),
                }
            })
            .collect();
        g.evidence =
            evidence::separating_evidence_given(&members, evidence::Given::of(settings.spectrum));
    }
    Ranking {
        candidates,
        groups: out_groups,
        considered: top.considered,
        skipped: top.skipped,
        excluded,
        rules,
    }
}
