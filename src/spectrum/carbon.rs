//! Observed 13C data: the line list a chemist reports from a broadband
//! decoupled 13C spectrum, with the attached-H count of each line where an
//! edited experiment (DEPT, APT, multiplicity-edited HSQC) or an older
//! off-resonance spectrum gave it, e.g.
//!
//! ```text
//! 13C NMR (101 MHz, CDCl3) δ 200.8, 137.0 (C), 132.9 (CH), 128.6 (CH, 2C), 128.0 (2 CH), 31.8 (CH2), 8.3 (CH3)
//! ```
//!
//! The header and the `δ` are optional, as for 1H. Each entry is a shift
//! (or a range) optionally followed by parentheses holding, in any order:
//! - the H count: `C` (also `Cq`, `quat`), `CH`, `CH2`, `CH3`, `CH4`, or the
//!   off-resonance letters `s`, `d`, `t`, `q` (0, 1, 2, 3 H). When the entry
//!   also gives a J (`d, J = 245 Hz`), the letter is a splitting by 19F or 31P
//!   and says nothing about attached H, so it is not read as an H count;
//! - the carbon count: `2C`, `2 C`, `2CH` (count and H count together),
//!   `2 CH`, `x2`, `×2`;
//! - assignment labels (`C-4`, `C=O`, `OCH3`) and J values, which are
//!   ignored.
//!
//! Counts: broadband-decoupled intensities are not quantitative, so a line
//! stands for its carbons only through an explicit count. When any line of a
//! list carries a count, the author counted, and a line without one is one
//! carbon; when none does, the number of carbons per line is left open
//! (common practice in reporting; FIELD-GUIDE-style lists write `(2C)` only
//! where symmetry makes carbons equivalent).
//!
//! Errors name the entry and the character, as the 1H reader's do.

use super::journal::{self, Cursor};
use super::solvent::SolventTable;
use crate::chem::{Element, Formula};
use crate::enumerate::constraints::carbon13::carbon_facts;
use crate::enumerate::constraints::Constraints;
use crate::error::{Error, Result};
use serde::Serialize;

/// Lowest and highest 13C shift accepted, ppm: organic carbons lie between
/// about -10 (C-I, some cyclopropanes) and 230 ppm (common practice); the
/// limits are wider so that only typing errors fail.
pub const SHIFT_LIMITS: (f64, f64) = (-40.0, 260.0);

/// Header words that open a 13C list.
const HEADER_13C: &[&str] = &[
    "13C{1H} NMR",
    "13C{1H}-NMR",
    "13C {1H} NMR",
    "¹³C{¹H} NMR",
    "13C NMR",
    "13C-NMR",
    "¹³C NMR",
    "¹³C-NMR",
    "C NMR",
    "NMR",
];
/// Header words of a 1H list (refused here).
const OTHER_NUCLEUS: &[&str] = &["1H NMR", "1H-NMR", "¹H NMR", "¹H-NMR"];

/// One 13C line as written, before it is checked against a formula.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CarbonLine {
    /// 1-based number of the entry in the input.
    pub entry: usize,
    /// The entry as written (for messages).
    pub text: String,
    /// Centre of the line, ppm (the midpoint of a range).
    pub shift: f64,
    /// Low and high end when the input gave a range.
    pub range: Option<(f64, f64)>,
    /// Attached H per carbon, when an edited experiment gave it.
    pub hydrogens: Option<u8>,
    /// Carbons this line stands for: as written, or 1 when the list counts
    /// carbons and this line gives none; `None` when the list gives no counts.
    pub count: Option<u32>,
    /// The line sits on the deuterated solvent's own 13C signal (and gives no
    /// H count): the scorer may leave it unexplained cheaply.
    pub solvent: bool,
}

impl CarbonLine {
    /// Distance (ppm) from `shift` to this line: 0 inside a range.
    pub fn distance(&self, shift: f64) -> f64 {
        super::distance_to(self.shift, self.range, shift)
    }

    /// The shift as quoted: `128.6` or `128.9-128.5`.
    pub fn shift_text(&self) -> String {
        match self.range {
            Some((lo, hi)) => format!("{hi:.1}-{lo:.1}"),
            None => format!("{:.1}", self.shift),
        }
    }

    /// `C`, `CH`, `CH2`, `CH3`, or `?` when no H count was given.
    pub fn kind_label(&self) -> &'static str {
        self.hydrogens.map_or("?", carbon_kind)
    }
}

/// The trade's name of a carbon with `h` attached H.
pub fn carbon_kind(h: u8) -> &'static str {
    match h {
        0 => "C",
        1 => "CH",
        2 => "CH2",
        3 => "CH3",
        _ => "CH4",
    }
}

/// A 13C list as parsed, before the formula check.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct RawCarbon {
    pub frequency_mhz: Option<f64>,
    pub solvent: Option<String>,
    pub lines: Vec<CarbonLine>,
}

/// A checked 13C list: what the scorer reads.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CarbonSpectrum {
    /// 13C frequency, MHz, when given.
    pub frequency_mhz: Option<f64>,
    pub solvent: Option<String>,
    pub lines: Vec<CarbonLine>,
    /// Whether the lines carry carbon counts (see the module doc).
    pub counted: bool,
    /// Remarks for the user (carbons not observed, solvent lines).
    pub notes: Vec<String>,
}

impl CarbonSpectrum {
    /// Add what the 13C list fixes for sure (the H count of each line's carbons,
    /// the carbon types whose shift regions do not overlap; see
    /// `enumerate::constraints::carbon13`) to `constraints`, so that the
    /// generator builds only structures that fit them. Lines taken for the
    /// solvent are left out; a line without a carbon count stands for at least
    /// one carbon. Returns the note that names what was applied.
    pub fn constrain_search(
        &self,
        formula: &Formula,
        constraints: &mut Constraints,
    ) -> Result<Option<String>> {
        let lines: Vec<(f64, Option<u8>, u32)> = self
            .lines
            .iter()
            .filter(|l| !l.solvent)
            .map(|l| (l.shift, l.hydrogens, l.count.unwrap_or(1)))
            .collect();
        let facts = carbon_facts(&lines, formula)?;
        let mut parts = Vec::new();
        if let Some(h) = &facts.hydrogens {
            parts.push(format!("attached H {}", h.describe()));
        }
        if let Some(k) = &facts.classes {
            parts.push(format!("carbon types {}", k.describe()));
        }
        constraints.add_carbon_lines(&lines, formula)?;
        if let Some(t) = &constraints.typical {
            parts.push(format!(
                "searched first, the structures whose carbons fit the typical 13C regions: carbon types {}",
                t.describe()
            ));
        }
        Ok((!parts.is_empty()).then(|| {
        format!(
            "the 13C list constrains the search: {} (--carbon-score-only uses it in the score alone)",
            parts.join("; ")
        )
    }))
    }

    /// Carbons the lines account for (counted lists), else the line count.
    pub fn observed_carbons(&self) -> u32 {
        self.lines
            .iter()
            .filter(|l| !l.solvent)
            .map(|l| l.count.unwrap_or(1))
            .sum()
    }
}

/// Parse journal-style 13C text.
pub fn parse(text: &str) -> Result<RawCarbon> {
    let chars: Vec<char> = text.chars().collect();
    let mut cur = Cursor {
        chars: &chars,
        pos: 0,
    };
    cur.skip_ws();
    if let Some(other) = OTHER_NUCLEUS.iter().find(|p| cur.rest_starts_with_ci(p)) {
        return Err(Error::input(format!(
            "this is a 1H list (it starts with \"{other}\"): give it with --peaks, and the 13C list with --carbon"
        )));
    }
    let mut out = RawCarbon::default();
    journal::parse_header(
        &mut cur,
        &mut out.frequency_mhz,
        &mut out.solvent,
        HEADER_13C,
    )?;
    let pieces = journal::split_entries(
        &chars,
        cur.pos,
        "no lines in the 13C list: write shifts such as 171.1, 60.4 (CH2), 128.5 (CH, 2C), separated by commas",
    )?;
    for (n, &(s, e)) in pieces.iter().enumerate() {
        out.lines.push(parse_line(n + 1, &chars, s, e)?);
    }
    Ok(out)
}

fn parse_line(entry: usize, chars: &[char], s: usize, e: usize) -> Result<CarbonLine> {
    let piece = &chars[s..e];
    let err = |what: String| journal::entry_error(entry, piece, what);
    let (first, range, i) = journal::read_shift(chars, s, e, "13C ", SHIFT_LIMITS, |v| {
        format!(
            "shift {v} ppm is outside the 13C range ({} to {} ppm)",
            SHIFT_LIMITS.0, SHIFT_LIMITS.1
        )
    })
    .map_err(&err)?;
    let shift = range.map_or(first, |(lo, hi)| (lo + hi) / 2.0);
    let mut line = CarbonLine {
        entry,
        text: journal::quote(piece),
        shift,
        range,
        hydrogens: None,
        count: None,
        solvent: false,
    };
    if i >= e {
        return Ok(line);
    }
    if chars[i] != '(' {
        return Err(err(format!(
            "unexpected \"{}\" at character {}: after the shift comes \"(\" with the H count and carbon count, e.g. 128.5 (CH, 2C), or the next entry after a comma",
            chars[i],
            i + 1
        )));
    }
    let open = i;
    let close = journal::closing_paren(chars, open, e).map_err(&err)?;
    read_items(&chars[open + 1..close], open + 1, &mut line).map_err(err)?;
    Ok(line)
}

/// What a word inside the parentheses says.
enum Word {
    /// Attached H per carbon; `letter` when written as s/d/t/q.
    Hydrogens { h: u8, letter: bool },
    /// A carbon count (`2C`, `x2`).
    Count(u32),
    /// A count with an H count (`2CH`).
    CountHydrogens(u32, u8),
    /// A bare whole number: a count when a carbon word follows (`2 CH`).
    Number(u32),
    /// An assignment label: ignored.
    Label,
}

fn hydrogens_word(w: &str) -> Option<u8> {
    match w {
        "C" | "Cq" | "CQ" | "Cquat" | "quat" | "Cq." => Some(0),
        "CH" => Some(1),
        "CH2" | "CH₂" => Some(2),
        "CH3" | "CH₃" => Some(3),
        "CH4" | "CH₄" => Some(4),
        _ => None,
    }
}

fn classify(w: &str) -> Option<Word> {
    if let Some(h) = hydrogens_word(w) {
        return Some(Word::Hydrogens { h, letter: false });
    }
    let letter = match w {
        "s" | "S" => Some(0),
        "d" | "D" => Some(1),
        "t" | "T" => Some(2),
        "q" | "Q" => Some(3),
        _ => None,
    };
    if let Some(h) = letter {
        return Some(Word::Hydrogens { h, letter: true });
    }
    for prefix in ["x", "×", "X"] {
        if let Some(n) = w.strip_prefix(prefix) {
            if let Ok(n) = n.parse::<u32>() {
                return Some(Word::Count(n));
            }
        }
    }
    let digits: String = w.chars().take_while(|c| c.is_ascii_digit()).collect();
    if !digits.is_empty() {
        let n: u32 = digits.parse().ok()?;
        let rest = w[digits.len()..].trim_start_matches(['x', '×', '*']);
        if rest.is_empty() {
            return Some(Word::Number(n));
        }
        if rest == "C" {
            return Some(Word::Count(n));
        }
        if let Some(h) = hydrogens_word(rest) {
            return Some(Word::CountHydrogens(n, h));
        }
        // `1.5`, `3J`: not a count; a J value is handled before this.
        return None;
    }
    // `CH5`, `CH0`: meant as an H count but not one.
    if w.strip_prefix("CH")
        .is_some_and(|r| !r.is_empty() && r.chars().all(|c| c.is_ascii_digit()))
    {
        return None;
    }
    if w.chars().next().is_some_and(|c| c.is_alphabetic()) {
        return Some(Word::Label);
    }
    None
}

/// The items inside an entry's parentheses (`inner` starts at character
/// `offset`, 0-based).
fn read_items(
    inner: &[char],
    offset: usize,
    line: &mut CarbonLine,
) -> std::result::Result<(), String> {
    // Items are separated by commas or semicolons; each may hold several
    // words (`2 CH`, `CH x 2`).
    let mut items: Vec<(String, usize)> = Vec::new();
    let mut buf = String::new();
    let mut at = offset;
    for (j, c) in inner.iter().enumerate() {
        if *c == ',' || *c == ';' {
            items.push((std::mem::take(&mut buf), at));
            at = offset + j + 1;
        } else {
            buf.push(*c);
        }
    }
    items.push((buf, at));
    let has_j = items
        .iter()
        .any(|(item, _)| journal::strip_j(item.trim()).is_some_and(|t| !t.is_empty()));
    let mut letter_h: Option<(u8, usize)> = None;
    for (k, (raw, at)) in items.iter().enumerate() {
        let item = raw.trim();
        let at = at + raw.chars().count() - raw.trim_start().chars().count();
        if item.is_empty() {
            return Err(format!(
                "empty item at character {} inside the parentheses",
                at + 1
            ));
        }
        if journal::strip_j(item).is_some_and(|t| !t.is_empty()) {
            continue;
        }
        // A J list continued after a comma (`J = 245.1, 21.0 Hz`).
        if has_j && k > 0 && item.trim_end_matches("Hz").trim().parse::<f64>().is_ok() {
            continue;
        }
        let words = journal::split_words(item, at);
        let mut pending: Option<(u32, usize)> = None;
        let mut times = false;
        for (word, wat) in words {
            if matches!(word.as_str(), "x" | "×" | "X" | "*") {
                times = true;
                continue;
            }
            if times {
                times = false;
                if let Ok(n) = word.parse::<u32>() {
                    set_count(line, n, wat)?;
                    continue;
                }
            }
            let what = classify(&word).ok_or_else(|| {
                format!(
                    "\"{word}\" at character {} is not an H count (C, CH, CH2, CH3 or s, d, t, q) or a carbon count (2C)",
                    wat + 1
                )
            })?;
            match what {
                Word::Number(n) => {
                    if pending.is_some() {
                        return Err(format!(
                            "\"{word}\" at character {}: two numbers in a row",
                            wat + 1
                        ));
                    }
                    pending = Some((n, wat));
                }
                Word::Hydrogens { h, letter } => {
                    if let Some((n, _)) = pending.take() {
                        // `2 C` is two carbons; `2 CH` two CH carbons.
                        set_count(line, n, wat)?;
                        if !(letter || (h == 0 && word == "C")) {
                            set_h(line, h, &word, wat)?;
                        }
                    } else if letter {
                        if !has_j {
                            letter_h = Some((h, wat));
                        }
                    } else {
                        set_h(line, h, &word, wat)?;
                    }
                }
                Word::Count(n) => set_count(line, n, wat)?,
                Word::CountHydrogens(n, h) => {
                    set_count(line, n, wat)?;
                    set_h(line, h, &word, wat)?;
                }
                Word::Label => {}
            }
        }
        if let Some((n, wat)) = pending {
            return Err(format!(
                "\"{n}\" at character {}: a bare number is neither an H count nor a carbon count; write 2C for two carbons",
                wat + 1
            ));
        }
    }
    if let Some((h, wat)) = letter_h {
        if line.hydrogens.is_none() {
            line.hydrogens = Some(h);
        } else if line.hydrogens != Some(h) {
            return Err(format!(
                "the letter at character {} says {} but the entry also says {}",
                wat + 1,
                carbon_kind(h),
                line.kind_label()
            ));
        }
    }
    Ok(())
}

fn set_h(line: &mut CarbonLine, h: u8, word: &str, at: usize) -> std::result::Result<(), String> {
    if let Some(old) = line.hydrogens {
        if old != h {
            return Err(format!(
                "a second H count \"{word}\" at character {} (the entry already says {})",
                at + 1,
                carbon_kind(old)
            ));
        }
    }
    line.hydrogens = Some(h);
    Ok(())
}

fn set_count(line: &mut CarbonLine, n: u32, at: usize) -> std::result::Result<(), String> {
    if n == 0 || n > 64 {
        return Err(format!(
            "carbon count {n} at character {} must be between 1 and 64",
            at + 1
        ));
    }
    if line.count.is_some_and(|c| c != n) {
        return Err(format!("a second carbon count at character {}", at + 1));
    }
    line.count = Some(n);
    Ok(())
}

/// How far (ppm) a line may sit from the solvent's own line to be taken as
/// it: the solvent multiplet spans about +-0.3 ppm (CDCl3's 1:1:1 triplet,
/// J(C,D) about 32 Hz, is 0.64 ppm wide at 100 MHz; common practice).
const SOLVENT_TOLERANCE: f64 = 0.35;

/// Check a parsed 13C list against the formula: numbers of carbons and H,
/// counts completed, solvent lines marked (the solvent's 13C lines come from
/// `solvents`). When the list names no solvent, `default_solvent` (the 1H
/// list's, else the table's default) is assumed.
pub fn build(
    raw: RawCarbon,
    formula: &Formula,
    solvents: &SolventTable,
    default_solvent: &str,
) -> Result<CarbonSpectrum> {
    let carbons = formula.count(Element::C);
    let hydrogens = formula.hydrogens();
    let mut notes = Vec::new();
    if raw.lines.is_empty() {
        return Err(Error::input("the 13C list has no lines"));
    }
    if carbons == 0 {
        return Err(Error::input(format!(
            "a 13C list was given but {formula} has no carbon"
        )));
    }
    let counted = raw.lines.iter().any(|l| l.count.is_some());
    let solvent_name = raw
        .solvent
        .clone()
        .unwrap_or_else(|| default_solvent.to_string());
    let solvent_at = match solvents.carbon_lines(&solvent_name) {
        Some(at) => at,
        None => {
            // Only when the 13C list names it: an unknown solvent on the 1H
            // side has its note there already.
            if raw.solvent.is_some() {
                notes.push(format!(
                    "solvent \"{solvent_name}\" of the 13C list is not in the solvent table (known: {}): no solvent line recognised",
                    solvents.names().join(", ")
                ));
            }
            &[]
        }
    };
    let mut lines = raw.lines;
    for l in &mut lines {
        if counted && l.count.is_none() {
            l.count = Some(1);
        }
        if l.hydrogens.is_none()
            && solvent_at
                .iter()
                .any(|&s| l.distance(s) <= SOLVENT_TOLERANCE)
        {
            l.solvent = true;
            notes.push(format!(
                "13C line {} at {} may be the {solvent_name} signal: it may stay unexplained at little cost",
                l.entry,
                l.shift_text()
            ));
        }
    }
    let own: Vec<&CarbonLine> = lines.iter().filter(|l| !l.solvent).collect();
    let total: u32 = own.iter().map(|l| l.count.unwrap_or(1)).sum();
    if total > carbons {
        let what = if counted { "carbons" } else { "lines" };
        return Err(Error::input(format!(
            "the 13C list has {total} {what} but {formula} has only {carbons} carbons"
        )));
    }
    if counted && total < carbons {
        notes.push(format!(
            "the 13C list accounts for {total} of {carbons} carbons: the rest are taken as not observed (quaternary carbons are often weak)"
        ));
    }
    if counted && own.iter().all(|l| l.hydrogens.is_some()) {
        let h: u32 = own
            .iter()
            .map(|l| l.count.unwrap_or(1) * l.hydrogens.unwrap_or(0) as u32)
            .sum();
        if h > hydrogens {
            return Err(Error::input(format!(
                "the 13C H counts add up to {h} H on carbon but {formula} has only {hydrogens} H"
            )));
        }
    }
    Ok(CarbonSpectrum {
        frequency_mhz: raw.frequency_mhz,
        solvent: raw.solvent,
        lines,
        counted,
        notes,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lines(text: &str) -> Vec<(f64, Option<u8>, Option<u32>)> {
        parse(text)
            .unwrap()
            .lines
            .iter()
            .map(|l| (l.shift, l.hydrogens, l.count))
            .collect()
    }

    #[test]
    fn journal_example_parses() {
        let raw = parse(
            "13C NMR (101 MHz, CDCl3) δ 200.8, 137.0 (C), 132.9 (CH), 128.6 (CH, 2C), 128.0 (2 CH), 31.8 (CH2), 8.3 (CH3)",
        )
        .unwrap();
        assert_eq!(raw.frequency_mhz, Some(101.0));
        assert_eq!(raw.solvent.as_deref(), Some("CDCl3"));
        let got: Vec<_> = raw
            .lines
            .iter()
            .map(|l| (l.shift, l.hydrogens, l.count))
            .collect();
        assert_eq!(
            got,
            vec![
                (200.8, None, None),
                (137.0, Some(0), None),
                (132.9, Some(1), None),
                (128.6, Some(1), Some(2)),
                (128.0, Some(1), Some(2)),
                (31.8, Some(2), None),
                (8.3, Some(3), None),
            ]
        );
    }

    #[test]
    fn letters_counts_and_labels() {
        assert_eq!(
            lines("170.9 (s), 60.5 (t), 21.0 (q, C-2), 14.2 (q), 128.3 (d, 2C)"),
            vec![
                (170.9, Some(0), None),
                (60.5, Some(2), None),
                (21.0, Some(3), None),
                (14.2, Some(3), None),
                (128.3, Some(1), Some(2)),
            ]
        );
        assert_eq!(
            lines("δC 129.1 (2CH), 77.0 (x2, C), 55.3 (OCH3, CH3), 40.1 (CH2 x 3)"),
            vec![
                (129.1, Some(1), Some(2)),
                (77.0, Some(0), Some(2)),
                (55.3, Some(3), None),
                (40.1, Some(2), Some(3)),
            ]
        );
        // A C-F doublet: the "d" is the 19F splitting, not an H count.
        assert_eq!(
            lines("162.4 (d, J = 245.3 Hz), 115.2 (d, J = 21.4 Hz, CH)"),
            vec![(162.4, None, None), (115.2, Some(1), None)]
        );
        // `2 C` is two carbons (of unknown H count).
        assert_eq!(lines("130.0 (2 C)"), vec![(130.0, None, Some(2))]);
    }

    #[test]
    fn errors_name_entry_and_character() {
        let e = parse("171.1, 60.4 (CH2, CH3)").unwrap_err().to_string();
        assert!(e.contains("entry 2") && e.contains("second H count"), "{e}");
        let e = parse("171.1, 60.4 (CH2").unwrap_err().to_string();
        assert!(e.contains("entry 2") && e.contains("missing \")\""), "{e}");
        let e = parse("171.1, 600.4").unwrap_err().to_string();
        assert!(e.contains("outside the 13C range"), "{e}");
        let e = parse("171.1, , 60.4").unwrap_err().to_string();
        assert!(e.contains("entry 2 is empty"), "{e}");
        let e = parse("171.1 (2)").unwrap_err().to_string();
        assert!(e.contains("bare number"), "{e}");
        let e = parse("1H NMR (400 MHz, CDCl3) δ 4.12 (q, 2H)")
            .unwrap_err()
            .to_string();
        assert!(e.contains("--peaks"), "{e}");
        let e = parse("").unwrap_err().to_string();
        assert!(e.contains("no lines"), "{e}");
    }

    #[test]
    fn build_checks_against_the_formula() {
        let f = Formula::parse("C4H8O2").unwrap();
        let table = SolventTable::embedded();
        // Ethyl acetate, 13C in CDCl3 (Gottlieb, Kotlyar & Nudelman 1997:
        // 171.36, 60.49, 21.04, 14.19; values from memory).
        let s = build(
            parse("171.4 (C), 60.5 (CH2), 21.0 (CH3), 14.2 (CH3)").unwrap(),
            &f,
            &table,
            "CDCl3",
        )
        .unwrap();
        assert!(!s.counted);
        assert_eq!(s.observed_carbons(), 4);
        let e = build(parse("171, 60, 21, 14, 30").unwrap(), &f, &table, "CDCl3")
            .unwrap_err()
            .to_string();
        assert!(e.contains("5 lines") && e.contains("only 4 carbons"), "{e}");
        // Counted list: lines without a count are one carbon.
        let s = build(parse("171.4, 60.5 (CH2, 2C)").unwrap(), &f, &table, "CDCl3").unwrap();
        assert!(s.counted);
        assert_eq!(s.lines[0].count, Some(1));
        assert!(
            s.notes.iter().any(|n| n.contains("3 of 4")),
            "{:?}",
            s.notes
        );
        let e = build(
            parse("171.4 (C), 60.5 (CH3, 2C), 21.0 (CH3, 2C)").unwrap(),
            &f,
            &table,
            "CDCl3",
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("5 carbons") || e.contains("12 H"), "{e}");
        // The CDCl3 triplet left in the list is marked, not counted.
        let s = build(
            parse("13C NMR (CDCl3) δ 171.4, 77.2, 60.5, 21.0, 14.2").unwrap(),
            &f,
            &table,
            "CDCl3",
        )
        .unwrap();
        assert!(s.lines[1].solvent);
        assert_eq!(s.observed_carbons(), 4);
        // The same list in DMSO-d6 (own line 39.52): 77.2 is then a carbon,
        // one too many for the formula.
        let e = build(
            parse("13C NMR (DMSO-d6) δ 171.4, 77.2, 60.5, 21.0, 14.2").unwrap(),
            &f,
            &table,
            "CDCl3",
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("5 lines"), "{e}");
        // A solvent the table does not know is named in a note.
        let s = build(
            parse("13C NMR (CCl4) δ 171.4, 60.5, 21.0, 14.2").unwrap(),
            &f,
            &table,
            "CDCl3",
        )
        .unwrap();
        assert!(
            s.notes
                .iter()
                .any(|n| n.contains("\"CCl4\"") && n.contains("not in the solvent table")),
            "{:?}",
            s.notes
        );
    }
}
