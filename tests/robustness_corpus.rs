//! The bad-input corpus: every malformed or hostile scenario file in
//! `tests/bad-scenarios/` and every bad call-record file in
//! `tests/bad-records/` is refused by the built binary with exit status 2,
//! exactly one line on stderr naming the file, nothing on stdout, and the
//! expected fragment of the message.
//!
//! Expected fragments: a scenario file starts with one or more
//! `# expect: <fragment>` lines (TOML comments); every fragment must appear
//! in the message. A call-record file cannot carry a comment (its first line
//! is the header), so its fragment is in [`RECORDS`] below, and a file named
//! `...-line-N.csv` must also be reported at `FILE:N:`.
//!
//! Cases too big to commit are made here, in a copy of the corpus in a
//! temporary folder: a 1 GiB empirical data file of one line (sparse: 2 MiB
//! of digits, then a hole; the reader stops past its 1 MiB line cap) and a
//! 1 GiB scenario file (sparse; refused by its size before it is read).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// Committed corpus files (directories named `*.toml` included).
const MIN_SCENARIO_CASES: usize = 40;

fn busyhour(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run busyhour")
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("busyhour-corpus-{}-{name}", std::process::id()));
    if d.exists() {
        std::fs::remove_dir_all(&d).expect("clear scratch folder");
    }
    std::fs::create_dir_all(&d).expect("scratch folder");
    d
}

fn copy_tree(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).expect("create folder");
    for entry in std::fs::read_dir(from).expect("read corpus folder") {
        let entry = entry.expect("folder entry");
        let target = to.join(entry.file_name());
        if entry.file_type().expect("file type").is_dir() {
            copy_tree(&entry.path(), &target);
        } else {
            std::fs::copy(entry.path(), &target).expect("copy corpus file");
        }
    }
}

/// A sparse file of `len` bytes that starts with `head`.
fn sparse(path: &Path, head: &[u8], len: u64) {
    std::fs::write(path, head).expect("write head");
    let f = std::fs::OpenOptions::new()
        .write(true)
        .open(path)
        .expect("open for length");
    f.set_len(len).expect("extend (sparse)");
}

/// The `# expect:` fragments at the top of a scenario file.
fn fragments_of(path: &Path) -> Vec<String> {
    if path.is_dir() {
        return vec!["it is a directory, not a file".into()];
    }
    let bytes = std::fs::read(path).expect("read case");
    let text = String::from_utf8_lossy(&bytes[..bytes.len().min(4096)]).into_owned();
    let found: Vec<String> = text
        .lines()
        .map_while(|l| l.strip_prefix("# expect: "))
        .map(str::to_string)
        .collect();
    assert!(
        !found.is_empty(),
        "{}: the case has no `# expect: ` line",
        path.display()
    );
    found
}

/// Checks one refusal: exit 2, one stderr line naming `file` and holding
/// every fragment, nothing on stdout.
#[track_caller]
fn assert_refused(what: &str, o: &Output, file: &str, fragments: &[String]) {
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(
        o.status.code(),
        Some(2),
        "{what}: exit status; stderr: {err}"
    );
    assert_eq!(
        err.lines().count(),
        1,
        "{what}: exactly one line expected on stderr, got:\n{err}"
    );
    assert!(
        err.ends_with('\n'),
        "{what}: the line is not ended: {err:?}"
    );
    assert!(err.contains(file), "{what}: the file is not named: {err}");
    for f in fragments {
        assert!(
            err.contains(f.as_str()),
            "{what}\n  expected fragment: {f}\n  message:           {}",
            err.trim_end()
        );
    }
    assert!(
        o.stdout.is_empty(),
        "{what}: nothing may go to stdout, got {:?}",
        String::from_utf8_lossy(&o.stdout)
    );
}

#[test]
fn every_bad_scenario_is_refused_with_one_clear_line() {
    let corpus = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/bad-scenarios");
    let dir = scratch("scenarios");
    copy_tree(&corpus, &dir);
    // Too big to commit: made here.
    let mut digits = vec![b'7'; 2 << 20];
    digits.extend_from_slice(b"7");
    sparse(
        &dir.join("data/generated-one-long-line.csv"),
        &digits,
        1 << 30,
    );
    sparse(
        &dir.join("scenario-one-gibibyte.toml"),
        b"# expect: bytes is far too large for a scenario file\n[simulation]\n",
        1 << 30,
    );

    let mut cases: Vec<PathBuf> = std::fs::read_dir(&dir)
        .expect("read copy")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .collect();
    cases.sort();
    let committed = std::fs::read_dir(&corpus)
        .expect("read corpus")
        .filter(|e| {
            e.as_ref()
                .is_ok_and(|e| e.path().extension().is_some_and(|x| x == "toml"))
        })
        .count();
    assert!(
        committed >= MIN_SCENARIO_CASES,
        "the corpus has {committed} cases, fewer than {MIN_SCENARIO_CASES}"
    );

    for case in &cases {
        let file = case.to_str().expect("UTF-8 temp path");
        let fragments = fragments_of(case);
        let other = "scenarios/campus-overflow.toml";
        let commands: [&[&str]; 8] = [
            &["check", file],
            &["explain", file, "--quiet"],
            &[
                "sweep",
                file,
                "--set",
                "simulation.warmup=1m:2m:1m",
                "--quiet",
            ],
            &["run", file, "--quiet"],
            &["size", file, "--group", "trunks", "--goal", "loss<=1%"],
            &["sweep", file, "--scale", "1:2:1", "--quiet"],
            &["compare", file, other, "--quiet"],
            &["compare", other, file, "--quiet"],
        ];
        for args in commands {
            let o = busyhour(args);
            let name = case.file_name().unwrap_or_default().to_string_lossy();
            assert_refused(&format!("{name} ({})", args[0]), &o, file, &fragments);
        }
    }
    std::fs::remove_dir_all(&dir).ok();
}

/// Bad call-record files and a fragment of each one's message.
const RECORDS: &[(&str, &str)] = &[
    ("all-answered-zero-holding.csv", "holding time of 0 s"),
    (
        "bad-date-line-3.csv",
        "start date in column \"date\": '2026-02-30': day is out of range",
    ),
    (
        "bad-time-of-day-line-3.csv",
        "start time in column \"time\": '8h20' is not a time of day",
    ),
    (
        "bad-wait-line-3.csv",
        "waiting time in column \"wait_s\": '-5' is not a time",
    ),
    ("bad-timestamp-line-3.csv", "hour is out of range"),
    ("binary-garbage.csv", "no start column"),
    (
        "duration-infinite-line-2.csv",
        "'inf' is not a holding time",
    ),
    ("duration-nan-line-2.csv", "'NaN' is not a holding time"),
    (
        "duration-not-a-number-line-3.csv",
        "'long' is not a holding time",
    ),
    ("duration-over-seven-days-line-2.csv", "7-day limit"),
    ("empty-duration-line-3.csv", "column \"duration\" is empty"),
    ("empty.csv", "the file is empty"),
    ("header-only.csv", "has a header but no rows"),
    (
        "mixed-time-forms-line-3.csv",
        "every start time the same way",
    ),
    ("month-thirteen-line-2.csv", "month is out of range"),
    (
        "negative-duration-line-4.csv",
        "'-240' is not a holding time",
    ),
    ("no-duration-column.csv", "no duration column"),
    ("no-start-column.csv", "no start column"),
    ("not-utf8-duration-line-2.csv", "is not UTF-8 text"),
    ("nul-bytes-in-row-line-2.csv", "control character"),
    (
        "offset-off-grid-line-3.csv",
        "does not fall on the same 15-minute grid",
    ),
    (
        "offset-out-of-range-line-2.csv",
        "zone offset is out of range",
    ),
    (
        "time-of-day-without-date-line-2.csv",
        "a time of day without a date: name the date column with --date",
    ),
    ("too-few-columns-line-2.csv", "too few for \"duration\""),
    (
        "unknown-outcome-line-3.csv",
        "outcome 'voicemail' is not known",
    ),
    ("unterminated-quote-line-3.csv", "a quote left open"),
    ("year-ten-thousand-span.csv", "check for a wrong year"),
    // Made by the test (too big to commit).
    ("generated-long-line-line-3.csv", "longer than 1 MiB"),
];

#[test]
fn every_bad_call_record_file_is_refused_with_its_line() {
    let corpus = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/bad-records");
    let dir = scratch("records");
    copy_tree(&corpus, &dir);
    let mut long = b"start,duration\n2025-03-03T10:00:05+01:00,185\n".to_vec();
    long.extend(std::iter::repeat_n(b'7', 2 << 20));
    sparse(&dir.join("generated-long-line-line-3.csv"), &long, 1 << 30);

    let mut on_disk: Vec<String> = std::fs::read_dir(&dir)
        .expect("read copy")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    on_disk.sort();
    let mut listed: Vec<String> = RECORDS.iter().map(|(n, _)| n.to_string()).collect();
    listed.sort();
    assert_eq!(on_disk, listed, "every bad-records file needs a fragment");

    for (name, fragment) in RECORDS {
        let path = dir.join(name);
        let file = path.to_str().expect("UTF-8 temp path");
        let mut fragments = vec![fragment.to_string()];
        if let Some(line) = name
            .strip_suffix(".csv")
            .and_then(|n| n.rsplit_once("-line-"))
            .map(|(_, l)| l)
        {
            fragments.push(format!("{file}:{line}: "));
        }
        let o = busyhour(&["records", file]);
        assert_refused(name, &o, file, &fragments);
    }
    std::fs::remove_dir_all(&dir).ok();
}
