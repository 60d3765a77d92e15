//! The smallest honest simulation of benchmark case 1, the yardstick of
//! `benches/compare.sh`: one loss group of `servers` offered `traffic`
//! erlangs, Poisson arrivals and exponential holding (mean 180 s), written as
//! a plain loop: the next arrival, a binary heap of departure times, a count
//! of busy servers and of blocked calls, nothing else (no warm-up, no
//! statistics beyond the count, no routes, no event types). Same random
//! generator family as the engine (Xoshiro256++ and the ziggurat Exp(1) of
//! `rand_distr`), one generator for arrivals and one for holding times.
//!
//! ```sh
//! cargo run --release --example minimal_loop -- CALLS [SERVERS TRAFFIC]
//! ```
//!
//! Prints `calls seconds blocked_share` on one line.

use rand::SeedableRng;
use rand_distr::{Distribution, Exp1};
use rand_xoshiro::Xoshiro256PlusPlus;
use std::cmp::Reverse;
use std::collections::BinaryHeap;
use std::time::Instant;

const HOLDING_MEAN_S: f64 = 180.0;

fn arg<T: std::str::FromStr>(args: &[String], i: usize, default: T) -> T {
    match args.get(i) {
        None => default,
        Some(s) => s.parse().unwrap_or_else(|_| {
            eprintln!(
                "minimal_loop: bad argument {s:?}; usage: minimal_loop CALLS [SERVERS TRAFFIC]"
            );
            std::process::exit(2)
        }),
    }
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let calls: u64 = arg(&args, 1, 10_000_000);
    let servers: usize = arg(&args, 2, 107);
    let traffic: f64 = arg(&args, 3, 90.0);
    let rate = traffic / HOLDING_MEAN_S;

    let started = Instant::now();
    let mut arrivals_rng = Xoshiro256PlusPlus::seed_from_u64(1);
    let mut holding_rng = Xoshiro256PlusPlus::seed_from_u64(2);
    // Departure times as f64 bits: for times >= 0 the bits order like the
    // numbers.
    let mut departures: BinaryHeap<Reverse<u64>> = BinaryHeap::with_capacity(servers);
    let mut now = 0.0f64;
    let mut blocked = 0u64;
    for _ in 0..calls {
        let gap: f64 = Exp1.sample(&mut arrivals_rng);
        now += gap / rate;
        let now_bits = now.to_bits();
        while let Some(&Reverse(t)) = departures.peek() {
            if t > now_bits {
                break;
            }
            departures.pop();
        }
        let holding: f64 = Exp1.sample(&mut holding_rng);
        if departures.len() < servers {
            departures.push(Reverse((now + holding * HOLDING_MEAN_S).to_bits()));
        } else {
            blocked += 1;
        }
    }
    let seconds = started.elapsed().as_secs_f64();
    println!("{calls} {seconds:.6} {:.6}", blocked as f64 / calls as f64);
}
