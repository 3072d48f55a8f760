//! What `isomers` and `rank` share for long runs: the caps
//! (`--max-candidates`, `--time-limit`), the estimate shown before a long
//! run (and the refusal of a run far beyond the default cap), progress on
//! stderr (a bar on a terminal, a line every few seconds otherwise,
//! nothing with `--quiet`), and the words for a partial result. Writing to
//! stderr never fails a run: a closed or full stderr is ignored.

use crate::chem::Formula;
use crate::enumerate::{self, Limits, Options, Stop};
use crate::error::{Error, Result};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::{IsTerminal, Write};
use std::time::{Duration, Instant};

/// Default caps on the estimated number of isomers (before plausibility
/// rules) above which a run without `--max-candidates` or `--time-limit`
/// is refused. Measured rates on the project's 2-core machine (README):
/// counting about 5 million isomers a second, listing about 0.9 million,
/// ranking about 0.8 million generated isomers a second; so each cap is a
/// few minutes of work.
pub const COUNT_CAP: f64 = 1e9;
pub const LIST_CAP: f64 = 1e8;
pub const RANK_CAP: f64 = 3e7;
/// The time a run without a cap of its own may take before it stops at
/// the default cap: the caps above are a few minutes of work, and the
/// estimate can be orders of magnitude too low (C30H62: 356 against 4.1e9
/// isomers, counted at about 0.2 million a second), so a run past this has
/// outgrown its estimate.
pub const DEFAULT_TIME_CAP: Duration = Duration::from_secs(20 * 60);

/// Estimates above this are shown on stderr before the run.
const SHOW_ESTIMATE: f64 = 1e6;
/// Seconds between progress lines when stderr is not a terminal.
const LINE_EVERY: Duration = Duration::from_secs(5);

#[derive(clap::Args, Clone, Debug, Default)]
pub struct RunArgs {
    /// Stop after N candidates (isomers that passed the plausibility rules),
    /// counted in a fixed order; the result is marked partial.
    #[arg(long, value_name = "N")]
    pub max_candidates: Option<u64>,
    /// Stop after this many seconds; the result covers the part of the search
    /// finished by then and is marked partial.
    #[arg(long, value_name = "SECONDS")]
    pub time_limit: Option<f64>,
    /// No estimate or progress on stderr.
    #[arg(long)]
    pub quiet: bool,
}

/// Write a line to stderr, ignoring failures (a closed or full stderr must
/// not end the run).
pub fn note(text: &str) {
    let mut e = std::io::stderr().lock();
    let _ = writeln!(e, "{text}");
}

impl RunArgs {
    /// The caps as the driver takes them (the time limit counted from now).
    pub fn limits(&self) -> Result<Limits> {
        if self.max_candidates == Some(0) {
            return Err(Error::input("--max-candidates must be at least 1"));
        }
        let deadline = match self.time_limit {
            None => None,
            Some(s) if s.is_finite() && s > 0.0 && s < 1e9 => {
                Some(Instant::now() + Duration::from_secs_f64(s))
            }
            Some(s) => {
                return Err(Error::input(format!(
                    "--time-limit {s}: give a positive number of seconds"
                )))
            }
        };
        Ok(Limits {
            max_candidates: self.max_candidates,
            deadline,
            default_cap: false,
        })
    }

    fn capped(&self) -> bool {
        self.max_candidates.is_some() || self.time_limit.is_some()
    }

    /// Estimate the search (Knuth's estimator, `enumerate::estimate`), show
    /// a large estimate on stderr, and refuse a run whose estimate (for this
    /// shard) is above `cap` when no cap was given. Sets the progress
    /// weights in `opts`, and, when no cap was given, `cap` as the run's
    /// candidate cap and [`DEFAULT_TIME_CAP`] as its time limit (a stop at
    /// either is reported as the default cap): the estimate can be orders
    /// of magnitude too low, and the run must still end.
    pub fn plan(
        &self,
        formula: &Formula,
        opts: &mut Options,
        command: &str,
        cap: f64,
    ) -> Result<()> {
        let est = enumerate::estimate(formula, opts)?;
        let shards = opts.part.map_or(1.0, |p| p.of as f64);
        let mine = est.isomers / shards;
        if mine > cap && !self.capped() {
            return Err(Error::input(format!(
                "{command} {formula}: about {} isomers{} by Knuth's estimator ({} random probes of the search tree), \
more than the default cap of {} for this command: a run that long is not started. \
Give --max-candidates N or --time-limit SECONDS to run up to a cap (the result is marked partial), \
or narrow the search (--part K/N on several machines{})",
                round_sig(mine),
                if shards > 1.0 { " in this shard" } else { "" },
                est.probes,
                round_sig(cap),
                if command == "rank" { ", --candidates with a shortlist" } else { "" },
            )));
        }
        if est.isomers > SHOW_ESTIMATE && !self.quiet {
            note(&format!(
                "{formula}: about {} isomers{} (Knuth's estimator, {} random probes; a rough figure)",
                round_sig(mine),
                if shards > 1.0 { " in this shard" } else { "" },
                est.probes
            ));
        }
        opts.weights = Some(est.per_task);
        if !self.capped() {
            // The estimate can be far too low (README, "Long runs"): a run
            // without a cap of its own stops at the default cap all the same.
            opts.limits.max_candidates = Some(cap as u64);
            opts.limits.deadline = Some(Instant::now() + DEFAULT_TIME_CAP);
            opts.limits.default_cap = true;
        }
        Ok(())
    }
}

/// A number to two significant figures, as a chemist would say it.
fn round_sig(x: f64) -> String {
    if x < 1000.0 {
        return format!("{x:.0}");
    }
    let e = x.log10().floor() as i32;
    let m = x / 10f64.powi(e);
    format!("{m:.1}e{e}")
}

/// Progress on stderr: a bar on a terminal, a line every few seconds
/// otherwise, nothing when quiet.
pub struct Reporter {
    bar: Option<ProgressBar>,
    lines: bool,
    label: String,
    noun: &'static str,
    start: Instant,
    last: Instant,
}

impl Reporter {
    pub fn new(label: &str, noun: &'static str, quiet: bool) -> Reporter {
        let terminal = std::io::stderr().is_terminal();
        let bar = (!quiet && terminal).then(|| {
            let bar = ProgressBar::with_draw_target(Some(1000), ProgressDrawTarget::stderr());
            bar.set_style(
                ProgressStyle::with_template(
                    "{prefix} [{bar:30}] {percent:>3}% of the search, {msg} (about {eta} left)",
                )
                .expect("valid progress template")
                .progress_chars("=> "),
            );
            bar.set_prefix(label.to_string());
            bar
        });
        let now = Instant::now();
        Reporter {
            bar,
            lines: !quiet && !terminal,
            label: label.to_string(),
            noun,
            start: now,
            last: now,
        }
    }

    /// `n` candidates so far, `share` of the search done.
    pub fn update(&mut self, n: u64, share: f64) {
        if let Some(bar) = &self.bar {
            bar.set_position((share * 1000.0) as u64);
            bar.set_message(format!("{n} {}", self.noun));
        } else if self.lines && self.last.elapsed() >= LINE_EVERY {
            self.last = Instant::now();
            let elapsed = self.start.elapsed().as_secs_f64();
            let left = if share > 0.0 {
                fmt_secs(elapsed * (1.0 - share) / share)
            } else {
                "unknown".to_string()
            };
            note(&format!(
                "{}: {:.1}% of the search, {n} {}, {} elapsed, about {left} left",
                self.label,
                share * 100.0,
                self.noun,
                fmt_secs(elapsed)
            ));
        }
    }

    pub fn finish(&self) {
        if let Some(bar) = &self.bar {
            bar.finish_and_clear();
        }
    }
}

fn fmt_secs(s: f64) -> String {
    let s = s.round() as u64;
    if s < 60 {
        format!("{s}s")
    } else if s < 3600 {
        format!("{}m{:02}s", s / 60, s % 60)
    } else {
        format!("{}h{:02}m", s / 3600, s % 3600 / 60)
    }
}

/// One sentence on a partial run: what stopped it and what it covered.
pub fn partial_sentence(stop: Stop, share: f64, candidates: u64, noun: &str) -> String {
    format!(
        "partial result: stopped by {} after {candidates} {noun}, {:.2}% of the search covered",
        crate::report::stop_words(stop),
        share * 100.0
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A run without a cap whose estimate was too low stops at the default
    /// cap, reported as such, instead of running on. C8H8O: Knuth's
    /// estimator (fixed seeds) gives about 109,500 of its 112,380 isomers
    /// (the count is checked against RDKit in tests/enumerate_reference.rs),
    /// so a cap just above the estimate lets the run start and stops it
    /// before the end.
    #[test]
    fn a_run_outgrowing_its_estimate_stops_at_the_default_cap() {
        let formula = Formula::parse("C8H8O").unwrap();
        let mut opts = Options::default();
        let est = enumerate::estimate(&formula, &opts).unwrap().isomers;
        let cap = est.ceil() + 1.0;
        assert!(
            cap < 112_380.0,
            "the estimate {est} is no longer below the count"
        );
        let args = RunArgs {
            quiet: true,
            ..Default::default()
        };
        args.plan(&formula, &mut opts, "isomers", cap).unwrap();
        assert_eq!(opts.limits.max_candidates, Some(cap as u64));
        let s = enumerate::count_summary(&formula, &opts, &mut |_| {}).unwrap();
        assert_eq!(s.isomers, cap as u64);
        assert_eq!(s.stopped, Some(Stop::DefaultCap));
        assert!(
            partial_sentence(Stop::DefaultCap, s.share, s.isomers, "isomers")
                .contains("stopped by the default cap (no --max-candidates or --time-limit")
        );
        // The default time cap is set as well and reported the same way.
        let mut late = opts.clone();
        late.limits.max_candidates = None;
        late.limits.deadline = Some(Instant::now());
        let s = enumerate::count_summary(&formula, &late, &mut |_| {}).unwrap();
        assert_eq!(s.stopped, Some(Stop::DefaultCap));
        assert!(s.isomers < 112_380);
        assert!(crate::report::stop_words(Stop::DefaultCap)
            .contains(&format!("or {} minutes", DEFAULT_TIME_CAP.as_secs() / 60)));
        // An explicit cap is the user's: no default cap is added.
        let mut opts = Options::default();
        let args = RunArgs {
            time_limit: Some(600.0),
            quiet: true,
            ..Default::default()
        };
        args.plan(&formula, &mut opts, "isomers", cap).unwrap();
        assert_eq!(opts.limits.max_candidates, None);
        assert!(opts.limits.deadline.is_none());
        assert!(!opts.limits.default_cap);
    }
}
