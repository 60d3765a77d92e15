//! Callers' patience from waiting times in call records: the censored
//! estimate recovers a known exponential patience, and `--scenario-out`
//! writes a queue with that patience (or a comment when the records hold
//! no waits).

use busyhour::records::scenario_out::{self, ScenarioOptions};
use busyhour::records::time::{Date, days_from_civil};
use busyhour::records::{self, Analysis, Options};
use busyhour::scenario;
use rand::{RngExt, SeedableRng};
use rand_distr::{Distribution, Exp};
use rand_xoshiro::Xoshiro256PlusPlus;
use std::fmt::Write as _;

/// Known mean patience (s) of the synthetic callers.
const PATIENCE_MEAN_S: f64 = 120.0;

/// Call records with a date column, a time-of-day column and a wait
/// column. Each caller is offered a wait V (0 with chance 30%, else
/// exponential, mean 60 s) and has an exponential patience T of mean
/// [`PATIENCE_MEAN_S`]: abandoned after T when T < V, else answered after
/// V (so answered waits are censored patience). Some rows are blocked
/// (no wait) and some answered rows have an empty wait (unknown).
fn records(callers: usize, seed: u64) -> String {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let offered_wait = Exp::new(1.0 / 60.0).unwrap();
    let patience = Exp::new(1.0 / PATIENCE_MEAN_S).unwrap();
    let holding = Exp::new(1.0 / 180.0).unwrap();
    let day0 = days_from_civil(2026, 3, 2);
    let mut csv = String::from("date,time,duration,outcome,wait\n");
    for i in 0..callers {
        let day = day0 + (i % 5) as i64;
        let clock = 8 * 3600 + rng.random_range(0..10 * 3600);
        let (h, m, s) = (clock / 3600, clock / 60 % 60, clock % 60);
        let date = Date(day);
        if rng.random_bool(0.02) {
            let _ = writeln!(csv, "{date},{h:02}:{m:02}:{s:02},0,blocked,");
            continue;
        }
        let v: f64 = if rng.random_bool(0.3) {
            0.0
        } else {
            offered_wait.sample(&mut rng)
        };
        let t: f64 = patience.sample(&mut rng);
        if t < v {
            let _ = writeln!(csv, "{date},{h:02}:{m:02}:{s:02},0,abandoned,{t:.3}");
        } else {
            let d: f64 = holding.sample(&mut rng);
            let wait = if rng.random_bool(0.01) {
                String::new()
            } else {
                format!("{v:.3}")
            };
            let _ = writeln!(csv, "{date},{h:02}:{m:02}:{s:02},{d:.1},answered,{wait}");
        }
    }
    csv
}

fn analyse(text: &str) -> Analysis {
    records::analyse_reader(text.as_bytes(), "calls.csv", &Options::default())
        .unwrap_or_else(|e| panic!("{e}"))
}

#[test]
fn the_censored_estimate_recovers_a_known_exponential_patience() {
    let a = analyse(&records(30_000, 2026));
    let (column, waits) = a.waits.as_ref().expect("the wait column is found by name");
    assert_eq!(column, "wait");
    let p = a.patience.expect("abandoned calls with waits");
    // Maximum likelihood for exponential lifetimes with right censoring
    // (Lawless 2003, recalled from memory): rate = events / total exposure,
    // asymptotic standard error rate / sqrt(events).
    let se = p.rate_per_s / (waits.abandoned as f64).sqrt();
    assert!((p.rate_standard_error - se).abs() < 1e-15);
    let truth = 1.0 / PATIENCE_MEAN_S;
    assert!(
        (p.rate_per_s - truth).abs() < 4.0 * se,
        "rate {} per s, truth {truth}, se {se}",
        p.rate_per_s
    );
    // The interval means something: the standard error is under 3% of the
    // rate (about 28,000 waiting callers, a third of the waiters abandon:
    // P(T < V) = (1/120) / (1/120 + 1/60) for those offered a wait).
    assert!(se < 0.03 * truth, "se {se}");
    assert!(waits.abandoned > 5000 && waits.unknown > 100, "{waits:?}");
    // Ignoring the censoring (the mean of the abandoned callers' waits
    // alone) is badly wrong: E[T | T < V] = 1 / (1/120 + 1/60) = 40 s.
    let naive = waits.abandoned_wait_s / waits.abandoned as f64;
    assert!((naive - 40.0).abs() < 4.0 * 40.0 / (waits.abandoned as f64).sqrt());
    assert!(p.mean_s - naive > 60.0);
    // The life table (Cutler and Ederer 1958, Greenwood's standard error)
    // follows the true survival exp(-t / 120) without assuming a law.
    for t in busyhour::records::patience::SURVIVAL_AT_S {
        let (share, se) = waits.survival(t).expect("callers waited that long");
        let truth = (-t / PATIENCE_MEAN_S).exp();
        assert!(
            (share - truth).abs() < 4.0 * se,
            "after {t} s: {share} vs {truth}, se {se}"
        );
        assert!(se < 0.03, "after {t} s: se {se}");
    }
}

#[test]
fn the_scenario_has_a_queue_and_the_fitted_patience() {
    let a = analyse(&records(20_000, 7));
    let p = a.patience.expect("patience");
    let out = scenario_out::render(&a, &ScenarioOptions::default()).unwrap();
    let text = &out.text;
    assert!(text.contains("queue = \"unlimited\""), "{text}");
    assert!(text.contains("route = [\"agents\"]"), "{text}");
    assert!(
        text.contains(&format!("# patience: {}.", records::patience::METHOD)),
        "{text}"
    );
    assert_eq!(out.patience, Some(p));
    // The scenario is valid and its stream's patience is the fitted mean.
    let dir = std::env::temp_dir().join(format!("busyhour-patience-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("queue.toml");
    std::fs::write(&path, text).unwrap();
    let model = scenario::load(&path).unwrap_or_else(|e| panic!("{e}\n{text}"));
    let patience = model.streams[0]
        .patience
        .as_ref()
        .expect("the stream has a patience law");
    assert_eq!(patience.name(), "exponential");
    assert!(
        (patience.mean() - p.mean_s).abs() < 1e-3,
        "{} vs {}",
        patience.mean(),
        p.mean_s
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn without_waits_no_patience_law_is_invented() {
    // Abandoned calls, no wait column: a loss group and a comment.
    let text = "start,duration,outcome\n\
        2026-03-02T10:00:00,100,answered\n\
        2026-03-02T10:05:00,0,abandoned\n\
        2026-03-02T10:10:00,200,answered\n";
    let a = analyse(text);
    assert!(a.waits.is_none() && a.patience.is_none());
    let out = scenario_out::render(&a, &ScenarioOptions::default()).unwrap();
    assert!(!out.text.contains("patience ="), "{}", out.text);
    assert!(!out.text.contains("queue ="), "{}", out.text);
    assert!(
        out.text
            .contains("# The records hold 1 abandoned calls but no waiting times"),
        "{}",
        out.text
    );
    assert!(out.text.contains("no waiting-time column"), "{}", out.text);
    assert!(busyhour::report::records::to_text(&a).contains("no waiting-time column"));
    // A wait column whose abandoned rows are empty: the same, naming it.
    let text = "start,duration,outcome,queue_s\n\
        2026-03-02T10:00:00,100,answered,5\n\
        2026-03-02T10:05:00,0,abandoned,\n";
    let a = analyse(text);
    assert!(a.patience.is_none());
    let out = scenario_out::render(&a, &ScenarioOptions::default()).unwrap();
    assert!(
        out.text
            .contains("column \"queue_s\" gives no abandoned call a wait"),
        "{}",
        out.text
    );
    assert!(!out.text.contains("patience ="), "{}", out.text);
}

#[test]
fn a_bad_wait_names_the_line_and_column() {
    let text = "start,duration,outcome,wait_s\n\
        2026-03-02T10:00:00,100,answered,5\n\
        2026-03-02T10:05:00,0,abandoned,soon\n";
    let e = records::analyse_reader(text.as_bytes(), "calls.csv", &Options::default())
        .unwrap_err()
        .to_string();
    assert!(
        e.starts_with("calls.csv:3: waiting time in column \"wait_s\": 'soon'"),
        "{e}"
    );
    let a = records::analyse_reader(
        text.as_bytes(),
        "calls.csv",
        &Options {
            skip_bad: true,
            ..Options::default()
        },
    )
    .unwrap();
    assert_eq!(a.rows.skipped_by_kind.get("waiting time"), Some(&1));
}
