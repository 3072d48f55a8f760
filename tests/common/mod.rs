//! Shared helpers for the integration tests: the isomerank binary and the
//! outside reference tools (RDKit through the project's Python environment,
//! nauty from Debian's package).
//!
//! The reference tools are installed by `scripts/test` (the README's test
//! command). A test that needs one and cannot find it FAILS with a message
//! saying how to get it; it never skips silently.
#![allow(dead_code)]

use std::io::Write;
use std::path::PathBuf;
use std::process::{Command, Output, Stdio};

/// Path of the isomerank binary built for these tests.
pub fn bin() -> PathBuf {
    PathBuf::from(env!("CARGO_BIN_EXE_isomerank"))
}

/// Run isomerank with arguments and optional standard input.
pub fn isomerank(args: &[&str], stdin: Option<&str>) -> Output {
    let mut child = Command::new(bin())
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start isomerank");
    {
        let mut input = child.stdin.take().unwrap();
        if let Some(s) = stdin {
            let _ = input.write_all(s.as_bytes());
        }
    }
    child.wait_with_output().expect("wait for isomerank")
}

/// The Python interpreter that has RDKit: `$ISOMERANK_PYTHON`, else the
/// project's `.venv/bin/python`. Panics (fails the test) when neither exists.
pub fn python() -> PathBuf {
    if let Ok(p) = std::env::var("ISOMERANK_PYTHON") {
        return PathBuf::from(p);
    }
    let venv = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(".venv/bin/python");
    if venv.exists() {
        return venv;
    }
    panic!(
        "reference Python with RDKit not found: run scripts/test (it creates .venv with RDKit) \
         or set ISOMERANK_PYTHON"
    );
}

/// Run a Python script from tests/reference/ with arguments and standard input;
/// returns stdout, failing the test on a non-zero exit.
pub fn run_reference_script(script: &str, args: &[&str], stdin: &str) -> String {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/reference")
        .join(script);
    let mut child = Command::new(python())
        .arg(&path)
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap_or_else(|e| panic!("start {}: {e}", path.display()));
    {
        let mut input = child.stdin.take().unwrap();
        input.write_all(stdin.as_bytes()).expect("write to reference script");
    }
    let out = child.wait_with_output().expect("wait for reference script");
    assert!(
        out.status.success(),
        "reference script {script} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).expect("utf-8 from reference script")
}

/// A nauty tool by its upstream name (`geng`, `vcolg`, `multig`): Debian installs
/// them as `nauty-geng` etc. Panics when absent.
pub fn nauty_tool(name: &str) -> PathBuf {
    for candidate in [format!("nauty-{name}"), name.to_string()] {
        if let Ok(out) = Command::new("sh")
            .arg("-c")
            .arg(format!("command -v {candidate}"))
            .output()
        {
            let p = String::from_utf8_lossy(&out.stdout).trim().to_string();
            if out.status.success() && !p.is_empty() {
                return PathBuf::from(p);
            }
        }
    }
    panic!("nauty tool {name} not found: run scripts/test (it installs Debian's package nauty)");
}
