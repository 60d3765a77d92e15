//! Stand-in for the laws module while it is written on its own branch.
use rand_distr::Distribution;
use std::path::Path;
use thiserror::Error;

#[derive(Debug, Error)]
pub enum LawError {
    #[error("bad law: {0}")]
    Bad(String),
}
#[derive(Debug, Clone)]
pub enum Law {
    Exponential(f64),
    Deterministic(f64),
    Lognormal(f64, f64, rand_distr::LogNormal<f64>),
}
impl Law {
    pub fn exponential(mean: f64) -> Result<Law, LawError> {
        if !(mean > 0.0 && mean.is_finite()) { return Err(LawError::Bad(format!("{mean}"))); }
        Ok(Law::Exponential(mean))
    }
    pub fn deterministic(mean: f64) -> Result<Law, LawError> { Ok(Law::Deterministic(mean)) }
    pub fn lognormal(mean: f64, cv: f64) -> Result<Law, LawError> {
        let s2 = (1.0 + cv * cv).ln();
        Ok(Law::Lognormal(mean, cv, rand_distr::LogNormal::new(mean.ln() - s2 / 2.0, s2.sqrt()).map_err(|e| LawError::Bad(e.to_string()))?))
    }
    pub fn erlang(_mean: f64, _k: u32) -> Result<Law, LawError> { Err(LawError::Bad("todo".into())) }
    pub fn gamma(_mean: f64, _cv: f64) -> Result<Law, LawError> { Err(LawError::Bad("todo".into())) }
    pub fn gamma_shape(_mean: f64, _s: f64) -> Result<Law, LawError> { Err(LawError::Bad("todo".into())) }
    pub fn hyperexponential(_mean: f64, _cv: f64) -> Result<Law, LawError> { Err(LawError::Bad("todo".into())) }
    pub fn uniform(_mean: f64, _cv: f64) -> Result<Law, LawError> { Err(LawError::Bad("todo".into())) }
    pub fn weibull(_mean: f64, _cv: f64) -> Result<Law, LawError> { Err(LawError::Bad("todo".into())) }
    pub fn weibull_shape(_mean: f64, _s: f64) -> Result<Law, LawError> { Err(LawError::Bad("todo".into())) }
    pub fn empirical(_v: Vec<f64>) -> Result<Law, LawError> { Err(LawError::Bad("todo".into())) }
    pub fn mean(&self) -> f64 { match self { Law::Exponential(m) | Law::Deterministic(m) | Law::Lognormal(m, _, _) => *m } }
    pub fn cv(&self) -> f64 { match self { Law::Exponential(_) => 1.0, Law::Deterministic(_) => 0.0, Law::Lognormal(_, c, _) => *c } }
    pub fn name(&self) -> &'static str { match self { Law::Exponential(_) => "exponential", Law::Deterministic(_) => "deterministic", Law::Lognormal(..) => "lognormal" } }
    pub fn describe(&self) -> String { format!("{}, mean {} s, cv {:.2}", self.name(), self.mean(), self.cv()) }
    pub fn scaled(&self, f: f64) -> Law { match self { Law::Exponential(m) => Law::Exponential(m * f), Law::Deterministic(m) => Law::Deterministic(m * f), Law::Lognormal(m, c, _) => Law::lognormal(m * f, *c).unwrap() } }
    #[inline]
    pub fn sample<R: rand::Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        match self {
            Law::Exponential(m) => { let e: f64 = rand_distr::Exp1.sample(rng); e * m }
            Law::Deterministic(m) => *m,
            Law::Lognormal(_, _, d) => d.sample(rng),
        }
    }
}
pub mod empirical {
    use super::*;
    #[derive(Debug, Error)]
    #[error("{0}")]
    pub struct EmpiricalError(pub String);
    pub fn read_column(_p: &Path, _c: Option<&str>, _s: f64) -> Result<Vec<f64>, EmpiricalError> { Err(EmpiricalError("todo".into())) }
}
