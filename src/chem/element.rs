//! Chemical elements the tool knows, with their standard valences.
//!
//! The set is deliberately small (C H N O S P F Cl Br I): these cover the
//! organic compounds whose 1H NMR spectra the tool ranks. Standard valences are
//! the usual ones (common practice); expanded valences for S (4, 6) and P (5)
//! are used only when asked for.

use std::fmt;

/// A heavy atom element or hydrogen.
#[derive(Copy, Clone, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, serde::Serialize)]
pub enum Element {
    C,
    H,
    N,
    O,
    S,
    P,
    F,
    Cl,
    Br,
    I,
}

impl Element {
    /// All elements in Hill order after C and H (alphabetical), C and H first.
    pub const HILL_ORDER: [Element; 10] = [
        Element::C,
        Element::H,
        Element::Br,
        Element::Cl,
        Element::F,
        Element::I,
        Element::N,
        Element::O,
        Element::P,
        Element::S,
    ];

    /// Heavy (non-hydrogen) elements, in the fixed order used for indexing.
    pub const HEAVY: [Element; 9] = [
        Element::C,
        Element::N,
        Element::O,
        Element::S,
        Element::P,
        Element::F,
        Element::Cl,
        Element::Br,
        Element::I,
    ];

    /// Parse an element symbol exactly as written (case-sensitive: `Cl`, not `CL`).
    pub fn from_symbol(s: &str) -> Option<Element> {
        Some(match s {
            "C" => Element::C,
            "H" => Element::H,
            "N" => Element::N,
            "O" => Element::O,
            "S" => Element::S,
            "P" => Element::P,
            "F" => Element::F,
            "Cl" => Element::Cl,
            "Br" => Element::Br,
            "I" => Element::I,
            _ => return None,
        })
    }

    pub fn symbol(self) -> &'static str {
        match self {
            Element::C => "C",
            Element::H => "H",
            Element::N => "N",
            Element::O => "O",
            Element::S => "S",
            Element::P => "P",
            Element::F => "F",
            Element::Cl => "Cl",
            Element::Br => "Br",
            Element::I => "I",
        }
    }

    /// Standard valence (common practice): C 4, N 3, O 2, S 2, P 3, H and halogens 1.
    pub fn valence(self) -> u8 {
        match self {
            Element::C => 4,
            Element::N | Element::P => 3,
            Element::O | Element::S => 2,
            Element::H | Element::F | Element::Cl | Element::Br | Element::I => 1,
        }
    }

    /// Allowed valences when expanded valences are enabled: S 2/4/6, P 3/5;
    /// every other element keeps its standard valence.
    pub fn valences(self, expanded: bool) -> &'static [u8] {
        match (self, expanded) {
            (Element::S, true) => &[2, 4, 6],
            (Element::P, true) => &[3, 5],
            (Element::C, _) => &[4],
            (Element::N, _) | (Element::P, false) => &[3],
            (Element::O, _) | (Element::S, false) => &[2],
            _ => &[1],
        }
    }

    pub fn is_halogen(self) -> bool {
        matches!(self, Element::F | Element::Cl | Element::Br | Element::I)
    }

    /// Index into [`Element::HEAVY`]; `None` for hydrogen.
    pub fn heavy_index(self) -> Option<usize> {
        Element::HEAVY.iter().position(|&e| e == self)
    }

    /// Whether the element may appear in lower-case (aromatic) form in SMILES.
    pub fn can_be_aromatic(self) -> bool {
        matches!(
            self,
            Element::C | Element::N | Element::O | Element::S | Element::P
        )
    }

    /// Atomic number.
    pub fn atomic_number(self) -> u8 {
        match self {
            Element::H => 1,
            Element::C => 6,
            Element::N => 7,
            Element::O => 8,
            Element::F => 9,
            Element::P => 15,
            Element::S => 16,
            Element::Cl => 17,
            Element::Br => 35,
            Element::I => 53,
        }
    }

    /// Average atomic mass (IUPAC standard atomic weights, conventional values).
    pub fn mass(self) -> f64 {
        match self {
            Element::C => 12.011,
            Element::H => 1.008,
            Element::N => 14.007,
            Element::O => 15.999,
            Element::S => 32.06,
            Element::P => 30.974,
            Element::F => 18.998,
            Element::Cl => 35.45,
            Element::Br => 79.904,
            Element::I => 126.904,
        }
    }
}

impl fmt::Display for Element {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.symbol())
    }
}
