//! The predictor over every constitutional isomer of a few formulas (from
//! the project's generator): no panic, every H in exactly one signal (the
//! integrals add up to the formula's H count: common practice), sigma
//! positive, shifts sorted and inside the 1H window, multiplicity labels from
//! the trade's list.

use isomerank::chem::Formula;
use isomerank::enumerate::{self, Options};
use isomerank::predict::Predictor;

const LABELS: [&str; 20] = [
    "s", "br s", "d", "t", "q", "quint", "sext", "sept", "oct", "non", "m", "dd", "dt", "td", "dq",
    "qd", "tt", "ddd", "ddt", "dtd",
];

#[test]
fn every_isomer_of_small_formulas() {
    let p = Predictor::embedded().unwrap();
    for f in ["C6H6O", "C5H7N", "C4H8O2", "C4H6S", "C3H5Cl", "C7H8O"] {
        let formula = Formula::parse(f).unwrap();
        let mut n = 0;
        enumerate::for_each_ordered(
            &formula,
            &Options::default(),
            |iso| Some(iso.molecule()),
            |m| {
                n += 1;
                let sig = p.try_predict(&m, &Default::default()).unwrap();
                let h: u32 = sig.iter().map(|s| s.hydrogens).sum();
                assert_eq!(h, formula.hydrogens(), "{f}: H count");
                for s in &sig {
                    assert!(
                        s.sigma > 0.0 && s.shift > -1.0 && s.shift < 17.0,
                        "{f}: {s:?}"
                    );
                    let l = s.label();
                    assert!(
                        LABELS.contains(&l.as_str()) || l.chars().all(|c| "dtq".contains(c)),
                        "{f}: label {l}"
                    );
                    assert_eq!(
                        s.j_hz.len(),
                        match &s.multiplicity {
                            isomerank::predict::Multiplicity::Coupled(ns) => ns.len(),
                            _ => 0,
                        }
                    );
                }
                assert!(sig.windows(2).all(|w| w[0].shift >= w[1].shift));
                true
            },
            &mut |_| {},
        )
        .unwrap();
        println!("{f}: {n} isomers predicted");
        assert!(n >= 4);
    }
}
