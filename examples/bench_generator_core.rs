//! Benchmark of the isomer generator's core: every bond-order multigraph of a
//! formula (one thread, no Kekulé-form merging, no plausibility rules), with
//! the count and the time. The counts are those of nauty's simple-graph then
//! multiplicity pipeline for hydrocarbons (`nauty-geng -c -D4 n m1:m2 |
//! nauty-multig -m3 -D4 -eB -u`), so the two can be timed side by side.
//!
//! Run: `cargo run --release --example bench_generator_core -- C11H14 C12H14`

use isomerank::chem::Formula;
use isomerank::enumerate::generator::{roots, Generator, Node};
use isomerank::enumerate::{problems, Options};
use std::time::Instant;

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let formulas = if args.is_empty() {
        vec![
            "C8H8O".to_string(),
            "C10H12".to_string(),
            "C11H14".to_string(),
        ]
    } else {
        args
    };
    for f in &formulas {
        let formula = Formula::parse(f).unwrap_or_else(|e| panic!("{f}: {e}"));
        let probs = problems(&formula, &Options::default()).unwrap_or_else(|e| panic!("{f}: {e}"));
        let start = Instant::now();
        let mut count = 0u64;
        for p in &probs {
            let mut gen = Generator::new(p);
            for mut root in roots(p) {
                gen.search(&mut root, &mut |_: &Node, _| count += 1);
            }
        }
        println!(
            "{f}: {count} multigraphs in {:.3} s (one thread)",
            start.elapsed().as_secs_f64()
        );
    }
}
