//! Engine throughput: simulated calls per second on one core.
//!
//! Reference case (issue target >= 5 million calls/s): one group of 107
//! servers offered 90 erlangs, Poisson arrivals, exponential holding.
//! Criterion reports the time of one replication of a fixed number of
//! calls; the calls-per-second figure is printed as throughput (elements).

use busyhour::engine::run_replication;
use busyhour::scenario;
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use std::path::Path;

fn model(servers: u32, traffic: f64, holding: &str, hours: f64) -> scenario::Model {
    let text = format!(
        r#"
[simulation]
warmup = "10m"
length = "{hours}h"
replications = 2
seed = 1
[[group]]
name = "g"
servers = {servers}
[[stream]]
name = "s"
arrivals = {{ law = "poisson", rate = "{rate}/s" }}
holding = {holding}
route = ["g"]
"#,
        rate = traffic / 60.0
    );
    scenario::parse(&text, "bench.toml", Path::new("."), "bench").expect("bench scenario")
}

fn single_group(c: &mut Criterion) {
    let mut g = c.benchmark_group("engine");
    g.sample_size(10);
    // 90 erlangs / 60 s holding = 1.5 calls/s; 50 h = 270,000 calls.
    let hours = 50.0;
    let calls = (1.5 * 3600.0 * (hours + 10.0 / 60.0)) as u64;
    g.throughput(Throughput::Elements(calls));
    let m = model(107, 90.0, r#"{ law = "exponential", mean = "60s" }"#, hours);
    g.bench_function("107 servers, 90 E, exponential", |b| {
        b.iter(|| run_replication(&m, 0))
    });
    let m = model(
        107,
        90.0,
        r#"{ law = "lognormal", mean = "60s", cv = 1.5 }"#,
        hours,
    );
    g.bench_function("107 servers, 90 E, lognormal cv 1.5", |b| {
        b.iter(|| run_replication(&m, 0))
    });
    g.finish();
}

criterion_group!(benches, single_group);
criterion_main!(benches);
