//! Sampling speed of the laws in `busyhour::dist`: nanoseconds per draw.
//!
//! Each iteration draws 1,000 times from one Xoshiro256++ generator and
//! sums the draws (so none is optimised away); criterion reports the time
//! per iteration and, through the throughput setting, draws per second.

use std::hint::black_box;
use std::time::Duration;

use busyhour::dist::Law;
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use rand::SeedableRng;
use rand_xoshiro::Xoshiro256PlusPlus;

const DRAWS: u64 = 1000;

fn laws() -> Vec<(&'static str, Law)> {
    // Measured-looking data for the empirical law: 10,000 lognormal times.
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(1);
    let source = Law::lognormal(180.0, 1.1).unwrap();
    let data: Vec<f64> = (0..10_000)
        .map(|_| source.sample(&mut rng).round())
        .collect();
    vec![
        ("exponential", Law::exponential(180.0).unwrap()),
        ("erlang-3", Law::erlang(180.0, 3).unwrap()),
        ("gamma cv 0.5", Law::gamma(180.0, 0.5).unwrap()),
        ("gamma cv 2", Law::gamma(180.0, 2.0).unwrap()),
        ("lognormal cv 1.1", Law::lognormal(180.0, 1.1).unwrap()),
        (
            "hyperexponential cv 2",
            Law::hyperexponential(180.0, 2.0).unwrap(),
        ),
        ("uniform cv 0.3", Law::uniform(180.0, 0.3).unwrap()),
        ("weibull cv 0.5", Law::weibull(180.0, 0.5).unwrap()),
        ("empirical 10k values", Law::empirical(data).unwrap()),
    ]
}

fn sample_speed(c: &mut Criterion) {
    let mut group = c.benchmark_group("dist sample x1000");
    group.throughput(Throughput::Elements(DRAWS));
    for (name, law) in laws() {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(42);
        group.bench_function(name, |b| {
            b.iter(|| {
                let law = black_box(&law);
                let mut total = 0.0;
                for _ in 0..DRAWS {
                    total += law.sample(&mut rng);
                }
                total
            })
        });
    }
    group.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default()
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(2))
        .sample_size(30);
    targets = sample_speed
}
criterion_main!(benches);
