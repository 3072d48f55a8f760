//! The structured spectrum file (`--spectrum FILE`), TOML or JSON with the
//! same keys:
//!
//! ```toml
//! formula = "C4H8O2"        # optional; must match the command line
//! solvent = "CDCl3"         # optional
//! frequency = 400           # MHz, optional
//! integrals = "hydrogens"   # or "relative"; default "hydrogens"
//!
//! [[multiplets]]
//! shift = 4.12              # ppm; or range = [7.15, 7.32]
//! multiplicity = "q"        # s, d, t, q, ..., m, with br/app; optional (not reported)
//! j = [7.1]                 # Hz, optional (a single number is accepted)
//! integral = 2              # optional
//! ```
//!
//! A 13C list, optional, beside or instead of the multiplets:
//!
//! ```toml
//! [[carbon]]
//! shift = 128.6             # ppm; or range = [128.4, 128.9]
//! hydrogens = 1             # optional: attached H (0-4) or "C", "CH", "CH2", "CH3"
//! count = 2                 # optional: carbons this line stands for
//! ```
//!
//! JSON: the same object, `multiplets` and `carbon` arrays of objects. A file whose name
//! ends in `.json` (or whose first non-blank character is `{`) is read as
//! JSON, anything else as TOML.

use super::carbon::{self, CarbonLine, RawCarbon};
use super::journal::{shift_out_of_range, RawEntry, RawSpectrum, MAX_J_HZ, SHIFT_LIMITS};
use super::pattern::ObservedPattern;
use crate::error::{Error, Result};
use serde::Deserialize;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FileSpectrum {
    formula: Option<String>,
    solvent: Option<String>,
    frequency: Option<f64>,
    integrals: Option<String>,
    #[serde(default)]
    multiplets: Vec<FileMultiplet>,
    #[serde(default)]
    carbon: Vec<FileCarbon>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FileCarbon {
    shift: Option<f64>,
    range: Option<Vec<f64>>,
    hydrogens: Option<CarbonHydrogens>,
    count: Option<u32>,
}

/// `hydrogens = 2` or `hydrogens = "CH2"`.
#[derive(Deserialize)]
#[serde(untagged)]
enum CarbonHydrogens {
    Number(i64),
    Word(String),
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FileMultiplet {
    shift: Option<f64>,
    range: Option<Vec<f64>>,
    multiplicity: Option<String>,
    j: Option<OneOrMany>,
    integral: Option<f64>,
}

#[derive(Deserialize)]
#[serde(untagged)]
enum OneOrMany {
    One(f64),
    Many(Vec<f64>),
}

/// A parsed spectrum file and the formula it names, if any.
#[derive(Debug)]
pub struct SpectrumFile {
    pub spectrum: RawSpectrum,
    /// The `[[carbon]]` lines, when the file has any.
    pub carbon: Option<RawCarbon>,
    pub formula: Option<String>,
}

/// Parse the text of a spectrum file; `name` is used in messages and to
/// choose JSON (`.json`) or TOML.
pub fn parse(name: &str, text: &str) -> Result<SpectrumFile> {
    // A UTF-8 byte-order mark (some editors write one) is not content.
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let is_json = name.to_lowercase().ends_with(".json") || text.trim_start().starts_with('{');
    let file: FileSpectrum = if is_json {
        serde_json::from_str(text).map_err(|e| {
            Error::input(format!(
                "{name}: line {}, column {}: {}",
                e.line(),
                e.column(),
                strip_position(&e.to_string())
            ))
        })?
    } else {
        toml::from_str(text).map_err(|e| {
            let at = e
                .span()
                .map(|s| {
                    let (line, col) = line_col(text, s.start);
                    format!("line {line}, column {col}: ")
                })
                .unwrap_or_default();
            Error::input(format!("{name}: {at}{}", e.message()))
        })?
    };
    let relative = match file.integrals.as_deref() {
        None | Some("hydrogens") => false,
        Some("relative") => true,
        Some(other) => {
            return Err(Error::input(format!(
                "{name}: integrals = \"{other}\": use \"hydrogens\" (H counts) or \"relative\""
            )))
        }
    };
    if let Some(f) = file.frequency {
        if !(f > 0.0 && f < 2000.0) {
            return Err(Error::input(format!(
                "{name}: frequency {f} MHz is out of range (1H spectrometers run at about 40 to 1200 MHz)"
            )));
        }
    }
    let mut entries = Vec::new();
    for (i, m) in file.multiplets.into_iter().enumerate() {
        let entry = i + 1;
        let err = |what: String| Error::input(format!("{name}: entry {entry}: {what}"));
        let (shift, range) =
            shift_or_range(m.shift, m.range, SHIFT_LIMITS, shift_out_of_range).map_err(err)?;
        // No multiplicity key: not reported, scored without a multiplicity term.
        let pattern = match &m.multiplicity {
            None => ObservedPattern::not_reported(),
            Some(label) => ObservedPattern::parse(label).ok_or_else(|| {
                err(format!(
                    "multiplicity \"{label}\" is not one of s, d, t, q, quint, sext, sept, m, dd, dt, td, ... (br and app allowed)"
                ))
            })?,
        };
        let label = pattern.label();
        let mut j_hz = match m.j {
            None => Vec::new(),
            Some(OneOrMany::One(v)) => vec![v],
            Some(OneOrMany::Many(v)) => v,
        };
        if let Some(v) = j_hz.iter().find(|v| !j_in_range(**v)) {
            return Err(err(format!(
                "J = {v} Hz is out of range (couplings in a 1H spectrum, to 19F included, are below {MAX_J_HZ} Hz)"
            )));
        }
        for v in &mut j_hz {
            *v = v.abs();
        }
        j_hz.sort_by(|a, b| b.total_cmp(a));
        if let Some(v) = m.integral {
            // Any positive size: relative integrals straight from an
            // instrument run to thousands and are scaled to the formula.
            if !(v.is_finite() && v > 0.0) {
                return Err(err(format!("integral {v} must be a positive number")));
            }
        }
        entries.push(RawEntry {
            entry,
            text: format!("{} ({label})", fmt_shift(shift, range)),
            shift,
            range,
            pattern,
            j_hz,
            integral: m.integral.map(|v| (v, !relative)),
        });
    }
    if entries.is_empty() && file.carbon.is_empty() {
        return Err(Error::input(format!(
            "{name}: no observed data: give [[multiplets]] (1H) or [[carbon]] (13C) entries"
        )));
    }
    let mut lines = Vec::new();
    for (i, c) in file.carbon.into_iter().enumerate() {
        let entry = i + 1;
        let err = |what: String| Error::input(format!("{name}: carbon entry {entry}: {what}"));
        let (shift, range) = shift_or_range(c.shift, c.range, carbon::SHIFT_LIMITS, |v| {
            format!(
                "shift {v} ppm is outside the 13C range ({} to {} ppm)",
                carbon::SHIFT_LIMITS.0,
                carbon::SHIFT_LIMITS.1
            )
        })
        .map_err(err)?;
        let hydrogens = match c.hydrogens {
            None => None,
            Some(CarbonHydrogens::Number(n)) if (0..=4).contains(&n) => Some(n as u8),
            Some(CarbonHydrogens::Number(n)) => {
                return Err(err(format!(
                    "hydrogens = {n}: give 0 to 4 (attached H per carbon)"
                )))
            }
            Some(CarbonHydrogens::Word(w)) => Some(
                ["C", "CH", "CH2", "CH3", "CH4"]
                    .iter()
                    .position(|k| *k == w.trim())
                    .ok_or_else(|| {
                        err(format!(
                            "hydrogens = \"{w}\": give C, CH, CH2, CH3 or a number 0-4"
                        ))
                    })? as u8,
            ),
        };
        if let Some(n) = c.count {
            if n == 0 || n > 64 {
                return Err(err(format!("count = {n}: give 1 to 64 carbons")));
            }
        }
        let mut text = fmt_shift(shift, range);
        if let Some(h) = hydrogens {
            text.push_str(&format!(" ({})", carbon::carbon_kind(h)));
        }
        lines.push(CarbonLine {
            entry,
            text,
            shift,
            range,
            hydrogens,
            count: c.count,
            solvent: false,
        });
    }
    let carbon = (!lines.is_empty()).then(|| RawCarbon {
        frequency_mhz: None,
        solvent: file.solvent.clone(),
        lines,
    });
    Ok(SpectrumFile {
        spectrum: RawSpectrum {
            frequency_mhz: file.frequency,
            solvent: file.solvent,
            entries,
        },
        carbon,
        formula: file.formula,
    })
}

/// The shift (or the midpoint of a range) and the range of a file entry,
/// checked against the nucleus' `limits`.
fn shift_or_range(
    shift: Option<f64>,
    range: Option<Vec<f64>>,
    limits: (f64, f64),
    out_of_range: impl Fn(f64) -> String,
) -> std::result::Result<(f64, Option<(f64, f64)>), String> {
    let (shift, range) = match (shift, range) {
        (Some(s), None) => (s, None),
        (None, Some(r)) if r.len() == 2 => {
            let (lo, hi) = (r[0].min(r[1]), r[0].max(r[1]));
            ((lo + hi) / 2.0, Some((lo, hi)))
        }
        (None, Some(r)) => {
            return Err(format!(
                "range needs two shifts, e.g. range = [7.15, 7.32]; it has {}",
                r.len()
            ))
        }
        (Some(_), Some(_)) => return Err("give shift or range, not both".into()),
        (None, None) => return Err("missing shift (ppm) or range = [low, high]".into()),
    };
    let ends = [Some(shift), range.map(|r| r.0), range.map(|r| r.1)];
    for v in ends.into_iter().flatten() {
        if !(limits.0..=limits.1).contains(&v) {
            return Err(out_of_range(v));
        }
    }
    Ok((shift, range))
}

/// Whether |J| is a plausible 1H-1H coupling (false for NaN).
fn j_in_range(v: f64) -> bool {
    v.abs() <= MAX_J_HZ
}

fn fmt_shift(shift: f64, range: Option<(f64, f64)>) -> String {
    match range {
        Some((lo, hi)) => format!("{hi}-{lo}"),
        None => format!("{shift}"),
    }
}

fn line_col(text: &str, byte: usize) -> (usize, usize) {
    let before = &text[..byte.min(text.len())];
    let line = before.matches('\n').count() + 1;
    let col = before
        .rsplit('\n')
        .next()
        .map(|l| l.chars().count())
        .unwrap_or(0)
        + 1;
    (line, col)
}

/// serde_json appends " at line L column C"; we put the position first.
fn strip_position(msg: &str) -> String {
    match msg.rfind(" at line ") {
        Some(i) => msg[..i].to_string(),
        None => msg.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn toml_and_json_give_the_same_entries() {
        let t = r#"
formula = "C4H8O2"
solvent = "CDCl3"
frequency = 400
[[multiplets]]
shift = 4.12
multiplicity = "q"
j = 7.1
integral = 2
[[multiplets]]
range = [7.32, 7.15]
multiplicity = "m"
integral = 5
"#;
        let j = r#"{"formula": "C4H8O2", "solvent": "CDCl3", "frequency": 400,
            "multiplets": [{"shift": 4.12, "multiplicity": "q", "j": [7.1], "integral": 2},
                           {"range": [7.15, 7.32], "multiplicity": "m", "integral": 5}]}"#;
        let a = parse("s.toml", t).unwrap();
        let b = parse("s.json", j).unwrap();
        assert_eq!(a.spectrum.entries, b.spectrum.entries);
        assert_eq!(a.formula.as_deref(), Some("C4H8O2"));
        assert_eq!(a.spectrum.entries[1].range, Some((7.15, 7.32)));
    }

    #[test]
    fn errors_name_the_entry_or_line() {
        let e = parse(
            "s.toml",
            "[[multiplets]]\nshift = 1.0\nmultiplicity = \"s\"\n[[multiplets]]\nshift = 2.0\nmultiplicity = \"zz\"\n",
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("entry 2: multiplicity \"zz\""), "{e}");
        let e = parse("s.toml", "[[multiplets]]\nshift = \n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("line 2"), "{e}");
        let e = parse(
            "s.json",
            "{\"multiplets\": [{\"shift\": 1.0, \"colour\": 3}]}",
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("unknown field") && e.contains("line 1"), "{e}");
    }

    #[test]
    fn carbon_lines_in_toml_and_json() {
        let t = r#"
[[carbon]]
shift = 171.1
hydrogens = "C"
[[carbon]]
shift = 128.5
hydrogens = 1
count = 2
[[carbon]]
range = [14.0, 14.3]
"#;
        let j = r#"{"carbon": [{"shift": 171.1, "hydrogens": 0},
            {"shift": 128.5, "hydrogens": "CH", "count": 2}, {"range": [14.3, 14.0]}]}"#;
        let a = parse("c.toml", t).unwrap();
        let b = parse("c.json", j).unwrap();
        let (a, b) = (a.carbon.unwrap(), b.carbon.unwrap());
        let key = |c: &RawCarbon| {
            c.lines
                .iter()
                .map(|l| (l.shift, l.range, l.hydrogens, l.count))
                .collect::<Vec<_>>()
        };
        assert_eq!(key(&a), key(&b));
        assert_eq!(
            key(&a),
            vec![
                (171.1, None, Some(0), None),
                (128.5, None, Some(1), Some(2)),
                ((14.0 + 14.3) / 2.0, Some((14.0, 14.3)), None, None),
            ]
        );
        let e = parse("c.toml", "[[carbon]]\nshift = 20.0\nhydrogens = \"CH5\"\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("carbon entry 1") && e.contains("CH5"), "{e}");
        let e = parse("c.toml", "[[carbon]]\nshift = 420.0\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("outside the 13C range"), "{e}");
        let e = parse("c.toml", "solvent = \"CDCl3\"\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("no observed data"), "{e}");
    }
}
