//! Speed of the closed forms at the top of their range (10,000 servers and
//! erlangs). Run with `cargo bench --bench formulas`.

use std::hint::black_box;

use busyhour::formulas::{erlang_a, erlang_b, erlang_c, multirate, overflow};
use criterion::{Criterion, criterion_group, criterion_main};

fn erlang_b_at_10000(c: &mut Criterion) {
    let mut group = c.benchmark_group("erlang_b");
    group.bench_function("blocking N=10000 A=9500", |b| {
        b.iter(|| erlang_b::blocking(black_box(10_000), black_box(9_500.0)))
    });
    group.bench_function("ln_blocking N=10000 A=100", |b| {
        b.iter(|| erlang_b::ln_blocking(black_box(10_000), black_box(100.0)))
    });
    group.bench_function("servers_for A=10000 1%", |b| {
        b.iter(|| erlang_b::servers_for(black_box(10_000.0), black_box(0.01)))
    });
    group.bench_function("traffic_for N=10000 1%", |b| {
        b.iter(|| erlang_b::traffic_for(black_box(10_000), black_box(0.01)))
    });
    group.bench_function("blocking_continuous N=9999.5 A=9500", |b| {
        b.iter(|| erlang_b::blocking_continuous(black_box(9_999.5), black_box(9_500.0)))
    });
    group.finish();
}

fn others_at_10000(c: &mut Criterion) {
    let mut group = c.benchmark_group("others");
    group.bench_function("erlang_c agents_for_service_level A=9500", |b| {
        b.iter(|| erlang_c::agents_for_service_level(black_box(9_500.0), 180.0, 20.0, 0.8))
    });
    group.bench_function("erlang_a solve N=10000 A=10000 + service_level", |b| {
        b.iter(|| {
            erlang_a::solve(black_box(10_000), black_box(10_000.0), 180.0, 60.0)
                .map(|q| q.service_level(20.0))
        })
    });
    group.bench_function("overflow final_group N=10000 A=10000", |b| {
        b.iter(|| overflow::final_group(black_box(&[(10_000.0, 10_000)]), 0.0, 100))
    });
    group.bench_function("kaufman_roberts C=10000, 3 classes", |b| {
        b.iter(|| {
            multirate::kaufman_roberts(
                black_box(10_000),
                black_box(&[(6_000.0, 1), (500.0, 4), (100.0, 20)]),
            )
        })
    });
    group.finish();
}

criterion_group!(benches, erlang_b_at_10000, others_at_10000);
criterion_main!(benches);
