//! `busyhour::dist::read_column`: the CSV reader for measured values.
//!
//! Each case writes its own file under the system temporary directory (a
//! unique name per process and case) and removes it afterwards.

use std::path::PathBuf;

use busyhour::dist::{EmpiricalError, Law, MAX_LINE_BYTES, read_column};

/// A temporary file that is removed when dropped.
struct TempFile(PathBuf);

impl TempFile {
    fn new(case: &str, contents: &[u8]) -> TempFile {
        let path =
            std::env::temp_dir().join(format!("busyhour-dist-{}-{case}.csv", std::process::id()));
        std::fs::write(&path, contents).unwrap();
        TempFile(path)
    }
}

impl Drop for TempFile {
    fn drop(&mut self) {
        let _ = std::fs::remove_file(&self.0);
    }
}

#[test]
fn plain_column_without_header() {
    let f = TempFile::new("plain", b"180\n95.5\n\n  12 \n0\n");
    assert_eq!(
        read_column(&f.0, None, 1.0).unwrap(),
        vec![180.0, 95.5, 12.0, 0.0]
    );
}

#[test]
fn header_and_column_choice() {
    let f = TempFile::new(
        "header",
        b"hold,wait , \"agent\"\r\n180,3,A\r\n\"95\", 0 ,B\r\n\r\n7.25,1,C\r\n",
    );
    assert_eq!(
        read_column(&f.0, None, 1.0).unwrap(),
        vec![180.0, 95.0, 7.25]
    );
    assert_eq!(
        read_column(&f.0, Some("wait"), 1.0).unwrap(),
        vec![3.0, 0.0, 1.0]
    );
    // Values in minutes, scaled to seconds.
    assert_eq!(
        read_column(&f.0, Some("wait"), 60.0).unwrap(),
        vec![180.0, 0.0, 60.0]
    );
    // The third column holds names, not numbers.
    let e = read_column(&f.0, Some("agent"), 1.0).unwrap_err();
    assert!(
        matches!(&e, EmpiricalError::NotANumber { line: 2, text, .. } if text == "A"),
        "{e}"
    );
}

#[test]
fn byte_order_mark_is_ignored() {
    let f = TempFile::new("bom", "\u{feff}hold\n5\n6\n".as_bytes());
    assert_eq!(
        read_column(&f.0, Some("hold"), 1.0).unwrap(),
        vec![5.0, 6.0]
    );
}

#[test]
fn values_feed_an_empirical_law() {
    let f = TempFile::new("law", b"duration\n60\n120\n300\n");
    let law = Law::empirical(read_column(&f.0, None, 1.0).unwrap()).unwrap();
    assert_eq!(law.mean(), 160.0);
}

#[test]
fn missing_file() {
    let path = std::env::temp_dir().join("busyhour-dist-no-such-file.csv");
    let e = read_column(&path, None, 1.0).unwrap_err();
    assert!(matches!(e, EmpiricalError::Missing { .. }), "{e}");
    assert_eq!(
        e.to_string(),
        format!("data file {} not found", path.display())
    );
}

#[test]
fn empty_files() {
    for (case, text) in [
        ("empty", &b""[..]),
        ("blank", b"\n \n\r\n"),
        ("header-only", b"hold,wait\n\n"),
    ] {
        let f = TempFile::new(case, text);
        let e = read_column(&f.0, None, 1.0).unwrap_err();
        assert!(matches!(e, EmpiricalError::Empty { .. }), "{case}: {e}");
        assert!(e.to_string().contains("holds no values"), "{e}");
    }
}

#[test]
fn non_number_names_the_line() {
    let f = TempFile::new("nan-text", b"hold\n10\n20\n1O5\n");
    let e = read_column(&f.0, None, 1.0).unwrap_err();
    assert_eq!(
        e.to_string(),
        format!(
            "data file {} line 4: \"1O5\" is not a number (expected e.g. 182.5)",
            f.0.display()
        )
    );
}

#[test]
fn negative_value_names_the_line() {
    let f = TempFile::new("negative", b"12\n\n-3.5\n");
    let e = read_column(&f.0, None, 1.0).unwrap_err();
    assert!(
        matches!(e, EmpiricalError::Negative { line: 3, value, .. } if value == -3.5),
        "{e}"
    );
    assert!(
        e.to_string()
            .ends_with("line 3: value -3.5 is negative (durations are >= 0)")
    );
}

#[test]
fn nan_and_infinity_are_rejected() {
    for (case, text) in [("nan", &b"hold\n5\nNaN\n"[..]), ("inf", b"hold\ninf\n")] {
        let f = TempFile::new(case, text);
        let e = read_column(&f.0, None, 1.0).unwrap_err();
        assert!(matches!(e, EmpiricalError::NotFinite { .. }), "{case}: {e}");
    }
    // A first line "nan" parses as a number, so the file is headerless.
    let f = TempFile::new("nan-first", b"nan\n5\n");
    let e = read_column(&f.0, None, 1.0).unwrap_err();
    assert!(
        matches!(e, EmpiricalError::NotFinite { line: 1, .. }),
        "{e}"
    );
}

#[test]
fn column_errors() {
    let f = TempFile::new("columns", b"hold,wait\n1,2\n3\n");
    let e = read_column(&f.0, Some("talk"), 1.0).unwrap_err();
    assert!(
        e.to_string()
            .ends_with("has no column \"talk\" (its columns: hold, wait)"),
        "{e}"
    );
    let e = read_column(&f.0, Some("wait"), 1.0).unwrap_err();
    assert!(
        matches!(
            e,
            EmpiricalError::MissingField {
                line: 3,
                fields: 1,
                position: 2,
                ..
            }
        ),
        "{e}"
    );
    let f = TempFile::new("empty-field", b"hold,wait\n1,\n");
    let e = read_column(&f.0, Some("wait"), 1.0).unwrap_err();
    assert!(
        matches!(e, EmpiricalError::EmptyField { line: 2, .. }),
        "{e}"
    );
    let f = TempFile::new("no-header", b"4\n5\n");
    let e = read_column(&f.0, Some("hold"), 1.0).unwrap_err();
    assert!(matches!(e, EmpiricalError::NoHeader { line: 1, .. }), "{e}");
    let f = TempFile::new("headerless-wide", b"4,7\n5,8\n");
    let e = read_column(&f.0, None, 1.0).unwrap_err();
    assert!(
        matches!(
            e,
            EmpiricalError::HeaderlessColumns {
                line: 1,
                fields: 2,
                ..
            }
        ),
        "{e}"
    );
}

#[test]
fn absurd_inputs_stop_early() {
    // One line just over the cap, no newline.
    let mut long = b"hold\n".to_vec();
    long.extend(std::iter::repeat_n(b'7', MAX_LINE_BYTES + 10));
    let f = TempFile::new("long", &long);
    let e = read_column(&f.0, None, 1.0).unwrap_err();
    assert!(
        matches!(e, EmpiricalError::LineTooLong { line: 2, .. }),
        "{e}"
    );
    // A line of exactly the cap is still read.
    let mut edge = b"hold\n".to_vec();
    edge.extend(std::iter::repeat_n(b' ', MAX_LINE_BYTES - 1));
    edge.extend(b"8\n9\n");
    let f = TempFile::new("edge", &edge);
    assert_eq!(read_column(&f.0, None, 1.0).unwrap(), vec![8.0, 9.0]);
    // Binary content.
    let f = TempFile::new("binary", b"hold\n12\n\x00\x01\x02\xff\n");
    let e = read_column(&f.0, None, 1.0).unwrap_err();
    assert!(matches!(e, EmpiricalError::NotText { line: 3, .. }), "{e}");
    let f = TempFile::new("latin1", b"hold\n12\ncaf\xe9\n");
    let e = read_column(&f.0, None, 1.0).unwrap_err();
    assert!(matches!(e, EmpiricalError::NotText { line: 3, .. }), "{e}");
}

#[test]
fn bad_scale_and_overflow() {
    let f = TempFile::new("scale", b"1e300\n");
    for bad in [0.0, -60.0, f64::NAN, f64::INFINITY] {
        let e = read_column(&f.0, None, bad).unwrap_err();
        assert!(matches!(e, EmpiricalError::Scale { .. }), "{bad}: {e}");
    }
    let e = read_column(&f.0, None, 1e10).unwrap_err();
    assert!(matches!(e, EmpiricalError::Overflow { line: 1, .. }), "{e}");
}

#[test]
fn long_garbage_is_quoted_short() {
    let mut text = b"hold\n".to_vec();
    text.extend(std::iter::repeat_n(b'z', 5000));
    let f = TempFile::new("garbage", &text);
    let e = read_column(&f.0, None, 1.0).unwrap_err();
    assert!(e.to_string().len() < 200 + f.0.as_os_str().len(), "{e}");
}
