//! `sweep`: figures move the way load and size say they must (loss and
//! occupancy rise with load, loss falls with servers) within their intervals,
//! and the Erlang B column tracks the simulation at every step.

mod common;
use busyhour::experiment::sweep::{self, Sweep};
use busyhour::experiment::{Completion, RunOptions};
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
    let (steps, completion) =
        sweep::run(&m, &spec, &Replications::Fixed(10), &RunOptions::default()).unwrap();
    assert_eq!(completion, Completion::Complete);
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

/// `--goal` verdicts per step: where Erlang B (statrs' truncated Poisson)
/// lies well inside the bound the step must hold, well outside it must fail;
/// and the "met up to" value is the last holding step from the light end
/// (load) or from the large end (servers).
#[test]
fn goal_verdicts_follow_erlang_b() {
    use busyhour::experiment::size::{Goal, Verdict};
    use busyhour::report::sweep::SweepDocument;
    let m = model(TEXT);
    let goal = Goal::parse("loss<=2%", &m, 0).unwrap();
    for (spec, load) in [
        (Sweep::parse_scale("0.6:1.6:0.2", &m).unwrap(), true),
        (Sweep::parse_servers("trunks=16:26:2", &m).unwrap(), false),
    ] {
        let (steps, _) =
            sweep::run(&m, &spec, &Replications::Fixed(10), &RunOptions::default()).unwrap();
        let doc = SweepDocument::new(
            &m,
            "t.toml",
            &spec,
            &steps,
            false,
            &[],
            std::slice::from_ref(&goal),
        );
        let mut expected_through = None;
        let mut broken = false;
        for (st, step) in doc.steps.iter().zip(&steps) {
            let (n, a) = if load {
                (20, 15.0 * st.value)
            } else {
                (st.value as u64, 15.0)
            };
            let b = erlang_b_statrs(n, a);
            let verdict = st.goals[0].verdict;
            if b < 0.02 / 1.5 {
                assert_eq!(verdict, Verdict::Holds, "{} (Erlang B {b})", st.value);
            } else if b > 0.02 * 1.5 {
                assert_eq!(verdict, Verdict::Fails, "{} (Erlang B {b})", st.value);
            }
            assert_eq!(st.value, step.value);
            if load {
                if verdict == Verdict::Holds && !broken {
                    expected_through = Some(st.value);
                }
                broken |= verdict != Verdict::Holds;
            }
        }
        if !load {
            for st in doc.steps.iter().rev() {
                if st.goals[0].verdict != Verdict::Holds {
                    break;
                }
                expected_through = Some(st.value);
            }
        }
        assert!(expected_through.is_some(), "some step holds");
        assert_eq!(doc.goals_hold_through, Some(expected_through));
        let summary = doc.goal_summary().unwrap();
        assert!(summary.starts_with("Every goal is met"), "{summary}");
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

/// A grid of load scale against servers: every scale at every size, sizes
/// outer; each step's loss covers Erlang B of its own size and load
/// (statrs' truncated Poisson), and the goal summary is given per size.
#[test]
fn a_grid_runs_every_scale_at_every_size() {
    use busyhour::experiment::size::Goal;
    use busyhour::report::sweep::SweepDocument;
    let m = model(TEXT);
    let spec = Sweep::grid(
        Sweep::parse_scale("0.8:1.2:0.4", &m).unwrap(),
        Sweep::parse_servers("trunks=16:24:8", &m).unwrap(),
        &m,
    )
    .unwrap();
    let values: Vec<f64> = spec
        .values()
        .iter()
        .map(|v| (v * 1e9).round() / 1e9)
        .collect();
    assert_eq!(values, vec![0.8, 1.2, 0.8, 1.2]);
    let (steps, _) =
        sweep::run(&m, &spec, &Replications::Fixed(10), &RunOptions::default()).unwrap();
    assert_eq!(steps.len(), 4);
    for (i, st) in steps.iter().enumerate() {
        let n = [16, 16, 24, 24][i];
        assert_eq!(st.model.groups[0].servers, n);
        assert_eq!(spec.servers_at(i), Some(n));
        let loss = st.outcome.get(Scope::Stream(0), "loss").unwrap();
        assert_covers(
            &format!("loss at {n} servers, scale {}", st.value),
            loss,
            erlang_b_statrs(u64::from(n), 15.0 * st.value),
            4.0,
        );
    }
    let goal = Goal::parse("loss<=2%", &m, 0).unwrap();
    let doc = SweepDocument::new(&m, "t.toml", &spec, &steps, false, &[], &[goal]);
    // Erlang B: 16 servers miss 2% already at 12 E (3.5%); 24 meet it at
    // 12 E (0.1%) and at 18 E (1.9%; may be undecided, so not asserted).
    assert_eq!(doc.goals_by_servers.len(), 2);
    assert_eq!(doc.goals_by_servers[0].goals_hold_through, None);
    assert!(doc.goals_by_servers[1].goals_hold_through.is_some());
    assert!(doc.goal_summary().unwrap().contains("with 24 servers"));
}
