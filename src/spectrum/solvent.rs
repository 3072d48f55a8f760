//! Residual solvent and water peaks (fragment-library/solvents.toml, from
//! Gottlieb, Kotlyar & Nudelman, J. Org. Chem. 1997, 62, 7512) and the test
//! that marks an observed multiplet as a likely stray peak: a singlet (or an
//! entry without a multiplicity) on the residual or water peak, or on the
//! residual a multiplet of the residual's own pattern (the CHD2 quintet of
//! DMSO-d5 at 2.50, written quint or m).
//!
//! Why mark rather than delete: a compound may have a genuine singlet at
//! 7.26 ppm. The scorer decides, by letting a marked multiplet stay
//! unassigned at a small cost instead of the penalty for an unexplained
//! signal; the note tells the user either way.

use super::{ObservedPattern, Spectrum};
use crate::error::{Error, Result};
use crate::predict::Multiplicity;
use serde::{Deserialize, Serialize};

/// The embedded tables; overridable with [`SolventTable::from_toml`].
pub const SOLVENTS_TOML: &str = include_str!("../../fragment-library/solvents.toml");
/// The matching tolerances live in the scorer's table (section `solvent_peaks`).
const SCORING_TOML: &str = include_str!("../../fragment-library/scoring.toml");

/// Which kind of stray peak a multiplet matched.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SolventPeak {
    /// `residual` or `water`.
    pub kind: String,
    /// Solvent name as in the table, e.g. `CDCl3`.
    pub solvent: String,
    /// Expected shift, ppm.
    pub shift: f64,
    /// What gives the peak: `residual solvent` or `H2O`.
    pub species: String,
}

/// A row of solvents.toml (other keys of the shared file are ignored here).
#[derive(Clone, Debug, Deserialize)]
struct SolventRow {
    name: String,
    #[serde(default)]
    aliases: Vec<String>,
    residual: f64,
    /// The residual's pattern when not a singlet (`quint` for CHD2 groups).
    residual_multiplicity: Option<String>,
    water: Option<f64>,
    /// The solvent's own 13C lines, ppm.
    #[serde(default)]
    carbon: Vec<f64>,
    #[allow(dead_code)]
    source: String,
}

#[derive(Clone, Debug, Deserialize)]
struct Matching {
    residual_tolerance: f64,
    water_tolerance: f64,
    default_solvent: String,
}

#[derive(Clone, Debug, Deserialize)]
struct SolventFile {
    solvent: Vec<SolventRow>,
}

#[derive(Clone, Debug, Deserialize)]
struct ScoringFile {
    solvent_peaks: Matching,
}

/// The solvent table in memory.
#[derive(Clone, Debug)]
pub struct SolventTable {
    rows: Vec<SolventRow>,
    matching: Matching,
}

impl SolventTable {
    pub fn embedded() -> SolventTable {
        SolventTable::from_toml(SOLVENTS_TOML, SCORING_TOML).expect("embedded tables are valid")
    }

    /// From the text of solvents.toml and of scoring.toml.
    pub fn from_toml(solvents: &str, scoring: &str) -> Result<SolventTable> {
        let f: SolventFile = toml::from_str(solvents)
            .map_err(|e| Error::input(format!("solvents.toml: {}", e.message())))?;
        let m: ScoringFile = toml::from_str(scoring)
            .map_err(|e| Error::input(format!("scoring.toml: {}", e.message())))?;
        Ok(SolventTable {
            rows: f.solvent,
            matching: m.solvent_peaks,
        })
    }

    /// The table's name for a solvent as a user wrote it (`CDCl3`,
    /// `DMSO-d6`, `(CD3)2SO`, ...), case-insensitive.
    pub fn canonical_name(&self, written: &str) -> Option<&str> {
        let w = written.trim().to_lowercase();
        self.rows
            .iter()
            .find(|s| s.name.to_lowercase() == w || s.aliases.iter().any(|a| a.to_lowercase() == w))
            .map(|s| s.name.as_str())
    }

    pub fn default_solvent(&self) -> &str {
        &self.matching.default_solvent
    }

    /// Mark the multiplets of `spectrum` that sit on the solvent's residual
    /// or water peak, adding a note for each. Only a singlet (broad or not)
    /// can be a stray peak.
    pub fn mark(&self, spectrum: &mut Spectrum) {
        let (row, assumed) = match &spectrum.solvent {
            Some(s) => match self.canonical_name(s) {
                Some(name) => (self.row(name), false),
                None => {
                    spectrum.notes.push(format!(
                        "solvent \"{s}\" is not in the solvent table (known: {}): no stray-peak recognition, shifts predicted as in {}",
                        self.names().join(", "),
                        self.default_solvent()
                    ));
                    return;
                }
            },
            None => (self.row(self.default_solvent()), true),
        };
        let Some(row) = row else { return };
        let m = &self.matching;
        // The residual's own pattern (DMSO-d5 2.50 quint, often written m).
        let residual_pattern = row
            .residual_multiplicity
            .as_deref()
            .and_then(ObservedPattern::parse)
            .map(|p| p.multiplicity);
        let mut notes = Vec::new();
        for mult in &mut spectrum.multiplets {
            let p = &mult.pattern;
            let singlet = p.multiplicity == Multiplicity::Singlet || !p.reported;
            let residual_like = singlet
                || residual_pattern.as_ref().is_some_and(|r| {
                    p.multiplicity == *r || p.multiplicity == Multiplicity::Multiplet
                });
            let hit = if residual_like && mult.distance(row.residual) <= m.residual_tolerance {
                Some(("residual", row.residual, "the residual solvent".to_string()))
            } else {
                row.water
                    .filter(|&w| singlet && mult.distance(w) <= m.water_tolerance)
                    .map(|w| ("water", w, "H2O".to_string()))
            };
            if let Some((kind, shift, species)) = hit {
                let what = if kind == "water" {
                    format!("the water peak in {}", row.name)
                } else {
                    format!("the residual solvent peak of {}", row.name)
                };
                notes.push(format!(
                    "entry {} at {} ppm matches {what} ({shift:.2} ppm, Gottlieb et al. 1997){}: \
                     it may be set aside rather than assigned",
                    mult.entry,
                    mult.shift_text(),
                    if assumed {
                        "; solvent not given, assumed"
                    } else {
                        ""
                    }
                ));
                mult.solvent = Some(SolventPeak {
                    kind: kind.to_string(),
                    solvent: row.name.clone(),
                    shift,
                    species,
                });
            }
        }
        spectrum.notes.extend(notes);
    }

    fn row(&self, name: &str) -> Option<&SolventRow> {
        self.rows.iter().find(|s| s.name == name)
    }

    /// The 13C lines of a solvent as a user wrote its name; `None` when the
    /// table does not know it.
    pub fn carbon_lines(&self, written: &str) -> Option<&[f64]> {
        let n = self.canonical_name(written)?;
        self.row(n).map(|r| r.carbon.as_slice())
    }

    /// The names the table knows, in its order.
    pub fn names(&self) -> Vec<&str> {
        self.rows.iter().map(|r| r.name.as_str()).collect()
    }

    /// Residual and water shifts of a solvent (for documentation and tests).
    pub fn peaks(&self, name: &str) -> Option<(f64, Option<f64>)> {
        let n = self.canonical_name(name)?;
        self.row(n).map(|r| (r.residual, r.water))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn aliases_find_the_table_row() {
        let t = SolventTable::embedded();
        assert_eq!(t.canonical_name("(CD3)2SO"), Some("DMSO-d6"));
        assert_eq!(t.canonical_name("CDCl3"), Some("CDCl3"));
        assert_eq!(t.canonical_name("toluene-d8"), None);
        // Gottlieb, Kotlyar & Nudelman, J. Org. Chem. 1997, 62, 7512, Table 1:
        // CDCl3 residual 7.26, H2O 1.56; DMSO-d6 residual 2.50, H2O 3.33.
        assert_eq!(t.peaks("CDCl3"), Some((7.26, Some(1.56))));
        assert_eq!(t.peaks("DMSO-d6"), Some((2.50, Some(3.33))));
    }
}
