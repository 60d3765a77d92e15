//! `busyhour compare` from the command line: the shipped pair of designs in
//! every output, thread independence, and one-line refusals of bad input.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const A: &str = "scenarios/campus-overflow.toml";
const B: &str = "scenarios/compare-b.toml";

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run busyhour")
}

fn ok(args: &[&str]) -> String {
    let o = busyhour(args);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{args:?}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    String::from_utf8(o.stdout).expect("UTF-8")
}

/// The refusal of `args`: exit 2, one line on stderr holding every
/// fragment, nothing on stdout.
#[track_caller]
fn refused(args: &[&str], fragments: &[&str]) {
    let o = busyhour(args);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
    assert_eq!(err.lines().count(), 1, "{args:?}: {err}");
    assert!(err.starts_with("busyhour: "), "{err}");
    for f in fragments {
        assert!(err.contains(f), "{args:?}: {f:?} not in {err}");
    }
    assert!(o.stdout.is_empty());
}

struct Scratch(PathBuf);

impl Scratch {
    fn new(case: &str) -> Scratch {
        let d = std::env::temp_dir().join(format!(
            "busyhour-cli-compare-{}-{case}",
            std::process::id()
        ));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).unwrap();
        Scratch(d)
    }

    fn path(&self, name: &str) -> String {
        self.0.join(name).display().to_string()
    }

    fn write(&self, name: &str, text: &str) -> String {
        std::fs::write(self.0.join(name), text).unwrap();
        self.path(name)
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

fn json(args: &[&str]) -> serde_json::Value {
    serde_json::from_str(&ok(args)).expect("valid JSON")
}

#[test]
fn the_shipped_pair_in_every_output() {
    let table = ok(&["compare", A, B, "--replications", "12"]);
    assert!(table.contains("12 paired replications"), "{table}");
    assert!(table.contains("B - A (paired 95%)"));
    assert!(table.contains("unpaired ±"));
    assert!(table.contains("Caution:"));
    let doc = json(&["compare", A, B, "--replications", "12", "--json"]);
    assert_eq!(doc["replications"], 12);
    assert!(doc["caution"].as_str().unwrap().contains("regulation"));
    let figures = doc["figures"].as_array().unwrap();
    let find = |kind: &str, name: &str, figure: &str| {
        figures
            .iter()
            .find(|f| f["kind"] == kind && f["name"] == name && f["figure"] == figure)
            .unwrap_or_else(|| panic!("{kind} {name} {figure}"))
    };
    // One more circuit on the shared group: its calls lose less, decided.
    let loss = find("stream", "fax-and-alarms", "loss");
    assert_eq!(loss["decided"], true, "{loss}");
    assert_eq!(loss["verdict"], "B loses fewer calls");
    assert!(loss["difference"]["high"].as_f64().unwrap() < 0.0);
    let hw = loss["difference"]["half_width"].as_f64().unwrap();
    assert!(hw < loss["unpaired_half_width"].as_f64().unwrap());
    // The plant's own trunks see the same calls in both designs.
    let own = find("group", "plant-trunks", "occupancy");
    assert_eq!(own["difference"]["half_width"], 0.0);
    assert_eq!(own["decided"], false);
    assert!(doc["only_a"].as_array().unwrap().is_empty());
    assert!(doc["only_b"].as_array().unwrap().is_empty());
    let csv = ok(&["compare", A, B, "--replications", "12", "--csv"]);
    let mut lines = csv.lines();
    assert!(lines.next().unwrap().starts_with("# Caution: "));
    assert!(
        lines
            .next()
            .unwrap()
            .starts_with("kind,name,interval_start_s,figure,a_mean")
    );
    assert_eq!(lines.count(), figures.len());
    let s = Scratch::new("outputs");
    let (html, svg) = (s.path("cmp.html"), s.path("cmp.svg"));
    ok(&[
        "compare",
        A,
        B,
        "--replications",
        "12",
        "--report",
        &html,
        "--chart",
        &svg,
        "-q",
    ]);
    let page = std::fs::read_to_string(&html).unwrap();
    assert!(page.contains("Caution.") && page.contains("<svg"));
    assert!(page.contains("B loses fewer calls"));
    let chart = std::fs::read_to_string(&svg).unwrap();
    assert!(chart.contains("no difference"));
}

#[test]
fn results_are_identical_for_one_and_two_threads() {
    let run = |t: &str| {
        ok(&[
            "compare",
            A,
            B,
            "--replications",
            "8",
            "--json",
            "--threads",
            t,
        ])
    };
    assert_eq!(run("1"), run("2"));
}

#[test]
fn a_design_against_itself_differs_by_nothing() {
    let doc = json(&["compare", A, A, "--replications", "5", "--json"]);
    for f in doc["figures"].as_array().unwrap() {
        assert_eq!(f["difference"]["mean"], 0.0, "{f}");
        assert_eq!(f["difference"]["half_width"], 0.0, "{f}");
        assert_eq!(f["decided"], false);
    }
}

#[test]
fn designs_with_intervals_are_compared_interval_by_interval() {
    let peak = "scenarios/harbour-peak.toml";
    let s = Scratch::new("peak");
    let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(peak)).unwrap();
    // The same harbour with a different seed in B: the note says B's seed is
    // not used, and every figure, per interval too, is compared.
    let b = s.write("b.toml", &text.replace("seed = 3", "seed = 4"));
    let o = busyhour(&["compare", peak, &b, "--replications", "4", "--json"]);
    assert_eq!(o.status.code(), Some(0));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("B's seed 4 is not used"), "{err}");
    let doc: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let per_interval = doc["figures"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|f| f.get("interval").is_some())
        .count();
    assert!(per_interval >= 12, "{per_interval}");
    assert_eq!(doc["interval_s"], 900.0);
}

#[test]
fn bad_input_is_refused_on_one_line() {
    let s = Scratch::new("bad");
    let missing = s.path("missing.toml");
    refused(&["compare", A, &missing], &["missing.toml", "cannot read"]);
    let broken = s.write(
        "broken.toml",
        "[simulation]\nlength = \"2h\"\n[[group]]\nname = \"g\"\nservers = 3\n",
    );
    refused(&["compare", &broken, B], &["broken.toml"]);
    let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(B)).unwrap();
    let longer = s.write(
        "longer.toml",
        &text.replace("length = \"2h\"", "length = \"3h\""),
    );
    refused(
        &["compare", A, &longer],
        &["longer.toml", "length is 3 h in B but 2 h in A"],
    );
    let halves = s.write(
        "halves.toml",
        &text.replace("seed = 7", "seed = 7\ninterval = \"30m\""),
    );
    refused(&["compare", A, &halves], &["interval is 30 min in B"]);
    refused(
        &["compare", A, B, "--precision", "5%"],
        &["--precision", "--replications N"],
    );
    refused(&["compare", A, B, "--out", B], &["--out", "design B"]);
    refused(&["compare", A], &["<B>"]);
    refused(
        &["compare", A, "scenarios/video-link.toml"],
        &["nothing to compare"],
    );
}
