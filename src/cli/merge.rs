//! `isomerank merge FILE...`: combine the shard files of `rank --part K/N
//! --format json` into the final ranking, the same as one run over the whole
//! search gives. The shards must come from one ranking (same formula, data,
//! options and tables) and be all N parts, each once; anything else is
//! refused with the difference named (exit 2, nothing written).

use super::limits;
use super::rank::{self, Format};
use crate::error::{Error, Result};
use crate::report::{self, shard::ShardFile};
use serde_json::Value;
use std::path::PathBuf;

#[derive(clap::Args)]
#[command(after_help = "Example (a cluster's array job, then the merge):
  isomerank rank C10H12O --peaks '...' --part 3/8 --format json > part-3.json
  isomerank merge part-*.json
  isomerank merge part-*.json --format json > ranking.json")]
pub struct Args {
    /// Shard files written by `rank ... --part K/N --format json`: all N
    /// parts of one ranking, in any order.
    #[arg(required = true, value_name = "FILE")]
    pub files: Vec<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
    /// Print candidate N's signal-by-signal assignment.
    #[arg(long, value_name = "N")]
    pub explain: Option<usize>,
    /// Also write a self-contained HTML report of the merged ranking to FILE.
    #[arg(long, value_name = "FILE")]
    pub report: Option<PathBuf>,
}

pub fn run(args: Args) -> Result<()> {
    let mut files = Vec::with_capacity(args.files.len());
    for path in &args.files {
        let name = path.display().to_string();
        let text = std::fs::read_to_string(path)
            .map_err(|e| Error::input(format!("cannot read shard file {name}: {e}")))?;
        let file = report::shard::read(&name, &text)?;
        files.push((name, file));
    }
    check_one_ranking(&files)?;
    let (job, done) = rank::merge(&files, args.format, args.explain)?;
    let text = rank::render(&job, &done);
    if let Some(path) = &args.report {
        report::files::write_whole(path, &report::html::render(&done.context(&job)))?;
    }
    rank::print_all(&text)?;
    if let Some(p) = done.partial() {
        limits::note(&format!("merge {}: {p}", job.formula));
    }
    Ok(())
}

/// The shards come from one ranking and are its parts 1..N, each once.
fn check_one_ranking(files: &[(String, ShardFile)]) -> Result<()> {
    let Some((first_name, first)) = files.first() else {
        return Err(Error::input("merge: give the shard files"));
    };
    for (name, f) in &files[1..] {
        if f.formula != first.formula {
            return Err(Error::input(format!(
                "{name} ranks {} but {first_name} ranks {}: shards of different formulas do not merge",
                f.formula, first.formula
            )));
        }
        if let Some(key) = first_difference(&first.settings, &f.settings) {
            return Err(Error::input(format!(
                "{name} and {first_name} were made with different {key} ({} against {}): shards merge only when made with the same data, options and program",
                shown(f.settings.get(&key)),
                shown(first.settings.get(&key)),
            )));
        }
        if f.shard.part.of != first.shard.part.of {
            return Err(Error::input(format!(
                "{name} is part {}/{} but {first_name} is part {}/{}: the shards of one ranking share N",
                f.shard.part.index, f.shard.part.of, first.shard.part.index, first.shard.part.of
            )));
        }
    }
    let of = first.shard.part.of;
    let mut seen: Vec<Option<&str>> = vec![None; of];
    for (name, f) in files {
        let k = f.shard.part.index;
        if let Some(other) = seen[k - 1] {
            return Err(Error::input(format!(
                "part {k}/{of} is given twice ({other} and {name})"
            )));
        }
        seen[k - 1] = Some(name);
    }
    let missing: Vec<String> = (1..=of)
        .filter(|&k| seen[k - 1].is_none())
        .map(|k| k.to_string())
        .collect();
    if !missing.is_empty() {
        return Err(Error::input(format!(
            "part{} {} of {of} {} missing: a merge needs every part (run `rank ... --part K/{of} --format json` for {})",
            if missing.len() == 1 { "" } else { "s" },
            list_short(&missing),
            if missing.len() == 1 { "is" } else { "are" },
            if missing.len() == 1 { "it" } else { "each" },
        )));
    }
    Ok(())
}

/// The first setting (in name order) whose value differs; a spectrum file
/// counts by its text, not its name.
fn first_difference(
    a: &serde_json::Map<String, Value>,
    b: &serde_json::Map<String, Value>,
) -> Option<String> {
    let mut keys: Vec<&String> = a.keys().chain(b.keys()).collect();
    keys.sort();
    keys.dedup();
    keys.into_iter()
        .find(|k| {
            let (x, y) = (a.get(*k), b.get(*k));
            if k.as_str() == "--spectrum" {
                x.and_then(|v| v.get("text")) != y.and_then(|v| v.get("text"))
            } else {
                x != y
            }
        })
        .cloned()
}

/// A setting's value for a message, cut to a readable length.
fn shown(v: Option<&Value>) -> String {
    let text = match v {
        None => "not set".to_string(),
        Some(Value::Null) => "not given".to_string(),
        Some(Value::Object(o)) if o.contains_key("text") => {
            format!(
                "file {}",
                o.get("file").map_or(String::new(), |f| f.to_string())
            )
        }
        Some(v) => v.to_string(),
    };
    if text.chars().count() > 60 {
        format!("{}...", text.chars().take(57).collect::<String>())
    } else {
        text
    }
}

/// A list of part numbers, shortened after ten.
fn list_short(items: &[String]) -> String {
    if items.len() <= 10 {
        items.join(", ")
    } else {
        format!("{}, ... ({} in all)", items[..10].join(", "), items.len())
    }
}
