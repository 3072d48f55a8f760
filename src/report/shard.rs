//! The shard file: what `rank --part K/N --format json` writes and
//! `isomerank merge` reads (a format of our own; README, "Ranking on a
//! cluster"). Version 1:
//!
//! ```text
//! {"isomerank_shard": 1, "program": str, "formula": str,
//!  "part": {"index": K, "of": N},
//!  "settings": {option: value, ...},        every option that shapes the
//!                                           ranking; shards merge only when equal
//!  "complete": bool,
//!  "coverage": {"share": f64, "stopped_by": str or null,
//!               "tasks_done": int, "tasks_total": int,
//!               "first_stage_share": f64 or null (optional)},
//!  "isomers_generated": int, "isomers_excluded": int,
//!  "plausibility_rules": [{"rule": str, "removed": int}],
//!  "isomers_considered": int,
//!  "best_cost": f64 or null,
//!  "log_sum_exp": f64 or null,              ln sum exp(-cost) over the
//!                                           candidates within the skip margin
//!  "histogram": [[bin, count, "sum"]],      per 1/1024 of cost: how many costs
//!                                           and the sum of exp(-(cost - bin/1024))
//!                                           times 2^63, an integer (decimal string)
//!  "candidates": [{"smiles": str, "cost": f64,
//!                  "structure": {"atoms": [[element, H]], "bonds": [[a, b, order]]},
//!                  "predicted": [{"shift", "sigma", "hydrogens", "multiplicity": [n, ...]
//!                                 or "s" or "m", "j_hz", "atoms", "exchangeable", "notes"}],
//!                  "cost_1h": f64, "assigned": [int or null],
//!                  "carbons": [{"shift", "sigma", "carbons", "hydrogens", "atoms"}],
//!                  "carbon_scored": {"cost": f64, "assigned": [int or null]} or null}]}
//! ```
//!
//! Floating-point numbers are written in the shortest form that reads back
//! to the same bits (serde_json with `float_roundtrip`), so a merge sees
//! exactly what the shard computed. The merge uses the histogram, not
//! `log_sum_exp` (a float sum would depend on the order of adding).

use crate::chem::{Element, Molecule};
use crate::enumerate::{Part, Stop};
use crate::error::{Error, Result};
use crate::predict::{Multiplicity, PredictedCarbon, PredictedSignal};
use crate::rank::shard::{Shard, ShardItem};
use crate::rank::topk::Totals;
use crate::rank::Coverage;
use crate::score::Scored;
use serde_json::{json, Map, Value};

/// The version this program writes and reads.
pub const VERSION: u64 = 1;

/// A shard file as read: the settings it was made with and its result.
pub struct ShardFile {
    pub program: String,
    pub formula: String,
    pub settings: Map<String, Value>,
    pub shard: Shard,
}

/// The shard file of `shard`, made with `settings` (an object of option
/// names and values).
pub fn write(formula: &str, shard: &Shard, settings: &Map<String, Value>) -> String {
    let t = &shard.totals;
    let finite = |x: f64| if x.is_finite() { json!(x) } else { Value::Null };
    let doc = json!({
        "isomerank_shard": VERSION,
        "program": program(),
        "formula": formula,
        "part": {"index": shard.part.index, "of": shard.part.of},
        "settings": settings,
        "complete": shard.coverage.complete(),
        "coverage": {
            "share": shard.coverage.share,
            "stopped_by": shard.coverage.stopped.map(super::stop_option),
            "tasks_done": shard.coverage.tasks_done,
            "tasks_total": shard.coverage.tasks_total,
            "first_stage_share": shard.coverage.first_stage,
        },
        "isomers_generated": shard.generated,
        "isomers_excluded": shard.excluded,
        "plausibility_rules": shard.rules.iter().map(|(r, n)| json!({"rule": r, "removed": n})).collect::<Vec<_>>(),
        "isomers_considered": t.considered,
        "best_cost": finite(t.best),
        "log_sum_exp": finite(t.log_sum_exp()),
        "histogram": t.bins.iter().map(|&(b, n, s)| json!([b, n, s.to_string()])).collect::<Vec<_>>(),
        "candidates": shard.items.iter().map(item_json).collect::<Vec<_>>(),
    });
    // One line: the histogram has up to 30,000 rows, which pretty-printing
    // would spread over five lines each.
    let mut text = serde_json::to_string(&doc).expect("JSON of plain values");
    text.push('\n');
    text
}

/// This program's name and version, as a shard file records it.
pub fn program() -> String {
    format!("isomerank {}", env!("CARGO_PKG_VERSION"))
}

fn item_json(it: &ShardItem) -> Value {
    let m = &it.molecule;
    let atoms: Vec<Value> = (0..m.atom_count())
        .map(|i| {
            let a = m.atom(i);
            json!([a.element.symbol(), a.hydrogens])
        })
        .collect();
    let bonds: Vec<Value> = m
        .graph
        .edge_indices()
        .filter_map(|e| {
            let (a, b) = m.graph.edge_endpoints(e)?;
            Some(json!([a.index(), b.index(), m.graph[e].order]))
        })
        .collect();
    let predicted: Vec<Value> = it
        .predicted
        .iter()
        .map(|p| {
            json!({
                "shift": p.shift,
                "sigma": p.sigma,
                "hydrogens": p.hydrogens,
                "multiplicity": match &p.multiplicity {
                    Multiplicity::Singlet => json!("s"),
                    Multiplicity::Multiplet => json!("m"),
                    Multiplicity::Coupled(ns) => json!(ns),
                },
                "j_hz": p.j_hz,
                "atoms": p.atoms,
                "exchangeable": p.exchangeable,
                "notes": p.notes,
            })
        })
        .collect();
    let carbons: Vec<Value> = it
        .carbons
        .iter()
        .map(|c| {
            json!({
                "shift": c.shift,
                "sigma": c.sigma,
                "carbons": c.carbons,
                "hydrogens": c.hydrogens,
                "atoms": c.atoms,
            })
        })
        .collect();
    json!({
        "smiles": it.smiles,
        "cost": it.cost,
        "structure": {"atoms": atoms, "bonds": bonds},
        "predicted": predicted,
        "cost_1h": it.scored.cost,
        "assigned": it.scored.assigned,
        "carbons": carbons,
        "carbon_scored": it.carbon_scored.as_ref().map(|s| json!({"cost": s.cost, "assigned": s.assigned})),
    })
}

/// Read the shard file `name` (its text).
pub fn read(name: &str, text: &str) -> Result<ShardFile> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let doc: Value = serde_json::from_str(text).map_err(|e| {
        Error::input(format!(
            "{name}: not a shard file (rank --part K/N --format json writes them): {e}"
        ))
    })?;
    let r = Reader { name };
    let version = doc
        .get("isomerank_shard")
        .ok_or_else(|| {
            Error::input(format!(
                "{name}: not a shard file (no \"isomerank_shard\" version; rank --part K/N --format json writes them)"
            ))
        })
        .and_then(|v| r.u64(v, "isomerank_shard"))?;
    if version != VERSION {
        return Err(Error::input(format!(
            "{name}: shard format version {version}; this isomerank ({}) reads version {VERSION}",
            program()
        )));
    }
    let part = r.field(&doc, "part")?;
    let (index, of) = (
        r.u64(r.field(part, "index")?, "part.index")? as usize,
        r.u64(r.field(part, "of")?, "part.of")? as usize,
    );
    if index == 0 || of == 0 || index > of {
        return Err(r.bad("part", "index from 1 to of"));
    }
    let settings = r
        .field(&doc, "settings")?
        .as_object()
        .cloned()
        .ok_or_else(|| r.bad("settings", "an object"))?;
    let cov = r.field(&doc, "coverage")?;
    let named = |s: &str| Stop::ALL.into_iter().find(|&x| super::stop_option(x) == s);
    let stopped = match r.field(cov, "stopped_by")? {
        Value::Null => None,
        Value::String(s) if named(s).is_some() => named(s),
        _ => {
            return Err(r.bad(
                "coverage.stopped_by",
                "null, \"--max-candidates\", \"--time-limit\" or \"default-cap\"",
            ))
        }
    };
    let coverage = Coverage {
        stopped,
        share: r.f64(r.field(cov, "share")?, "coverage.share")?,
        tasks_done: r.u64(r.field(cov, "tasks_done")?, "coverage.tasks_done")? as usize,
        tasks_total: r.u64(r.field(cov, "tasks_total")?, "coverage.tasks_total")? as usize,
        first_stage: match cov.get("first_stage_share") {
            None | Some(Value::Null) => None,
            Some(x) => Some(r.f64(x, "coverage.first_stage_share")?),
        },
    };
    let rules = r
        .array(&doc, "plausibility_rules")?
        .iter()
        .map(|x| {
            Ok((
                r.string(r.field(x, "rule")?, "plausibility_rules.rule")?,
                r.u64(r.field(x, "removed")?, "plausibility_rules.removed")?,
            ))
        })
        .collect::<Result<Vec<_>>>()?;
    let bins = r
        .array(&doc, "histogram")?
        .iter()
        .map(|x| {
            let row = x.as_array().filter(|a| a.len() == 3);
            let row = row.ok_or_else(|| r.bad("histogram", "rows [bin, count, \"sum\"]"))?;
            let b = row[0]
                .as_i64()
                .ok_or_else(|| r.bad("histogram", "whole-number bins"))?;
            let n = r.u64(&row[1], "histogram count")?;
            let s: u128 = row[2]
                .as_str()
                .and_then(|s| s.parse().ok())
                .ok_or_else(|| r.bad("histogram", "sums as decimal strings"))?;
            Ok((b, n, s))
        })
        .collect::<Result<Vec<_>>>()?;
    let best = match r.field(&doc, "best_cost")? {
        Value::Null => f64::INFINITY,
        v => r.f64(v, "best_cost")?,
    };
    let totals = Totals {
        best,
        considered: r.u64(r.field(&doc, "isomers_considered")?, "isomers_considered")?,
        bins,
    };
    let items = r
        .array(&doc, "candidates")?
        .iter()
        .map(|c| r.item(c))
        .collect::<Result<Vec<_>>>()?;
    Ok(ShardFile {
        program: r.string(r.field(&doc, "program")?, "program")?,
        formula: r.string(r.field(&doc, "formula")?, "formula")?,
        settings,
        shard: Shard {
            part: Part { index, of },
            totals,
            generated: r.u64(r.field(&doc, "isomers_generated")?, "isomers_generated")?,
            excluded: r.u64(r.field(&doc, "isomers_excluded")?, "isomers_excluded")?,
            rules,
            coverage,
            items,
        },
    })
}

/// Field access with errors that name the file and the field.
struct Reader<'a> {
    name: &'a str,
}

impl Reader<'_> {
    fn bad(&self, what: &str, expected: &str) -> Error {
        Error::input(format!(
            "{}: shard file field \"{what}\" is not {expected} (was the file edited or cut short?)",
            self.name
        ))
    }

    fn field<'v>(&self, v: &'v Value, key: &str) -> Result<&'v Value> {
        v.get(key).ok_or_else(|| {
            Error::input(format!(
                "{}: shard file has no field \"{key}\" (was the file edited or cut short?)",
                self.name
            ))
        })
    }

    fn array<'v>(&self, v: &'v Value, key: &str) -> Result<&'v Vec<Value>> {
        self.field(v, key)?
            .as_array()
            .ok_or_else(|| self.bad(key, "a list"))
    }

    fn u64(&self, v: &Value, what: &str) -> Result<u64> {
        v.as_u64().ok_or_else(|| self.bad(what, "a whole number"))
    }

    fn f64(&self, v: &Value, what: &str) -> Result<f64> {
        v.as_f64().ok_or_else(|| self.bad(what, "a number"))
    }

    fn string(&self, v: &Value, what: &str) -> Result<String> {
        v.as_str()
            .map(str::to_string)
            .ok_or_else(|| self.bad(what, "a string"))
    }

    fn usizes(&self, v: &Value, what: &str) -> Result<Vec<usize>> {
        v.as_array()
            .ok_or_else(|| self.bad(what, "a list"))?
            .iter()
            .map(|x| self.u64(x, what).map(|n| n as usize))
            .collect()
    }

    fn assigned(&self, v: &Value, what: &str) -> Result<Vec<Option<usize>>> {
        v.as_array()
            .ok_or_else(|| self.bad(what, "a list"))?
            .iter()
            .map(|x| match x {
                Value::Null => Ok(None),
                x => self.u64(x, what).map(|n| Some(n as usize)),
            })
            .collect()
    }

    fn small(&self, v: &Value, what: &str) -> Result<u8> {
        self.u64(v, what)?
            .try_into()
            .map_err(|_| self.bad(what, "a small whole number"))
    }

    fn item(&self, c: &Value) -> Result<ShardItem> {
        let s = self.field(c, "structure")?;
        let mut molecule = Molecule::new();
        let mut nodes = Vec::new();
        for a in self.array(s, "atoms")? {
            let pair = a.as_array().filter(|p| p.len() == 2);
            let pair = pair.ok_or_else(|| self.bad("structure.atoms", "[element, H] pairs"))?;
            let element = pair[0]
                .as_str()
                .and_then(Element::from_symbol)
                .ok_or_else(|| self.bad("structure.atoms", "element symbols"))?;
            nodes.push(molecule.add_atom(element, self.small(&pair[1], "structure.atoms")?));
        }
        for b in self.array(s, "bonds")? {
            let row = b.as_array().filter(|r| r.len() == 3);
            let row = row.ok_or_else(|| self.bad("structure.bonds", "[a, b, order] rows"))?;
            let end = |x: &Value| {
                self.u64(x, "structure.bonds")
                    .ok()
                    .and_then(|i| nodes.get(i as usize).copied())
                    .ok_or_else(|| self.bad("structure.bonds", "atom numbers of the structure"))
            };
            let (a, b) = (end(&row[0])?, end(&row[1])?);
            let order = self.small(&row[2], "structure.bonds")?;
            if !(1..=3).contains(&order) || a == b {
                return Err(self.bad("structure.bonds", "bonds of order 1 to 3 between two atoms"));
            }
            molecule.add_bond(a, b, order);
        }
        let predicted = self
            .array(c, "predicted")?
            .iter()
            .map(|p| {
                let multiplicity = match self.field(p, "multiplicity")? {
                    Value::String(x) if x == "s" => Multiplicity::Singlet,
                    Value::String(x) if x == "m" => Multiplicity::Multiplet,
                    v @ Value::Array(_) => Multiplicity::Coupled(
                        self.usizes(v, "predicted.multiplicity")?
                            .into_iter()
                            .map(|n| {
                                u8::try_from(n).map_err(|_| {
                                    self.bad("predicted.multiplicity", "small partner counts")
                                })
                            })
                            .collect::<Result<Vec<u8>>>()?,
                    ),
                    _ => {
                        return Err(self.bad(
                            "predicted.multiplicity",
                            "\"s\", \"m\" or a list of partner counts",
                        ))
                    }
                };
                Ok(PredictedSignal {
                    shift: self.f64(self.field(p, "shift")?, "predicted.shift")?,
                    sigma: self.f64(self.field(p, "sigma")?, "predicted.sigma")?,
                    hydrogens: self.u64(self.field(p, "hydrogens")?, "predicted.hydrogens")? as u32,
                    multiplicity,
                    j_hz: self
                        .array(p, "j_hz")?
                        .iter()
                        .map(|j| self.f64(j, "predicted.j_hz"))
                        .collect::<Result<Vec<f64>>>()?,
                    atoms: self.usizes(self.field(p, "atoms")?, "predicted.atoms")?,
                    exchangeable: self
                        .field(p, "exchangeable")?
                        .as_bool()
                        .ok_or_else(|| self.bad("predicted.exchangeable", "true or false"))?,
                    notes: self
                        .array(p, "notes")?
                        .iter()
                        .map(|n| self.string(n, "predicted.notes"))
                        .collect::<Result<Vec<String>>>()?,
                    // Not stored: a ranked candidate's list is already the
                    // reading that won (src/score/halves.rs).
                    halves: false,
                    geminal_hz: 0.0,
                    half_pattern: None,
                })
            })
            .collect::<Result<Vec<_>>>()?;
        let carbons = self
            .array(c, "carbons")?
            .iter()
            .map(|p| {
                Ok(PredictedCarbon {
                    shift: self.f64(self.field(p, "shift")?, "carbons.shift")?,
                    sigma: self.f64(self.field(p, "sigma")?, "carbons.sigma")?,
                    carbons: self.u64(self.field(p, "carbons")?, "carbons.carbons")? as u32,
                    hydrogens: self.small(self.field(p, "hydrogens")?, "carbons.hydrogens")?,
                    atoms: self.usizes(self.field(p, "atoms")?, "carbons.atoms")?,
                    halves: false,
                })
            })
            .collect::<Result<Vec<_>>>()?;
        let scored = Scored {
            cost: self.f64(self.field(c, "cost_1h")?, "cost_1h")?,
            assigned: self.assigned(self.field(c, "assigned")?, "assigned")?,
        };
        let carbon_scored = match self.field(c, "carbon_scored")? {
            Value::Null => None,
            v => Some(Scored {
                cost: self.f64(self.field(v, "cost")?, "carbon_scored.cost")?,
                assigned: self.assigned(self.field(v, "assigned")?, "carbon_scored.assigned")?,
            }),
        };
        let n = molecule.atom_count();
        let in_range = |atoms: &[usize]| atoms.iter().all(|&a| a < n);
        if !predicted.iter().all(|p| in_range(&p.atoms))
            || !carbons.iter().all(|p| in_range(&p.atoms))
        {
            return Err(self.bad("predicted.atoms", "atom numbers of the structure"));
        }
        if scored.assigned.len() != predicted.len()
            || carbon_scored
                .as_ref()
                .is_some_and(|s| s.assigned.len() != carbons.len())
        {
            return Err(self.bad("assigned", "one entry per predicted group"));
        }
        Ok(ShardItem {
            cost: self.f64(self.field(c, "cost")?, "cost")?,
            smiles: self.string(self.field(c, "smiles")?, "smiles")?,
            molecule,
            predicted,
            scored,
            carbons,
            carbon_scored,
        })
    }
}
