//! Regression check of the main job on common compounds whose spectra the
//! published solvent table does not cover (substituted benzenes, phenols,
//! anilines, enals, heteroarenes): tests/data/common_compounds_memory.toml,
//! every list FROM MEMORY (typical routine values, not read from a source).
//! Each compound must come first among all isomers of its formula, ranked as
//! a user runs it: the default plausibility rules on.

mod common;

use common::{data_table, rank_positions, DataTable, PeakListCompound};
use isomerank::enumerate::rules::RuleSet;

#[test]
fn common_compounds_rank_first_with_the_default_rules() {
    let table: DataTable<PeakListCompound> = data_table("common_compounds_memory.toml");
    let positions = rank_positions(&table.compound, 400.0, RuleSet::all());
    for (_, line) in &positions {
        println!("{line}");
    }
    let missed: Vec<&str> = positions
        .iter()
        .filter(|p| p.0 != Some(1))
        .map(|p| p.1.as_str())
        .collect();
    assert!(
        missed.is_empty(),
        "{} of {} not first:\n{}",
        missed.len(),
        positions.len(),
        missed.join("\n")
    );
}
