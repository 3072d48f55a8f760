//! Shared output helpers: buffered stdout that treats a closed pipe as the
//! end, and a progress bar on stderr shown only when stderr is a terminal.

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::{IsTerminal, Write};

/// A progress bar over search tasks, hidden when stderr is not a terminal.
pub fn task_bar(label: &str) -> ProgressBar {
    let bar = if std::io::stderr().is_terminal() {
        ProgressBar::with_draw_target(Some(0), ProgressDrawTarget::stderr())
    } else {
        ProgressBar::hidden()
    };
    bar.set_style(
        ProgressStyle::with_template(
            "{prefix} [{bar:30}] {percent:>3}% of the search, {msg} (about {eta} left)",
        )
        .expect("valid progress template")
        .progress_chars("=> "),
    );
    bar.set_prefix(label.to_string());
    bar
}

/// Update a task bar from an enumeration progress report.
pub fn update(bar: &ProgressBar, p: crate::enumerate::Progress, noun: &str) {
    bar.set_length(p.tasks_total as u64);
    bar.set_position(p.tasks_done as u64);
    bar.set_message(format!("{} {noun}", p.isomers));
}

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
