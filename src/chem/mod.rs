//! Chemistry core: elements, formulas, the molecule graph (and its flat form),
//! canonical labelling, rings, aromaticity and SMILES.

pub mod aromaticity;
pub mod bitset;
pub mod canon;
pub mod element;
pub mod flat;
pub mod formula;
pub mod kekule;
pub mod molecule;
pub mod rings;
pub mod smiles;

pub use element::Element;
pub use formula::Formula;
pub use molecule::{Atom, Bond, HeavyAtoms, Molecule};
