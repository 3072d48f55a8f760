//! The absolute fit verdict: probabilities are relative (a wrong structure
//! alone on a shortlist gets 1.000), so the first candidate's cost is also
//! compared with the costs of correct structures on real data: its cost per
//! observed line (1H multiplets plus 13C lines) against the percentiles of
//! the true structures' costs per line over the NMRShiftDB2 dev compounds,
//! a table in `fragment-library/fit-percentiles.toml` (its header says how
//! it was made: `examples/calibrate_nmrshiftdb.rs`); data with a 1H list
//! and no 13C list are judged against the table's own 1H-only rows (the true
//! structures scored on their 1H lists alone). Above the table's
//! warning level (the 99th percentile) the reports warn that the structure
//! may be outside the search space, a constraint or rule may be wrong, or
//! the data may hold an error.

use crate::error::{Error, Result};
use serde::Deserialize;

const TABLE: &str = include_str!("../../fragment-library/fit-percentiles.toml");

/// One row of the table: `level` % of the correct structures cost at most
/// `cost_per_line`.
#[derive(Clone, Copy, Debug, Deserialize)]
pub struct Level {
    pub level: f64,
    pub cost_per_line: f64,
}

/// The percentiles of the correct structures' cost per line.
#[derive(Clone, Debug, Deserialize)]
pub struct FitTable {
    /// Correct structures the table was made from.
    pub n: usize,
    /// The `[ranking] cost_scale` the costs were taken at.
    pub cost_scale: f64,
    /// Warn when the first candidate fits worse than this share (%) of
    /// correct structures.
    pub warn_above_percentile: f64,
    pub percentile: Vec<Level>,
    /// The same percentiles for data with a 1H list and no 13C list (the
    /// true structure scored on its 1H list alone), when the table has them.
    #[serde(default)]
    pub proton_only: Option<Section>,
    /// What the rows in use were made from, for the report's wording.
    #[serde(skip)]
    pub data: &'static str,
}

/// A second set of rows for another kind of data.
#[derive(Clone, Debug, Deserialize)]
pub struct Section {
    pub n: usize,
    pub percentile: Vec<Level>,
}

fn rows_rise(rows: &[Level]) -> bool {
    !rows.is_empty()
        && rows
            .windows(2)
            .all(|w| w[0].level < w[1].level && w[0].cost_per_line <= w[1].cost_per_line)
}

/// How the first candidate fits, on the scale of correct structures.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Verdict {
    /// The candidate's cost per observed line, at the table's cost scale.
    pub cost_per_line: f64,
    /// Share (%) of correct structures of the reference data that fit
    /// better (a lower cost per line); interpolated between the table's rows.
    pub percentile: f64,
    /// The cost lies beyond the table's last row (the percentile is then
    /// that row's level, a lower bound).
    pub beyond_table: bool,
    /// Worse than the warning level.
    pub warning: bool,
}

impl FitTable {
    /// The table shipped in fragment-library/.
    pub fn embedded() -> FitTable {
        FitTable::from_toml(TABLE).expect("embedded fit-percentiles.toml is valid")
    }

    pub fn from_toml(text: &str) -> Result<FitTable> {
        let mut t: FitTable = toml::from_str(text)
            .map_err(|e| Error::input(format!("fit percentile table: {}", e.message())))?;
        t.data = "1H + 13C";
        let ordered = rows_rise(&t.percentile)
            && t.proton_only
                .as_ref()
                .is_none_or(|p| rows_rise(&p.percentile));
        if !ordered || t.cost_scale.is_nan() || t.cost_scale <= 0.0 {
            return Err(Error::input(
                "fit percentile table: rows must rise in level and cost, and cost_scale be positive"
                    .to_string(),
            ));
        }
        Ok(t)
    }

    /// The rows for the data at hand: without a 13C list, the 1H-only rows
    /// when the table has them (else the 1H + 13C rows, said so).
    pub fn for_data(&self, carbon: bool) -> FitTable {
        match (&self.proton_only, carbon) {
            (Some(p), false) => FitTable {
                n: p.n,
                percentile: p.percentile.clone(),
                proton_only: None,
                data: "1H only",
                ..self.clone()
            },
            _ => self.clone(),
        }
    }

    /// The verdict on a candidate of `cost` (at `cost_scale`) against data
    /// of `lines` observed lines; `None` without any line.
    pub fn verdict(&self, cost: f64, cost_scale: f64, lines: usize) -> Option<Verdict> {
        if lines == 0 || !cost.is_finite() {
            return None;
        }
        let per_line = cost / cost_scale * self.cost_scale / lines as f64;
        let rows = &self.percentile;
        let last = rows[rows.len() - 1];
        let (percentile, beyond_table) = if per_line > last.cost_per_line {
            (last.level, true)
        } else {
            // Linear between rows, from (0 cost, 0 %) below the first.
            let mut prev = Level {
                level: 0.0,
                cost_per_line: 0.0,
            };
            let mut p = last.level;
            for &row in rows {
                if per_line <= row.cost_per_line {
                    let span = row.cost_per_line - prev.cost_per_line;
                    let t = if span > 0.0 {
                        ((per_line - prev.cost_per_line) / span).clamp(0.0, 1.0)
                    } else {
                        1.0
                    };
                    p = prev.level + t * (row.level - prev.level);
                    break;
                }
                prev = row;
            }
            (p, false)
        };
        Some(Verdict {
            cost_per_line: per_line,
            percentile,
            beyond_table,
            warning: beyond_table || percentile > self.warn_above_percentile,
        })
    }
}

/// The report's wording of a verdict: one line, and the warning when due.
pub fn describe(v: &Verdict, table: &FitTable) -> (String, Option<String>) {
    let share = if v.beyond_table {
        format!("more than {}", v.percentile)
    } else {
        format!("{:.0}", v.percentile)
    };
    let line = format!(
        "Fit: the first candidate costs {:.2} per observed line; {share} % of the correct structures of {} NMRShiftDB2 dev compounds ({}) fit better (fragment-library/fit-percentiles.toml).",
        v.cost_per_line, table.n, table.data
    );
    let warning = v.warning.then(|| {
        format!(
            "WARNING: the best candidate fits worse than {:.0} % of correct structures on real data. The structure may be outside the search space (a group the generator does not build, a charged or expanded-valence form), a constraint or plausibility rule may be wrong, or the data may hold an error (wrong formula, an impurity, a misread or missing peak).",
            table.warn_above_percentile
        )
    });
    (line, warning)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn table() -> FitTable {
        FitTable::from_toml(
            "n = 100\ncost_scale = 1.0\nwarn_above_percentile = 99.0\n\
             [[percentile]]\nlevel = 50.0\ncost_per_line = 1.0\n\
             [[percentile]]\nlevel = 99.0\ncost_per_line = 3.0\n",
        )
        .unwrap()
    }

    #[test]
    fn interpolates_and_warns_beyond_the_last_row() {
        let t = table();
        // 10 lines at 0.5 per line: halfway to the 50 % row.
        let v = t.verdict(5.0, 1.0, 10).unwrap();
        assert!((v.percentile - 25.0).abs() < 1e-9);
        assert!(!v.warning);
        // 2.0 per line: halfway between 50 and 99.
        let v = t.verdict(20.0, 1.0, 10).unwrap();
        assert!((v.percentile - 74.5).abs() < 1e-9);
        // Beyond 3.0 per line: warned.
        let v = t.verdict(31.0, 1.0, 10).unwrap();
        assert!(v.beyond_table && v.warning);
        // A cost taken at another scale is brought to the table's.
        let v = t.verdict(10.0, 2.0, 10).unwrap();
        assert!((v.cost_per_line - 0.5).abs() < 1e-12);
        assert_eq!(t.verdict(1.0, 1.0, 0), None);
        // The wording: beyond the table it names the last level as a bound.
        let (line, warning) = describe(&t.verdict(31.0, 1.0, 10).unwrap(), &t);
        assert!(line.contains("more than 99 %"), "{line}");
        assert!(warning.is_some_and(|w| w.contains("outside the search space")));
        // 2.1 per line: 50 + 1.1 / 2 * 49 = 76.95 %.
        let (line, warning) = describe(&t.verdict(21.0, 1.0, 10).unwrap(), &t);
        assert!(line.contains("; 77 % of the correct structures"), "{line}");
        assert!(warning.is_none());
    }

    #[test]
    fn embedded_table_reads_and_rises() {
        let t = FitTable::embedded();
        assert!(t.n > 100);
        assert!(t.percentile.len() >= 5);
        // Both kinds of data have their own rows.
        let p = t.for_data(false);
        assert_eq!(p.data, "1H only");
        assert!(p.n > 100 && p.n != t.n);
        assert_eq!(t.for_data(true).n, t.n);
    }

    #[test]
    fn proton_only_rows_are_used_without_13c() {
        let t = FitTable::from_toml(
            "n = 100\ncost_scale = 1.0\nwarn_above_percentile = 99.0\n\
             [[percentile]]\nlevel = 99.0\ncost_per_line = 3.0\n\
             [proton_only]\nn = 50\n\
             [[proton_only.percentile]]\nlevel = 99.0\ncost_per_line = 1.0\n",
        )
        .unwrap();
        // 2.0 per line: fine against the 1H + 13C rows, beyond the 1H-only ones.
        assert!(!t.for_data(true).verdict(20.0, 1.0, 10).unwrap().warning);
        let p = t.for_data(false);
        assert!(p.verdict(20.0, 1.0, 10).unwrap().warning);
        let (line, _) = describe(&p.verdict(5.0, 1.0, 10).unwrap(), &p);
        assert!(
            line.contains("of 50 NMRShiftDB2 dev compounds (1H only)"),
            "{line}"
        );
        // Falling rows are refused in either part.
        assert!(FitTable::from_toml(
            "n = 1\ncost_scale = 1.0\nwarn_above_percentile = 99.0\n\
             [[percentile]]\nlevel = 99.0\ncost_per_line = 3.0\n\
             [proton_only]\nn = 1\n\
             [[proton_only.percentile]]\nlevel = 50.0\ncost_per_line = 2.0\n\
             [[proton_only.percentile]]\nlevel = 99.0\ncost_per_line = 1.0\n",
        )
        .is_err());
    }
}
