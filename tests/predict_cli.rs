//! End-to-end tests of `isomerank predict`: journal-style text, the JSON
//! schema scripts rely on, options, and bad input (exit 2, message with the
//! position, nothing on stdout).

mod common;

use common::isomerank;

#[test]
fn text_is_journal_style_highest_shift_first() {
    let out = isomerank(&["predict", "CC(=O)OCC"], None);
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    let line = text
        .lines()
        .find(|l| l.starts_with("δ "))
        .expect("a δ line");
    // Ethyl acetate: q 2H, s 3H, t 3H in descending shift (common practice).
    assert!(line.contains("(q, J = 7.0 Hz, 2H)"), "{line}");
    assert!(line.contains("(s, 3H)"), "{line}");
    assert!(line.contains("(t, J = 7.0 Hz, 3H)"), "{line}");
    let shifts: Vec<f64> = line[3..]
        .split("), ")
        .map(|p| {
            p.trim_start_matches("δ ")
                .split(' ')
                .next()
                .unwrap()
                .parse()
                .unwrap()
        })
        .collect();
    assert!(shifts.windows(2).all(|w| w[0] >= w[1]), "{shifts:?}");
}

#[test]
fn json_schema() {
    let out = isomerank(
        &[
            "predict",
            "OCc1ccccc1",
            "--format",
            "json",
            "--solvent",
            "DMSO-d6",
            "--mhz",
            "600",
        ],
        None,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["smiles"].is_string());
    assert_eq!(v["formula"], "C7H8O");
    let signals = v["signals"].as_array().unwrap();
    let mut h = 0;
    for s in signals {
        for key in ["shift", "sigma"] {
            assert!(s[key].is_f64(), "{key} in {s}");
        }
        h += s["hydrogens"].as_u64().unwrap();
        assert!(s["multiplicity"].is_string());
        assert!(s["j_hz"].is_array() && s["atoms"].is_array() && s["notes"].is_array());
        assert!(s["exchangeable"].is_boolean());
    }
    assert_eq!(h, 8);
    // In DMSO-d6 the benzylic OH couples to CH2: a triplet (common practice).
    let oh = signals.iter().find(|s| s["exchangeable"] == true).unwrap();
    assert_eq!(oh["multiplicity"], "t");
}

#[test]
fn bad_smiles_exit_2_with_position_and_empty_stdout() {
    let out = isomerank(&["predict", "CC(C"], None);
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    let err = String::from_utf8(out.stderr).unwrap();
    assert!(err.contains("column"), "{err}");
    let out = isomerank(&["predict", "CCO", "--solvent", "no-such-solvent"], None);
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    assert!(String::from_utf8_lossy(&out.stderr).contains("unknown solvent"));
    let out = isomerank(&["predict", "CCO", "--mhz", "-5"], None);
    assert_eq!(out.status.code(), Some(2));
    let out = isomerank(&["predict", "CCO", "--library", "/nonexistent"], None);
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
}

#[test]
fn library_folder_overrides_a_table() {
    // A copy of couplings.toml with a different vicinal J changes the output.
    let dir = std::env::temp_dir().join(format!("isomerank-lib-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let src = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/fragment-library/couplings.toml"
    ))
    .unwrap();
    let changed = src.replacen(
        "kind = \"vicinal_sp3\"\nj = 7.0",
        "kind = \"vicinal_sp3\"\nj = 7.5",
        1,
    );
    assert_ne!(src, changed);
    std::fs::write(dir.join("couplings.toml"), changed).unwrap();
    let out = isomerank(
        &["predict", "CCBr", "--library", dir.to_str().unwrap()],
        None,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(String::from_utf8_lossy(&out.stdout).contains("J = 7.5 Hz"));
    // A broken row is a load error naming the file.
    std::fs::write(dir.join("couplings.toml"), "[[coupling]]\nkind = 1\n").unwrap();
    let out = isomerank(
        &["predict", "CCBr", "--library", dir.to_str().unwrap()],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("couplings.toml"));
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn oh_exchanges_in_cd3od() {
    // OH exchanges with the deuterium of CD3OD and joins the HOD peak
    // (common practice); the note says so.
    let out = isomerank(
        &["predict", "CCO", "--solvent", "CD3OD", "--format", "json"],
        None,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("exchanges with the deuterium of CD3OD"),
        "{text}"
    );
}
