//! Unit tests of the predictor on molecules built in code.
