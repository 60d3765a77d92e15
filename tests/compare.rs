//! Paired comparison of two designs (`experiment::compare`): the paired
//! interval against the exact difference of two Erlang B values, against the
//! unpaired half-width, identical designs, matching by name, refused plans
//! and thread independence.

mod common;

use busyhour::experiment::RunOptions;
use busyhour::experiment::compare::{self, Compared, Comparison, PlanError};
use busyhour::formulas::erlang_b;
use busyhour::scenario::Model;
use busyhour::stats::Figure;
use common::{assert_covers, erlang_b_statrs, model};

/// One Poisson stream offered to one loss group: `traffic` erlangs of
/// exponential 3-minute calls on `servers` circuits.
fn loss_design(servers: u32, traffic: f64, seed: u64, hours: u32, reps: u32) -> String {
    let per_hour = traffic * 20.0;
    format!(
        r#"
title = "one loss group"
[simulation]
warmup = "1h"
length = "{hours}h"
replications = {reps}
seed = {seed}
[[group]]
name = "trunks"
servers = {servers}
[[stream]]
name = "calls"
arrivals = {{ law = "poisson", rate = "{per_hour}/h" }}
holding = {{ law = "exponential", mean = "3m" }}
route = ["trunks"]
"#
    )
}

fn compare_models(a: &Model, b: &Model, reps: Option<u32>, threads: Option<usize>) -> Comparison {
    let plan = compare::plan(a, b, reps).expect("comparable plans");
    let opts = RunOptions {
        threads,
        ..RunOptions::default()
    };
    compare::compare(a, b, plan, &opts).expect("comparison runs")
}

fn find<'a>(c: &'a Comparison, stream: bool, name: &str, figure: Figure) -> &'a Compared {
    c.common
        .iter()
        .find(|x| {
            x.owner.interval.is_none()
                && x.owner.stream == stream
                && x.owner.name == name
                && x.figure == figure
        })
        .unwrap_or_else(|| panic!("no common {name} {figure:?}"))
}

/// Erlang's recursion for the loss formula, written here independently of
/// the crate: B(0) = 1, B(n) = A B(n-1) / (n + A B(n-1)) (Erlang 1917; the
/// standard recursion of every teletraffic handbook).
fn erlang_recursion(servers: u32, a: f64) -> f64 {
    (1..=servers).fold(1.0, |b, n| a * b / (f64::from(n) + a * b))
}

#[test]
fn the_exact_erlang_b_values_agree_three_ways() {
    // The crate's Erlang B, the statrs truncated Poisson and Erlang's
    // recursion written above give the same B(10, 8) and B(11, 8).
    for n in [10, 11] {
        let crate_value = erlang_b::blocking(n, 8.0).unwrap();
        assert!((crate_value - erlang_recursion(n, 8.0)).abs() < 1e-12);
        assert!((crate_value - erlang_b_statrs(u64::from(n), 8.0)).abs() < 1e-12);
    }
    // Recalled from memory (Erlang B tables): B(10, 8 E) is about 12.2%.
    assert!((erlang_recursion(10, 8.0) - 0.1217).abs() < 5e-4);
}

#[test]
fn the_paired_interval_covers_the_exact_difference_of_two_erlang_b_values() {
    // One more circuit on a loss group offered 8 E: the exact difference of
    // the loss is B(11, 8) - B(10, 8) (Erlang B holds exactly for Poisson
    // arrivals; the recursion above is the reference, the crate's formula
    // agrees). 20 seeds; a 95% interval must cover in most: 17 of 20 is
    // met with probability about 0.98 at the nominal level (binomial).
    let exact = erlang_recursion(11, 8.0) - erlang_recursion(10, 8.0);
    let mut covered = 0;
    for seed in 0..20 {
        let a = model(&loss_design(10, 8.0, 100 + seed, 4, 30));
        let b = model(&loss_design(11, 8.0, 100 + seed, 4, 30));
        let c = compare_models(&a, &b, None, None);
        let d = find(&c, true, "calls", Figure::Loss).difference;
        // The interval is narrow enough to mean something: under a fifth of
        // the 4-point difference.
        assert!(d.half_width < 0.2 * exact.abs(), "seed {seed}: {d:?}");
        if d.contains(exact) {
            covered += 1;
        }
    }
    eprintln!("paired interval covered B(11, 8) - B(10, 8) in {covered} of 20 seeds");
    assert!(covered >= 17, "covered {covered} of 20 (exact {exact})");
}

#[test]
fn pairing_narrows_the_interval_of_adjacent_sizes() {
    // 10 against 11 circuits with the same calls: the losses of the two
    // move together from replication to replication (a busy replication is
    // busy in both), so the variance of the difference, var A + var B -
    // 2 cov, is far below var A + var B, the unpaired one.
    let a = model(&loss_design(10, 8.0, 7, 2, 40));
    let b = model(&loss_design(11, 8.0, 7, 2, 40));
    let c = compare_models(&a, &b, None, None);
    for figure in [Figure::Loss, Figure::CarriedTraffic] {
        let x = find(&c, true, "calls", figure);
        eprintln!(
            "{figure:?}: paired half-width {:.5}, unpaired {:.5}",
            x.difference.half_width, x.unpaired_half_width
        );
        assert!(
            x.difference.half_width < 0.5 * x.unpaired_half_width,
            "{figure:?}: paired {} against unpaired {}",
            x.difference.half_width,
            x.unpaired_half_width
        );
        assert!(x.decided(), "{figure:?}: {:?}", x.difference);
    }
    // The unpaired half-width is what two separate intervals give: about
    // the root of the sum of the squares of A's and B's own half-widths
    // (the figures' own intervals are on the logit scale, so only roughly).
    let x = find(&c, true, "calls", Figure::Loss);
    let separate = (x.a.half_width.powi(2) + x.b.half_width.powi(2)).sqrt();
    assert!(
        (x.unpaired_half_width / separate - 1.0).abs() < 0.25,
        "unpaired {} against separate {separate}",
        x.unpaired_half_width
    );
    // The offered calls are the same calls in both: no difference at all.
    let offered = find(&c, true, "calls", Figure::OfferedCalls);
    assert_eq!(offered.difference.mean, 0.0);
    assert_eq!(offered.difference.half_width, 0.0);
    assert!(offered.unpaired_half_width > 0.0);
}

#[test]
fn one_design_against_itself_differs_by_exactly_zero() {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/campus-overflow.toml"
    ))
    .unwrap();
    let a = model(&text);
    let c = compare_models(&a, &a, Some(8), None);
    assert!(c.only_a.is_empty() && c.only_b.is_empty());
    assert!(c.common.len() > 20);
    for x in &c.common {
        assert_eq!(
            (x.difference.mean, x.difference.half_width),
            (0.0, 0.0),
            "{:?} {:?}",
            x.owner,
            x.figure
        );
        assert_eq!(x.a, x.b);
        assert!(!x.decided());
    }
}

#[test]
fn figures_are_matched_by_name_and_the_others_listed() {
    // B lists the same streams and groups in another order and adds a
    // stream and a group of its own: the shared figures are matched by
    // name, and since each stream's random numbers are keyed by its name,
    // the shared stream's offered calls are the same in every replication.
    let a = model(&loss_design(10, 8.0, 3, 1, 10));
    let b = model(
        r#"
title = "with a second group"
[simulation]
warmup = "1h"
length = "1h"
replications = 10
seed = 3
[[group]]
name = "backup"
servers = 4
[[group]]
name = "trunks"
servers = 10
[[stream]]
name = "fax"
arrivals = { law = "poisson", rate = "20/h" }
holding = { law = "exponential", mean = "2m" }
route = ["backup"]
[[stream]]
name = "calls"
arrivals = { law = "poisson", rate = "160/h" }
holding = { law = "exponential", mean = "3m" }
route = ["trunks", "backup"]
"#,
    );
    let c = compare_models(&a, &b, None, None);
    let offered = find(&c, true, "calls", Figure::OfferedCalls);
    assert_eq!(offered.difference.half_width, 0.0);
    assert_eq!(offered.a, offered.b);
    // With the backup group B's calls lose less.
    let loss = find(&c, true, "calls", Figure::Loss);
    assert!(loss.decided() && loss.difference.mean < 0.0, "{loss:?}");
    assert!(c.only_a.is_empty());
    let only_b: Vec<(&str, Figure)> = c
        .only_b
        .iter()
        .map(|u| (u.owner.name.as_str(), u.figure))
        .collect();
    assert!(only_b.contains(&("fax", Figure::Loss)));
    assert!(only_b.contains(&("backup", Figure::Occupancy)));
    // The trunks overflow in B only: their overflow figures are B's alone.
    assert!(only_b.contains(&("trunks", Figure::OverflowCalls)));
}

#[test]
fn the_plan_is_a_s_and_b_is_refused_where_it_differs() {
    let a = model(&loss_design(10, 8.0, 3, 2, 10));
    let longer = model(&loss_design(10, 8.0, 3, 3, 10));
    assert!(matches!(
        compare::plan(&a, &longer, None),
        Err(PlanError::Length { .. })
    ));
    let with_intervals =
        model(&loss_design(10, 8.0, 3, 2, 10).replace("seed = 3", "seed = 3\ninterval = \"30m\""));
    assert!(matches!(
        compare::plan(&a, &with_intervals, None),
        Err(PlanError::Interval { .. })
    ));
    let empty =
        model(&loss_design(10, 8.0, 3, 2, 10).replace("seed = 3", "seed = 3\nstart = \"empty\""));
    assert!(matches!(
        compare::plan(&a, &empty, None),
        Err(PlanError::Start { .. })
    ));
    let precise =
        model(&loss_design(10, 8.0, 3, 2, 10).replace("replications = 10", "precision = \"5%\""));
    assert_eq!(compare::plan(&precise, &a, None), Err(PlanError::Precision));
    assert_eq!(
        compare::plan(&precise, &a, Some(12)).unwrap().replications,
        12
    );
    // B's own seed and count are not used, and the notes say so.
    let other = model(&loss_design(11, 8.0, 99, 2, 50));
    let plan = compare::plan(&a, &other, None).unwrap();
    assert_eq!((plan.seed, plan.replications), (3, 10));
    assert_eq!(plan.notes.len(), 2, "{:?}", plan.notes);
    let elsewhere = model(
        &loss_design(10, 8.0, 3, 2, 10)
            .replace("\"trunks\"", "\"lines\"")
            .replace("\"calls\"", "\"orders\""),
    );
    assert_eq!(
        compare::plan(&a, &elsewhere, None),
        Err(PlanError::NothingInCommon)
    );
}

#[test]
fn the_longer_warm_up_is_used_for_both() {
    let a = model(&loss_design(10, 8.0, 3, 1, 6));
    let b = model(&loss_design(11, 8.0, 3, 1, 6).replace("warmup = \"1h\"", "warmup = \"2h\""));
    let plan = compare::plan(&a, &b, None).unwrap();
    assert_eq!(plan.warmup_s, 7200.0);
    assert_eq!(plan.notes.len(), 1, "{:?}", plan.notes);
    // Same warm-up, same seed: the arrivals line up.
    let c = compare_models(&a, &b, None, None);
    assert_eq!(
        find(&c, true, "calls", Figure::OfferedCalls)
            .difference
            .half_width,
        0.0
    );
}

#[test]
fn results_do_not_depend_on_the_thread_count() {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/campus-overflow.toml"
    ))
    .unwrap();
    let a = model(&text);
    let b = model(&text.replace("servers = 10", "servers = 11"));
    let one = compare_models(&a, &b, Some(6), Some(1));
    let two = compare_models(&a, &b, Some(6), Some(2));
    assert_eq!(one.common, two.common);
    assert_eq!(one.a.per_replication, two.a.per_replication);
    assert_eq!(one.b.per_replication, two.b.per_replication);
    // The shared group's loss is decided here too: a quick sanity check
    // that the comparison is not empty.
    let x = find(&one, false, "carrier-shared", Figure::CarriedTraffic);
    assert!(x.difference.mean > 0.0);
}

#[test]
fn the_paired_difference_of_a_mean_figure_covers_the_exact_one() {
    // Carried traffic of the stream: A (1 - B(N, A)) exactly (Erlang B), so
    // the difference of 11 against 10 circuits is 8 (B(10) - B(11)). One
    // seed, 60 replications of 4 h; within 3 half-widths.
    let exact = 8.0 * (erlang_recursion(10, 8.0) - erlang_recursion(11, 8.0));
    let a = model(&loss_design(10, 8.0, 41, 4, 60));
    let b = model(&loss_design(11, 8.0, 41, 4, 60));
    let c = compare_models(&a, &b, None, None);
    let d = find(&c, false, "trunks", Figure::CarriedTraffic).difference;
    assert_covers("carried traffic, 11 - 10 circuits", d, exact, 3.0);
    assert!(d.half_width < 0.2 * exact, "{d:?}");
}

#[test]
fn an_interrupted_comparison_keeps_the_pairs_both_finished() {
    use std::sync::atomic::{AtomicBool, Ordering};
    let a = model(&loss_design(10, 8.0, 5, 1, 200));
    let b = model(&loss_design(11, 8.0, 5, 1, 200));
    // Stop once 70 replications are done: inside B's first batch.
    let stop = AtomicBool::new(false);
    let progress = |done: u64, _planned: u64| {
        if done >= 70 {
            stop.store(true, Ordering::SeqCst);
        }
    };
    let opts = RunOptions {
        threads: Some(1),
        progress: Some(&progress),
        stop: Some(&stop),
    };
    let plan = compare::plan(&a, &b, None).unwrap();
    let c = compare::compare(&a, &b, plan, &opts).unwrap();
    assert!(c.partial);
    let kept = c.a.replications;
    assert_eq!(kept, c.b.replications);
    assert!(kept > 0 && kept < 200, "{kept}");
    // The pairs kept are exactly a comparison of that many replications.
    let whole = compare_models(&a, &b, Some(kept as u32), Some(1));
    assert_eq!(c.common, whole.common);
}
