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
