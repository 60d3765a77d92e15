//! Event calendars on the classic "hold" model (Jones 1986): with `n`
//! events pending, take out the next one and schedule a new one an
//! exponential delay later, as departures of a busy group do. Compares the
//! reference binary heap keyed by (time, sequence) with the calendar queue
//! the engine uses, from 10 to 100,000 pending events. Throughput: hold
//! operations per second.
//!
//! `cargo bench --bench calendar`

use busyhour::engine::calendar::{Calendar, CalendarQueue};
use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};
use rand::SeedableRng;
use rand_distr::{Distribution, Exp1};
use rand_xoshiro::Xoshiro256PlusPlus;

const HOLDS: u64 = 100_000;

/// Mean delay 180 s, like a holding time.
fn delay(rng: &mut Xoshiro256PlusPlus) -> f64 {
    let e: f64 = Exp1.sample(rng);
    e * 180.0
}

fn hold(c: &mut Criterion) {
    let mut g = c.benchmark_group("hold");
    g.sample_size(10);
    g.throughput(Throughput::Elements(HOLDS));
    for n in [10usize, 100, 1_000, 10_000, 100_000] {
        g.bench_with_input(BenchmarkId::new("binary heap", n), &n, |b, &n| {
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(1);
            let mut cal = Calendar::with_capacity(n);
            for _ in 0..n {
                cal.schedule(delay(&mut rng), 0u32);
            }
            b.iter(|| {
                for _ in 0..HOLDS {
                    let (now, e) = cal.pop().expect("n events pending");
                    cal.schedule(now + delay(&mut rng), e);
                }
            })
        });
        g.bench_with_input(BenchmarkId::new("calendar queue", n), &n, |b, &n| {
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(1);
            let mut cal = CalendarQueue::new();
            for _ in 0..n {
                cal.schedule(delay(&mut rng), 0u32);
            }
            b.iter(|| {
                for _ in 0..HOLDS {
                    let (now, e) = cal.pop().expect("n events pending");
                    cal.schedule(now + delay(&mut rng), e);
                }
            })
        });
    }
    g.finish();
}

criterion_group!(benches, hold);
criterion_main!(benches);
