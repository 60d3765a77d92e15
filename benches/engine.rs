//! Engine throughput on the reference cases of `benches/cases/` (the same
//! files `benches/compare.sh` times as whole processes). Criterion reports
//! the time of one replication and, as throughput, simulated calls per
//! second on one core (calls offered in the measured period; the warm-up's
//! calls are simulated but not counted).
//!
//! 1. one group of 107 servers offered 90 erlangs, exponential holding;
//! 2. the same with lognormal holding, cv 1.5;
//! 3. groups of 10, 100, 1,000 and 10,000 servers at 1% blocking (the cost
//!    per call should hardly grow with the group);
//! 4. 20 first-choice groups overflowing to 3 final groups, 40 streams;
//! 5. an agent group with a queue, patience, redials and a peak profile;
//! 6. eight replications of case 1 on one and on two threads.
//!
//! `cargo bench --bench engine`; one case: `cargo bench --bench engine -- 'case 3'`.

use busyhour::engine::run_replication;
use busyhour::experiment::{self, RunOptions};
use busyhour::scenario::{self, Model, Replications};
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use std::path::Path;

/// The case file `name` of `benches/cases/` with a measured period of
/// `length`.
fn case(name: &str, length: &str) -> Model {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("benches/cases")
        .join(format!("{name}.toml"));
    let text = std::fs::read_to_string(&path)
        .expect("benchmark case file")
        .replace("\"LENGTH\"", &format!("\"{length}\""));
    scenario::parse(&text, name, Path::new("."), name).expect("benchmark case")
}

/// Calls offered in the measured period of replication 0.
fn calls(model: &Model) -> u64 {
    run_replication(model, 0)
        .streams
        .iter()
        .map(|s| s.offered)
        .sum()
}

fn one(c: &mut Criterion, group: &str, label: &str, model: &Model) {
    let mut g = c.benchmark_group(group);
    g.sample_size(10);
    g.throughput(Throughput::Elements(calls(model)));
    g.bench_function(label, |b| b.iter(|| run_replication(model, 0)));
    g.finish();
}

fn cases(c: &mut Criterion) {
    // About 360,000 calls per replication in each case (2 million for 10,000
    // servers, so that the uncounted warm-up stays a small share).
    one(
        c,
        "case 1",
        "107 servers, 90 E, exponential",
        &case("case1-exponential", "200h"),
    );
    one(
        c,
        "case 2",
        "107 servers, 90 E, lognormal cv 1.5",
        &case("case2-lognormal", "200h"),
    );
    for (servers, length) in [(10, "4000h"), (100, "200h"), (1000, "20h"), (10000, "10h")] {
        one(
            c,
            "case 3",
            &format!("{servers} servers, 1% blocking"),
            &case(&format!("case3-servers-{servers}"), length),
        );
    }
    one(
        c,
        "case 4",
        "20 first-choice groups, 3 final groups, 40 streams",
        &case("case4-overflow-network", "110h"),
    );
    one(
        c,
        "case 5",
        "queue, patience, redials, peak profile",
        &case("case5-queue-peak", "450h"),
    );
}

fn replications(c: &mut Criterion) {
    let model = case("case1-exponential", "50h");
    let per_replication = calls(&model);
    let mut g = c.benchmark_group("case 6");
    g.sample_size(10);
    g.throughput(Throughput::Elements(8 * per_replication));
    for threads in [1, 2] {
        let opts = RunOptions {
            threads: Some(threads),
            ..RunOptions::default()
        };
        g.bench_function(format!("8 replications, {threads} threads"), |b| {
            b.iter(|| experiment::run(&model, Some(Replications::Fixed(8)), &opts))
        });
    }
    g.finish();
}

criterion_group!(benches, cases, replications);
criterion_main!(benches);
