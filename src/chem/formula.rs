//! Molecular formulas: parsing (Hill order or any order), Hill-order output and
//! the degree of unsaturation (DBE).

use super::element::Element;
use crate::error::{Error, Result};
use std::fmt;

/// Element counts of a neutral molecule.
#[derive(Clone, Debug, PartialEq, Eq, Hash, Default)]
pub struct Formula {
    /// Counts indexed like [`Element::HEAVY`].
    heavy: [u32; 9],
    hydrogens: u32,
}

impl Formula {
    /// Parse a formula such as `C8H10`, `C2H3Cl3` or `BrC3H7`. Symbols are
    /// case-sensitive; repeated symbols are summed; a count of 0 is an error.
    pub fn parse(text: &str) -> Result<Formula> {
        let chars: Vec<char> = text.chars().collect();
        if chars.iter().all(|c| c.is_whitespace()) {
            return Err(Error::input(
                "empty molecular formula: give element symbols with counts, e.g. C8H10O",
            ));
        }
        let mut f = Formula::default();
        let mut i = 0;
        while i < chars.len() {
            let c = chars[i];
            let col = i + 1;
            if c.is_ascii_uppercase() {
                let mut sym = c.to_string();
                if i + 1 < chars.len() && chars[i + 1].is_ascii_lowercase() {
                    sym.push(chars[i + 1]);
                }
                let element = match Element::from_symbol(&sym) {
                    Some(e) => e,
                    None if sym.len() == 2 && Element::from_symbol(&sym[..1]).is_some() => {
                        // e.g. "Cx": C followed by a stray lower-case letter.
                        return Err(Error::input(format!(
                            "unknown element \"{sym}\" at column {col} of \"{text}\" (known: C H N O S P F Cl Br I)"
                        )));
                    }
                    None => {
                        // Wrong case such as "CL": suggest the two-letter symbol.
                        let hint = match i.checked_sub(1).map(|j| chars[j]) {
                            Some(prev) if prev.is_ascii_uppercase() => {
                                let two = format!("{prev}{}", sym.to_ascii_lowercase());
                                if Element::from_symbol(&two).is_some() {
                                    format!("; element symbols are case-sensitive: did you mean \"{two}\"?")
                                } else {
                                    String::new()
                                }
                            }
                            _ => String::new(),
                        };
                        return Err(Error::input(format!(
                            "unknown element \"{sym}\" at column {col} of \"{text}\" (known: C H N O S P F Cl Br I){hint}"
                        )));
                    }
                };
                i += sym.len();
                let start = i;
                while i < chars.len() && chars[i].is_ascii_digit() {
                    i += 1;
                }
                let count = if start == i {
                    1
                } else {
                    let digits: String = chars[start..i].iter().collect();
                    match digits.parse::<u32>() {
                        Ok(0) => {
                            return Err(Error::input(format!(
                                "count 0 for {sym} at column {} of \"{text}\": leave the element out instead",
                                start + 1
                            )))
                        }
                        Ok(n) if n <= 10_000 => n,
                        _ => {
                            return Err(Error::input(format!(
                                "count \"{digits}\" for {sym} at column {} of \"{text}\" is too large",
                                start + 1
                            )))
                        }
                    }
                };
                f.add(element, count);
            } else if c.is_ascii_lowercase() {
                // A lower-case start: either wrong case of a known symbol or garbage.
                let mut sym = c.to_string();
                if i + 1 < chars.len() && chars[i + 1].is_ascii_lowercase() {
                    sym.push(chars[i + 1]);
                }
                let hint = capitalised_hint(&sym);
                return Err(Error::input(format!(
                    "element symbols start with a capital letter: \"{sym}\" at column {col} of \"{text}\"{hint}"
                )));
            } else if c.is_ascii_digit() {
                return Err(Error::input(format!(
                    "a count with no element before it at column {col} of \"{text}\""
                )));
            } else {
                return Err(Error::input(format!(
                    "unexpected character '{c}' at column {col} of \"{text}\": a formula is element symbols with counts, e.g. C8H10O"
                )));
            }
        }
        Ok(f)
    }

    pub fn add(&mut self, e: Element, n: u32) {
        match e.heavy_index() {
            Some(i) => self.heavy[i] += n,
            None => self.hydrogens += n,
        }
    }

    pub fn count(&self, e: Element) -> u32 {
        match e.heavy_index() {
            Some(i) => self.heavy[i],
            None => self.hydrogens,
        }
    }

    pub fn hydrogens(&self) -> u32 {
        self.hydrogens
    }

    /// Number of non-hydrogen atoms.
    pub fn heavy_atoms(&self) -> u32 {
        self.heavy.iter().sum()
    }

    /// Twice the degree of unsaturation: 2C + 2 + N + P - H - X
    /// (rings plus pi bonds; O and S do not count). Standard valences.
    pub fn twice_dbe(&self) -> i64 {
        let c = self.count(Element::C) as i64;
        let n = self.count(Element::N) as i64 + self.count(Element::P) as i64;
        let x: i64 = [Element::F, Element::Cl, Element::Br, Element::I]
            .iter()
            .map(|&e| self.count(e) as i64)
            .sum();
        2 * c + 2 + n - self.hydrogens as i64 - x
    }

    /// Degree of unsaturation as a number (may be negative or a half-integer
    /// for formulas no neutral closed-shell structure has).
    pub fn dbe(&self) -> f64 {
        self.twice_dbe() as f64 / 2.0
    }

    /// Checks that a neutral structure with standard valences can exist:
    /// the DBE is a non-negative integer and there is at least one heavy atom.
    pub fn check_neutral(&self) -> Result<u32> {
        let t = self.twice_dbe();
        if self.heavy_atoms() == 0 {
            return Err(Error::input(format!(
                "formula {self} has no atom other than hydrogen"
            )));
        }
        if t < 0 || t % 2 != 0 {
            return Err(Error::input(format!(
                "no neutral structure has this formula: DBE = {} (it must be a whole number of at least 0)",
                fmt_half(t)
            )));
        }
        Ok((t / 2) as u32)
    }

    /// Monoisotopic-free average molar mass in g/mol.
    pub fn molar_mass(&self) -> f64 {
        Element::HILL_ORDER
            .iter()
            .map(|&e| e.mass() * self.count(e) as f64)
            .sum()
    }
}

fn fmt_half(t: i64) -> String {
    if t % 2 == 0 {
        format!("{}", t / 2)
    } else {
        format!("{:.1}", t as f64 / 2.0)
    }
}

fn capitalised_hint(sym: &str) -> String {
    let mut cs = sym.chars();
    let first = cs.next().map(|c| c.to_ascii_uppercase()).unwrap_or(' ');
    let cap: String = std::iter::once(first).chain(cs).collect();
    if Element::from_symbol(&cap).is_some() {
        format!(" (did you mean \"{cap}\"?)")
    } else {
        String::new()
    }
}

impl fmt::Display for Formula {
    /// Hill order: C, then H, then the others alphabetically; without carbon,
    /// all alphabetically (H included).
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut order: Vec<Element> = Element::HILL_ORDER.to_vec();
        if self.count(Element::C) == 0 {
            order.sort_by_key(|e| e.symbol());
        }
        for e in order {
            let n = self.count(e);
            if n == 1 {
                write!(f, "{e}")?;
            } else if n > 1 {
                write!(f, "{e}{n}")?;
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_any_order_and_sums_repeats() {
        let f = Formula::parse("BrC3H7").unwrap();
        assert_eq!(f.to_string(), "C3H7Br");
        let g = Formula::parse("CH3CH2OH").unwrap();
        assert_eq!(g.to_string(), "C2H6O");
        assert_eq!(Formula::parse("C2H3Cl3").unwrap().count(Element::Cl), 3);
    }

    #[test]
    fn dbe_of_known_formulas() {
        // DBE = C - (H + X)/2 + (N + P)/2 + 1 (common practice).
        assert_eq!(Formula::parse("C6H6").unwrap().dbe(), 4.0);
        assert_eq!(Formula::parse("C5H5N").unwrap().dbe(), 4.0);
        assert_eq!(Formula::parse("C2H3Cl3").unwrap().dbe(), 0.0);
        assert_eq!(Formula::parse("C2H7").unwrap().dbe(), -0.5);
    }

    #[test]
    fn errors_name_the_column() {
        let e = Formula::parse("C6Xy").unwrap_err().to_string();
        assert!(e.contains("\"Xy\" at column 3 of \"C6Xy\""), "{e}");
        let e = Formula::parse("CCL4").unwrap_err().to_string();
        assert!(e.contains("\"L\" at column 3"), "{e}");
        let e = Formula::parse("C2H7")
            .unwrap()
            .check_neutral()
            .unwrap_err()
            .to_string();
        assert!(e.contains("DBE = -0.5"), "{e}");
        assert!(Formula::parse("").is_err());
        assert!(Formula::parse("c6h6")
            .unwrap_err()
            .to_string()
            .contains("did you mean \"C\""));
    }
}
