//! Prediction of a structure's 1H multiplet list.

pub mod signal;
pub use signal::{Multiplicity, PredictedSignal};
