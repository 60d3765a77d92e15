//! Property tests over random small scenarios: 1 to 3 groups and 1 to 3
//! streams, every arrival kind and law, queues, patience, redials,
//! reservation, multi-unit calls, overflow timers, intervals, finite sources
//! and peak profiles. For every one:
//!
//! - the text generated is accepted by `scenario::parse` (a valid design is
//!   never refused);
//! - per stream, offered = answered + blocked + abandoned + in progress, and
//!   the other counters are ordered (first-attempt blocking <= offered,
//!   attempts >= offered, answered within the goal <= answered, ...);
//! - busy servers never exceed a group's size; time integrals stay inside
//!   the period; no wait or carried time is negative; intervals add up;
//! - every figure that is a share lies in [0, 1] (or is undefined, NaN,
//!   when nothing was counted), in each replication and in the estimates;
//! - the per-replication figures are identical bit for bit on 1 and 2
//!   threads.
//!
//! Cases: `PROPTEST_CASES` (default 48; under a second in release).

mod common;
use busyhour::engine::run_replication;
use busyhour::experiment::{self, RunOptions, RunResult};
use busyhour::scenario::{Model, Replications};
use busyhour::stats::Scope;
use common::model;
use proptest::prelude::*;
use proptest::test_runner::Config;

fn cases(default: u32) -> u32 {
    std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

/// A law, as drawn: kind, mean (s), a spread parameter in [0, 1] and k.
#[derive(Debug, Clone)]
struct LawGen {
    kind: u8,
    mean_s: u32,
    spread: f64,
    k: u32,
}

impl LawGen {
    fn toml(&self) -> String {
        let m = self.mean_s;
        let x = self.spread;
        match self.kind % 10 {
            0 => format!("{{ law = \"exponential\", mean = \"{m}s\" }}"),
            1 => format!("{{ law = \"erlang\", mean = \"{m}s\", k = {} }}", self.k),
            2 => format!(
                "{{ law = \"gamma\", mean = \"{m}s\", cv = {:.3} }}",
                0.1 + 2.0 * x
            ),
            3 => format!(
                "{{ law = \"gamma\", mean = \"{m}s\", shape = {:.3} }}",
                0.3 + 5.0 * x
            ),
            4 => format!(
                "{{ law = \"lognormal\", mean = \"{m}s\", cv = {:.3} }}",
                0.1 + 2.0 * x
            ),
            5 => format!(
                "{{ law = \"hyperexponential\", mean = \"{m}s\", cv = {:.3} }}",
                1.0 + 2.0 * x
            ),
            6 => format!("{{ law = \"deterministic\", mean = \"{m}s\" }}"),
            7 => format!(
                "{{ law = \"uniform\", mean = \"{m}s\", cv = {:.3} }}",
                0.01 + 0.56 * x
            ),
            8 => format!(
                "{{ law = \"weibull\", mean = \"{m}s\", cv = {:.3} }}",
                0.2 + 1.8 * x
            ),
            // Measured talk times shipped with the examples, scaled.
            _ => format!(
                "{{ law = \"empirical\", file = \"scenarios/ferry-talk-times.csv\", column = \"talk_s\", scale = {:.3} }}",
                0.2 + x
            ),
        }
    }
}

fn law(max_mean_s: u32) -> impl Strategy<Value = LawGen> {
    (any::<u8>(), 1..=max_mean_s, 0.0..1.0f64, 1u32..=5).prop_map(|(kind, mean_s, spread, k)| {
        LawGen {
            kind,
            mean_s,
            spread,
            k,
        }
    })
}

#[derive(Debug, Clone)]
struct GroupGen {
    servers: u32,
    /// 0: loss, 1: limited queue, 2: unlimited.
    queue: u8,
    places: u32,
    overflow_after_s: Option<u32>,
    /// Reserved servers (taken modulo the size) and the streams they serve
    /// (bits of the mask, modulo the stream count).
    reserve: Option<(u32, u8)>,
}

fn group() -> impl Strategy<Value = GroupGen> {
    (
        1u32..=8,
        0u8..3,
        1u32..=5,
        proptest::option::of(5u32..=60),
        proptest::option::of((1u32..8, 1u8..8)),
    )
        .prop_map(
            |(servers, queue, places, overflow_after_s, reserve)| GroupGen {
                servers,
                queue,
                places,
                overflow_after_s,
                reserve,
            },
        )
}

#[derive(Debug, Clone)]
enum ArrivalGen {
    Poisson(u32),
    Profile(u32, Vec<u32>),
    Renewal(LawGen),
    Sources(u32, LawGen),
}

fn arrivals() -> impl Strategy<Value = ArrivalGen> {
    prop_oneof![
        (10u32..=400).prop_map(ArrivalGen::Poisson),
        (5u32..=20, proptest::collection::vec(0u32..=400, 1..5))
            .prop_map(|(i, r)| ArrivalGen::Profile(i, r)),
        law(120).prop_map(ArrivalGen::Renewal),
        (1u32..=20, law(1800)).prop_map(|(c, l)| ArrivalGen::Sources(c, l)),
    ]
}

#[derive(Debug, Clone)]
struct StreamGen {
    arrivals: ArrivalGen,
    holding: LawGen,
    /// Group indices (modulo the group count, repeats dropped).
    route: Vec<usize>,
    units: u32,
    retry: Option<(Vec<u8>, LawGen, u32)>,
    patience: Option<LawGen>,
    answer_within_s: Option<u32>,
}

fn stream() -> impl Strategy<Value = StreamGen> {
    (
        arrivals(),
        law(300),
        proptest::collection::vec(0usize..3, 1..4),
        1u32..=3,
        proptest::option::of((
            proptest::collection::vec(0u8..=100, 1..4),
            law(120),
            1u32..=5,
        )),
        proptest::option::of(law(180)),
        proptest::option::of(0u32..=60),
    )
        .prop_map(
            |(arrivals, holding, route, units, retry, patience, answer_within_s)| StreamGen {
                arrivals,
                holding,
                route,
                units,
                retry,
                patience,
                answer_within_s,
            },
        )
}

#[derive(Debug, Clone)]
struct ScenarioGen {
    warmup_min: u32,
    length_min: u32,
    interval_min: Option<u32>,
    seed: u32,
    groups: Vec<GroupGen>,
    streams: Vec<StreamGen>,
}

fn scenario() -> impl Strategy<Value = ScenarioGen> {
    (
        0u32..=15,
        5u32..=60,
        proptest::option::of(1u32..=60),
        any::<u32>(),
        proptest::collection::vec(group(), 1..=3),
        proptest::collection::vec(stream(), 1..=3),
    )
        .prop_map(
            |(warmup_min, length_min, interval_min, seed, groups, streams)| ScenarioGen {
                warmup_min,
                length_min,
                interval_min,
                seed,
                groups,
                streams,
            },
        )
}

impl ScenarioGen {
    /// The scenario file. Drawn values that the rules forbid are brought
    /// into range here (a route of distinct groups, units that fit a group
    /// on the route, a reserve below the size, a profile not all zero).
    fn toml(&self) -> String {
        use std::fmt::Write;
        let mut t = String::new();
        let _ = writeln!(t, "[simulation]");
        let _ = writeln!(t, "warmup = \"{}m\"", self.warmup_min);
        let _ = writeln!(t, "length = \"{}m\"", self.length_min);
        let _ = writeln!(t, "replications = 3");
        let _ = writeln!(t, "seed = {}", self.seed);
        if let Some(i) = self.interval_min {
            let _ = writeln!(t, "interval = \"{}m\"", i.min(self.length_min));
        }
        let n_streams = self.streams.len();
        for (gi, g) in self.groups.iter().enumerate() {
            let _ = writeln!(t, "\n[[group]]\nname = \"g{gi}\"\nservers = {}", g.servers);
            match g.queue {
                0 => {}
                1 => {
                    let _ = writeln!(t, "queue = {}", g.places);
                }
                _ => {
                    let _ = writeln!(t, "queue = \"unlimited\"");
                }
            }
            if let (Some(after), 1..) = (g.overflow_after_s, g.queue) {
                let _ = writeln!(t, "overflow_after = \"{after}s\"");
            }
            if let Some((r, mask)) = g.reserve
                && g.servers >= 2
            {
                let servers = 1 + r % (g.servers - 1);
                let mut names: Vec<String> = (0..8)
                    .filter(|b| mask & (1 << b) != 0)
                    .map(|b| format!("\"s{}\"", b % n_streams))
                    .collect();
                names.dedup();
                let _ = writeln!(
                    t,
                    "reserve = {{ servers = {servers}, for = [{}] }}",
                    names.join(", ")
                );
            }
        }
        for (si, s) in self.streams.iter().enumerate() {
            let _ = writeln!(t, "\n[[stream]]\nname = \"s{si}\"");
            let arrivals = match &s.arrivals {
                ArrivalGen::Poisson(r) => format!("{{ law = \"poisson\", rate = \"{r}/h\" }}"),
                ArrivalGen::Profile(i, rates) => {
                    let mut rates = rates.clone();
                    if rates.iter().all(|&r| r == 0) {
                        rates[0] = 60;
                    }
                    let list: Vec<String> = rates.iter().map(|r| format!("\"{r}/h\"")).collect();
                    format!(
                        "{{ law = \"poisson\", interval = \"{i}m\", rates = [{}] }}",
                        list.join(", ")
                    )
                }
                ArrivalGen::Renewal(l) => {
                    format!("{{ law = \"renewal\", between = {} }}", l.toml())
                }
                ArrivalGen::Sources(c, l) => {
                    format!("{{ law = \"sources\", count = {c}, idle = {} }}", l.toml())
                }
            };
            let _ = writeln!(t, "arrivals = {arrivals}");
            let _ = writeln!(t, "holding = {}", s.holding.toml());
            let mut route: Vec<usize> = Vec::new();
            for g in &s.route {
                let g = g % self.groups.len();
                if !route.contains(&g) {
                    route.push(g);
                }
            }
            let names: Vec<String> = route.iter().map(|g| format!("\"g{g}\"")).collect();
            let _ = writeln!(t, "route = [{}]", names.join(", "));
            let widest = route
                .iter()
                .map(|&g| self.groups[g].servers)
                .max()
                .unwrap_or(1);
            let _ = writeln!(t, "units = {}", s.units.min(widest));
            if let Some((chances, delay, max_attempts)) = &s.retry {
                let list: Vec<String> = chances.iter().map(|c| format!("\"{c}%\"")).collect();
                let _ = writeln!(
                    t,
                    "retry = {{ chance = [{}], delay = {}, max_attempts = {max_attempts} }}",
                    list.join(", "),
                    delay.toml()
                );
            }
            if let Some(p) = &s.patience {
                let _ = writeln!(t, "patience = {}", p.toml());
            }
            if let Some(a) = s.answer_within_s {
                let _ = writeln!(t, "answer_within = \"{a}s\"");
            }
        }
        t
    }
}

/// The figures that are shares of something.
const SHARES: [&str; 8] = [
    "first_attempt_blocking",
    "attempt_blocking",
    "loss",
    "abandonment",
    "wait_probability",
    "service_level",
    "occupancy",
    "time_congestion",
];

fn check_replication(m: &Model, rep: u64) {
    let t = run_replication(m, rep);
    let length = m.plan.length_s;
    let slack = 1.0 + 1e-9;
    for (s, st) in t.streams.iter().enumerate() {
        let what = format!("replication {rep}, stream {s}: {st:?}");
        assert_eq!(
            st.offered,
            st.answered + st.blocked_final + st.abandoned_final + st.pending_end,
            "conservation: {what}"
        );
        assert!(st.first_blocked <= st.offered, "{what}");
        assert!(st.attempts >= st.offered, "{what}");
        assert!(st.attempts_blocked <= st.attempts, "{what}");
        assert!(st.attempts_abandoned <= st.attempts, "{what}");
        assert!(st.answered_within <= st.answered, "{what}");
        assert!(st.waited <= st.offered - st.pending_end, "{what}");
        assert!(st.wait_sum_s >= 0.0 && st.wait_sum_s.is_finite(), "{what}");
        assert!(st.carried_s >= 0.0, "{what}");
        assert!(st.offered_holding_s >= 0.0, "{what}");
        if let Some(h) = &st.waits {
            assert_eq!(h.len(), st.answered, "one wait per answered call: {what}");
        }
        if !t.stream_intervals.is_empty() {
            let by_interval: u64 = t.stream_intervals.iter().map(|iv| iv[s].offered).sum();
            assert_eq!(by_interval, st.offered, "intervals add up: {what}");
            for iv in &t.stream_intervals {
                assert!(iv[s].wait_sum_s >= 0.0 && iv[s].carried_s >= 0.0, "{what}");
                assert!(iv[s].lost <= iv[s].resolved && iv[s].resolved <= iv[s].offered);
            }
        }
    }
    for (g, peak) in t.peak_busy.iter().enumerate() {
        let servers = m.groups[g].servers;
        assert!(*peak <= servers, "group {g}: {peak} busy of {servers}");
        let gt = &t.groups[g];
        assert!(gt.busy_s >= 0.0 && gt.busy_s <= f64::from(servers) * length * slack);
        assert!(gt.full_s >= 0.0 && gt.full_s <= length * slack);
        assert!(gt.overflow_s >= 0.0 && gt.overflow_sq_s >= 0.0);
    }
}

fn run_on(m: &Model, threads: usize) -> RunResult {
    experiment::run(
        m,
        Some(Replications::Fixed(3)),
        &RunOptions {
            threads: Some(threads),
            ..Default::default()
        },
    )
    .expect("run")
}

fn check_figures(m: &Model) {
    let one = run_on(m, 1);
    let two = run_on(m, 2);
    let bits = |o: &RunResult| -> Vec<u64> {
        o.per_replication
            .iter()
            .flatten()
            .flat_map(|o| [o.num.to_bits(), o.den.to_bits()])
            .collect()
    };
    assert_eq!(bits(&one), bits(&two), "1 and 2 threads differ");
    for (i, f) in one.layout.iter().enumerate() {
        let share = SHARES.contains(&f.name());
        for (r, values) in one.per_replication.iter().enumerate() {
            let o = values[i];
            assert!(
                o.den.is_finite() && o.den >= 0.0 && (o.num.is_nan() || o.num >= 0.0),
                "{f:?} replication {r}: {o:?}"
            );
            let v = o.own();
            assert!(
                v.is_nan() || (v.is_finite() && v >= 0.0),
                "{f:?} replication {r}: {v}"
            );
            if share {
                assert!(v.is_nan() || v <= 1.0, "{f:?} replication {r}: {v}");
            }
        }
        let e = one.estimates[i];
        if share && e.replications > 0 && !e.mean.is_nan() {
            assert!((0.0..=1.0).contains(&e.mean), "{f:?}: {e:?}");
            assert!(
                0.0 <= e.low && e.high <= 1.0,
                "share interval out of range {f:?}: {e:?}"
            );
        }
        if e.mean.is_finite() && e.half_width.is_finite() {
            assert!(e.low <= e.mean && e.mean <= e.high, "{f:?}: {e:?}");
            assert!(e.low >= 0.0, "negative lower end {f:?}: {e:?}");
        }
        if matches!(f.scope, Scope::Stream(_)) && f.name().starts_with("wait") && !e.mean.is_nan() {
            assert!(e.mean >= 0.0, "negative wait {f:?}: {e:?}");
        }
    }
}

proptest! {
    #![proptest_config(Config {
        cases: cases(48),
        failure_persistence: None,
        ..Config::default()
    })]

    #[test]
    fn random_small_scenarios_keep_every_invariant(g in scenario()) {
        let text = g.toml();
        let m = model(&text);
        for rep in 0..2 {
            check_replication(&m, rep);
        }
        check_figures(&m);
    }
}
