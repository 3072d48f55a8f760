//! Enumeration of constitutional isomers (filled in by the generator work).
