//! `sweep`: figures move the way load and size say they must (loss and
//! occupancy rise with load, loss falls with servers) within their intervals,
//! and the Erlang B column tracks the simulation at every step.

mod common;
use busyhour::experiment::RunOptions;
use busyhour::experiment::sweep::{self, Sweep};
use busyhour::scenario::Replications;
use busyhour::stats::Scope;
use common::*;

const TEXT: &str = r#"
[simulation]
warmup = "30m"
length = "10h"
replications = 10
seed = 29
[[group]]
name = "trunks"
servers = 20
[[stream]]
name = "calls"
arrivals = { law = "poisson", rate = "15/m" }
holding = { law = "exponential", mean = "60s" }
route = ["trunks"]
"#;

#[track_caller]
fn non_decreasing(what: &str, xs: &[busyhour::stats::Estimate]) {
    for w in xs.windows(2) {
        // A later step may not sit below an earlier one by more than the two
        // half-widths together.
        assert!(
            w[1].mean + w[1].half_width >= w[0].mean - w[0].half_width,
            "{what} fell: {:?} then {:?}",
            w[0],
            w[1]
        );
    }
}

#[test]
fn loss_and_occupancy_rise_with_load() {
    let m = model(TEXT);
    let spec = Sweep::parse_scale("0.6:1.6:0.2", &m).unwrap();
    let (steps, partial) =
        sweep::run(&m, &spec, &Replications::Fixed(10), &RunOptions::default()).unwrap();
    assert!(!partial);
    assert_eq!(steps.len(), 6);
    let loss: Vec<_> = steps
        .iter()
        .map(|s| s.outcome.get(Scope::Stream(0), "loss").unwrap())
        .collect();
    let occ: Vec<_> = steps
        .iter()
        .map(|s| s.outcome.get(Scope::Group(0), "occupancy").unwrap())
        .collect();
    non_decreasing("loss", &loss);
    non_decreasing("occupancy", &occ);
    // And each step agrees with Erlang B of the scaled load (truncated
    // Poisson from statrs).
    for (s, e) in steps.iter().zip(&loss) {
        let a = 15.0 * s.value;
        assert_covers(
            &format!("loss at scale {}", s.value),
            *e,
            erlang_b_statrs(20, a),
            4.0,
        );
    }
    assert!(loss[5].mean > 5.0 * loss[0].mean.max(1e-4));
}

#[test]
fn loss_falls_as_servers_are_added() {
    let m = model(TEXT);
    let spec = Sweep::parse_servers("trunks=14:24:2", &m).unwrap();
    let (steps, _) =
        sweep::run(&m, &spec, &Replications::Fixed(10), &RunOptions::default()).unwrap();
    let mut loss: Vec<_> = steps
        .iter()
        .map(|s| s.outcome.get(Scope::Stream(0), "loss").unwrap())
        .collect();
    loss.reverse();
    non_decreasing("loss against servers (reversed)", &loss);
    for s in &steps {
        assert_eq!(s.model.groups[0].servers as f64, s.value);
    }
}

#[test]
fn bad_sweeps_are_refused() {
    let m = model(TEXT);
    assert!(Sweep::parse_scale("nobody=0.8:1.2:0.1", &m).is_err());
    assert!(
        Sweep::parse_scale("0:1:0.5", &m).is_err(),
        "scale 0 is no load at all"
    );
    assert!(Sweep::parse_servers("trunks=10:5", &m).is_err());
    assert!(Sweep::parse_servers("trunks=0:5", &m).is_err());
    assert!(Sweep::parse_servers("trunks=1.5:5", &m).is_err());
    assert!(Sweep::parse_servers("other=10:12", &m).is_err());
}
