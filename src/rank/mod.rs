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
pub mod shard;
pub mod topk;
pub mod verdict;

use crate::chem::{Formula, HeavyAtoms, Molecule};
use crate::enumerate;
use crate::error::{Error, Result};
use crate::predict::{PredictedCarbon, PredictedSignal, Prediction, ShiftEstimate};
use crate::score::{CarbonPrepared, Prepared, Scored, ScoringModel};
use crate::spectrum::{CarbonSpectrum, Spectrum};
use rayon::prelude::*;
use topk::{Collector, Outcome};

/// A structure's predicted 1H multiplet list and 13C list, in the two
/// steps of [`crate::predict::Predictor::predict_gated`]: the skeleton's
/// automorphisms when the generator has them, and a gate that sees the
/// groups' shifts and the carbon classes first and may stop the prediction
/// (`None` back).
pub type PredictFn<'a> = dyn Fn(
        &dyn HeavyAtoms,
        Option<&[[u8; 64]]>,
        &mut dyn FnMut(&[ShiftEstimate], &[PredictedCarbon]) -> bool,
    ) -> Option<Prediction>
    + Sync
    + 'a;

/// The structure-specific steps the ranker calls.
pub struct Steps<'a> {
    /// Predicted 1H multiplet list (and 13C list when asked) of a structure.
    pub predict: &'a PredictFn<'a>,
    /// Canonical SMILES of a structure.
    pub smiles: &'a (dyn Fn(&Molecule) -> String + Sync),
    /// Number of 13C signals expected (carbon symmetry classes).
    pub carbon_signals: &'a (dyn Fn(&Molecule) -> usize + Sync),
}

/// Run `f` with the standard steps: `predictor`'s prediction under `opts`
/// (13C too when `opts.carbon`), our canonical SMILES, and 13C signal counts
/// from carbon symmetry classes. (A callback, because `Steps` borrows the
/// closures it is built from.)
pub fn with_standard_steps<R>(
    predictor: &crate::predict::Predictor,
    opts: &crate::predict::PredictOptions,
    f: impl FnOnce(&Steps) -> R,
) -> R {
    let predict =
        |m: &dyn HeavyAtoms,
         symmetry: Option<&[[u8; 64]]>,
         gate: &mut dyn FnMut(&[ShiftEstimate], &[PredictedCarbon]) -> bool| {
            predictor
                .predict_gated_here(m, opts, symmetry, gate)
                .unwrap_or(Some(Prediction {
                    signals: Vec::new(),
                    carbons: Vec::new(),
                }))
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
    /// The observed 1H multiplets (none: no 1H data, the 1H part costs 0).
    pub spectrum: &'a Spectrum,
    /// The observed 13C lines, when given: their cost adds to the 1H part.
    pub carbon: Option<&'a CarbonSpectrum>,
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
    /// The whole cost: `[ranking] cost_scale` times the 1H part
    /// (`scored.cost`) plus the 13C part.
    pub cost: f64,
    pub probability: f64,
    /// 1-based group number: equal numbers cannot be told apart by the data.
    pub group: usize,
    pub predicted: Vec<PredictedSignal>,
    /// The 1H part: cost and assignment of `predicted`.
    pub scored: Scored,
    /// The predicted 13C list (empty when no 13C data were given).
    pub carbons: Vec<PredictedCarbon>,
    /// The 13C part: cost and assignment of `carbons`, when 13C data were given.
    pub carbon_scored: Option<Scored>,
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
    /// How much of the search the ranking covered.
    pub coverage: Coverage,
}

/// How much of the search a ranking covered: all of it, or what came
/// before a cap (`--max-candidates`, `--time-limit`) stopped it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Coverage {
    /// Why the run stopped early; `None`: complete.
    pub stopped: Option<enumerate::Stop>,
    /// Share of the search covered (1 when complete).
    pub share: f64,
    pub tasks_done: usize,
    pub tasks_total: usize,
    /// With a 13C list whose lines narrow the carbon types further when
    /// they lie in their typical regions: the share covered of the first
    /// stage, which searched the structures that fit those (`share` is
    /// then that of the whole search).
    pub first_stage: Option<f64>,
}

impl Coverage {
    /// A search covered whole (a shortlist is always whole).
    pub fn whole() -> Coverage {
        Coverage {
            stopped: None,
            share: 1.0,
            tasks_done: 0,
            tasks_total: 0,
            first_stage: None,
        }
    }

    pub fn complete(&self) -> bool {
        self.stopped.is_none()
    }
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

pub(crate) struct Payload {
    molecule: Molecule,
    smiles: String,
    name: Option<String>,
    evaluated: Evaluated,
}

impl Payload {
    /// A candidate that may rank, keyed by its SMILES for ties.
    fn outcome(self) -> Outcome<Box<Payload>> {
        Outcome::Scored {
            cost: self.evaluated.cost,
            key: self.smiles.clone(),
            item: Box::new(self),
        }
    }
}

/// One candidate's predictions and scores.
struct Evaluated {
    /// The cost scale times the 1H part plus the 13C part.
    cost: f64,
    predicted: Vec<PredictedSignal>,
    scored: Scored,
    carbons: Vec<PredictedCarbon>,
    carbon_scored: Option<Scored>,
}

/// The spectrum-constant scorers of a ranking: 1H always (with no
/// multiplets it scores 0), 13C when 13C data were given.
struct Scorers<'a> {
    hydrogen: Prepared<'a>,
    carbon: Option<CarbonPrepared<'a>>,
    /// `[ranking] cost_scale`: the cost is this times the sum of the parts.
    scale: f64,
}

impl<'a> Scorers<'a> {
    fn new(settings: &Settings<'a>) -> Scorers<'a> {
        Scorers {
            hydrogen: Prepared::new(settings.spectrum, settings.model),
            carbon: settings
                .carbon
                .map(|c| CarbonPrepared::new(c, settings.model)),
            scale: settings.model.ranking.cost_scale,
        }
    }
}

/// Predict and score one structure; `None` when it cannot beat `cutoff`.
///
/// The 13C part, when 13C data were given, is scored exactly as soon as the
/// gate of [`crate::predict::Predictor::predict_gated`] shows the carbon
/// classes; the 1H part must then beat what is left of the cutoff. The 1H
/// prediction stops after the shifts when even a score without its
/// multiplicity and J terms (never negative) cannot
/// ([`score::Prepared::may_beat`]). Both tests are sound: the 13C cost is
/// exact and the 1H bound is a lower bound, and the costs add. The cutoff
/// is on the scaled cost; the parts are tested against it unscaled.
fn evaluate(
    molecule: &dyn HeavyAtoms,
    symmetry: Option<&[[u8; 64]]>,
    steps: &Steps,
    scorers: &Scorers,
    cutoff: f64,
) -> Option<Evaluated> {
    let cutoff = cutoff / scorers.scale;
    let has_h = !scorers.hydrogen.spectrum().multiplets.is_empty();
    let mut carbon_scored: Option<Scored> = None;
    // The 13C reading that won when a diastereotopic methyl pair was split
    // (src/score/halves.rs); the 1H likewise below.
    let mut carbon_split: Option<Vec<PredictedCarbon>> = None;
    let mut gate = |est: &[ShiftEstimate], carbons: &[PredictedCarbon]| {
        // The 1H bound first, against the whole cutoff (the 13C part is
        // never negative): it is the cheaper test and stops most candidates.
        // Its value is a lower bound of the 1H cost, so the 13C search
        // needs to beat only what the cutoff leaves above it.
        let mut carbon_cutoff = cutoff;
        if has_h {
            match scorers.hydrogen.may_beat_bound(est, cutoff) {
                None => return false,
                Some(b) => carbon_cutoff = cutoff - b,
            }
        }
        let Some(cp) = &scorers.carbon else {
            return true;
        };
        let Some((s, split)) = cp.score_halves(carbons, carbon_cutoff) else {
            return false;
        };
        let rest = cutoff - s.cost;
        carbon_scored = Some(s);
        carbon_split = split;
        !has_h || rest == cutoff || scorers.hydrogen.may_beat(est, rest)
    };
    let prediction = (steps.predict)(molecule, symmetry, &mut gate)?;
    let carbon_cost = carbon_scored.as_ref().map_or(0.0, |s| s.cost);
    let (scored, split) = if has_h {
        scorers
            .hydrogen
            .score_halves(&prediction.signals, cutoff - carbon_cost)?
    } else {
        let none = vec![None; prediction.signals.len()];
        (
            Scored {
                cost: 0.0,
                assigned: none,
            },
            None,
        )
    };
    Some(Evaluated {
        cost: scorers.scale * (scored.cost + carbon_cost),
        predicted: split.unwrap_or(prediction.signals),
        scored,
        carbons: carbon_split.unwrap_or(prediction.carbons),
        carbon_scored,
    })
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
    let scorers = Scorers::new(settings);
    let shared = collector.cutoff();
    for chunk in chunks {
        let chunk = chunk?;
        let (cutoff, top_k) = (shared.get(), shared.top_k());
        let outcomes: Vec<Outcome<Box<Payload>>> = chunk
            .into_par_iter()
            .map(
                |it| match evaluate(&it.molecule, None, steps, &scorers, cutoff) {
                    Some(e) if e.cost > top_k => Outcome::CostOnly { cost: e.cost },
                    Some(evaluated) => Payload {
                        molecule: it.molecule,
                        smiles: it.smiles,
                        name: it.name,
                        evaluated,
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
    let (collector, summary) = collect_formula(formula, options, steps, settings, progress)?;
    let rules = summary
        .flagged
        .iter()
        .map(|(r, n)| (r.name().to_string(), *n))
        .collect();
    let mut ranking = finish(collector, steps, settings, summary.excluded, rules);
    ranking.coverage = coverage_of(&summary);
    Ok(ranking)
}

/// How much of the search a run covered.
pub fn coverage_of(summary: &enumerate::Summary) -> Coverage {
    Coverage {
        stopped: summary.stopped,
        share: summary.share,
        tasks_done: summary.tasks_done,
        tasks_total: summary.tasks_total,
        first_stage: summary.first_stage,
    }
}

/// The collector of a whole run (or shard) over the isomers of `formula`,
/// before the final step: what a shard file stores.
pub(crate) fn collect_formula(
    formula: &Formula,
    options: &enumerate::Options,
    steps: &Steps,
    settings: &Settings,
    progress: &mut ProgressFn,
) -> Result<(Collector<Box<Payload>>, enumerate::Summary)> {
    let margin = settings.model.ranking.skip_margin;
    let mut collector = Collector::new(settings.top, margin);
    let scorers = Scorers::new(settings);
    let shared = collector.cutoff();
    // Each task fills a collector of its own (at most k payloads, a
    // histogram of costs); the driver hands them over in task order and
    // they merge exactly, so nothing per candidate waits in memory.
    let deadline = options.limits.deadline;
    let visit = |acc: &mut Collector<Box<Payload>>, iso: &enumerate::Isomer| {
        let limit = acc.local_cutoff(&shared);
        // Predicted from the generator's compact form: the molecule is
        // built only for a candidate that may rank.
        // Past the time limit an assignment gives up (the task that holds
        // this candidate then counts as cut short: enumerate::Worker::run).
        let evaluated = crate::score::assign::with_deadline(deadline, || {
            evaluate(iso, iso.skeleton_automorphisms(), steps, &scorers, limit)
        });
        acc.push(match evaluated {
            Some(e) if e.cost > shared.top_k() || !acc.admits(e.cost) => {
                Outcome::CostOnly { cost: e.cost }
            }
            Some(evaluated) => {
                // SMILES only for candidates that may rank (it costs a
                // canonical labelling).
                let molecule = iso.molecule();
                let smiles = (steps.smiles)(&molecule);
                Payload {
                    molecule,
                    smiles,
                    name: None,
                    evaluated,
                }
                .outcome()
            }
            None => Outcome::Skipped,
        });
    };
    // One search, or two with a 13C list whose lines narrow the carbon
    // types further where they lie in their typical regions: those
    // structures first, then the rest (`Constraints::stages`). Every
    // structure is in exactly one stage and the collectors merge exactly,
    // so a complete ranking is the same either way; under a time limit
    // the first stage, usually a small part, is covered first.
    let stages = options.constraints.stages();
    let count = stages.len();
    let mut summary = enumerate::Summary::default();
    for (i, constraints) in stages.into_iter().enumerate() {
        let mut opts = options.clone();
        opts.constraints = constraints;
        if i + 1 < count {
            // The estimate's weights are for the whole search's tasks.
            opts.weights = None;
        }
        if let Some(m) = options.limits.max_candidates {
            opts.limits.max_candidates = Some(m.saturating_sub(summary.isomers));
        }
        let before = summary.isomers;
        let stage = enumerate::for_each_task(
            formula,
            &opts,
            enumerate::RankWindow,
            || Collector::new(settings.top, margin),
            visit,
            |_, part| {
                collector.merge(part);
                true
            },
            &mut |p: enumerate::Progress| {
                progress(before + p.isomers, (i as f64 + p.share) / count as f64)
            },
        )?;
        summary = add_stage(summary, stage, i, count);
        if !summary.complete() {
            break;
        }
    }
    if summary.complete() && options.part.is_none() {
        // The names of the whole search's constraints (a two-stage
        // search's cuts are named by stage).
        let constraints = if options.constraints.is_empty() {
            Vec::new()
        } else {
            options.constraints.names()
        };
        check_something_to_rank(
            formula,
            summary.generated,
            summary.excluded,
            &constraints,
            options.expanded_valence,
        )?;
    }
    Ok((collector, summary))
}

/// The summary of the stages so far, `done`, with stage `i` of `count`
/// added (see `collect_formula`). Counts add up; each stage's constraint
/// cuts keep their own entries, named by stage; the share is that of the
/// last stage run (the second stage walks the whole search tree), and the
/// first stage's own share is kept beside it.
fn add_stage(
    done: enumerate::Summary,
    stage: enumerate::Summary,
    i: usize,
    count: usize,
) -> enumerate::Summary {
    if count == 1 {
        return stage;
    }
    let label = if i == 0 {
        "first stage, typical 13C regions"
    } else {
        "second stage, the rest"
    };
    let mut flagged = stage.flagged;
    for (rule, n) in &mut flagged {
        *n += done
            .flagged
            .iter()
            .find(|(r, _)| r == rule)
            .map_or(0, |(_, m)| *m);
    }
    let mut constraints = done.constraints;
    constraints.extend(
        stage
            .constraints
            .into_iter()
            .map(|c| enumerate::constraints::Cut {
                name: format!("{label}: {}", c.name),
                cut: c.cut,
            }),
    );
    enumerate::Summary {
        generated: done.generated + stage.generated,
        isomers: done.isomers + stage.isomers,
        excluded: done.excluded + stage.excluded,
        flagged,
        constraints,
        tasks_total: done.tasks_total + stage.tasks_total,
        tasks_done: done.tasks_done + stage.tasks_done,
        stopped: stage.stopped,
        share: if i == 0 { 0.0 } else { stage.share },
        first_stage: Some(if i == 0 {
            stage.share
        } else {
            done.first_stage.unwrap_or(1.0)
        }),
    }
}

/// The error of a whole search that left nothing to rank (no structure, none
/// that fits the constraints `constraints` names, or all removed by the
/// plausibility rules); shared by a single run and a merge of shards.
pub(crate) fn check_something_to_rank(
    formula: &Formula,
    generated: u64,
    excluded: u64,
    constraints: &[String],
    expanded_valence: bool,
) -> Result<()> {
    if generated == 0 && !constraints.is_empty() {
        return Err(Error::input(format!(
            "no isomer of {formula} fits the constraints ({}); with --carbon, --carbon-score-only keeps the 13C list out of the search",
            constraints.join(", ")
        )));
    }
    if generated == 0 {
        return Err(Error::input(format!(
            "no structure has formula {formula}: the atoms cannot be bonded into one neutral molecule with standard valences{}",
            if expanded_valence { " or the expanded valences of S and P" } else { "" }
        )));
    }
    if generated - excluded == 0 {
        return Err(Error::input(format!(
            "no isomer of {formula} is left to rank (the plausibility rules removed all {generated} of them; --keep-all turns them off)"
        )));
    }
    Ok(())
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
            predicted: p.evaluated.predicted,
            scored: p.evaluated.scored,
            carbons: p.evaluated.carbons,
            carbon_scored: p.evaluated.carbon_scored,
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
                    molecule: Some(&c.molecule),
                }
            })
            .collect();
        let given = evidence::Given::of(settings.spectrum).with_carbon(settings.carbon.is_some());
        g.evidence = evidence::separating_evidence_given(&members, given);
    }
    Ranking {
        candidates,
        groups: out_groups,
        considered: top.considered,
        skipped: top.skipped,
        excluded,
        rules,
        coverage: Coverage::whole(),
    }
}
