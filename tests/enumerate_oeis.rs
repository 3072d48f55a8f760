//! Isomer counts checked against OEIS: alkanes (A000602) through
//! `isomers --count`, and alcohols (A000598) by counting the alcohols among
//! the printed isomers of CnH(2n+2)O with RDKit (tests/reference/count_alcohols.py,
//! SMARTS [CX4][OX2H]).

mod common;

use common::*;

#[test]
fn alkanes_match_oeis_a000602() {
    // Source: OEIS A000602, number of n-node unrooted quartic trees = alkanes CnH2n+2,
    // n = 1..16.
    let a000602: [u64; 16] = [
        1, 1, 1, 2, 3, 5, 9, 18, 35, 75, 159, 355, 802, 1858, 4347, 10359,
    ];
    let mut wrong = Vec::new();
    for (i, &want) in a000602.iter().enumerate() {
        let n = i + 1;
        let formula = format!("C{n}H{}", 2 * n + 2);
        let got = isomers_count(&formula, &[]);
        if got != want {
            wrong.push(format!("{formula}: {got}, OEIS A000602 says {want}"));
        }
    }
    assert!(
        wrong.is_empty(),
        "alkane counts differ:\n{}",
        wrong.join("\n")
    );
}

#[test]
fn alcohols_match_oeis_a000598() {
    // Source: OEIS A000598, number of rooted quartic trees = alkyl groups CnH2n+1,
    // hence alcohols CnH2n+1OH, n = 1..10.
    let a000598: [u64; 10] = [1, 1, 2, 4, 8, 17, 39, 89, 211, 507];
    let mut wrong = Vec::new();
    for (i, &want) in a000598.iter().enumerate() {
        let n = i + 1;
        let formula = format!("C{n}H{}O", 2 * n + 2);
        let output = isomers_ok(&[&formula]);
        let alcohols: u64 = run_reference_script("count_alcohols.py", &[], &output)
            .trim()
            .parse()
            .expect("count_alcohols.py prints a number");
        if alcohols != want {
            wrong.push(format!(
                "{formula}: {alcohols} alcohols among {} isomers, OEIS A000598 says {want}",
                output.lines().count()
            ));
        }
    }
    assert!(
        wrong.is_empty(),
        "alcohol counts differ:\n{}",
        wrong.join("\n")
    );
}
