//! The predicted 1H signal: what the scorer compares with an observed multiplet.
//! Field names follow the `predict --format json` schema.

use serde::Serialize;

/// A first-order splitting pattern as the trade labels it.
///
/// `Coupled(ns)` holds the number of equivalent partners for each distinct J,
/// largest J first: `[3]` is a quartet, `[1, 1]` a dd, `[2, 1]` a td (triplet of
/// doublets: the larger J to two H). `Singlet` is no resolved coupling;
/// `Multiplet` is a pattern not first-order (reported as m).
#[derive(Clone, Debug, PartialEq, Eq, Hash, Serialize)]
pub enum Multiplicity {
    Singlet,
    Coupled(Vec<u8>),
    Multiplet,
}

impl Multiplicity {
    /// The trade's label: s, d, t, q, quint, sext, sept, oct, non, dd, dt, td,
    /// dq, qd, tt, ddd, ..., m.
    pub fn label(&self) -> String {
        fn one(n: u8) -> &'static str {
            match n {
                1 => "d",
                2 => "t",
                3 => "q",
                4 => "quint",
                5 => "sext",
                6 => "sept",
                7 => "oct",
                8 => "non",
                _ => "m",
            }
        }
        match self {
            Multiplicity::Singlet => "s".into(),
            Multiplicity::Multiplet => "m".into(),
            Multiplicity::Coupled(ns) if ns.len() == 1 => one(ns[0]).into(),
            Multiplicity::Coupled(ns) if ns.iter().all(|&n| (1..=3).contains(&n)) => {
                ns.iter().map(|&n| one(n)).collect()
            }
            Multiplicity::Coupled(_) => "m".into(),
        }
    }

    /// Relative line intensities of the first-order pattern: for each set of
    /// n equivalent partners a row of Pascal's triangle (binomial
    /// coefficients C(n, k)), the rows convolved for several J (assumed
    /// different enough that no lines coincide). `None` for m.
    pub fn intensities(&self) -> Option<Vec<u64>> {
        let ns: &[u8] = match self {
            Multiplicity::Singlet => &[],
            Multiplicity::Coupled(ns) => ns,
            Multiplicity::Multiplet => return None,
        };
        let mut out = vec![1u64];
        for &n in ns {
            let mut row = vec![1u64];
            for k in 0..n as u64 {
                let next = row[k as usize] * (n as u64 - k) / (k + 1);
                row.push(next);
            }
            let mut conv = Vec::with_capacity(out.len() * row.len());
            for &a in &out {
                for &b in &row {
                    conv.push(a * b);
                }
            }
            out = conv;
        }
        Some(out)
    }

    /// Number of lines of the first-order pattern: product of (n + 1).
    pub fn lines(&self) -> Option<u32> {
        match self {
            Multiplicity::Singlet => Some(1),
            Multiplicity::Coupled(ns) => Some(ns.iter().map(|&n| n as u32 + 1).product()),
            Multiplicity::Multiplet => None,
        }
    }
}

/// One predicted signal: a group of equivalent H.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PredictedSignal {
    /// Chemical shift estimate, ppm.
    pub shift: f64,
    /// Typical error of the method that gave `shift`, ppm.
    pub sigma: f64,
    /// Number of H in the group (the integral).
    pub hydrogens: u32,
    pub multiplicity: Multiplicity,
    /// Estimated J per distinct coupling, Hz, largest first (parallel to the
    /// partner counts of `Multiplicity::Coupled`).
    pub j_hz: Vec<f64>,
    /// Heavy atoms (indices into the molecule) carrying these H.
    pub atoms: Vec<usize>,
    /// OH, NH, SH, COOH: exchangeable H, often broad or missing.
    pub exchangeable: bool,
    pub notes: Vec<String>,
    /// A diastereotopic pair (the molecule has a stereocentre): two methyls
    /// on a prochiral carbon, or the two H of a CH2. The scorer reads it
    /// either as one group or as two halves of `hydrogens / 2` H, whichever
    /// explains the data better (src/score/halves.rs). For two methyls per
    /// prochiral carbon the first half of `atoms` holds one methyl of each
    /// pair and the second half the others; a CH2 pair's halves are both on
    /// all of `atoms`. Not written to JSON.
    #[serde(skip)]
    pub halves: bool,
    /// For a diastereotopic CH2 pair (`halves` on the same atoms): the
    /// geminal J each H shows when the pair is read as two signals (each H
    /// split by the other, couplings.toml `geminal_sp3`); 0 otherwise. Not
    /// written to JSON.
    #[serde(skip)]
    pub geminal_hz: f64,
    /// For a diastereotopic CH2 pair: the pattern (and J, largest first)
    /// of one of its H read as its own signal, as the predictor found it
    /// from the H's couplings one by one (src/predict/coupling.rs,
    /// `half_pattern`); `None` when not given (the scorer then derives it
    /// from the whole group's pattern and `geminal_hz`). Not written to
    /// JSON.
    #[serde(skip)]
    pub half_pattern: Option<(Multiplicity, Vec<f64>)>,
}

impl PredictedSignal {
    /// The label as a chemist writes it: the multiplicity label, with an
    /// uncoupled exchangeable H written "br s".
    pub fn label(&self) -> String {
        if self.exchangeable && self.multiplicity == Multiplicity::Singlet {
            "br s".into()
        } else {
            self.multiplicity.label()
        }
    }
}

/// One predicted 13C signal: a carbon symmetry class (automorphism orbit of
/// the molecular graph restricted to carbon). Field names follow the
/// `predict --format json` schema (`"carbon": [...]`).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PredictedCarbon {
    /// Chemical shift estimate, ppm.
    pub shift: f64,
    /// Typical error of the method that gave `shift`, ppm.
    pub sigma: f64,
    /// Number of carbons in the class (the size of the orbit).
    pub carbons: u32,
    /// H attached to each carbon of the class (0 C, 1 CH, 2 CH2, 3 CH3, 4 CH4).
    pub hydrogens: u8,
    /// Heavy atoms (indices into the molecule) of the class.
    pub atoms: Vec<usize>,
    /// The class is two diastereotopic methyls per prochiral carbon (the
    /// molecule has a stereocentre): the scorer reads it either as one
    /// class or as two classes of `carbons / 2`, the first half of `atoms`
    /// holding one methyl of each pair. Not written to JSON.
    #[serde(skip)]
    pub halves: bool,
}
