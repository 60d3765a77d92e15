//! The busy hour of a peak profile: the hour of whole intervals with the
//! most forecast load, found by scanning every window (recomputed here from
//! the profile's rates), its Erlang B from statrs' truncated Poisson, and
//! the simulated loss over the window: a ratio of sums over the window's
//! intervals that must cover Erlang B where the load is steady over the
//! hour (calls short against the hour).

mod common;
use busyhour::report::RunDocument;
use busyhour::stats::Figure;
use busyhour::textbook::busy_hour;
use common::*;

/// 15-minute intervals; the 4 busiest in a row are the 4th to 7th
/// (120+150+150+120 calls/h against 90+120+150+150 or 150+150+120+90).
const TEXT: &str = r#"
[simulation]
warmup = "30m"
length = "2h15m"
interval = "15m"
replications = 200
seed = 17
[[group]]
name = "lines"
servers = 8
[[stream]]
name = "callers"
arrivals = { law = "poisson", interval = "15m", rates = ["60/h", "60/h", "90/h", "120/h", "150/h", "150/h", "120/h", "90/h", "60/h"] }
holding = { law = "exponential", mean = "2m" }
route = ["lines"]
"#;

#[test]
fn the_busy_hour_is_the_window_of_most_forecast_load() {
    let m = model(TEXT);
    let bh = busy_hour(&m).expect("a profile with intervals has a busy hour");
    // Windows of four quarter hours: loads by hand, calls/h x 2 min.
    let rates = [60.0, 60.0, 90.0, 120.0, 150.0, 150.0, 120.0, 90.0, 60.0];
    let loads: Vec<f64> = (0..=rates.len() - 4)
        .map(|i| rates[i..i + 4].iter().sum::<f64>() / 4.0 * 120.0 / 3600.0)
        .collect();
    let best = (0..loads.len())
        .max_by(|&a, &b| loads[a].total_cmp(&loads[b]))
        .unwrap();
    assert_eq!((bh.first, bh.count), (best, 4));
    assert!((bh.offered - loads[best]).abs() < 1e-12);
    assert_eq!(
        (bh.start_s, bh.end_s),
        (best as f64 * 900.0, (best + 4) as f64 * 900.0)
    );
    let b = bh.erlang_b[0].expect("Erlang B applies");
    assert!((b - erlang_b_statrs(8, loads[best])).abs() < 1e-12);

    // Two-minute calls settle within minutes: over the hour the simulated
    // loss must cover Erlang B of the hour's load (ratio of sums, 4 half-widths).
    let o = run(&m);
    let doc = RunDocument::new(&m, &o, "t.toml");
    let figures = doc.busy_hour.expect("the run reports its busy hour");
    let loss = figures.streams[0].figures.get(Figure::Loss).unwrap();
    assert_covers("busy-hour loss", loss.estimate, b, 4.0);
    assert_eq!(
        loss.formula.as_ref().map(|f| f.name),
        Some("Erlang B, busy-hour load")
    );
}

#[test]
fn no_busy_hour_without_a_profile() {
    let m = model(&TEXT.replace(
        r#"{ law = "poisson", interval = "15m", rates = ["60/h", "60/h", "90/h", "120/h", "150/h", "150/h", "120/h", "90/h", "60/h"] }"#,
        r#"{ law = "poisson", rate = "100/h" }"#,
    ));
    assert!(busy_hour(&m).is_none());
}
