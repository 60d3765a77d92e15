//! Probability laws for holding times, inter-arrival times, patience and redial
//! delays, built from mean and cv (or shape); empirical laws from data.
//!
//! This module owns the laws' parameterisation, validation, sampling and
//! distribution functions. It knows nothing of scenarios, streams or the
//! engine: it takes plain seconds and a generator passed in by the caller
//! (the laws never store a generator, so each replication owns its streams).
//!
//! # Example
//!
//! ```
//! use busyhour::dist::Law;
//! use rand::SeedableRng;
//! use rand_xoshiro::Xoshiro256PlusPlus;
//!
//! let holding = Law::lognormal(180.0, 1.1).unwrap();
//! assert_eq!(holding.describe(), "lognormal, mean 180 s, cv 1.10");
//! let mut rng = Xoshiro256PlusPlus::seed_from_u64(7);
//! let t = holding.sample(&mut rng);
//! assert!(t > 0.0);
//! ```
//!
//! # Performance
//!
//! Every constructor precomputes the derived constants (the `rand_distr`
//! samplers live inside the variants), so [`Law::sample`] does no allocation
//! and no parameter arithmetic beyond one multiply.

mod deterministic;
pub mod empirical;
mod erlang;
mod error;
mod exponential;
mod gamma;
mod hyperexponential;
mod lognormal;
mod params;
mod uniform;
mod weibull;

use rand::Rng;

pub use deterministic::{Deterministic, DeterministicParams};
pub use empirical::{Empirical, EmpiricalError, EmpiricalParams, MAX_LINE_BYTES, read_column};
pub use erlang::{ERLANG_SUM_MAX_K, Erlang, ErlangParams};
pub use error::LawError;
pub use exponential::{Exponential, ExponentialParams};
pub use gamma::{Gamma, GammaParams};
pub use hyperexponential::{Hyperexponential, HyperexponentialParams};
pub use lognormal::{Lognormal, LognormalParams};
pub use params::{LawContext, field_names};
pub use uniform::{UNIFORM_MAX_CV, Uniform, UniformParams};
pub use weibull::{
    WEIBULL_SHAPE_MAX, WEIBULL_SHAPE_MIN, Weibull, WeibullParams, weibull_cv_of_shape,
    weibull_shape_of_cv,
};

use error::is_positive_finite;

/// The list of laws: for each, the `Law` variant, the law's type, its
/// parameter struct and its name in a scenario file. Generates [`Law`],
/// [`LawParams`], [`LAW_NAMES`] and the dispatch of every method of both;
/// a law's type provides `mean`, `cv`, `cdf`, `sample`, `residual_tail`,
/// `sample_residual`, `describe` and `scaled`, its parameter struct
/// `build` and `of`, all in the law's own file.
macro_rules! laws {
    ($( $(#[$doc:meta])* $variant:ident($law:ident, $params:ident) = $name:tt; )*) => {
        /// A probability law for a non-negative time (seconds).
        ///
        /// Build one with the constructors below or from a scenario file's
        /// parameters ([`LawParams::build`]); each validates its parameters
        /// (rejecting NaN, infinities, zero and negative values, and cvs the
        /// law cannot have) and precomputes what sampling needs.
        #[derive(Debug, Clone, PartialEq)]
        pub enum Law {
            $( $(#[$doc])* $variant($law), )*
        }

        /// A law's parameters as a scenario file writes them (the keys of
        /// its table beside `law = "..."`), before they are checked.
        #[derive(Debug, Clone, PartialEq)]
        pub enum LawParams {
            $( #[doc = concat!("`law = \"", $name, "\"`.")] $variant($params), )*
        }

        /// Every law's name as written in a scenario file (`law = "..."`).
        pub const LAW_NAMES: &[&str] = &[$($name),*];

        impl Law {
            /// Mean (seconds).
            pub fn mean(&self) -> f64 {
                match self { $( Law::$variant(l) => l.mean(), )* }
            }

            /// Coefficient of variation (standard deviation / mean).
            pub fn cv(&self) -> f64 {
                match self { $( Law::$variant(l) => l.cv(), )* }
            }

            /// Distribution function F(x) = P(X <= x); 0 for x < 0, NaN for NaN.
            /// Each law's formula is in its type's doc.
            pub fn cdf(&self, x: f64) -> f64 {
                match self { $( Law::$variant(l) => l.cdf(x), )* }
            }

            /// The law's name as written in a scenario file (`law = "..."`).
            pub fn name(&self) -> &'static str {
                match self { $( Law::$variant(_) => $name, )* }
            }

            /// The law in plain words, e.g. "lognormal, mean 180 s, cv 1.10".
            pub fn describe(&self) -> String {
                match self { $( Law::$variant(l) => l.describe(), )* }
            }

            /// One draw (seconds, >= 0) using the caller's generator.
            ///
            /// No allocation; the number of generator words used depends on the law
            /// (none for deterministic). Method per law: see each type's Numerics.
            #[inline]
            pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
                match self { $( Law::$variant(l) => l.sample(rng), )* }
            }

            /// The stationary-excess (equilibrium residual) law's tail:
            /// P(R > w) = E\[(S - w)+\] / E\[S\], the integral of 1 - F(x) from w up over
            /// the mean. 1 for w <= 0, 0 beyond the largest possible holding time,
            /// non-increasing, NaN for NaN.
            ///
            /// R is the remaining time of a call found in progress at a random
            /// instant of a stationary system (the forward recurrence time of renewal
            /// theory; Cox, *Renewal Theory*, 1962, ch. 5): its density is
            /// (1 - F(x)) / E\[S\] and its mean E\[S^2\] / (2 E\[S\]) = m (1 + cv^2) / 2.
            ///
            /// # Numerics
            ///
            /// Closed forms for every law (each type's "Residual law" section):
            /// incomplete gamma functions for erlang, gamma and weibull, `erfc` for
            /// lognormal, exponentials, polynomials, and an exact table for
            /// empirical. Where a closed form is a difference of two tail terms
            /// (gamma, erlang, lognormal, weibull), the absolute error stays near
            /// 1e-16 but the relative error grows once the tail is below about
            /// 1e-12; results are clamped to [0, 1].
            ///
            /// # Example
            ///
            /// ```
            /// use busyhour::dist::Law;
            ///
            /// // A constant 120 s: the time left is uniform on (0, 120 s).
            /// let law = Law::deterministic(120.0).unwrap();
            /// assert_eq!(law.residual_tail(30.0), 0.75);
            /// // Exponential: memoryless, the residual is the law itself.
            /// let law = Law::exponential(180.0).unwrap();
            /// assert!((law.residual_tail(180.0) - (-1.0f64).exp()).abs() < 1e-15);
            /// ```
            pub fn residual_tail(&self, w: f64) -> f64 {
                match self { $( Law::$variant(l) => l.residual_tail(w), )* }
            }

            /// One draw (seconds, >= 0) from the stationary-excess (equilibrium
            /// residual) law, whose tail is [`Law::residual_tail`]: the time still to
            /// run of a call in progress in a stationary system.
            ///
            /// # Numerics
            ///
            /// Exact for every law: a draw of the length-biased law (density
            /// x f(x) / E\[S\]) times an independent uniform on (0, 1) has density
            /// (1 - F(x)) / E\[S\] (Cox 1962, ch. 5). Exponential and hyperexponential
            /// phases are drawn directly (an exponential's residual is itself). The
            /// length-biased samplers are built with the law. The generator words
            /// used differ from [`Law::sample`]'s, so a residual draw never shifts
            /// the numbers of ordinary draws from another generator.
            pub fn sample_residual<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
                match self { $( Law::$variant(l) => l.sample_residual(rng), )* }
            }

            /// The parameters that build this law again ([`LawParams::build`]):
            /// means as numbers of seconds, gamma and weibull by their shape.
            /// An empirical law's are empty: its values live in the law, and
            /// whoever writes the file names the data file.
            pub fn params(&self) -> LawParams {
                match self { $( Law::$variant(l) => LawParams::$variant($params::of(l)), )* }
            }

            fn scaled_by(&self, factor: f64) -> Result<Law, LawError> {
                match self { $( Law::$variant(l) => l.scaled(factor).map(Law::$variant), )* }
            }
        }

        impl LawParams {
            /// The law's name as written in a scenario file.
            pub fn name(&self) -> &'static str {
                match self { $( LawParams::$variant(_) => $name, )* }
            }

            /// The keys the law named `name` takes beside `law`, in the
            /// order of its parameter struct; `None` for no such law.
            pub fn keys(name: &str) -> Option<&'static [&'static str]> {
                match name {
                    $( $name => Some(field_names::<$params>()), )*
                    _ => None,
                }
            }

            /// The parameters of the law named `name` from a deserializer of
            /// its table without the `law` key (unknown keys refused); `None`
            /// for no such law.
            pub fn deserialize_named<'de, D: serde::Deserializer<'de>>(
                name: &str,
                d: D,
            ) -> Option<Result<LawParams, D::Error>> {
                use serde::Deserialize as _;
                match name {
                    $( $name => Some($params::deserialize(d).map(LawParams::$variant)), )*
                    _ => None,
                }
            }

            /// The law, checked, with the messages of a scenario file.
            pub fn build<C: LawContext>(&self, c: &C) -> Result<Law, C::Error> {
                match self { $( LawParams::$variant(p) => p.build(c).map(Law::$variant), )* }
            }
        }

        /// The parameters alone (the keys beside `law`), in the order of the
        /// law's parameter struct, absent ones left out.
        impl serde::Serialize for LawParams {
            fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
                match self { $( LawParams::$variant(p) => p.serialize(s), )* }
            }
        }
    };
}

laws! {
    /// Exponential law (cv 1).
    Exponential(Exponential, ExponentialParams) = "exponential";
    /// Erlang-k law (cv 1/sqrt k).
    Erlang(Erlang, ErlangParams) = "erlang";
    /// Gamma law.
    Gamma(Gamma, GammaParams) = "gamma";
    /// Lognormal law.
    Lognormal(Lognormal, LognormalParams) = "lognormal";
    /// Two-phase hyperexponential with balanced means (cv >= 1).
    Hyperexponential(Hyperexponential, HyperexponentialParams) = "hyperexponential";
    /// A constant time (cv 0).
    Deterministic(Deterministic, DeterministicParams) = "deterministic";
    /// Uniform law symmetric about its mean (cv <= 1/sqrt 3).
    Uniform(Uniform, UniformParams) = "uniform";
    /// Weibull law.
    Weibull(Weibull, WeibullParams) = "weibull";
    /// Law interpolated from measured values.
    Empirical(Empirical, EmpiricalParams) = "empirical";
}

/// Every key any law takes beside `law` (and `law` itself first), each
/// once, in the order of the list: what a law's table may hold at all.
pub fn all_law_keys() -> &'static [&'static str] {
    static KEYS: std::sync::OnceLock<Vec<&'static str>> = std::sync::OnceLock::new();
    KEYS.get_or_init(|| {
        let mut keys = vec!["law"];
        for name in LAW_NAMES {
            for k in LawParams::keys(name).unwrap_or(&[]) {
                if !keys.contains(k) {
                    keys.push(k);
                }
            }
        }
        keys
    })
}

/// Draws as [`Law::sample`] does, for code written against `rand_distr`.
impl rand_distr::Distribution<f64> for Law {
    #[inline]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        Law::sample(self, rng)
    }
}

impl Law {
    /// Exponential law with mean `mean` seconds: F(x) = 1 - exp(-x / mean).
    /// See [`Exponential`].
    pub fn exponential(mean: f64) -> Result<Law, LawError> {
        Exponential::new(mean).map(Law::Exponential)
    }
    /// Erlang law of k phases, each exponential with mean `mean / k`; cv = 1/sqrt(k).
    /// See [`Erlang`].
    pub fn erlang(mean: f64, k: u32) -> Result<Law, LawError> {
        Erlang::new(mean, k).map(Law::Erlang)
    }

    /// Gamma law from mean and cv: shape 1/cv^2, scale mean cv^2. See [`Gamma`].
    pub fn gamma(mean: f64, cv: f64) -> Result<Law, LawError> {
        Gamma::from_cv(mean, cv).map(Law::Gamma)
    }

    /// Gamma law from mean and shape a: scale mean / a, cv 1/sqrt(a). See [`Gamma`].
    pub fn gamma_shape(mean: f64, shape: f64) -> Result<Law, LawError> {
        Gamma::from_shape(mean, shape).map(Law::Gamma)
    }

    /// Lognormal law from mean and cv: sigma^2 = ln(1 + cv^2),
    /// mu = ln(mean) - sigma^2/2. See [`Lognormal`].
    pub fn lognormal(mean: f64, cv: f64) -> Result<Law, LawError> {
        Lognormal::new(mean, cv).map(Law::Lognormal)
    }

    /// Two-phase hyperexponential with balanced means, cv >= 1 (cv = 1 is the
    /// exponential law). See [`Hyperexponential`] for the formulas and source.
    ///
    /// # Example
    ///
    /// ```
    /// use busyhour::dist::Law;
    ///
    /// let law = Law::hyperexponential(60.0, 2.0).unwrap();
    /// assert_eq!((law.mean(), law.cv()), (60.0, 2.0));
    /// let err = Law::hyperexponential(60.0, 0.5).unwrap_err();
    /// assert!(err.to_string().contains("it needs cv >= 1"));
    /// ```
    pub fn hyperexponential(mean: f64, cv: f64) -> Result<Law, LawError> {
        Hyperexponential::new(mean, cv).map(Law::Hyperexponential)
    }

    /// A constant time `mean` seconds. See [`Deterministic`].
    pub fn deterministic(mean: f64) -> Result<Law, LawError> {
        Deterministic::new(mean).map(Law::Deterministic)
    }

    /// Uniform law on [mean - h, mean + h], h = mean cv sqrt(3); needs
    /// cv <= 1/sqrt(3) so that the lower end is >= 0. See [`Uniform`].
    pub fn uniform(mean: f64, cv: f64) -> Result<Law, LawError> {
        Uniform::new(mean, cv).map(Law::Uniform)
    }

    /// Weibull law from mean and cv: the shape k solves
    /// cv^2 = G(1+2/k)/G(1+1/k)^2 - 1 by bisection (cv falls as k grows), the
    /// scale is mean / G(1+1/k). See [`Weibull`].
    ///
    /// # Example
    ///
    /// ```
    /// use busyhour::dist::Law;
    ///
    /// // cv 1 is the exponential law, Weibull shape 1.
    /// let Law::Weibull(w) = Law::weibull(100.0, 1.0).unwrap() else { unreachable!() };
    /// assert!((w.shape() - 1.0).abs() < 1e-9);
    /// ```
    pub fn weibull(mean: f64, cv: f64) -> Result<Law, LawError> {
        Weibull::from_cv(mean, cv).map(Law::Weibull)
    }

    /// Weibull law from mean and shape k: scale mean / G(1+1/k). See [`Weibull`].
    pub fn weibull_shape(mean: f64, shape: f64) -> Result<Law, LawError> {
        Weibull::from_shape(mean, shape).map(Law::Weibull)
    }

    /// Empirical law from measured values (seconds, finite, >= 0, not all 0):
    /// the data's distribution function interpolated linearly between the
    /// order statistics placed at Hazen's positions (i - 1/2)/n, with point
    /// masses 1/(2n) on the smallest and largest value (Hyndman and Fan 1996,
    /// definition 5). Its mean equals the data mean exactly. See [`Empirical`].
    ///
    /// # Example
    ///
    /// ```
    /// use busyhour::dist::Law;
    ///
    /// let law = Law::empirical(vec![40.0, 75.0, 120.0, 600.0]).unwrap();
    /// assert_eq!(law.mean(), 208.75);
    /// assert_eq!(law.cdf(40.0), 0.125); // (1 - 1/2) / 4
    /// assert_eq!(law.cdf(600.0), 1.0);
    /// ```
    pub fn empirical(values: Vec<f64>) -> Result<Law, LawError> {
        Empirical::new(values).map(Law::Empirical)
    }

    /// Whether this is the exponential law (memoryless: the condition of
    /// the Markov formulas).
    pub fn is_exponential(&self) -> bool {
        matches!(self, Law::Exponential(_))
    }

    /// The same law with its mean multiplied by `factor` and its shape (cv,
    /// k, shape) unchanged; an empirical law has every value multiplied. All
    /// these laws are scale families, so X' = factor X in distribution.
    ///
    /// Fails when `factor` is not finite and > 0, or when the scaled law
    /// leaves floating-point range.
    pub fn scaled(&self, factor: f64) -> Result<Law, LawError> {
        if !is_positive_finite(factor) {
            return Err(LawError::ScaleFactor { value: factor });
        }
        if !(self.mean() * factor).is_finite() {
            return Err(LawError::OutOfRange {
                law: self.name(),
                mean: self.mean(),
                what: "scale factor",
                value: factor,
            });
        }
        self.scaled_by(factor)
    }
}

/// A uniform on the open interval (0, 1) (`rand_distr::Open01`), the
/// factor that turns a length-biased draw into a residual one.
#[inline]
fn open_unit<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    rand_distr::Distribution::<f64>::sample(&rand_distr::Open01, rng)
}

/// Seconds for a message: four significant figures, no trailing zeros.
fn seconds(x: f64) -> String {
    significant(x, 4)
}

/// `x` to `digits` significant figures, trailing zeros dropped; scientific
/// notation outside [1e-3, 1e15).
fn significant(x: f64, digits: usize) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let magnitude = x.abs().log10().floor();
    if !(-3.0..15.0).contains(&magnitude) {
        return format!("{:.*e}", digits.saturating_sub(1), x);
    }
    let decimals = (digits as f64 - 1.0 - magnitude).max(0.0) as usize;
    let s = format!("{x:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn significant_figures() {
        assert_eq!(significant(180.0, 4), "180");
        assert_eq!(significant(0.5, 4), "0.5");
        assert_eq!(significant(1234.567, 4), "1235");
        assert_eq!(significant(12.3456, 4), "12.35");
        assert_eq!(significant(86400.0, 4), "86400");
        assert_eq!(significant(2.0e-5, 4), "2.000e-5");
    }

    #[test]
    fn describe_in_plain_words() {
        let cases = [
            (Law::exponential(40.0), "exponential, mean 40 s, cv 1"),
            (
                Law::erlang(180.0, 3),
                "erlang with 3 phases, mean 180 s, cv 0.58",
            ),
            (
                Law::erlang(60.0, 1),
                "erlang with 1 phase, mean 60 s, cv 1.00",
            ),
            (Law::gamma(6.0, 0.5), "gamma, mean 6 s, cv 0.50 (shape 4)"),
            (Law::lognormal(180.0, 1.1), "lognormal, mean 180 s, cv 1.10"),
            (
                Law::hyperexponential(60.0, 2.0),
                "hyperexponential, mean 60 s, cv 2.00",
            ),
            (Law::deterministic(90.0), "deterministic, 90 s"),
            (
                Law::uniform(100.0, 0.2),
                "uniform from 65.36 s to 134.6 s, mean 100 s, cv 0.20",
            ),
            (
                Law::weibull_shape(100.0, 2.0),
                "weibull, mean 100 s, cv 0.52 (shape 2)",
            ),
            (
                Law::empirical(vec![3.0, 1.0, 2.0]),
                "empirical from 3 values (1 s to 3 s), mean 2 s, cv 0.37",
            ),
        ];
        for (law, text) in cases {
            assert_eq!(law.unwrap().describe(), text);
        }
    }

    #[test]
    fn names_match_the_scenario_file() {
        let names: Vec<&str> = [
            Law::exponential(1.0),
            Law::erlang(1.0, 2),
            Law::gamma(1.0, 0.5),
            Law::lognormal(1.0, 0.5),
            Law::hyperexponential(1.0, 1.5),
            Law::deterministic(1.0),
            Law::uniform(1.0, 0.5),
            Law::weibull(1.0, 0.5),
            Law::empirical(vec![1.0]),
        ]
        .into_iter()
        .map(|l| l.unwrap().name())
        .collect();
        assert_eq!(
            names,
            [
                "exponential",
                "erlang",
                "gamma",
                "lognormal",
                "hyperexponential",
                "deterministic",
                "uniform",
                "weibull",
                "empirical"
            ]
        );
    }

    #[test]
    fn scaled_rejects_bad_factors() {
        let law = Law::exponential(60.0).unwrap();
        for bad in [f64::NAN, f64::INFINITY, 0.0, -2.0] {
            assert!(matches!(law.scaled(bad), Err(LawError::ScaleFactor { .. })));
        }
        assert!(matches!(
            law.scaled(1e308),
            Err(LawError::OutOfRange { .. })
        ));
        assert_eq!(law.scaled(2.0).unwrap().mean(), 120.0);
    }

    /// A context without a file: durations as numbers or unit text, data
    /// files answered with three fixed values.
    struct Plain;

    impl LawContext for Plain {
        type Error = String;
        fn invalid(&self, field: Option<&str>, message: String) -> String {
            format!("{field:?}: {message}")
        }
        fn positive_duration(&self, _: &str, value: &crate::units::Amount) -> Result<f64, String> {
            match value {
                crate::units::Amount::Number(x) => Ok(*x),
                crate::units::Amount::Text(t) => {
                    crate::units::parse_duration(t).map_err(|e| e.to_string())
                }
            }
        }
        fn count(&self, _: &str, value: i64, min: i64, max: i64) -> Result<u32, String> {
            u32::try_from(value)
                .ok()
                .filter(|_| (min..=max).contains(&value))
                .ok_or_else(|| format!("{value} out of range"))
        }
        fn data_values(
            &self,
            _: &str,
            _: &str,
            _: Option<&str>,
            _: f64,
        ) -> Result<Vec<f64>, String> {
            Ok(vec![3.0, 1.0, 2.0])
        }
    }

    #[test]
    fn params_build_the_same_law_again() {
        let laws = [
            Law::exponential(40.0),
            Law::erlang(180.0, 3),
            Law::gamma(6.0, 0.5),
            Law::gamma_shape(6.0, 2.5),
            Law::lognormal(180.0, 1.1),
            Law::hyperexponential(60.0, 2.0),
            Law::deterministic(90.0),
            Law::uniform(100.0, 0.2),
            Law::weibull_shape(100.0, 2.0),
            Law::empirical(vec![3.0, 1.0, 2.0]),
        ];
        for law in laws {
            let law = law.unwrap();
            let mut params = law.params();
            if let LawParams::Empirical(p) = &mut params {
                // The values live in the law; a file names where they are.
                p.file = Some("values.csv".into());
            }
            assert_eq!(params.name(), law.name());
            assert_eq!(params.build(&Plain), Ok(law.clone()), "{}", law.describe());
        }
    }

    #[test]
    fn allowed_keys_come_from_the_parameter_structs() {
        assert_eq!(LawParams::keys("gamma"), Some(&["mean", "cv", "shape"][..]));
        assert_eq!(LawParams::keys("erlang"), Some(&["mean", "k"][..]));
        assert_eq!(
            LawParams::keys("empirical"),
            Some(&["file", "column", "scale"][..])
        );
        assert_eq!(LawParams::keys("pareto"), None);
        assert_eq!(
            all_law_keys(),
            ["law", "mean", "k", "cv", "shape", "file", "column", "scale"]
        );
        assert_eq!(LAW_NAMES.len(), 9);
    }

    #[test]
    fn missing_parameters_get_the_law_s_message() {
        let gamma = LawParams::Gamma(GammaParams {
            mean: Some(crate::units::Amount::Text("6s".into())),
            cv: Some(0.5),
            shape: Some(4.0),
        });
        assert_eq!(
            gamma.build(&Plain),
            Err("None: give either cv or shape, not both".to_string())
        );
        let erlang = LawParams::Erlang(ErlangParams::default());
        assert_eq!(
            erlang.build(&Plain),
            Err("Some(\"mean\"): the erlang law needs a mean, like mean = \"3m\"".to_string())
        );
    }

    #[test]
    fn draws_through_rand_distr_are_the_law_s_draws() {
        use rand::SeedableRng;
        use rand_xoshiro::Xoshiro256PlusPlus;
        let law = Law::gamma(6.0, 0.5).unwrap();
        let mut a = Xoshiro256PlusPlus::seed_from_u64(3);
        let mut b = Xoshiro256PlusPlus::seed_from_u64(3);
        let via_trait: Vec<f64> = rand_distr::Distribution::sample_iter(&law, &mut a)
            .take(5)
            .collect();
        let direct: Vec<f64> = (0..5).map(|_| law.sample(&mut b)).collect();
        assert_eq!(via_trait, direct);
        assert!(Law::exponential(1.0).unwrap().is_exponential());
        assert!(!Law::erlang(1.0, 1).unwrap().is_exponential());
    }
}
