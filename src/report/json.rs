//! The JSON of every document: serde writes it, these helpers say how a
//! few values are written (rounded figures, null for undefined numbers).
//! The keys of each command's document are listed in `docs/json.md`.

use serde::{Serialize, Serializer};

/// The document as pretty JSON with keys in sorted order, and a final line
/// break. Going through [`serde_json::Value`] (whose maps are sorted: the
/// crate's serde_json has no `preserve_order`) orders every object's keys,
/// flattened figure maps included, whatever order the structs declare.
pub fn to_text<T: Serialize + ?Sized>(doc: &T) -> serde_json::Result<String> {
    let value = serde_json::to_value(doc)?;
    let mut text = serde_json::to_string_pretty(&value)?;
    text.push('\n');
    Ok(text)
}

/// `x` rounded to `DIGITS` decimals; null when it is not finite.
pub(crate) fn round<const DIGITS: i32, S: Serializer>(x: &f64, s: S) -> Result<S::Ok, S::Error> {
    let f = 10f64.powi(DIGITS);
    let r = (x * f).round() / f;
    if x.is_finite() && r.is_finite() {
        s.serialize_f64(r)
    } else {
        s.serialize_none()
    }
}

/// [`round`] of an optional value; null when absent.
pub(crate) fn round_opt<const DIGITS: i32, S: Serializer>(
    x: &Option<f64>,
    s: S,
) -> Result<S::Ok, S::Error> {
    match x {
        Some(x) => round::<DIGITS, S>(x, s),
        None => s.serialize_none(),
    }
}

/// An undefined number (NaN, or an infinite half-width) as null. serde_json
/// writes non-finite floats as null already; this says so where it matters.
/// A sizing or sweep verdict as its word: "holds", "fails", "undecided".
pub(crate) fn verdict_word<S: Serializer>(
    v: &crate::experiment::size::Verdict,
    s: S,
) -> Result<S::Ok, S::Error> {
    s.serialize_str(v.word())
}

pub(crate) fn finite<S: Serializer>(x: &f64, s: S) -> Result<S::Ok, S::Error> {
    if x.is_finite() {
        s.serialize_f64(*x)
    } else {
        s.serialize_none()
    }
}

/// A value written rounded to `DIGITS` decimals (null when not finite),
/// for values inside maps built by hand.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Rounded<const DIGITS: i32>(pub f64);

impl<const DIGITS: i32> Serialize for Rounded<DIGITS> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        round::<DIGITS, S>(&self.0, s)
    }
}
