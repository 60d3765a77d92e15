//! A law's parameters as a scenario file writes them: the context that
//! turns written values into numbers (the scenario compiler supplies it),
//! the helpers the laws' `build` functions share, and the field names of a
//! parameter struct read from its serde derive.
//!
//! Each law's own file defines its parameter struct (serde, unknown keys
//! refused, `Option` fields so that a missing key gets the law's own
//! message) with `build` and `of`; the `laws!` list in `mod.rs` ties them to
//! the law's name.

use super::LawError;
use crate::units::Amount;
use serde::de::{self, Deserialize, Deserializer, Visitor};

/// What a law's parameters need from the file they were written in: the
/// rules for durations and counts, the reading of data files, and errors
/// that name the key. `field` is a parameter's key (`"mean"`); `None` means
/// the law's own table.
pub trait LawContext {
    /// The error that names the file and key.
    type Error;

    /// An error about the law's table (`field` `None`) or one parameter.
    fn invalid(&self, field: Option<&str>, message: String) -> Self::Error;

    /// A duration in seconds, above zero, within the file's limits.
    fn positive_duration(&self, field: &str, value: &Amount) -> Result<f64, Self::Error>;

    /// A whole number from `min` to `max`.
    fn count(&self, field: &str, value: i64, min: i64, max: i64) -> Result<u32, Self::Error>;

    /// The values of one column of a data file (`file` as written), each
    /// multiplied by `scale` (an empirical law's measurements).
    fn data_values(
        &self,
        field: &str,
        file: &str,
        column: Option<&str>,
        scale: f64,
    ) -> Result<Vec<f64>, Self::Error>;
}

/// The mean of a law that needs one: present, a duration above zero.
pub(crate) fn need_mean<C: LawContext>(
    c: &C,
    law: &str,
    mean: &Option<Amount>,
) -> Result<f64, C::Error> {
    match mean {
        Some(m) => c.positive_duration("mean", m),
        None => Err(c.invalid(
            Some("mean"),
            format!("the {law} law needs a mean, like mean = \"3m\""),
        )),
    }
}

/// The cv of a law that needs one.
pub(crate) fn need_cv<C: LawContext>(c: &C, law: &str, cv: Option<f64>) -> Result<f64, C::Error> {
    cv.ok_or_else(|| c.invalid(None, format!("the {law} law needs a cv, like cv = 1.2")))
}

/// Which of cv and shape a law that takes either was given.
pub(crate) enum CvOrShape {
    /// The coefficient of variation.
    Cv(f64),
    /// The shape parameter.
    Shape(f64),
}

/// Exactly one of cv and shape.
pub(crate) fn cv_or_shape<C: LawContext>(
    c: &C,
    law: &str,
    cv: Option<f64>,
    shape: Option<f64>,
) -> Result<CvOrShape, C::Error> {
    match (cv, shape) {
        (Some(_), Some(_)) => Err(c.invalid(None, "give either cv or shape, not both".into())),
        (Some(cv), None) => Ok(CvOrShape::Cv(cv)),
        (None, Some(s)) => Ok(CvOrShape::Shape(s)),
        (None, None) => Err(c.invalid(
            None,
            format!("the {law} law needs a cv (or a shape), like cv = 0.8"),
        )),
    }
}

/// A constructor's refusal, as an error about the law's table.
pub(crate) fn refused<C: LawContext, T>(c: &C, made: Result<T, LawError>) -> Result<T, C::Error> {
    made.map_err(|e| c.invalid(None, e.to_string()))
}

/// A mean for a file: a bare number of seconds, exact (a float reads back
/// to the same number).
pub(crate) fn seconds_amount(mean: f64) -> Option<Amount> {
    Some(Amount::Number(mean))
}

/// The field names of a struct that derives `Deserialize` (in declaration
/// order, `rename`s applied): the derive hands them to
/// `Deserializer::deserialize_struct`, which a recording deserializer
/// keeps before it declines to produce a value.
pub fn field_names<T: for<'de> Deserialize<'de>>() -> &'static [&'static str] {
    let mut names = None;
    let _ = T::deserialize(FieldNames(&mut names));
    names.unwrap_or(&[])
}

struct FieldNames<'a>(&'a mut Option<&'static [&'static str]>);

impl<'de> Deserializer<'de> for FieldNames<'_> {
    type Error = de::value::Error;

    fn deserialize_any<V: Visitor<'de>>(self, _: V) -> Result<V::Value, Self::Error> {
        Err(de::Error::custom("only a struct has field names"))
    }

    fn deserialize_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        fields: &'static [&'static str],
        _visitor: V,
    ) -> Result<V::Value, Self::Error> {
        *self.0 = Some(fields);
        Err(de::Error::custom("field names only"))
    }

    serde::forward_to_deserialize_any! {
        bool i8 i16 i32 i64 i128 u8 u16 u32 u64 u128 f32 f64 char str string
        bytes byte_buf option unit unit_struct newtype_struct seq tuple
        tuple_struct map enum identifier ignored_any
    }
}
