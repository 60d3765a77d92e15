//! Empirical laws from measured values, and the reader for the CSV files that
//! hold them.

use std::fs::File;
use std::io::{BufRead, BufReader, ErrorKind, Read};
use std::path::{Path, PathBuf};

use rand::{Rng, RngExt};

use super::error::{LawError, is_positive_finite};
use super::params::{LawContext, refused};
use serde::{Deserialize, Serialize};

/// An empirical law: the data's distribution function, interpolated linearly.
///
/// With the data sorted, x(1) <= ... <= x(n), the law is the one whose
/// quantile function is the Hyndman-Fan type 5 sample quantile (Hazen's
/// plotting positions):
///
/// * x(i) is placed at probability p(i) = (i - 1/2) / n;
/// * between p(i) and p(i+1) the quantile rises linearly from x(i) to x(i+1),
///   i.e. each gap between neighbouring order statistics carries probability
///   1/n spread uniformly over it;
/// * the remaining 1/(2n) at each end is a point mass on x(1) and on x(n), so
///   a draw never leaves the observed range.
///
/// Source: Hyndman and Fan, "Sample quantiles in statistical packages",
/// The American Statistician 50(4), 1996, definition 5; Hazen (1914).
///
/// # Formula
///
/// With 1-based order statistics x(1) <= ... <= x(n):
///
/// ```text
/// Q(u) = x(1)                            for u < 1/(2n)
/// Q(u) = x(i) + (t - i)(x(i+1) - x(i))   for 1/(2n) <= u < 1 - 1/(2n),
///                                        t = n u + 1/2, i = floor(t)
/// Q(u) = x(n)                            for u >= 1 - 1/(2n)
///
/// F(x) = 0                                          for x < x(1)
/// F(x) = (i - 1/2 + (x - x(i)) / (x(i+1) - x(i))) / n for x(i) <= x < x(i+1)
/// F(x) = 1                                          for x >= x(n)
/// ```
///
/// The mean of this law equals the data mean exactly: each gap contributes
/// (x(i) + x(i+1)) / (2n), the end masses x(1) / (2n) and x(n) / (2n), and the
/// sum is (x(1) + ... + x(n)) / n. Its variance is slightly different from the
/// data's (the interpolation spreads each gap); [`Empirical::cv`] gives the
/// law's own, computed exactly.
///
/// # Numerics
///
/// One 53-bit uniform per draw (inverse transform), no allocation, no search:
/// the index comes straight from n u.
///
/// # Residual law
///
/// The law above is a mixture of n + 1 pieces: the point masses 1/(2n) on
/// x(1) and x(n) and, for each gap, mass 1/n spread uniformly over
/// [x(i), x(i+1)]. Its length-biased law (density x f(x) / m) weights each
/// piece by its mass times its mean: x(1)/(2n), (x(i) + x(i+1))/(2n) and
/// x(n)/(2n) (they sum to m), and within a gap has density proportional to
/// x, drawn as sqrt(a^2 + U (b^2 - a^2)). The stationary excess (equilibrium
/// residual) is a length-biased draw times an independent uniform on (0, 1),
/// so it is exact for the law [`Empirical::sample`] draws from. A piece is
/// chosen by a binary search of the weights' suffix sums (two uniforms and
/// O(log n) per draw; residual draws are rare, once per call in progress at
/// the start of a replication).
///
/// The tail P(R > w) = E[(S - w)+] / m = (integral of 1 - F from w up) / m
/// is exact too: 1 - F is linear on each gap, so the integral from x(i) to
/// x(n) is a sum of trapezoids, (x(i+1) - x(i)) (1 - i/n) for 1-based i,
/// kept in a table summed from the top (every term >= 0, no cancellation);
/// the part of the gap holding w adds one more trapezoid. The normaliser
/// is that integral from 0, which equals the mean up to rounding.
#[derive(Debug, Clone, PartialEq)]
pub struct Empirical {
    sorted: Vec<f64>, // ascending, >= 0, finite; len >= 2 (a single value is stored twice)
    count: usize,     // number of data values n >= 1; sorted.len() == max(n, 2)
    n: f64,           // count as f64
    top: f64,         // count - 1 as f64: the largest position t
    mean: f64,        // > 0
    cv: f64,          // >= 0
    // Length-biased piece weights summed from the top: biased_above[j] is
    // the sum over pieces j..=n (0: the mass on x(1), 1..n-1: the gaps, n:
    // the mass on x(n)); biased_above[n + 1] = 0. Non-increasing.
    biased_above: Vec<f64>,
    // excess[i] = integral of 1 - F from sorted[i] to sorted[count - 1]
    // (0-based i < count). Non-increasing, excess[count - 1] = 0.
    excess: Vec<f64>,
}

impl Empirical {
    /// Builds the law from measured values (seconds, each finite and >= 0, not all 0).
    pub fn new(mut values: Vec<f64>) -> Result<Self, LawError> {
        if values.is_empty() {
            return Err(LawError::NoData);
        }
        if let Some((i, &v)) = values
            .iter()
            .enumerate()
            .find(|&(_, &v)| !(v >= 0.0 && v.is_finite()))
        {
            return Err(LawError::DataValue {
                position: i + 1,
                value: v,
            });
        }
        let count = values.len();
        values.sort_by(f64::total_cmp);
        // -0.0 sorts before 0.0 under total_cmp; store it as 0.0.
        for v in values.iter_mut().filter(|v| **v == 0.0) {
            *v = 0.0;
        }
        let n = count as f64;
        let mean = neumaier_sum(values.iter().copied()) / n;
        if mean == 0.0 {
            return Err(LawError::DataAllZero { count });
        }
        let out_of_range = LawError::OutOfRange {
            law: "empirical",
            mean,
            what: "largest value",
            value: values[count - 1],
        };
        if !is_positive_finite(mean) {
            return Err(out_of_range);
        }
        // Exact variance of the law: uniform pieces over each gap (mass 1/n)
        // plus point masses 1/(2n) at both ends, taken about the mean.
        let first = values[0] - mean;
        let last = values[count - 1] - mean;
        let gaps = neumaier_sum(values.windows(2).map(|w| {
            let (a, b) = (w[0] - mean, w[1] - mean);
            (a * a + a * b + b * b) / 3.0
        }));
        let variance = (gaps + 0.5 * (first * first + last * last)) / n;
        // Each term is >= 0 (a^2 + ab + b^2 = (a + b/2)^2 + 3b^2/4); NaN or
        // infinity means the squares left f64 range.
        if !(0.0..f64::INFINITY).contains(&variance) {
            return Err(out_of_range);
        }
        let cv = variance.sqrt() / mean;
        let (biased_above, excess) = residual_tables(&values, n);
        if count == 1 {
            values.push(values[0]);
        }
        Ok(Empirical {
            sorted: values,
            count,
            n,
            top: n - 1.0,
            mean,
            cv,
            biased_above,
            excess,
        })
    }

    /// Mean (seconds): the data mean.
    pub fn mean(&self) -> f64 {
        self.mean
    }

    /// Coefficient of variation of the interpolated law (see the type's doc).
    pub fn cv(&self) -> f64 {
        self.cv
    }

    /// Number of data values.
    pub fn len(&self) -> usize {
        self.count
    }

    /// Always false: a law holds at least one value.
    pub fn is_empty(&self) -> bool {
        false
    }

    /// The data values, sorted ascending.
    pub fn values(&self) -> &[f64] {
        &self.sorted[..self.count]
    }

    /// Piecewise-linear F(x) of the type's doc (jumps of 1/(2n) at both ends).
    pub fn cdf(&self, x: f64) -> f64 {
        let v = self.values();
        if x.is_nan() {
            return f64::NAN;
        }
        if x < v[0] {
            return 0.0;
        }
        if x >= v[self.count - 1] {
            return 1.0;
        }
        // Here count >= 2 and v[0] <= x < v[count-1], so 1 <= p <= count - 1.
        let i = v.partition_point(|&y| y <= x) - 1;
        let (a, b) = (v[i], v[i + 1]); // a <= x < b
        (i as f64 + 0.5 + (x - a) / (b - a)) / self.n
    }

    /// One draw by inverse transform: Q(U) with U uniform on [0, 1).
    #[inline]
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let u: f64 = rng.random();
        let t = (u * self.n - 0.5).clamp(0.0, self.top);
        let i = (t as usize).min(self.sorted.len() - 2);
        let frac = t - i as f64;
        let a = self.sorted[i];
        let b = self.sorted[i + 1];
        a + frac * (b - a)
    }

    /// P(R > w) for the residual R: the exact integral of 1 - F from w up over
    /// the mean (see the type's doc).
    pub fn residual_tail(&self, w: f64) -> f64 {
        if w.is_nan() {
            return f64::NAN;
        }
        let v = self.values();
        let last = self.count - 1;
        let whole = self.excess[0] + v[0];
        if w < v[0] {
            return ((whole - w.max(0.0)) / whole).clamp(0.0, 1.0);
        }
        if w >= v[last] {
            return 0.0;
        }
        // Here count >= 2 and v[0] <= w < v[last]: v[i] <= w < v[i + 1].
        let i = v.partition_point(|&y| y <= w) - 1;
        let (a, b) = (v[i], v[i + 1]);
        let f = (w - a) / (b - a);
        let piece = (b - w) * (1.0 - (i as f64 + 1.0 + 0.5 * f) / self.n);
        ((self.excess[i + 1] + piece) / whole).clamp(0.0, 1.0)
    }

    /// One residual draw: a length-biased draw of this law times an
    /// independent uniform on (0, 1) (see the type's doc).
    pub fn sample_residual<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let v = self.values();
        let u: f64 = rng.random();
        let r = u * self.biased_above[0];
        // First j with biased_above[j] <= r; piece j - 1 has weight > 0.
        let piece = self.biased_above.partition_point(|&s| s > r) - 1;
        let biased = if piece == 0 {
            v[0]
        } else if piece >= self.count {
            v[self.count - 1]
        } else {
            let (a, b) = (v[piece - 1], v[piece]);
            let u: f64 = rng.random();
            (a * a + u * (b - a) * (b + a)).sqrt().clamp(a, b)
        };
        biased * super::open_unit(rng)
    }

    /// The same law with every value multiplied by `factor` (finite, > 0).
    pub(crate) fn scaled(&self, factor: f64) -> Result<Self, LawError> {
        let values: Vec<f64> = self.values().iter().map(|v| v * factor).collect();
        if values.iter().any(|v| !v.is_finite()) {
            return Err(LawError::OutOfRange {
                law: "empirical",
                mean: self.mean,
                what: "scale factor",
                value: factor,
            });
        }
        Self::new(values)
    }
}

/// The residual law's tables for sorted values (see [`Empirical`]'s fields):
/// the length-biased piece weights summed from the top, and the integral of
/// 1 - F from each value up.
fn residual_tables(v: &[f64], n: f64) -> (Vec<f64>, Vec<f64>) {
    let count = v.len();
    let mut biased_above = vec![0.0; count + 2];
    biased_above[count] = v[count - 1] / (2.0 * n);
    for j in (1..count).rev() {
        biased_above[j] = biased_above[j + 1] + (v[j - 1] + v[j]) / (2.0 * n);
    }
    biased_above[0] = biased_above[1] + v[0] / (2.0 * n);
    let mut excess = vec![0.0; count];
    for i in (0..count - 1).rev() {
        // 1 - F falls linearly over the gap; its mean there is 1 - (i + 1) / n.
        excess[i] = excess[i + 1] + (v[i + 1] - v[i]) * (1.0 - (i as f64 + 1.0) / n);
    }
    (biased_above, excess)
}

/// Sum with Neumaier's compensation (Neumaier, ZAMM 54, 1974), so that the
/// mean of a million values keeps its last digits.
fn neumaier_sum(values: impl Iterator<Item = f64>) -> f64 {
    let mut sum = 0.0f64;
    let mut compensation = 0.0f64;
    for v in values {
        let t = sum + v;
        if sum.abs() >= v.abs() {
            compensation += (sum - t) + v;
        } else {
            compensation += (v - t) + sum;
        }
        sum = t;
    }
    sum + compensation
}

/// Longest line [`read_column`] accepts, in bytes (1 MiB).
pub const MAX_LINE_BYTES: usize = 1 << 20;

/// Why a file of measured values could not be read.
#[derive(Debug, thiserror::Error)]
pub enum EmpiricalError {
    /// The file does not exist; check the path (relative paths are taken from the scenario file).
    #[error("data file {path} not found")]
    Missing {
        /// The file asked for.
        path: PathBuf,
    },
    /// The file exists but could not be opened or read (permissions, a directory, an I/O fault).
    #[error("cannot read data file {path}: {io}")]
    Read {
        /// The file.
        path: PathBuf,
        /// What the operating system said.
        io: std::io::Error,
    },
    /// The scale factor is NaN, infinite, zero or negative; give a finite factor > 0.
    #[error("scale {value} for data file {path} is not valid: it needs a finite number > 0")]
    Scale {
        /// The file.
        path: PathBuf,
        /// The rejected factor.
        value: f64,
    },
    /// The file holds no values (empty, blank lines only, or a header only).
    #[error(
        "data file {path} holds no values: expected one number per line, optionally under a header line"
    )]
    Empty {
        /// The file.
        path: PathBuf,
    },
    /// A line is longer than [`MAX_LINE_BYTES`]: not a file of measured values.
    #[error(
        "data file {path} line {line} is longer than 1 MiB: expected a CSV with one value per line"
    )]
    LineTooLong {
        /// The file.
        path: PathBuf,
        /// 1-based line number.
        line: usize,
    },
    /// The file holds a NUL byte or invalid UTF-8: not a text CSV.
    #[error("data file {path} line {line} is not text (binary or not UTF-8): expected a CSV file")]
    NotText {
        /// The file.
        path: PathBuf,
        /// 1-based line number.
        line: usize,
    },
    /// A column was asked for by name but the file has no header line.
    #[error(
        "data file {path} has no header line (line {line} is a number), so column \"{column}\" cannot be found: add a header line naming the columns or leave out the column"
    )]
    NoHeader {
        /// The file.
        path: PathBuf,
        /// 1-based line number of the first value.
        line: usize,
        /// The column asked for.
        column: String,
    },
    /// A file without a header line must have exactly one value per line.
    #[error(
        "data file {path} line {line} starts with a number but has {fields} columns: a file without a header line must hold one value per line (add a header line naming the columns)"
    )]
    HeaderlessColumns {
        /// The file.
        path: PathBuf,
        /// 1-based line number.
        line: usize,
        /// Number of comma-separated fields found.
        fields: usize,
    },
    /// The header has no column of that name.
    #[error("data file {path} has no column \"{column}\" (its columns: {available})")]
    NoSuchColumn {
        /// The file.
        path: PathBuf,
        /// The column asked for.
        column: String,
        /// The header's column names, comma-separated.
        available: String,
    },
    /// A data line has too few fields to reach the chosen column.
    #[error(
        "data file {path} line {line} has {fields} columns, too few for column \"{column}\" (number {position})"
    )]
    MissingField {
        /// The file.
        path: PathBuf,
        /// 1-based line number.
        line: usize,
        /// Number of fields found on the line.
        fields: usize,
        /// The column's name.
        column: String,
        /// The column's 1-based position.
        position: usize,
    },
    /// The chosen column is empty on a line; every line needs a value.
    #[error(
        "data file {path} line {line}: column \"{column}\" is empty (every line needs a value)"
    )]
    EmptyField {
        /// The file.
        path: PathBuf,
        /// 1-based line number.
        line: usize,
        /// The column's name.
        column: String,
    },
    /// A field is not a number.
    #[error("data file {path} line {line}: \"{text}\" is not a number (expected e.g. 182.5)")]
    NotANumber {
        /// The file.
        path: PathBuf,
        /// 1-based line number.
        line: usize,
        /// The field as found (cut to 40 characters).
        text: String,
    },
    /// A field is NaN or infinite; measured durations are finite.
    #[error("data file {path} line {line}: \"{text}\" is not a finite number")]
    NotFinite {
        /// The file.
        path: PathBuf,
        /// 1-based line number.
        line: usize,
        /// The field as found.
        text: String,
    },
    /// A value is negative; durations are >= 0.
    #[error("data file {path} line {line}: value {value} is negative (durations are >= 0)")]
    Negative {
        /// The file.
        path: PathBuf,
        /// 1-based line number.
        line: usize,
        /// The rejected value.
        value: f64,
    },
    /// A value times the scale leaves floating-point range.
    #[error(
        "data file {path} line {line}: value {value} times scale {scale} is outside floating-point range"
    )]
    Overflow {
        /// The file.
        path: PathBuf,
        /// 1-based line number.
        line: usize,
        /// The value as read.
        value: f64,
        /// The scale factor.
        scale: f64,
    },
}

/// Reads one column of measured values (for example holding times) from a CSV file.
///
/// # Format
///
/// * Text, UTF-8 (a leading byte-order mark is ignored), fields separated by
///   commas, lines ended by LF or CRLF. Spaces around a field and one pair
///   of double quotes around it are removed; commas inside quotes are not
///   supported. Blank lines are skipped.
/// * If the first non-blank line's first field is a number, the file has no
///   header: every line holds exactly one value, and `column` must be `None`.
/// * Otherwise the first non-blank line is a header naming the columns;
///   `column` picks one by exact name, `None` picks the first.
/// * Every value must be a finite number >= 0. It is multiplied by `scale`
///   (for example 60 for a file in minutes) and the results are returned in
///   file order.
///
/// # Errors
///
/// A missing or unreadable file, no values, a line over 1 MiB, binary
/// content, a missing column or field, a non-number, NaN or infinity, a
/// negative value, or a value that overflows when scaled: each error names
/// the file and the 1-based line number and quotes the offending text.
///
/// # Example
///
/// ```
/// use busyhour::dist::{read_column, Law};
///
/// let path = std::env::temp_dir().join(format!("busyhour-doc-{}.csv", std::process::id()));
/// std::fs::write(&path, "agent,talk_min\nA,2.5\nB,4\nC,1.5\n").unwrap();
/// let seconds = read_column(&path, Some("talk_min"), 60.0).unwrap();
/// assert_eq!(seconds, vec![150.0, 240.0, 90.0]);
/// let holding = Law::empirical(seconds).unwrap();
/// assert_eq!(holding.mean(), 160.0);
/// # std::fs::remove_file(&path).unwrap();
/// ```
pub fn read_column(
    path: &Path,
    column: Option<&str>,
    scale: f64,
) -> Result<Vec<f64>, EmpiricalError> {
    let path_buf = || path.to_path_buf();
    if !is_positive_finite(scale) {
        return Err(EmpiricalError::Scale {
            path: path_buf(),
            value: scale,
        });
    }
    if path.is_dir() {
        return Err(EmpiricalError::Read {
            path: path_buf(),
            io: std::io::Error::new(ErrorKind::IsADirectory, "it is a directory, not a file"),
        });
    }
    let file = File::open(path).map_err(|io| {
        if io.kind() == ErrorKind::NotFound {
            EmpiricalError::Missing { path: path_buf() }
        } else {
            EmpiricalError::Read {
                path: path_buf(),
                io,
            }
        }
    })?;
    let mut lines = Lines::new(path, BufReader::new(file));

    // The first non-blank line: a header or the first value.
    let (first_no, first) = loop {
        match lines.next_line()? {
            None => return Err(EmpiricalError::Empty { path: path_buf() }),
            Some((_, text)) if text.trim().is_empty() => continue,
            Some((no, text)) => break (no, text.to_string()),
        }
    };
    let first_fields: Vec<&str> = first.split(',').map(clean_field).collect();
    let headerless = first_fields[0].parse::<f64>().is_ok();

    let mut values = Vec::new();
    let (index, name) = if headerless {
        if let Some(c) = column {
            return Err(EmpiricalError::NoHeader {
                path: path_buf(),
                line: first_no,
                column: c.to_string(),
            });
        }
        if first_fields.len() != 1 {
            return Err(EmpiricalError::HeaderlessColumns {
                path: path_buf(),
                line: first_no,
                fields: first_fields.len(),
            });
        }
        values.push(parse_value(path, first_no, first_fields[0], scale)?);
        (0, String::new())
    } else {
        match column {
            None => (0, first_fields[0].to_string()),
            Some(c) => match first_fields.iter().position(|f| *f == c) {
                Some(i) => (i, c.to_string()),
                None => {
                    return Err(EmpiricalError::NoSuchColumn {
                        path: path_buf(),
                        column: quote(c),
                        available: quote(&first_fields.join(", ")),
                    });
                }
            },
        }
    };

    while let Some((no, text)) = lines.next_line()? {
        if text.trim().is_empty() {
            continue;
        }
        let field = if headerless {
            let fields = text.split(',').count();
            if fields != 1 {
                return Err(EmpiricalError::HeaderlessColumns {
                    path: path_buf(),
                    line: no,
                    fields,
                });
            }
            clean_field(text)
        } else {
            match text.split(',').nth(index) {
                Some(f) => clean_field(f),
                None => {
                    return Err(EmpiricalError::MissingField {
                        path: path_buf(),
                        line: no,
                        fields: text.split(',').count(),
                        column: name,
                        position: index + 1,
                    });
                }
            }
        };
        if field.is_empty() {
            return Err(EmpiricalError::EmptyField {
                path: path_buf(),
                line: no,
                column: name,
            });
        }
        let value = parse_value(path, no, field, scale)?;
        values.push(value);
    }
    if values.is_empty() {
        return Err(EmpiricalError::Empty { path: path_buf() });
    }
    Ok(values)
}

/// Trims spaces and one pair of surrounding double quotes.
fn clean_field(field: &str) -> &str {
    let t = field.trim();
    t.strip_prefix('"')
        .and_then(|s| s.strip_suffix('"'))
        .map_or(t, str::trim)
}

/// At most 40 characters of `text`, for quoting in a message.
fn quote(text: &str) -> String {
    const MAX_CHARS: usize = 40;
    match text.char_indices().nth(MAX_CHARS) {
        Some((cut, _)) => format!("{}...", &text[..cut]),
        None => text.to_string(),
    }
}

/// Parses one cleaned field, checks it and applies the scale.
fn parse_value(path: &Path, line: usize, field: &str, scale: f64) -> Result<f64, EmpiricalError> {
    let value: f64 = field.parse().map_err(|_| EmpiricalError::NotANumber {
        path: path.to_path_buf(),
        line,
        text: quote(field),
    })?;
    if !value.is_finite() {
        return Err(EmpiricalError::NotFinite {
            path: path.to_path_buf(),
            line,
            text: quote(field),
        });
    }
    if value < 0.0 {
        return Err(EmpiricalError::Negative {
            path: path.to_path_buf(),
            line,
            value,
        });
    }
    let scaled = value * scale;
    if !scaled.is_finite() {
        return Err(EmpiricalError::Overflow {
            path: path.to_path_buf(),
            line,
            value,
            scale,
        });
    }
    Ok(scaled)
}

/// Line reader with a length cap and a text check.
struct Lines<'p, R> {
    path: &'p Path,
    reader: R,
    buf: Vec<u8>,
    line_no: usize, // lines read so far
}

impl<'p, R: BufRead> Lines<'p, R> {
    fn new(path: &'p Path, reader: R) -> Self {
        Lines {
            path,
            reader,
            buf: Vec::new(),
            line_no: 0,
        }
    }

    /// The next line without its line ending, with its 1-based number; `None` at the end.
    fn next_line(&mut self) -> Result<Option<(usize, &str)>, EmpiricalError> {
        self.buf.clear();
        // Read at most one byte past the cap, so a huge line is never held whole.
        let limit = MAX_LINE_BYTES as u64 + 1;
        let read = (&mut self.reader)
            .take(limit)
            .read_until(b'\n', &mut self.buf)
            .map_err(|io| EmpiricalError::Read {
                path: self.path.to_path_buf(),
                io,
            })?;
        if read == 0 {
            return Ok(None);
        }
        self.line_no += 1;
        if self.buf.last() == Some(&b'\n') {
            self.buf.pop();
            if self.buf.last() == Some(&b'\r') {
                self.buf.pop();
            }
        }
        if self.buf.len() > MAX_LINE_BYTES {
            return Err(EmpiricalError::LineTooLong {
                path: self.path.to_path_buf(),
                line: self.line_no,
            });
        }
        let not_text = || EmpiricalError::NotText {
            path: self.path.to_path_buf(),
            line: self.line_no,
        };
        if self.buf.contains(&0) {
            return Err(not_text());
        }
        let mut text = std::str::from_utf8(&self.buf).map_err(|_| not_text())?;
        if self.line_no == 1 {
            text = text.strip_prefix('\u{feff}').unwrap_or(text);
        }
        Ok(Some((self.line_no, text)))
    }
}

/// The parameters of the empirical law as a scenario file writes them:
/// `{ law = "empirical", file = "talk-times.csv", column = "talk_s", scale = 1 }`.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EmpiricalParams {
    /// CSV file of measured values, relative to the scenario file.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub file: Option<String>,
    /// The column to read (the first when absent).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub column: Option<String>,
    /// Factor applied to every value (e.g. 60 for minutes).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub scale: Option<f64>,
}

impl EmpiricalParams {
    /// The law from its parameters, with the scenario file's messages.
    pub fn build<C: LawContext>(&self, c: &C) -> Result<Empirical, C::Error> {
        let file = self.file.as_deref().ok_or_else(|| {
            c.invalid(
                Some("file"),
                "an empirical law needs file = \"data.csv\" (relative to the scenario file)".into(),
            )
        })?;
        let scale = self.scale.unwrap_or(1.0);
        if !(scale > 0.0 && scale.is_finite()) {
            return Err(c.invalid(
                Some("scale"),
                format!("{scale}: the scale must be a finite number above zero"),
            ));
        }
        let values = c.data_values("file", file, self.column.as_deref(), scale)?;
        refused(c, Empirical::new(values))
    }

    /// The parameters that build `law` again.
    pub fn of(law: &Empirical) -> Self {
        {
            let _ = law;
            EmpiricalParams::default()
        }
    }
}

impl Empirical {
    /// The law in plain words.
    pub fn describe(&self) -> String {
        let v = self.values();
        format!(
            "empirical from {} values ({} s to {} s), mean {} s, cv {:.2}",
            self.len(),
            super::seconds(v[0]),
            super::seconds(v[v.len() - 1]),
            super::seconds(self.mean()),
            self.cv()
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_data() {
        assert_eq!(Empirical::new(vec![]), Err(LawError::NoData));
        for bad in [f64::NAN, f64::INFINITY, -1.0] {
            match Empirical::new(vec![3.0, bad]) {
                Err(LawError::DataValue { position, value }) => {
                    assert_eq!(position, 2);
                    assert!(value == bad || (value.is_nan() && bad.is_nan()));
                }
                other => panic!("value {bad}: got {other:?}"),
            }
        }
        let msg = Empirical::new(vec![1.0, -4.5]).unwrap_err().to_string();
        assert_eq!(
            msg,
            "value -4.5 (number 2 in the data) is not valid for empirical: values must be finite seconds >= 0"
        );
        assert_eq!(
            Empirical::new(vec![0.0, 0.0]),
            Err(LawError::DataAllZero { count: 2 })
        );
        // Finite values whose sum or squares leave f64 range.
        assert!(matches!(
            Empirical::new(vec![1e308, 1e308]),
            Err(LawError::OutOfRange { .. })
        ));
        assert!(matches!(
            Empirical::new(vec![1.0, 1e300]),
            Err(LawError::OutOfRange { .. })
        ));
    }

    #[test]
    fn single_value_is_constant() {
        let law = Empirical::new(vec![42.0]).unwrap();
        assert_eq!(law.mean(), 42.0);
        assert_eq!(law.cv(), 0.0);
        assert_eq!(law.cdf(41.9), 0.0);
        assert_eq!(law.cdf(42.0), 1.0);
    }

    #[test]
    fn mean_is_the_data_mean() {
        // The type-5 law's mean equals the data mean (proof in the type's doc).
        let data = vec![5.0, 1.0, 9.0, 2.0, 2.0, 30.0];
        let law = Empirical::new(data.clone()).unwrap();
        let data_mean = data.iter().sum::<f64>() / data.len() as f64;
        assert!((law.mean() - data_mean).abs() < 1e-12);
        assert_eq!(law.values(), &[1.0, 2.0, 2.0, 5.0, 9.0, 30.0]);
    }

    #[test]
    fn cdf_knots_at_hazen_positions() {
        // F(x(i)) = (i - 1/2)/n at interior order statistics (Hyndman and Fan 1996, def. 5).
        let law = Empirical::new(vec![10.0, 20.0, 40.0, 80.0]).unwrap();
        assert_eq!(law.cdf(9.99), 0.0);
        assert!((law.cdf(10.0) - 0.125).abs() < 1e-15);
        assert!((law.cdf(20.0) - 0.375).abs() < 1e-15);
        assert!((law.cdf(30.0) - 0.5).abs() < 1e-15);
        assert!((law.cdf(40.0) - 0.625).abs() < 1e-15);
        assert_eq!(law.cdf(80.0), 1.0);
    }

    #[test]
    fn quote_cuts_long_text() {
        assert_eq!(quote("abc"), "abc");
        let long = "x".repeat(100);
        assert_eq!(quote(&long).len(), 43);
    }

    #[test]
    fn clean_field_strips_quotes_and_spaces() {
        assert_eq!(clean_field("  \"12.5\" "), "12.5");
        assert_eq!(clean_field(" 7 "), "7");
        assert_eq!(clean_field("\""), "\"");
    }
}
