//! Robustness of the observed-data parsers: no input makes them panic; every
//! rejection is an input error with a message.

use isomerank::chem::Formula;
use isomerank::spectrum::{file, integrals, journal, SolventTable};

/// Deterministic pseudo-random generator (xorshift64).
struct Rng(u64);
impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        self.0
    }
}

#[test]
fn random_peak_texts_never_panic() {
    let alphabet: Vec<char> = "0123456789.,;()[]-–— δHJzMmsdtqpbrapxX=:'\"\n1H NMR CDCl3 "
        .chars()
        .collect();
    let formula = Formula::parse("C4H8O2").unwrap();
    let solvents = SolventTable::embedded();
    let mut rng = Rng(0x2545F4914F6CDD1D);
    let mut accepted = 0;
    for _ in 0..20_000 {
        let len = (rng.next() % 40) as usize;
        let text: String = (0..len)
            .map(|_| alphabet[(rng.next() % alphabet.len() as u64) as usize])
            .collect();
        match journal::parse(&text) {
            Ok(raw) => {
                if integrals::build(raw, &formula, &solvents).is_ok() {
                    accepted += 1;
                }
            }
            Err(e) => assert!(!e.to_string().is_empty()),
        }
    }
    // Most random strings are rejected, and the parser still accepts some.
    assert!(accepted < 20_000);
}

#[test]
fn mutated_valid_texts_never_panic() {
    let base =
        "1H NMR (400 MHz, CDCl3) δ 7.32-7.15 (m, 5H), 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H)";
    let chars: Vec<char> = base.chars().collect();
    let formula = Formula::parse("C10H12O2").unwrap();
    let solvents = SolventTable::embedded();
    let mut rng = Rng(0x9E3779B97F4A7C15);
    for _ in 0..20_000 {
        let mut c = chars.clone();
        for _ in 0..1 + rng.next() % 3 {
            let i = (rng.next() % c.len() as u64) as usize;
            match rng.next() % 3 {
                0 => {
                    c.remove(i);
                }
                1 => c.insert(i, chars[(rng.next() % chars.len() as u64) as usize]),
                _ => c[i] = chars[(rng.next() % chars.len() as u64) as usize],
            }
            if c.is_empty() {
                break;
            }
        }
        let text: String = c.into_iter().collect();
        if let Ok(raw) = journal::parse(&text) {
            let _ = integrals::build(raw, &formula, &solvents);
        }
    }
}

#[test]
fn odd_file_values_are_rejected_with_a_message() {
    // TOML allows nan and inf: they must be errors, not costs.
    for bad in [
        "[[multiplets]]\nshift = nan\nmultiplicity = \"s\"\n",
        "[[multiplets]]\nshift = 1.0\nmultiplicity = \"s\"\nintegral = inf\n",
        "[[multiplets]]\nshift = 1.0\nmultiplicity = \"s\"\nj = [nan]\n",
        "frequency = -1\n[[multiplets]]\nshift = 1.0\nmultiplicity = \"s\"\n",
        "integrals = \"percent\"\n[[multiplets]]\nshift = 1.0\nmultiplicity = \"s\"\n",
        "[[multiplets]]\nrange = [1.0]\nmultiplicity = \"s\"\n",
        "[[multiplets]]\nmultiplicity = \"s\"\n",
    ] {
        let e = file::parse("x.toml", bad).unwrap_err().to_string();
        assert!(e.starts_with("x.toml: "), "{e}");
    }
}

/// Parse and build against a formula with the embedded solvent table.
fn spectrum(text: &str, formula: &str) -> isomerank::spectrum::Spectrum {
    let raw = journal::parse(text).unwrap_or_else(|e| panic!("{text}: {e}"));
    integrals::build(
        raw,
        &Formula::parse(formula).unwrap(),
        &SolventTable::embedded(),
    )
    .unwrap_or_else(|e| panic!("{text}: {e}"))
}

#[test]
fn entries_without_a_multiplicity_are_not_reported() {
    // Issue 9 item 4: `3.67 (3H)` and `7.20-7.35 (5H)` as NMRShiftDB2 lists
    // them (tests/data/nmrshiftdb2-v2-dev.toml, 1,333 lists without labels).
    let s = spectrum(
        "1H NMR (CDCl3) δ 7.35-7.20 (5H), 3.67 (3H), 3.62 (s, 2H)",
        "C9H10O2",
    );
    assert!(!s.multiplets[0].pattern.reported);
    assert!(!s.multiplets[1].pattern.reported);
    assert!(s.multiplets[2].pattern.reported);
    assert_eq!(s.multiplets[0].range, Some((7.20, 7.35)));
    assert_eq!(s.multiplets[1].hydrogens, Some(3.0));
    assert_eq!(s.multiplets[1].pattern.label(), "not reported");
    assert!(
        s.notes
            .iter()
            .any(|n| n.contains("entries 1, 2 give no multiplicity")
                && n.contains("no multiplicity term")),
        "{:?}",
        s.notes
    );
    // A spectrum file without the multiplicity key reads the same way.
    let f = file::parse("x.toml", "[[multiplets]]\nshift = 3.67\nintegral = 3\n").unwrap();
    assert!(!f.spectrum.entries[0].pattern.reported);
}

#[test]
fn headers_as_chemists_write_them() {
    // A colon after the header, a d for the δ, or nothing at all.
    for text in [
        "1H NMR (400 MHz, CDCl3): δ 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H)",
        "1H NMR (400 MHz, CDCl3): d 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H)",
        "1H NMR (400 MHz, CDCl3) d 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H)",
        "1H NMR (400 MHz, CDCl3) 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H)",
        "1H NMR: (400 MHz, CDCl3) δ: 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H)",
        "1H NMR (400 MHz, CDCl3): δ = 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H)",
    ] {
        let r = journal::parse(text).unwrap_or_else(|e| panic!("{text}: {e}"));
        assert_eq!(r.frequency_mhz, Some(400.0), "{text}");
        assert_eq!(r.solvent.as_deref(), Some("CDCl3"), "{text}");
        assert_eq!(r.entries.len(), 2, "{text}");
        assert_eq!(r.entries[0].shift, 4.12, "{text}");
        assert_eq!(r.entries[1].pattern.label(), "s", "{text}");
    }
}

#[test]
fn shifts_outside_the_1h_range_are_refused() {
    // The 1H range of organic compounds, about -1 to 16 ppm (common practice).
    for (text, v) in [
        ("1H NMR δ 171.1 (s, 3H)", "171.1"),
        ("1H NMR δ 17.2 (s, 1H)", "17.2"),
        ("1H NMR δ -2.5 (s, 3H)", "-2.5"),
        ("1H NMR δ 7.2-18.3 (m, 5H)", "18.3"),
    ] {
        let e = journal::parse(text).unwrap_err().to_string();
        assert!(
            e.contains(&format!("shift {v} ppm is outside the 1H range")),
            "{e}"
        );
        assert!(e.contains("entry 1"), "{e}");
    }
    // The enol H of a 1,3-diketone near 15.5 ppm is a real 1H shift.
    assert!(journal::parse("15.5 (br s, 1H)").is_ok());
    let e = file::parse(
        "x.toml",
        "[[multiplets]]\nshift = 20.0\nmultiplicity = \"s\"\n",
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("outside the 1H range"), "{e}");
}

#[test]
fn residual_peaks_of_more_solvents() {
    // Gottlieb, Kotlyar & Nudelman, J. Org. Chem. 1997, 62, 7512, Table 1:
    // residual and water peaks (D2O's HOD 4.79 from memory).
    let t = SolventTable::embedded();
    for (name, residual, water) in [
        ("CD3OD", 3.31, 4.87),
        ("acetone-d6", 2.05, 2.84),
        ("C6D6", 7.16, 0.40),
        ("CD3CN", 1.94, 2.13),
        ("D2O", 4.79, 4.79),
    ] {
        assert_eq!(t.peaks(name), Some((residual, Some(water))), "{name}");
    }
    // DMSO-d5's residual 2.50 is a quintet (CHD2, common practice), written
    // quint or m: either is recognised; a quint at 7.26 in CDCl3 is not.
    for label in ["quint", "m", "s"] {
        let s = spectrum(
            &format!("1H NMR (DMSO-d6) δ 7.9 (s, 1H), 2.50 ({label}), 2.20 (s, 3H)"),
            "C3H5NO",
        );
        assert!(s.multiplets[1].solvent.is_some(), "{label}: {:?}", s.notes);
    }
    let s = spectrum("1H NMR (CDCl3) δ 7.26 (quint, 1H), 2.20 (s, 3H)", "C3H5NO");
    assert!(s.multiplets[0].solvent.is_none());
    // A water peak is a singlet: a quintet there is the compound's.
    let s = spectrum(
        "1H NMR (DMSO-d6) δ 3.33 (quint, 1H), 2.20 (s, 3H)",
        "C3H5NO",
    );
    assert!(s.multiplets[0].solvent.is_none());
}

#[test]
fn an_unknown_solvent_is_named() {
    let s = spectrum("1H NMR (400 MHz, THF-d8) δ 2.05 (s, 3H)", "C3H6O");
    assert!(
        s.notes.iter().any(
            |n| n.contains("solvent \"THF-d8\" is not in the solvent table")
                && n.contains("predicted as in CDCl3")
        ),
        "{:?}",
        s.notes
    );
}
