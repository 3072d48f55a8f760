//! The JSON report (`--format json`), a stable schema for scripts:
//!
//! ```text
//! {"formula": str, "dbe": number, "isomers_considered": int,
//!  "isomers_excluded": int,
//!  "candidates": [{"position": int, "smiles": str, "cost": f64,
//!                  "probability": f64, "group": int,
//!                  "assignment": [{"observed": int or null,
//!                                  "predicted_shift": f64,
//!                                  "observed_shift": f64 or null,
//!                                  "hydrogens": int,
//!                                  "predicted_multiplicity": str,
//!                                  "observed_multiplicity": str or null}]}]}
//! ```
//!
//! With 13C data (`--carbon`), each candidate also has
//!
//! ```text
//!  "carbon_assignment": [{"observed": int or null,
//!                         "predicted_shift": f64,
//!                         "observed_shift": f64 or null,
//!                         "carbons": int, "hydrogens": int,
//!                         "observed_hydrogens": int or null}],
//!  "cost_1h": f64, "cost_13c": f64
//! ```
//!
//! one entry per predicted carbon class (`carbons` its size, `hydrogens` the
//! H per carbon); `cost` is then the sum of the two parts.
//!
//! `observed` is the entry number (1-based) of the observed multiplet (or
//! 13C line) in the input. Keys added beside the schema (never removed or renamed): per
//! candidate `name` (shortlists), `reason`, `carbon_signals`,
//! `unexplained_observed` (entries no group explains); at the top level
//! `source` (`all isomers`, `constrained isomers`, `shortlist`),
//! `constraints` (their names), `plausibility_rules`, `skipped`, `notes`, `groups` (with
//! `evidence`), `leading` (the first candidates that together hold most of the
//! probability, `members`, with the `evidence` that would separate them), `safety`, `complete` (false when a cap stopped the run) and
//! `coverage` (`share` of the search covered, `stopped_by`: the option or
//! null, `first_stage_share`: for a search in two stages, typical 13C
//! regions first, the share of that first stage covered, else null), and
//! `fit`, the absolute verdict on the first candidate (null
//! without candidates or observed lines):
//!
//! ```text
//!  "fit": {"cost_per_line": f64, "percentile": f64, "beyond_table": bool,
//!          "warning": bool, "reference_compounds": int, "message": str}
//! ```
//!
//! `cost_per_line` is the first candidate's cost over the observed 1H
//! multiplets plus 13C lines; `percentile` the share (%) of correct
//! structures of the NMRShiftDB2 dev compounds with a lower cost per line
//! (fragment-library/fit-percentiles.toml; a lower bound when
//! `beyond_table`); `warning` is true above the table's warning level (99 %),
//! and `message` then holds the warning's text, else the verdict line.

use super::{Context, Source, SAFETY};
use crate::score;
use serde_json::{json, Value};

pub fn render(cx: &Context) -> String {
    let s = cx.spectrum;
    let r = cx.ranking;
    let candidates: Vec<Value> = r
        .candidates
        .iter()
        .map(|c| {
            let e = score::explain(&c.predicted, s, cx.model, &c.scored);
            let assignment: Vec<Value> = c
                .predicted
                .iter()
                .zip(&c.scored.assigned)
                .map(|(p, a)| {
                    let o = a.map(|j| &s.multiplets[j]);
                    json!({
                        "observed": o.map(|o| o.entry),
                        "predicted_shift": round4(p.shift),
                        "observed_shift": o.map(|o| o.shift),
                        "hydrogens": p.hydrogens,
                        "predicted_multiplicity": p.multiplicity.label(),
                        "observed_multiplicity": o.map(|o| o.pattern.label()),
                    })
                })
                .collect();
            let unexplained: Vec<usize> = e
                .multiplets
                .iter()
                .filter(|m| m.groups.is_empty())
                .map(|m| s.multiplets[m.observed].entry)
                .collect();
            let mut v = json!({
                "position": c.position,
                "smiles": c.smiles,
                "cost": round4(c.cost),
                "probability": c.probability,
                "group": c.group,
                "assignment": assignment,
                "reason": super::reason(cx, c),
                "carbon_signals": c.carbon_signals,
                "unexplained_observed": unexplained,
            });
            if let Some(n) = &c.name {
                v["name"] = json!(n);
            }
            if let (Some(cs), Some(sc)) = (cx.carbon, &c.carbon_scored) {
                let carbon: Vec<Value> = c
                    .carbons
                    .iter()
                    .zip(&sc.assigned)
                    .map(|(p, a)| {
                        let l = a.map(|j| &cs.lines[j]);
                        json!({
                            "observed": l.map(|l| l.entry),
                            "predicted_shift": round4(p.shift),
                            "observed_shift": l.map(|l| l.shift),
                            "carbons": p.carbons,
                            "hydrogens": p.hydrogens,
                            "observed_hydrogens": l.and_then(|l| l.hydrogens),
                        })
                    })
                    .collect();
                v["carbon_assignment"] = json!(carbon);
                v["cost_1h"] = json!(round4(c.scored.cost));
                v["cost_13c"] = json!(round4(sc.cost));
            }
            v
        })
        .collect();
    let lead = super::leading(cx);
    let groups: Vec<Value> = r
        .groups
        .iter()
        .map(|g| {
            json!({"group": g.id, "members": g.members, "beyond_table": g.beyond_table, "evidence": g.evidence})
        })
        .collect();
    let (source, rules) = match &cx.source {
        Source::Enumeration { rules, constraints } => (
            if constraints.is_empty() {
                "all isomers"
            } else {
                "constrained isomers"
            },
            rules
                .iter()
                .map(|name| {
                    let n = r.removed_by(name);
                    json!({"rule": name, "removed": n})
                })
                .collect::<Vec<_>>(),
        ),
        Source::Shortlist => ("shortlist", Vec::new()),
    };
    let doc = json!({
        "formula": cx.formula.to_string(),
        "dbe": cx.formula.dbe(),
        "isomers_considered": r.considered,
        "isomers_excluded": r.excluded,
        "candidates": candidates,
        "source": source,
        "constraints": match &cx.source {
            Source::Enumeration { constraints, .. } => constraints.clone(),
            Source::Shortlist => Vec::new(),
        },
        "plausibility_rules": rules,
        "skipped": r.skipped,
        "complete": r.coverage.complete(),
        "coverage": {
            "share": r.coverage.share,
            "stopped_by": r.coverage.stopped.map(super::stop_option),
            "first_stage_share": r.coverage.first_stage,
        },
        "notes": s.notes.iter().chain(cx.carbon.iter().flat_map(|c| &c.notes)).collect::<Vec<_>>(),
        "groups": groups,
        "fit": super::verdict(cx).map(|(v, table)| {
            let (line, warning) = crate::rank::verdict::describe(&v, &table);
            json!({
                "cost_per_line": round4(v.cost_per_line),
                "percentile": round4(v.percentile),
                "beyond_table": v.beyond_table,
                "warning": v.warning,
                "reference_compounds": table.n,
                "message": warning.unwrap_or(line),
            })
        }),
        "leading": {"members": lead.0, "evidence": lead.1},
        "safety": SAFETY,
    });
    let mut text = serde_json::to_string_pretty(&doc).expect("JSON of plain values");
    text.push('\n');
    text
}

/// Four decimals are plenty for a cost or shift and keep the output stable
/// against last-bit differences in summation.
fn round4(x: f64) -> f64 {
    (x * 1e4).round() / 1e4
}
