//! 13C of the carbons next to the charge-separated N(V) groups that
//! `--charge-separated` builds (nitro, azine N-oxide): the hand rows of
//! fragment-library/carbon-special.toml against the shifts they were set
//! from, and against molecules they were not set from (4-nitrotoluene,
//! 1-nitropropane), within the stated sigma plus 1.5 ppm.

use isomerank::chem::smiles::parse_smiles;
use isomerank::predict::{PredictOptions, Predictor};

/// The predicted shift and sigma of the class holding atom `a` (SMILES
/// atom order).
fn predicted(smiles: &str, a: usize) -> (f64, f64) {
    let p = Predictor::embedded().unwrap();
    let mol = parse_smiles(smiles).unwrap();
    let list = p
        .try_predict_carbon(&mol, &PredictOptions::default())
        .unwrap();
    let c = list
        .iter()
        .find(|c| c.atoms.contains(&a))
        .unwrap_or_else(|| panic!("atom {a} of {smiles} not in the 13C list"));
    (c.shift, c.sigma)
}

fn near(smiles: &str, a: usize, want: f64, slack: f64) {
    let (got, sigma) = predicted(smiles, a);
    assert!(
        (got - want).abs() <= sigma + slack,
        "{smiles} atom {a}: predicted {got:.1} ppm, expected {want:.1} (sigma {sigma:.1})"
    );
}

#[test]
fn nitroalkane_carbons() {
    // Nitromethane 62.5 ppm in CDCl3: Gottlieb, Kotlyar & Nudelman,
    // J. Org. Chem. 1997, 62, 7512, Table 2 (from memory). Before the N(V)
    // rows the predictor gave 34.8.
    near("C[N+](=O)[O-]", 0, 62.5, 0.3);
    // Nitroethane CH2 70.6 and CH3 12.3; 2-nitropropane CH 78.8 (CDCl3,
    // from memory).
    near("CC[N+](=O)[O-]", 1, 70.6, 0.3);
    near("CC[N+](=O)[O-]", 0, 12.3, 0.3);
    near("CC(C)[N+](=O)[O-]", 1, 78.8, 0.3);
    // Not a row's source: 1-nitropropane C1 77.4, C2 21.2, C3 10.7 (CDCl3,
    // from memory).
    near("CCC[N+](=O)[O-]", 2, 77.4, 1.5);
    near("CCC[N+](=O)[O-]", 1, 21.2, 1.5);
}

#[test]
fn nitroarene_and_azine_n_oxide_carbons() {
    // Nitrobenzene C1 148.3, C2 123.5, C3 129.4 (CDCl3; substituent effects
    // +19.9, -4.9, +0.9 on benzene, common practice, values from memory).
    near("O=[N+]([O-])c1ccccc1", 3, 148.3, 0.3);
    near("O=[N+]([O-])c1ccccc1", 4, 123.5, 0.3);
    near("O=[N+]([O-])c1ccccc1", 5, 129.4, 1.5);
    // Not a row's source: 4-nitrotoluene C-NO2 146.0, CH ortho to NO2
    // 123.5 (CDCl3, from memory).
    near("Cc1ccc([N+](=O)[O-])cc1", 4, 146.0, 1.5);
    near("Cc1ccc([N+](=O)[O-])cc1", 3, 123.5, 1.5);
    // Pyridine N-oxide C2 138.5, C3 125.5 (CDCl3, from memory).
    near("[O-][n+]1ccccc1", 2, 138.5, 0.3);
    near("[O-][n+]1ccccc1", 3, 125.5, 0.3);
}
