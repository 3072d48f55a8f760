//! Pictures and files other programs read: `predict --svg`, `rank --report`
//! (rendered by headless Chromium, Debian's package, installed by
//! scripts/test) and `--format sdf` (read back by RDKit, PyPI).

mod common;

use common::{isomerank, run_reference_script};
use std::path::PathBuf;
use std::process::Command;

/// A fresh scratch folder for one test.
fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("isomerank-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

// Isopropyl acetate in CDCl3: 4.99 (sept, 6.3 Hz, 1H), 2.02 (s, 3H), 1.23
// (d, 6.3 Hz, 6H) (common practice; values from memory).
const ISOPROPYL_ACETATE: &str =
    "1H NMR (400 MHz, CDCl3) δ 4.99 (sept, J = 6.3 Hz, 1H), 2.02 (s, 3H), 1.23 (d, J = 6.3 Hz, 6H)";

/// `rank C5H10O2` against the isopropyl acetate list, with more arguments.
fn rank_isopropyl_acetate(extra: &[&str]) -> std::process::Output {
    let mut args = vec!["rank", "C5H10O2", "--peaks", ISOPROPYL_ACETATE];
    args.extend_from_slice(extra);
    isomerank(&args, None)
}

#[test]
fn predict_writes_a_drawing() {
    let dir = scratch("svg");
    let path = dir.join("benzaldehyde.svg");
    let out = isomerank(
        &["predict", "O=Cc1ccccc1", "--svg", path.to_str().unwrap()],
        None,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let svg = std::fs::read_to_string(&path).unwrap();
    assert!(svg.starts_with("<svg xmlns=\"http://www.w3.org/2000/svg\""));
    // Eight bonds (six ring, C-C, C=O) with four double bonds drawn as a
    // second line (three in the ring, C=O), plus the aldehyde's C-H.
    assert_eq!(svg.matches("<line").count(), 8 + 4 + 1, "{svg}");
    assert!(svg.contains(">O</text>"), "{svg}");
    assert!(svg.contains(">H</text>"), "aldehyde H drawn (CHO): {svg}");
    // A nitro group and a pyridine N-oxide as chemists draw them: N+ and O-
    // with a single N-O bond (common practice).
    for (name, smiles, doubles) in [
        ("nitro", "Cc1ccc(cc1)[N+](=O)[O-]", 3 + 1),
        ("noxide", "[O-][n+]1ccccc1", 3),
    ] {
        let path = dir.join(format!("{name}.svg"));
        let out = isomerank(&["predict", smiles, "--svg", path.to_str().unwrap()], None);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let svg = std::fs::read_to_string(&path).unwrap();
        assert_eq!(svg.matches(">+</text>").count(), 1, "{svg}");
        assert_eq!(svg.matches(">\u{2212}</text>").count(), 1, "{svg}");
        let bonds = if name == "nitro" { 10 } else { 7 };
        assert_eq!(svg.matches("<line").count(), bonds + doubles, "{svg}");
    }
    // Hydroxy and amino groups are written with their H.
    let path = dir.join("aminophenol.svg");
    let out = isomerank(
        &[
            "predict",
            "Nc1ccc(O)cc1",
            "--svg",
            path.to_str().unwrap(),
            "--atom-numbers",
        ],
        None,
    );
    assert!(out.status.success());
    let svg = std::fs::read_to_string(&path).unwrap();
    assert!(
        svg.contains(">N</text>") && svg.contains(">O</text>"),
        "{svg}"
    );
    assert!(
        svg.contains("H<tspan"),
        "NH2 written with a subscript 2: {svg}"
    );
    // Atom numbers 1..8.
    for k in 1..=8 {
        assert!(svg.contains(&format!(">{k}</text>")), "atom number {k}");
    }
    // A file that cannot be written: exit 2, a message naming it, no output.
    let out = isomerank(
        &["predict", "CCO", "--svg", "/nonexistent-folder/x.svg"],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("/nonexistent-folder/x.svg"));
    assert!(out.stdout.is_empty());
}

fn chromium() -> PathBuf {
    if let Ok(p) = std::env::var("ISOMERANK_CHROMIUM") {
        return PathBuf::from(p);
    }
    for name in ["chromium", "chromium-browser"] {
        if let Some(p) = common::on_path(name) {
            return p;
        }
    }
    panic!("headless Chromium not found: run scripts/test (it installs Debian's package chromium) or set ISOMERANK_CHROMIUM");
}

/// Render a page with headless Chromium into a PNG screenshot (1000 x 1400
/// pixels); returns the page's console messages.
fn render(page: &std::path::Path, png: &std::path::Path, profile: &std::path::Path) -> Vec<String> {
    let shot = Command::new(chromium())
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--hide-scrollbars",
            "--enable-logging=stderr",
            "--v=0",
            "--window-size=1000,1400",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .arg(format!("--screenshot={}", png.display()))
        .arg(format!("file://{}", page.display()))
        .output()
        .expect("start chromium");
    let log = String::from_utf8_lossy(&shot.stderr).to_string();
    assert!(shot.status.success(), "chromium failed: {log}");
    assert!(png.exists(), "no screenshot: {log}");
    log.lines()
        .filter(|l| l.contains(":CONSOLE"))
        .map(str::to_string)
        .collect()
}

#[test]
fn html_report_renders_in_a_browser() {
    let dir = scratch("html");
    let html = dir.join("report.html");
    let out = rank_isopropyl_acetate(&["--top", "6", "--report", html.to_str().unwrap()]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout).to_string();
    let page = std::fs::read_to_string(&html).unwrap();
    // One ranking, two views: the text table's first SMILES heads the page's
    // first candidate card.
    let first = text
        .lines()
        .find(|l| l.trim_start().starts_with("1 "))
        .and_then(|l| l.split_whitespace().nth(4))
        .expect("first row of the text table")
        .to_string();
    assert_eq!(first, "CC(C)OC(C)=O", "isopropyl acetate ranks first");
    assert!(page.contains(&format!("#1 <span class=\"smiles\">{first}</span>")));
    // Self-contained: no script, no stylesheet or image fetched.
    for bad in ["<script", "<link", "src=", "@import", "url("] {
        assert!(!page.contains(bad), "page contains {bad}");
    }
    // Per detailed candidate a drawing and a spectrum; the safety wording.
    assert_eq!(page.matches("<svg").count(), 2 * 5);
    assert!(page.contains("A ranking is a hypothesis, not an identification"));
    assert!(page.contains("Plausibility rules applied"));
    assert!(page.contains("bredt"));
    // Render it and look at the picture; the page's console must stay
    // empty (no error, no warning, no message at all).
    let png = dir.join("report.png");
    let console = render(&html, &png, &dir.join("profile"));
    assert!(console.is_empty(), "console messages: {console:?}");
    // The console check itself works: a page that logs an error and throws
    // one shows both (Chromium writes the page's console to its log as
    // CONSOLE lines under --enable-logging=stderr).
    let control = dir.join("control.html");
    std::fs::write(
        &control,
        "<!DOCTYPE html><html><body><p>x</p><script>console.error('control-error'); undefinedName();</script></body></html>",
    )
    .unwrap();
    let seen = render(&control, &dir.join("control.png"), &dir.join("profile2"));
    assert_eq!(seen.len(), 2, "{seen:?}");
    assert!(seen[0].contains("control-error"), "{seen:?}");
    assert!(seen[1].contains("undefinedName"), "{seen:?}");
    let facts = run_reference_script("check_screenshot.py", &[png.to_str().unwrap()], "");
    let v: serde_json::Value = serde_json::from_str(&facts).unwrap();
    assert_eq!(v["width"], 1000);
    // Not blank: text, tables and drawings put ink on a few per cent of the
    // page and anti-aliased coloured drawings many colours.
    let ink = v["ink"].as_f64().unwrap();
    assert!(ink > 0.03, "only {ink} of the page has ink");
    assert!(v["colours"].as_u64().unwrap() > 50, "{facts}");
}

/// RDKit's reading of an SD file (tests/reference/check_sdf.py), which must
/// find no problem.
fn rdkit_reads(sdf: &str, fields: &str) -> serde_json::Value {
    let report = run_reference_script("check_sdf.py", &[fields], sdf);
    let v: serde_json::Value = serde_json::from_str(&report).unwrap();
    assert_eq!(v["problems"], serde_json::json!([]), "{fields}");
    v
}

#[test]
fn sdf_files_read_back_in_rdkit() {
    // Every isomer of C4H8O (rings, C=O, C=C, ethers) and the plausible
    // isomers of C5H5N (pyridine and other aromatic rings in Kekulé form),
    // and C2H5NO2 with the charge-separated groups (nitroethane, ethyl
    // nitrate's relatives, N-oxides: written with M  CHG charges).
    for (formula, extra) in [
        ("C4H8O", vec![]),
        ("C5H5N", vec!["--plausible"]),
        ("C2H5NO2", vec!["--charge-separated"]),
    ] {
        let mut args = vec!["isomers", formula, "--format", "sdf"];
        args.extend(extra.iter().copied());
        let out = isomerank(&args, None);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let sdf = String::from_utf8(out.stdout).unwrap();
        let mut count_args = vec!["isomers", formula, "--count"];
        count_args.extend(extra.iter().copied());
        let n: usize = String::from_utf8(isomerank(&count_args, None).stdout)
            .unwrap()
            .trim()
            .parse()
            .unwrap();
        let v = rdkit_reads(&sdf, "smiles");
        assert_eq!(v["records"].as_u64().unwrap() as usize, n, "{formula}");
    }
    // rank --format sdf: the table's candidates in order with their data.
    let top5 = |format: &str| {
        let out = rank_isopropyl_acetate(&["--top", "5", "--format", format]);
        assert!(out.status.success());
        String::from_utf8(out.stdout).unwrap()
    };
    let sdf = top5("sdf");
    let j: serde_json::Value = serde_json::from_str(&top5("json")).unwrap();
    let v = rdkit_reads(&sdf, "position,cost,probability,smiles");
    let fields = v["fields"].as_array().unwrap();
    assert_eq!(fields.len(), 5);
    for (k, f) in fields.iter().enumerate() {
        let c = &j["candidates"][k];
        assert_eq!(f["position"], (k + 1).to_string());
        assert_eq!(f["smiles"], c["smiles"]);
        let cost: f64 = f["cost"].as_str().unwrap().parse().unwrap();
        assert!((cost - c["cost"].as_f64().unwrap()).abs() < 1e-4);
        let p: f64 = f["probability"].as_str().unwrap().parse().unwrap();
        assert!((p - c["probability"].as_f64().unwrap()).abs() <= 1e-6 * p.max(1e-300) + 1e-300);
    }
}
