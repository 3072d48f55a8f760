//! isomerank: from a molecular formula and an observed 1H NMR multiplet list to
//! a ranked list of candidate structures.
//!
//! The pipeline, one module per stage:
//!
//! ```text
//! chem::Formula ──> enumerate (every constitutional isomer, streamed)
//!                      │ canonical SMILES / Molecule
//!                      v
//!                   predict (equivalent-H groups, integrals, n+1 multiplicity, shifts)
//!                      │ predicted multiplets
//!                      v
//! spectrum (observed) ──> score (exact assignment, cost)
//!                      │
//!                      v
//!                   rank (parallel stream, top-k, groups, probabilities) ──> report
//! ```
//!
//! The command-line program (`src/main.rs`, `src/cli/`) is a thin layer over
//! these modules.

pub mod chem;
pub mod cli;
pub mod depict;
pub mod enumerate;
pub mod error;
pub mod predict;
pub mod rank;
pub mod report;
pub mod score;
pub mod spectrum;

pub use error::{Error, Result};
