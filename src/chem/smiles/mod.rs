//! SMILES (OpenSMILES, <http://opensmiles.org/opensmiles.html>): a reader for
//! the subset the tool's molecules need, and a canonical writer.
//!
//! * [`parse_smiles`] reads the organic subset and bracket atoms of
//!   C N O S P F Cl Br I (aromatic c n o s p), branches, ring closures and
//!   bond symbols; aromatic input is turned into Kekulé bond orders.
//! * [`canonical_smiles`] writes one string per compound, the same whatever
//!   the atom numbering or Kekulé form of the input: aromatic atoms in lower
//!   case, as any outside toolkit reads them. [`SmilesWriter`] is the same
//!   writer with its work space kept between molecules (one per thread
//!   behind [`canonical_smiles`] and [`with_writer`]); it also reads the
//!   generator's compact isomers without building a molecule.
//! * [`canon_graph`] is the coloured graph the canonical labelling runs on,
//!   shared with the isomer generator so both agree on what "the same
//!   compound" means.

mod reader;
mod writer;

pub use reader::{parse_smiles, MAX_SMILES_ATOMS};
pub use writer::{canon_graph, canonical_smiles, with_writer, write_smiles, SmilesWriter};
