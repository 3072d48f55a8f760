//! Benchmark: print every isomer of C9H10O (about 0.7 million) as canonical
//! SMILES, as `isomerank isomers C9H10O` does, and measure bare enumeration
//! of the same formula in the same run. Prints both times, their ratio and
//! isomers per second, wall clock and CPU time of the process (the machine
//! may be shared: CPU time is the steadier figure). Measures, asserts
//! nothing beyond the two runs agreeing on the count.
//!
//! The SMILES side is `enumerate::write_smiles`, the function the command
//! calls, writing through a 64 KiB buffer (as the command's stdout) into a
//! sink that only counts bytes. The peer is bare enumeration: every isomer
//! generated and handed to the caller, nothing built (what `isomerank
//! isomers F --count` does). Each measurement runs `REPS` times (default 3);
//! the best wall and the best CPU time are reported.
//!
//! Run: `cargo run --release --example bench_isomers_output [FORMULA]`
//! (`REPS=1 ONLY=smiles` for a profiler run; `RAYON_NUM_THREADS=1` for one
//! thread).

mod common;

use common::{best, cpu_model};
use isomerank::chem::Formula;
use isomerank::enumerate::{self, rules::RuleSet};
use std::io::{BufWriter, Write};

/// A writer that keeps nothing and counts the bytes it is given.
#[derive(Default)]
struct CountingSink {
    bytes: u64,
}

impl Write for CountingSink {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.bytes += buf.len() as u64;
        Ok(buf.len())
    }
    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

fn main() {
    let text = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "C9H10O".to_string());
    let (reps, only) = common::reps_and_only();
    let formula = Formula::parse(&text).expect("formula");
    let options = enumerate::Options {
        rules: RuleSet::none(),
        ..Default::default()
    };
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    println!(
        "formula {formula}, {} threads ({cores} cores available, {}), best of {reps}",
        rayon::current_num_threads(),
        cpu_model()
    );

    let bare = (only.is_empty() || only == "enumerate").then(|| {
        best(reps, || {
            enumerate::for_each_ordered(&formula, &options, |_| Some(()), |_| true, &mut |_| {})
                .expect("enumeration")
                .isomers
        })
    });
    if let Some((w, c, n)) = bare {
        println!(
            "bare enumeration (--count work): {n} isomers in {w:.3} s wall, {c:.3} s CPU; \
             {:.0} isomers/s wall",
            n as f64 / w
        );
    }
    let smiles = (only.is_empty() || only == "smiles").then(|| {
        best(reps, || {
            let mut sink = CountingSink::default();
            let summary = {
                let mut out = BufWriter::with_capacity(1 << 16, &mut sink);
                let s = enumerate::write_smiles(&formula, &options, &mut out, &mut |_| {})
                    .expect("SMILES output");
                out.flush().expect("flush to a sink");
                s
            };
            (summary.isomers, sink.bytes)
        })
    });
    if let Some((w, c, (n, bytes))) = smiles {
        println!(
            "SMILES output (isomers F):       {n} isomers in {w:.3} s wall, {c:.3} s CPU; \
             {:.0} isomers/s wall, {:.0} isomers/s CPU; {:.1} MB written",
            n as f64 / w,
            n as f64 / c,
            bytes as f64 / 1e6
        );
    }
    if let (Some((w0, c0, n0)), Some((w1, c1, (n1, _)))) = (bare, smiles) {
        assert_eq!(n0, n1, "both runs list the same isomers");
        println!(
            "ratio SMILES output / bare enumeration: wall {:.1}, CPU {:.1}",
            w1 / w0,
            c1 / c0
        );
    }
}
