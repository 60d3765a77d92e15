//! Warnings about the start of a run: a warm-up shorter than the laws need,
//! and a transient visible between the two halves of the measured period.

mod common;

use busyhour::experiment::warnings::Warning;
use common::{model, run_n};

fn text(start: &str, warmup: &str) -> String {
    format!(
        r#"
[simulation]
{warmup}
length = "1h"
start = "{start}"
seed = 3

[[group]]
name = "trunks"
servers = 60

[[stream]]
name = "office"
arrivals = {{ law = "poisson", rate = "900/h" }}
holding = {{ law = "lognormal", mean = "3m", cv = 2 }}
route = ["trunks"]
"#
    )
}

#[test]
fn an_empty_start_without_warm_up_shows_a_transient() {
    // From empty, the M/G/inf occupancy at time t is A (1 - residual_tail(t))
    // (Eick, Massey and Whitt 1993): with lognormal cv 2 holding the first
    // half hour carries clearly less than the second.
    let m = model(&text("empty", "warmup = \"0s\""));
    let o = run_n(&m, 100);
    assert!(
        o.warnings
            .iter()
            .any(|w| matches!(w, Warning::ShortWarmup { .. })),
        "{:?}",
        o.warnings
    );
    let transient = o
        .warnings
        .iter()
        .find_map(|w| match w {
            Warning::Transient { first, second, .. } => Some((*first, *second)),
            _ => None,
        })
        .unwrap_or_else(|| panic!("no transient warning: {:?}", o.warnings));
    assert!(transient.0 < transient.1, "{transient:?}");
    let line = o.warnings.iter().map(|w| w.to_string()).collect::<Vec<_>>();
    assert!(line.iter().all(|l| !l.contains('\n')));
}

#[test]
fn a_steady_start_with_the_derived_warm_up_warns_of_nothing() {
    let m = model(&text("steady", ""));
    let o = run_n(&m, 100);
    assert!(o.warnings.is_empty(), "{:?}", o.warnings);
}
