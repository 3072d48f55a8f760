//! Parser for the journal style in which chemists write a 1H NMR multiplet
//! list, e.g.
//!
//! ```text
//! 1H NMR (400 MHz, CDCl3) δ 7.32-7.15 (m, 5H), 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H)
//! ```
//!
//! The header (`1H NMR (frequency, solvent)`, optionally followed by a
//! colon) and the `δ` are optional; `d` stands for `δ` where the symbol was
//! lost in a copy (`1H NMR (400 MHz, CDCl3): d 7.26 ...`). Each entry is a
//! shift or a range (hyphen or en dash) followed by parentheses holding, in
//! any order, the multiplicity (with `br`/`app`), one or more J (`J = 17.3,
//! 1.5 Hz`) and the integral (`2H`, or a bare number for a relative area).
//! The multiplicity may be missing (`3.67 (3H)`, `7.35-7.20 (5H)`): the
//! entry is then kept as "multiplicity not reported" and scored without a
//! multiplicity term. An assignment label such as `OCH3` inside the
//! parentheses is allowed and ignored. Entries are separated by commas or
//! semicolons.
//!
//! Errors name the entry, quote it, and give the character position (1-based,
//! in the whole text): `entry 3 "2.05 (s 3H": missing ")" (character 58)`.

use super::pattern::ObservedPattern;
use crate::error::{Error, Result};

/// One entry as written, before integrals are checked against a formula.
#[derive(Clone, Debug, PartialEq)]
pub struct RawEntry {
    pub entry: usize,
    pub text: String,
    pub shift: f64,
    pub range: Option<(f64, f64)>,
    pub pattern: ObservedPattern,
    pub j_hz: Vec<f64>,
    /// The integral and whether it was written as an H count (`2H`).
    pub integral: Option<(f64, bool)>,
}

/// The parsed text: header values and entries.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct RawSpectrum {
    pub frequency_mhz: Option<f64>,
    pub solvent: Option<String>,
    pub entries: Vec<RawEntry>,
}

/// Lowest and highest 1H shift accepted, ppm: the 1H range of neutral
/// organic compounds (TMS-like CH3 on Si or metals near 0, the strongly
/// hydrogen-bonded enol H of 1,3-diketones near 15.5; common practice).
/// Beyond it a value is a typing error or a 13C shift in a 1H list.
pub const SHIFT_LIMITS: (f64, f64) = (-1.0, 16.0);

/// The message for a shift outside [`SHIFT_LIMITS`].
pub fn shift_out_of_range(v: f64) -> String {
    format!(
        "shift {v} ppm is outside the 1H range of organic compounds ({} to {} ppm): a typing error, or a 13C shift in a 1H list?",
        SHIFT_LIMITS.0, SHIFT_LIMITS.1
    )
}
/// Largest |J| accepted, Hz: couplings seen in a 1H spectrum stay below
/// about 60 Hz (1H-1H below about 20, geminal sp3 up to -20; 2J(H,F) of a
/// CHF2 group 50-57; common practice). A 1J(P,H) of several hundred Hz is
/// not a multiplet splitting one would list with the others.
pub const MAX_J_HZ: f64 = 65.0;

pub(super) struct Cursor<'a> {
    pub(super) chars: &'a [char],
    pub(super) pos: usize,
}

impl<'a> Cursor<'a> {
    pub(super) fn peek(&self) -> Option<char> {
        self.chars.get(self.pos).copied()
    }
    pub(super) fn skip_ws(&mut self) {
        while self.peek().is_some_and(char::is_whitespace) {
            self.pos += 1;
        }
    }
    pub(super) fn rest_starts_with_ci(&self, s: &str) -> bool {
        let n = s.chars().count();
        if self.pos + n > self.chars.len() {
            return false;
        }
        self.chars[self.pos..self.pos + n]
            .iter()
            .zip(s.chars())
            .all(|(a, b)| a.to_lowercase().eq(b.to_lowercase()))
    }
}

/// Parse journal-style text.
pub fn parse(text: &str) -> Result<RawSpectrum> {
    let chars: Vec<char> = text.chars().collect();
    let mut cur = Cursor {
        chars: &chars,
        pos: 0,
    };
    let mut out = RawSpectrum::default();
    cur.skip_ws();
    if let Some(other) = OTHER_NUCLEUS.iter().find(|p| cur.rest_starts_with_ci(p)) {
        return Err(Error::input(format!(
            "this is a 13C list (it starts with \"{other}\"): give it with --carbon, and the 1H list with --peaks"
        )));
    }
    parse_header(
        &mut cur,
        &mut out.frequency_mhz,
        &mut out.solvent,
        HEADER_1H,
    )?;
    let pieces = split_entries(
        &chars,
        cur.pos,
        "no multiplets in the peak list: write entries such as 2.05 (s, 3H), separated by commas",
    )?;
    for (n, &(s, e)) in pieces.iter().enumerate() {
        out.entries.push(parse_entry(n + 1, &chars, s, e)?);
    }
    Ok(out)
}

/// Header words that open a 1H list.
pub(super) const HEADER_1H: &[&str] = &["1H NMR", "¹H NMR", "1H-NMR", "¹H-NMR", "H NMR", "NMR"];
/// Header words that open a 13C list (refused by the 1H reader).
pub(super) const OTHER_NUCLEUS: &[&str] = &["13C", "¹³C"];

/// Split the body (from `body_start`) into entries at top-level commas and
/// semicolons: (start, end) character ranges, each non-blank (an empty list
/// is the error `when_empty`). A final full
/// stop ends a sentence, not an entry. Errors name the entry and character.
pub(super) fn split_entries(
    chars: &[char],
    body_start: usize,
    when_empty: &str,
) -> Result<Vec<(usize, usize)>> {
    let mut end = chars.len();
    // A final full stop ends a sentence, not an entry.
    while end > body_start && (chars[end - 1].is_whitespace() || chars[end - 1] == '.') {
        end -= 1;
    }
    let mut pieces: Vec<(usize, usize)> = Vec::new();
    let mut start = body_start;
    let mut depth = 0usize;
    let mut open_at = 0usize;
    let mut i = body_start;
    while i < end {
        match chars[i] {
            '(' | '[' => {
                if depth > 0 {
                    let entry = pieces.len() + 1;
                    return Err(entry_error(
                        entry,
                        &chars[start..i],
                        format!("missing \")\" before the \"(\" at character {}", i + 1),
                    ));
                }
                depth += 1;
                open_at = i;
            }
            ')' | ']' => {
                if depth == 0 {
                    let entry = pieces.len() + 1;
                    return Err(entry_error(
                        entry,
                        &chars[start..=i],
                        format!("\")\" without \"(\" at character {}", i + 1),
                    ));
                }
                depth -= 1;
            }
            ',' | ';' if depth == 0 => {
                pieces.push((start, i));
                start = i + 1;
            }
            _ => {}
        }
        i += 1;
    }
    if depth > 0 {
        let entry = pieces.len() + 1;
        return Err(entry_error(
            entry,
            &chars[start..end],
            format!(
                "missing \")\" (the \"(\" at character {} is not closed)",
                open_at + 1
            ),
        ));
    }
    pieces.push((start, end));
    for (n, &(s, e)) in pieces.iter().enumerate() {
        let entry = n + 1;
        if chars[s..e].iter().all(|c| c.is_whitespace()) {
            if pieces.len() == 1 {
                return Err(Error::input(when_empty));
            }
            return Err(Error::input(format!(
                "entry {entry} is empty (character {}): remove the extra comma",
                s + 1
            )));
        }
    }
    Ok(pieces)
}

pub(super) fn entry_error(entry: usize, text: &[char], what: String) -> Error {
    Error::input(format!("entry {entry} \"{}\": {what}", quote(text)))
}

pub(super) fn quote(text: &[char]) -> String {
    let s: String = text.iter().collect();
    let s = s.trim();
    if s.chars().count() > 48 {
        let short: String = s.chars().take(45).collect();
        format!("{short}...")
    } else {
        s.to_string()
    }
}

/// `1H NMR (400 MHz, CDCl3) δ` or `δ` or `1H NMR:` or nothing.
pub(super) fn parse_header(
    cur: &mut Cursor,
    frequency_mhz: &mut Option<f64>,
    solvent: &mut Option<String>,
    prefixes: &[&str],
) -> Result<()> {
    let mut had_nmr = false;
    for prefix in prefixes {
        if cur.rest_starts_with_ci(prefix) {
            cur.pos += prefix.chars().count();
            had_nmr = true;
            break;
        }
    }
    cur.skip_ws();
    if had_nmr && matches!(cur.peek(), Some(':')) {
        // `1H NMR: (400 MHz, CDCl3) δ ...`
        cur.pos += 1;
        cur.skip_ws();
    }
    if had_nmr && cur.peek() == Some('(') {
        let open = cur.pos;
        let mut depth = 0;
        let mut close = None;
        for j in open..cur.chars.len() {
            match cur.chars[j] {
                '(' => depth += 1,
                ')' => {
                    depth -= 1;
                    if depth == 0 {
                        close = Some(j);
                        break;
                    }
                }
                _ => {}
            }
        }
        let Some(close) = close else {
            return Err(Error::input(format!(
                "header: missing \")\" (the \"(\" at character {} is not closed)",
                open + 1
            )));
        };
        parse_header_items(
            &cur.chars[open + 1..close],
            open + 1,
            frequency_mhz,
            solvent,
        )?;
        cur.pos = close + 1;
        cur.skip_ws();
    }
    // `1H NMR (400 MHz, CDCl3): δ 7.26 ...`: a colon before the δ.
    if matches!(cur.peek(), Some(':')) {
        cur.pos += 1;
        cur.skip_ws();
    }
    let mut had_delta = false;
    for d in ["δH", "δC", "δ", "delta"] {
        if cur.rest_starts_with_ci(d) {
            cur.pos += d.chars().count();
            had_delta = true;
            break;
        }
    }
    // `d 7.26 (s, 1H)`: a δ lost in a copy. No entry starts with a letter,
    // so a lone d before a number, colon or = can mean nothing else.
    if !had_delta && matches!(cur.peek(), Some('d') | Some('D')) {
        let after = cur.chars.get(cur.pos + 1).copied();
        let next_non_ws = cur.chars[cur.pos + 1..]
            .iter()
            .find(|c| !c.is_whitespace())
            .copied();
        let starts_number = |c: Option<char>| {
            c.is_some_and(|c| c.is_ascii_digit() || matches!(c, '-' | '−' | '.' | ':' | '='))
        };
        if after.is_some_and(|c| c.is_whitespace() || matches!(c, ':' | '='))
            && starts_number(next_non_ws)
        {
            cur.pos += 1;
        }
    }
    cur.skip_ws();
    if cur.rest_starts_with_ci("(ppm)") {
        cur.pos += 5;
        cur.skip_ws();
    }
    if matches!(cur.peek(), Some(':') | Some('=')) {
        cur.pos += 1;
    }
    cur.skip_ws();
    Ok(())
}

/// Header items: frequency (`400 MHz`), solvent, temperature (ignored).
fn parse_header_items(
    chars: &[char],
    offset: usize,
    frequency_mhz: &mut Option<f64>,
    solvent: &mut Option<String>,
) -> Result<()> {
    let text: String = chars.iter().collect();
    let mut depth = 0;
    let mut items = Vec::new();
    let mut buf = String::new();
    let mut item_col = offset;
    for (col, c) in (offset..).zip(text.chars()) {
        match c {
            '(' => depth += 1,
            ')' => depth -= 1,
            _ => {}
        }
        if c == ',' && depth == 0 {
            items.push((std::mem::take(&mut buf), item_col));
            item_col = col + 1;
        } else {
            buf.push(c);
        }
    }
    items.push((buf, item_col));
    for (item, at) in items {
        let item = item.trim();
        if item.is_empty() {
            continue;
        }
        let lower = item.to_lowercase();
        if let Some(num) = lower.strip_suffix("mhz") {
            let f: f64 = num.trim().parse().map_err(|_| {
                Error::input(format!(
                    "header: \"{item}\" at character {} is not a frequency such as 400 MHz",
                    at + 1
                ))
            })?;
            if !(f > 0.0 && f < 2000.0) {
                return Err(Error::input(format!(
                    "header: frequency {f} MHz at character {} is out of range (1H spectrometers run at about 40 to 1200 MHz)",
                    at + 1
                )));
            }
            *frequency_mhz = Some(f);
        } else if lower.ends_with(" k")
            || lower.ends_with("°c")
            || lower.ends_with(" c")
            || lower.ends_with("k") && lower[..lower.len() - 1].trim().parse::<f64>().is_ok()
        {
            // Temperature: not used by the scorer.
        } else {
            *solvent = Some(item.to_string());
        }
    }
    Ok(())
}

fn parse_entry(entry: usize, chars: &[char], s: usize, e: usize) -> Result<RawEntry> {
    let piece = &chars[s..e];
    let err = |what: String| entry_error(entry, piece, what);
    let (first, range, i) =
        read_shift(chars, s, e, "", SHIFT_LIMITS, shift_out_of_range).map_err(err)?;
    if i >= e || chars[i] != '(' {
        let what = if i >= e {
            "missing \"(\" with the multiplicity and integral after the shift, e.g. 2.05 (s, 3H)"
                .to_string()
        } else {
            format!(
                "unexpected \"{}\" at character {}: after the shift comes \"(\" with the multiplicity and integral, e.g. 2.05 (s, 3H)",
                chars[i],
                i + 1
            )
        };
        return Err(err(what));
    }
    let open = i;
    let close = closing_paren(chars, open, e).map_err(err)?;
    // Items inside the parentheses, with their starting character.
    let mut items: Vec<(String, usize)> = Vec::new();
    let mut buf = String::new();
    let mut at = open + 1;
    for (j, &c) in chars.iter().enumerate().take(close).skip(open + 1) {
        if c == ',' || c == ';' {
            items.push((std::mem::take(&mut buf), at));
            at = j + 1;
        } else {
            buf.push(c);
        }
    }
    items.push((buf, at));
    let mut pattern: Option<ObservedPattern> = None;
    let mut j_hz: Vec<f64> = Vec::new();
    let mut integral: Option<(f64, bool)> = None;
    let mut k = 0;
    while k < items.len() {
        let (raw, at) = (&items[k].0, items[k].1);
        let item = raw.trim();
        let at = at + raw.len() - raw.trim_start().len();
        k += 1;
        if item.is_empty() {
            return Err(err(format!(
                "empty item at character {} inside the parentheses",
                at + 1
            )));
        }
        if let Some(j_text) = strip_j(item) {
            let (mut values, mut closed) = parse_j_values(j_text).ok_or_else(|| {
                err(format!(
                    "\"{item}\" at character {} is not a coupling constant such as J = 7.1 Hz",
                    at + 1
                ))
            })?;
            // `J = 17.3, 1.5 Hz`: the list continues over commas until "Hz".
            while !closed && k < items.len() {
                let next = items[k].0.trim();
                match parse_j_values(next) {
                    Some((more, c)) if !more.is_empty() && !next.to_lowercase().ends_with('h') => {
                        values.extend(more);
                        closed = c;
                        k += 1;
                    }
                    _ => break,
                }
            }
            for &v in &values {
                let in_range = v.abs() <= MAX_J_HZ;
                if !in_range {
                    return Err(err(format!(
                        "J = {v} Hz at character {} is out of range (couplings in a 1H spectrum, to 19F included, are below {MAX_J_HZ} Hz)",
                        at + 1
                    )));
                }
            }
            j_hz.extend(values.iter().map(|v| v.abs()));
            continue;
        }
        let mut parts: Vec<(String, usize)> = vec![(item.to_string(), at)];
        if classify(item).is_none() && item.contains(char::is_whitespace) {
            // "s 3H": a missing comma; read the words one by one.
            parts = split_words(item, at);
        }
        for (part, pat) in parts {
            match classify(&part) {
                Some(Item::Pattern(p)) => {
                    if pattern.is_some() {
                        return Err(err(format!(
                            "a second multiplicity \"{part}\" at character {}",
                            pat + 1
                        )));
                    }
                    pattern = Some(p);
                }
                Some(Item::Integral(v, is_h)) => {
                    if integral.is_some() {
                        return Err(err(format!(
                            "a second integral \"{part}\" at character {}",
                            pat + 1
                        )));
                    }
                    // Any positive size: relative integrals straight from
                    // an instrument run to thousands (scaled to the formula).
                    if !(v.is_finite() && v > 0.0) {
                        return Err(err(format!(
                            "integral \"{part}\" at character {} must be a positive number",
                            pat + 1
                        )));
                    }
                    integral = Some((v, is_h));
                }
                Some(Item::Label) => {}
                None => {
                    return Err(err(format!(
                        "\"{part}\" at character {} is not a multiplicity (s, d, t, q, m, ...), a J (J = 7.1 Hz) or an integral (3H)",
                        pat + 1
                    )));
                }
            }
        }
    }
    // No multiplicity written: kept as not reported (issue 9, item 4).
    let pattern = pattern.unwrap_or_else(ObservedPattern::not_reported);
    let shift = match range {
        Some((lo, hi)) => (lo + hi) / 2.0,
        None => first,
    };
    j_hz.sort_by(|a, b| b.total_cmp(a));
    Ok(RawEntry {
        entry,
        text: quote(piece),
        shift,
        range,
        pattern,
        j_hz,
        integral,
    })
}

enum Item {
    Pattern(ObservedPattern),
    Integral(f64, bool),
    /// An assignment label such as `OCH3` or `ArH`: ignored.
    Label,
}

fn classify(item: &str) -> Option<Item> {
    if let Some(p) = ObservedPattern::parse(item) {
        return Some(Item::Pattern(p));
    }
    let compact: String = item.chars().filter(|c| !c.is_whitespace()).collect();
    if let Some(num) = compact.strip_suffix('H') {
        if let Ok(v) = num.parse::<f64>() {
            return Some(Item::Integral(v, true));
        }
    }
    if let Ok(v) = compact.parse::<f64>() {
        return Some(Item::Integral(v, false));
    }
    if item.chars().next().is_some_and(|c| c.is_ascii_uppercase()) {
        return Some(Item::Label);
    }
    None
}

pub(super) fn split_words(item: &str, at: usize) -> Vec<(String, usize)> {
    let mut out = Vec::new();
    let mut offset = 0;
    for word in item.split_whitespace() {
        let idx = item[offset..].find(word).unwrap_or(0) + offset;
        out.push((word.to_string(), at + item[..idx].chars().count()));
        offset = idx + word.len();
    }
    out
}

/// `J = 7.1 Hz`, `J=7.1`, `3J = 7.1 Hz`, `JHH 7.1`: the text after the J.
pub(super) fn strip_j(item: &str) -> Option<&str> {
    let t = item.trim_start_matches(|c: char| c.is_ascii_digit() || "²³⁴".contains(c));
    let t = t.strip_prefix('J')?;
    let t = t.strip_prefix("HH").unwrap_or(t);
    let t = t.trim_start();
    let t = t.strip_prefix('=').unwrap_or(t);
    Some(t.trim())
}

/// Numbers of a J list (`17.3 Hz`, `7.1`, `17.3 and 1.5 Hz`) and whether the
/// list was closed by `Hz`.
fn parse_j_values(text: &str) -> Option<(Vec<f64>, bool)> {
    let t = text.trim();
    let (t, closed) = match t.strip_suffix("Hz").or_else(|| t.strip_suffix("hz")) {
        Some(r) => (r.trim(), true),
        None => (t, false),
    };
    let mut values = Vec::new();
    for part in t.split(|c: char| c == ',' || c.is_whitespace()) {
        let p = part.trim();
        if p.is_empty() || p == "and" || p == "&" {
            continue;
        }
        values.push(p.parse::<f64>().ok()?);
    }
    if values.is_empty() {
        return None;
    }
    Some((values, closed))
}

/// A decimal number (optionally signed) starting at `i`; returns the value
/// and the index after it.
/// What [`read_shift`] gives: (first number, range, index after), or the
/// error's text.
pub(super) type ShiftRead = std::result::Result<(f64, Option<(f64, f64)>, usize), String>;

/// The shift or range at the start of an entry (`chars[s..e]`): the first
/// number, the range (low, high) when a dash and a second number follow, and
/// the index after them, an optional "ppm" and the white space behind.
/// `nucleus` names the nucleus in the message ("" or "13C "); every number
/// must lie within `limits`, else `out_of_range` words the error.
pub(super) fn read_shift(
    chars: &[char],
    s: usize,
    e: usize,
    nucleus: &str,
    limits: (f64, f64),
    out_of_range: impl Fn(f64) -> String,
) -> ShiftRead {
    let skip_ws = |i: &mut usize| {
        while *i < e && chars[*i].is_whitespace() {
            *i += 1;
        }
    };
    let mut i = s;
    skip_ws(&mut i);
    let (first, next) = read_number(chars, i, e).ok_or_else(|| {
        format!(
            "expected a {nucleus}chemical shift (a number in ppm) at character {}",
            i + 1
        )
    })?;
    i = next;
    skip_ws(&mut i);
    let mut range = None;
    if i < e && matches!(chars[i], '-' | '–' | '—' | '‒') {
        let dash = i;
        i += 1;
        skip_ws(&mut i);
        let (second, next) = read_number(chars, i, e).ok_or_else(|| {
            format!(
                "expected the second shift of the range after the dash at character {}",
                dash + 1
            )
        })?;
        i = next;
        range = Some((first.min(second), first.max(second)));
        skip_ws(&mut i);
    }
    for v in [Some(first), range.map(|r| r.0), range.map(|r| r.1)]
        .into_iter()
        .flatten()
    {
        if !(limits.0..=limits.1).contains(&v) {
            return Err(out_of_range(v));
        }
    }
    if chars[i..e.min(i + 3)]
        .iter()
        .collect::<String>()
        .eq_ignore_ascii_case("ppm")
    {
        i += 3;
        skip_ws(&mut i);
    }
    Ok((first, range, i))
}

/// The `)` that closes the group opened at `chars[open]`, when nothing but
/// white space follows it before `e`; else the error's text.
pub(super) fn closing_paren(
    chars: &[char],
    open: usize,
    e: usize,
) -> std::result::Result<usize, String> {
    let close = (open..e)
        .find(|&j| chars[j] == ')')
        .ok_or_else(|| "missing \")\"".to_string())?;
    if let Some(j) = (close + 1..e).find(|&j| !chars[j].is_whitespace()) {
        return Err(format!(
            "unexpected \"{}\" at character {} after \")\": separate entries with commas",
            chars[j],
            j + 1
        ));
    }
    Ok(close)
}

pub(super) fn read_number(chars: &[char], i: usize, e: usize) -> Option<(f64, usize)> {
    let mut j = i;
    if j < e && (chars[j] == '-' || chars[j] == '−') {
        j += 1;
    }
    let digits_start = j;
    while j < e && (chars[j].is_ascii_digit() || chars[j] == '.') {
        j += 1;
    }
    if j == digits_start {
        return None;
    }
    let s: String = chars[i..j]
        .iter()
        .map(|&c| if c == '−' { '-' } else { c })
        .collect();
    s.parse::<f64>().ok().map(|v| (v, j))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::predict::Multiplicity;

    #[test]
    fn journal_example_parses() {
        let r = parse(
            "1H NMR (400 MHz, CDCl3) δ 7.32-7.15 (m, 5H), 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H)",
        )
        .unwrap();
        assert_eq!(r.frequency_mhz, Some(400.0));
        assert_eq!(r.solvent.as_deref(), Some("CDCl3"));
        assert_eq!(r.entries.len(), 3);
        assert_eq!(r.entries[0].range, Some((7.15, 7.32)));
        assert_eq!(r.entries[0].integral, Some((5.0, true)));
        assert_eq!(r.entries[1].j_hz, vec![7.1]);
        assert_eq!(
            r.entries[1].pattern.multiplicity,
            Multiplicity::Coupled(vec![3])
        );
        assert_eq!(r.entries[2].shift, 2.05);
    }

    #[test]
    fn items_in_any_order_with_j_lists_and_en_dash() {
        let r = parse("δ 6.45–6.40 (1H, J = 17.3, 1.5 Hz, dd); 5.9 (br s, 1H, OH)").unwrap();
        assert_eq!(r.entries[0].j_hz, vec![17.3, 1.5]);
        assert_eq!(r.entries[0].range, Some((6.40, 6.45)));
        assert_eq!(r.entries[1].pattern.label(), "br s");
        let r = parse("1.20 (3H, t, J=7.0Hz)").unwrap();
        assert_eq!(r.entries[0].j_hz, vec![7.0]);
        // A relative integral: a bare number.
        let r = parse("2.05 (s, 1.00)").unwrap();
        assert_eq!(r.entries[0].integral, Some((1.0, false)));
        // Solvent written with parentheses inside the header.
        let r = parse("1H NMR (300 MHz, (CD3)2SO): 2.05 (s, 3H)").unwrap();
        assert_eq!(r.solvent.as_deref(), Some("(CD3)2SO"));
    }

    #[test]
    fn errors_name_entry_and_character() {
        let e = parse("4.12 (q, 2H), 1.26 (t, 3H), 2.05 (s 3H")
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("entry 3 \"2.05 (s 3H\": missing \")\""),
            "{e}"
        );
        let e = parse("4.12 (x, 2H)").unwrap_err().to_string();
        assert!(
            e.contains("entry 1") && e.contains("\"x\" at character 7"),
            "{e}"
        );
        let e = parse("4.12 (q, 2H), , 2.0 (s, 3H)")
            .unwrap_err()
            .to_string();
        assert!(e.contains("entry 2 is empty"), "{e}");
        let e = parse("abc (s, 3H)").unwrap_err().to_string();
        assert!(e.contains("expected a chemical shift"), "{e}");
        let e = parse("2.05 (s, 3H, 3H)").unwrap_err().to_string();
        assert!(e.contains("second integral"), "{e}");
    }
}
