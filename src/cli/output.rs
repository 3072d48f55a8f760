//! Shared output helpers: buffered stdout that treats a closed pipe as the
//! end (progress on stderr: `cli::limits::Reporter`).

use std::io::Write;

/// Buffered standard output.
pub fn stdout() -> std::io::BufWriter<std::io::StdoutLock<'static>> {
    std::io::BufWriter::with_capacity(1 << 16, std::io::stdout().lock())
}

/// Write a whole text to stdout at once (so that a failure leaves nothing
/// half-written from this program's side).
pub fn print_all(text: &str) -> crate::Result<()> {
    let mut out = stdout();
    out.write_all(text.as_bytes())?;
    out.flush()?;
    Ok(())
}
