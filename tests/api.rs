//! `busyhour::api`, the entry points of embedding programs (the Python
//! package): a scenario from a table compiles as its TOML text does, the
//! overrides refuse what the binary's flags refuse, and `run` gives the
//! document of the scenario's own run.

use busyhour::api::{self, Overrides};
use busyhour::experiment::{self, RunOptions};
use busyhour::report::{Format, RunDocument, render};
use busyhour::scenario::{self, Replications, ScenarioError};
use std::path::Path;

const TEXT: &str = r#"
[simulation]
length = "1h"
replications = 4
seed = 9

[[group]]
name = "trunks"
servers = 8

[[stream]]
name = "office"
arrivals = { law = "poisson", rate = "150/h" }
holding = { law = "exponential", mean = "2m" }
route = ["trunks"]
"#;

fn table(text: &str) -> toml::Table {
    toml::from_str(text).expect("valid TOML")
}

#[test]
fn a_table_runs_as_its_text() {
    let from_text = scenario::parse(TEXT, "t", Path::new("."), "t").unwrap();
    let from_table = api::scenario_from_table(&table(TEXT), "t", Path::new(".")).unwrap();
    let opts = RunOptions::default();
    let a = experiment::run(&from_text, None, &opts).unwrap();
    let b = experiment::run(&from_table, None, &opts).unwrap();
    // The same model and seed: the same estimates, exactly.
    assert_eq!(a.estimates, b.estimates);
}

#[test]
fn a_tables_type_error_names_the_key_without_a_line() {
    let mut t = table(TEXT);
    t["simulation"]["replications"] = toml::Value::String("many".into());
    let e = api::scenario_from_table(&t, "<dict>", Path::new(".")).unwrap_err();
    assert!(matches!(e, ScenarioError::Invalid { .. }), "{e:?}");
    let text = e.to_string();
    assert!(
        text.starts_with("<dict>: simulation.replications: "),
        "{text}"
    );
}

#[test]
fn a_tables_invalid_value_has_the_files_message() {
    let bad = TEXT.replace("servers = 8", "servers = -1");
    let from_text = scenario::parse(&bad, "x", Path::new("."), "x").unwrap_err();
    let from_table = api::scenario_from_table(&table(&bad), "x", Path::new(".")).unwrap_err();
    assert_eq!(from_text.to_string(), from_table.to_string());
}

#[test]
fn overrides_refuse_what_the_flags_refuse() {
    let bad = [
        Overrides {
            replications: Some(1),
            ..Default::default()
        },
        Overrides {
            precision: Some(0.0),
            ..Default::default()
        },
        Overrides {
            precision: Some(f64::NAN),
            ..Default::default()
        },
        Overrides {
            replications: Some(5),
            precision: Some(0.1),
            ..Default::default()
        },
        Overrides {
            max_replications: Some(50),
            ..Default::default()
        },
    ];
    for o in bad {
        assert!(o.check().is_err(), "{o:?} accepted");
    }
    let model = scenario::parse(TEXT, "t", Path::new("."), "t").unwrap();
    let o = Overrides {
        precision: Some(0.05),
        ..Default::default()
    };
    assert!(o.check().is_ok());
    assert_eq!(
        o.plan(&model),
        Replications::Precision {
            target: 0.05,
            max: scenario::DEFAULT_MAX_REPLICATIONS
        }
    );
    assert_eq!(Overrides::default().plan(&model), Replications::Fixed(4));
}

#[test]
fn run_gives_the_document_of_the_plain_run() {
    let mut model = scenario::parse(TEXT, "t.toml", Path::new("."), "t").unwrap();
    let o = Overrides {
        seed: Some(31),
        replications: Some(6),
        ..Default::default()
    };
    let (doc, partial) = api::run(&model, "t.toml", &o, &RunOptions::default()).unwrap();
    assert!(!partial);
    model.plan.seed = 31;
    let outcome =
        experiment::run(&model, Some(Replications::Fixed(6)), &RunOptions::default()).unwrap();
    let direct = RunDocument::new(&model, &outcome, "t.toml");
    assert_eq!(
        render(Format::Json, &doc).unwrap(),
        render(Format::Json, &direct).unwrap()
    );
}

#[test]
fn unknown_figures_and_groups_are_named() {
    let model = scenario::parse(TEXT, "t.toml", Path::new("."), "t").unwrap();
    let e = api::figures_named(&model, &["loss".into(), "speed".into()]).unwrap_err();
    assert_eq!(
        e.to_string(),
        "speed: this scenario reports no figure of that name"
    );
    let e = api::size(
        &model,
        "t.toml",
        "nobody",
        &["loss<=1%".into()],
        &Overrides::default(),
        None,
        &RunOptions::default(),
    )
    .unwrap_err();
    assert_eq!(
        e.to_string(),
        "group: nobody: no group of t.toml has that name"
    );
}

/// The binary's `--json` output for `args`.
fn binary_json(args: &[&str]) -> String {
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .args(["--json", "--quiet"])
        .env("SOURCE_DATE_EPOCH", "0")
        .output()
        .expect("the binary runs");
    assert!(out.status.code().is_some_and(|c| c <= 1), "{out:?}");
    String::from_utf8(out.stdout).expect("UTF-8")
}

/// A document's JSON without `wall_s`, the one key that depends on the
/// machine's speed.
fn without_wall(json: &str) -> serde_json::Value {
    let mut v: serde_json::Value = serde_json::from_str(json).expect("JSON");
    if let Some(m) = v.as_object_mut() {
        m.remove("wall_s");
    }
    v
}

#[test]
fn size_cost_and_staffing_give_the_binarys_documents() {
    let opts = RunOptions::default();
    let reps = Overrides {
        replications: Some(20),
        ..Overrides::default()
    };
    let file = "scenarios/gateway-costs.toml";
    let model = scenario::load(Path::new(file)).unwrap();
    let (doc, partial) = api::size_cost(&model, file, "ports", &reps, &opts).unwrap();
    assert!(!partial);
    let expected = binary_json(&[
        "size",
        file,
        "--group",
        "ports",
        "--goal",
        "cost",
        "--replications",
        "20",
    ]);
    assert_eq!(
        without_wall(&render(Format::Json, &doc).unwrap()),
        without_wall(&expected)
    );

    let file = "scenarios/clinic-day.toml";
    let model = scenario::load(Path::new(file)).unwrap();
    let goals = ["service_level>=80%".to_string()];
    let (doc, _) = api::staffing(&model, file, "agents", &goals, &reps, 6, &opts).unwrap();
    let expected = binary_json(&[
        "size",
        file,
        "--group",
        "agents",
        "--goal",
        "service_level>=80%",
        "--per-interval",
        "--rounds",
        "6",
        "--replications",
        "20",
    ]);
    assert_eq!(
        without_wall(&render(Format::Json, &doc).unwrap()),
        without_wall(&expected)
    );
    // The least-cost size needs prices.
    let e = api::size_cost(&model, file, "agents", &reps, &opts).unwrap_err();
    assert!(
        e.to_string()
            .starts_with("prices: the scenario has no [prices]"),
        "{e}"
    );
}
