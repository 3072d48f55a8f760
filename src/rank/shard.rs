//! Ranking across a cluster: one shard of a ranking (`rank --part K/N`) and
//! the exact merge of any complete set of shards (`isomerank merge`).
//!
//! A shard ranks the tasks K-1, K-1+N, ... of the generator's fixed task
//! list (`enumerate::for_each_task`) and keeps what the merge needs: its
//! top-k candidates with everything the reports show (prediction,
//! assignment, structure), and its collector's totals
//! ([`Collector::totals`]: the best cost, the candidates considered and the
//! normaliser's histogram, an integer sum per bin), the isomers generated
//! and excluded per plausibility rule, and its coverage. Collectors merge
//! exactly and in any order (`topk`), and a shard's cutoffs are never below
//! the whole run's (they are taken over fewer candidates), so every
//! candidate the whole run keeps is kept by its shard: the merged ranking
//! is the single run's, bit for bit.

use super::topk::{Collector, Totals};
use super::{finish, Coverage, Evaluated, Payload, Ranking, Settings, Steps};
use crate::chem::{Formula, Molecule};
use crate::enumerate::{self, Part};
use crate::error::{Error, Result};
use crate::predict::{PredictedCarbon, PredictedSignal};
use crate::score::Scored;

/// One candidate of a shard's top-k, with what the reports show of it.
#[derive(Clone, Debug)]
pub struct ShardItem {
    pub cost: f64,
    pub smiles: String,
    /// The structure; the atom numbers of `predicted` and `carbons` refer
    /// to it.
    pub molecule: Molecule,
    pub predicted: Vec<PredictedSignal>,
    pub scored: Scored,
    pub carbons: Vec<PredictedCarbon>,
    pub carbon_scored: Option<Scored>,
}

/// The result of one shard of a ranking.
#[derive(Clone, Debug)]
pub struct Shard {
    pub part: Part,
    /// The collector's state apart from its items.
    pub totals: Totals,
    /// Isomers generated in this shard (before the plausibility rules).
    pub generated: u64,
    /// Isomers removed by the plausibility rules.
    pub excluded: u64,
    /// Per rule applied: name and how many isomers it flagged.
    pub rules: Vec<(String, u64)>,
    pub coverage: Coverage,
    /// The shard's top-k, best first.
    pub items: Vec<ShardItem>,
}

/// Rank one shard (`options.part`) of the isomers of `formula`.
pub fn rank_shard(
    formula: &Formula,
    options: &enumerate::Options,
    steps: &Steps,
    settings: &Settings,
    progress: &mut super::ProgressFn,
) -> Result<Shard> {
    let part = options
        .part
        .ok_or_else(|| Error::Internal("a shard needs --part".into()))?;
    let (collector, summary) = super::collect_formula(formula, options, steps, settings, progress)?;
    let totals = collector.totals();
    let items = collector
        .into_items()
        .into_iter()
        .map(|(cost, smiles, p)| ShardItem {
            cost,
            smiles,
            molecule: p.molecule,
            predicted: p.evaluated.predicted,
            scored: p.evaluated.scored,
            carbons: p.evaluated.carbons,
            carbon_scored: p.evaluated.carbon_scored,
        })
        .collect();
    Ok(Shard {
        part,
        totals,
        generated: summary.generated,
        excluded: summary.excluded,
        rules: summary
            .flagged
            .iter()
            .map(|(r, n)| (r.name().to_string(), *n))
            .collect(),
        coverage: super::coverage_of(&summary),
        items,
    })
}

/// What the merge needs to know of the search beside the shards: to give
/// the single run's message when the union of the shards holds nothing to
/// rank.
pub struct SearchFacts {
    /// Names of the constraints the search was bounded by (empty: none).
    pub constraints: Vec<String>,
    pub expanded_valence: bool,
}

/// Merge shards into the ranking one run over all of them gives. The caller
/// has checked that they come from one ranking (same settings) and are
/// distinct parts; the result is marked partial when any shard was stopped
/// by a cap (its coverage: the shards' shares weighted by their tasks).
pub fn merge(
    formula: &Formula,
    shards: Vec<Shard>,
    facts: &SearchFacts,
    steps: &Steps,
    settings: &Settings,
) -> Result<Ranking> {
    let generated: u64 = shards.iter().map(|s| s.generated).sum();
    let excluded: u64 = shards.iter().map(|s| s.excluded).sum();
    let complete = shards.iter().all(|s| s.coverage.complete());
    if complete {
        super::check_something_to_rank(
            formula,
            generated,
            excluded,
            &facts.constraints,
            facts.expanded_valence,
        )?;
    }
    let mut rules: Vec<(String, u64)> = Vec::new();
    for s in &shards {
        for (name, n) in &s.rules {
            match rules.iter_mut().find(|(k, _)| k == name) {
                Some(r) => r.1 += n,
                None => rules.push((name.clone(), *n)),
            }
        }
    }
    let coverage = merged_coverage(&shards);
    let mut collector: Collector<Box<Payload>> =
        Collector::new(settings.top, settings.model.ranking.skip_margin);
    for s in shards {
        collector.merge_totals(&s.totals);
        for it in s.items {
            let payload = Payload {
                molecule: it.molecule,
                smiles: it.smiles.clone(),
                name: None,
                evaluated: Evaluated {
                    cost: it.cost,
                    predicted: it.predicted,
                    scored: it.scored,
                    carbons: it.carbons,
                    carbon_scored: it.carbon_scored,
                },
            };
            collector.offer_item(it.cost, it.smiles, Box::new(payload));
        }
    }
    let mut ranking = finish(collector, steps, settings, excluded, rules);
    ranking.coverage = coverage;
    Ok(ranking)
}

/// The coverage of the union of shards: whole when every shard is; else
/// stopped by the first stopped shard's cap (in part order), with the
/// shares weighted by each shard's number of tasks.
fn merged_coverage(shards: &[Shard]) -> Coverage {
    let tasks_total: usize = shards.iter().map(|s| s.coverage.tasks_total).sum();
    let tasks_done: usize = shards.iter().map(|s| s.coverage.tasks_done).sum();
    let stopped = shards
        .iter()
        .filter(|s| !s.coverage.complete())
        .min_by_key(|s| s.part.index)
        .and_then(|s| s.coverage.stopped);
    let share = match stopped {
        None => 1.0,
        Some(_) if tasks_total > 0 => {
            shards
                .iter()
                .map(|s| s.coverage.share * s.coverage.tasks_total as f64)
                .sum::<f64>()
                / tasks_total as f64
        }
        Some(_) => 0.0,
    };
    // The first stage's share, weighted as `share` is.
    let first_stage = shards
        .iter()
        .map(|s| {
            s.coverage
                .first_stage
                .map(|f| f * s.coverage.tasks_total as f64)
        })
        .sum::<Option<f64>>()
        .map(|x| {
            if stopped.is_none() {
                1.0
            } else if tasks_total > 0 {
                x / tasks_total as f64
            } else {
                0.0
            }
        });
    Coverage {
        stopped,
        share,
        tasks_done,
        tasks_total,
        first_stage,
    }
}
