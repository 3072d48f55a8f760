//! Observed splitting patterns: the trade's labels (s, d, t, q, quint, sext,
//! sept, dd, dt, td, ..., m) with the modifiers `br` (broad) and `app`
//! (apparent), read into the same [`Multiplicity`] the predictor produces so
//! that the scorer compares like with like.

use crate::predict::Multiplicity;
use serde::{Serialize, Serializer};

/// What [`ObservedPattern::label`] shows for an entry without a multiplicity.
pub const NOT_REPORTED: &str = "not reported";

/// An observed pattern: a multiplicity plus the broad/apparent modifiers.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct ObservedPattern {
    pub multiplicity: Multiplicity,
    /// `br`: broadened (exchange, quadrupolar N, unresolved couplings).
    pub broad: bool,
    /// `app`: the lines look like the pattern but the couplings are not the
    /// ones the label implies (e.g. a dd with two similar J seen as a t).
    pub apparent: bool,
    /// False for an entry written without a multiplicity (`3.67 (3H)`):
    /// the scorer then leaves the multiplicity term out. `multiplicity` is
    /// `Multiplet` there, so an overlap costs what it costs in an m.
    pub reported: bool,
}

impl ObservedPattern {
    pub fn plain(multiplicity: Multiplicity) -> ObservedPattern {
        ObservedPattern {
            multiplicity,
            broad: false,
            apparent: false,
            reported: true,
        }
    }

    /// An entry whose multiplicity was not reported (`7.20-7.35 (5H)`).
    pub fn not_reported() -> ObservedPattern {
        ObservedPattern {
            reported: false,
            ..ObservedPattern::plain(Multiplicity::Multiplet)
        }
    }

    /// Read a label such as `s`, `br s`, `brs`, `bs`, `app t`, `dd`, `quint`,
    /// `p`, `hept`, `m`. Case and dots are ignored. `None` when the text is
    /// not a splitting label.
    pub fn parse(text: &str) -> Option<ObservedPattern> {
        let cleaned: String = text
            .chars()
            .filter(|c| *c != '.')
            .collect::<String>()
            .to_lowercase();
        let mut rest = cleaned.trim();
        let mut broad = false;
        let mut apparent = false;
        loop {
            let before = rest;
            for (prefix, is_broad) in [
                ("broad", true),
                ("br", true),
                ("apparent", false),
                ("app", false),
                ("pseudo", false),
            ] {
                if let Some(r) = rest.strip_prefix(prefix) {
                    if is_broad {
                        broad = true;
                    } else {
                        apparent = true;
                    }
                    rest = r.trim_start();
                    break;
                }
            }
            if rest == before {
                break;
            }
        }
        // "bs", "bd": a single b before a one-letter label means broad.
        if !broad && rest.len() == 2 && rest.starts_with('b') {
            broad = true;
            rest = &rest[1..];
        }
        if rest.is_empty() {
            // "br" alone: a broad signal without resolved splitting.
            return broad.then_some(ObservedPattern {
                multiplicity: Multiplicity::Singlet,
                broad,
                apparent,
                reported: true,
            });
        }
        let multiplicity = base(rest)?;
        Some(ObservedPattern {
            multiplicity,
            broad,
            apparent,
            reported: true,
        })
    }

    /// The label as written in a journal: `br s`, `app t`, `dd`; `not
    /// reported` for an entry without one.
    pub fn label(&self) -> String {
        if !self.reported {
            return NOT_REPORTED.to_string();
        }
        let mut s = String::new();
        if self.broad {
            s.push_str("br ");
        }
        if self.apparent {
            s.push_str("app ");
        }
        s.push_str(&self.multiplicity.label());
        s
    }
}

impl Serialize for ObservedPattern {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&self.label())
    }
}

/// The unmodified label: one named pattern, or a string of d/t/q letters.
fn base(text: &str) -> Option<Multiplicity> {
    let single = |n: u8| Some(Multiplicity::Coupled(vec![n]));
    match text {
        "s" | "singlet" => return Some(Multiplicity::Singlet),
        "m" | "mult" | "multiplet" => return Some(Multiplicity::Multiplet),
        "doublet" => return single(1),
        "triplet" => return single(2),
        "quartet" => return single(3),
        "quint" | "quin" | "qui" | "qn" | "p" | "pent" | "pentet" | "quintet" => return single(4),
        "sext" | "sex" | "sx" | "hex" | "sextet" => return single(5),
        "sept" | "sep" | "hept" | "septet" | "heptet" => return single(6),
        "oct" | "octet" => return single(7),
        "non" | "nonet" => return single(8),
        _ => {}
    }
    // dd, dt, td, ddd, dq, qd, tt, ...: each letter a set of equivalent partners.
    if text.len() > 6 {
        return None;
    }
    let mut ns = Vec::new();
    for c in text.chars() {
        ns.push(match c {
            'd' => 1,
            't' => 2,
            'q' => 3,
            _ => return None,
        });
    }
    Some(Multiplicity::Coupled(ns))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn trade_labels_round_trip() {
        for (text, label) in [
            ("s", "s"),
            ("br s", "br s"),
            ("brs", "br s"),
            ("bs", "br s"),
            ("br. s", "br s"),
            ("br", "br s"),
            ("app t", "app t"),
            ("dd", "dd"),
            ("td", "td"),
            ("p", "quint"),
            ("hept", "sept"),
            ("sext", "sext"),
            ("M", "m"),
            ("ddd", "ddd"),
        ] {
            assert_eq!(
                ObservedPattern::parse(text).unwrap().label(),
                label,
                "{text}"
            );
        }
        assert!(ObservedPattern::parse("x").is_none());
        assert!(ObservedPattern::parse("2H").is_none());
        assert!(ObservedPattern::parse("CH3").is_none());
    }

    #[test]
    fn td_means_larger_coupling_to_two_h() {
        // Triplet of doublets: the first letter is the larger J (common practice).
        let p = ObservedPattern::parse("td").unwrap();
        assert_eq!(p.multiplicity, Multiplicity::Coupled(vec![2, 1]));
        assert_eq!(p.multiplicity.lines(), Some(6));
    }
}
