//! `busyhour._busyhour`: the Python binding of the busyhour library. Thin
//! by rule: it converts Python values to the library's arguments, calls the
//! library (`busyhour::api`, `busyhour::formulas`) and converts back; no
//! figure is computed here. The pure-Python package `busyhour` (beside this
//! crate) wraps these functions with keyword arguments, numpy broadcasting,
//! docstrings and DataFrames.
//!
//! Errors are Python exceptions, never panics: a scenario's as
//! `busyhour.ScenarioError` (a `ValueError`), a bad argument as
//! `ValueError`, an interrupted simulation as `KeyboardInterrupt`. A panic
//! of the library (a bug) in a simulation is caught where its worker thread
//! is joined and raised as `RuntimeError`; elsewhere PyO3 turns it into
//! `PanicException`.
// No unsafe code of our own (PyO3's macros expand to some: hence not `forbid`).
#![deny(unsafe_code)]

use busyhour::api::{self, ApiError, Overrides, RecordsRequest, SweepAxes};
use busyhour::experiment::RunOptions;
use busyhour::formulas::{FormulaError, engset, erlang_a, erlang_b, erlang_c, multirate, overflow};
use busyhour::report::{self, Document, Format};
use busyhour::scenario::{self, Model};
use pyo3::create_exception;
use pyo3::exceptions::{PyKeyboardInterrupt, PyRuntimeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::{PyBool, PyBytes, PyDict, PyFloat, PyList, PyString, PyTuple};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Duration;

create_exception!(
    busyhour,
    ScenarioError,
    PyValueError,
    "A scenario (file, TOML text or dict) that is not a valid design: the message names the file and the key path, as the binary's."
);

/// A library error as the Python exception of its kind.
fn py_error(e: ApiError) -> PyErr {
    match e {
        ApiError::Scenario(s) => ScenarioError::new_err(s.to_string()),
        ApiError::Experiment(x) => PyRuntimeError::new_err(x.to_string()),
        other => PyValueError::new_err(other.to_string()),
    }
}

fn formula_error(e: FormulaError) -> PyErr {
    PyValueError::new_err(e.to_string())
}

// ---------------------------------------------------------------------------
// Scenarios

/// A compiled scenario: the library's `Model` and the name that stands for
/// its file in messages and documents.
#[pyclass(module = "busyhour._busyhour", name = "Model", frozen)]
struct PyModel {
    model: Model,
    file: String,
}

#[pymethods]
impl PyModel {
    /// The scenario's title.
    #[getter]
    fn title(&self) -> String {
        self.model.title.clone()
    }

    /// The name standing for the scenario's file.
    #[getter]
    fn file(&self) -> String {
        self.file.clone()
    }

    /// The streams' names, in file order.
    #[getter]
    fn streams(&self) -> Vec<String> {
        self.model.streams.iter().map(|s| s.name.clone()).collect()
    }

    /// The groups' names, in file order.
    #[getter]
    fn groups(&self) -> Vec<String> {
        self.model.groups.iter().map(|g| g.name.clone()).collect()
    }

    /// The master seed of the scenario's plan.
    #[getter]
    fn seed(&self) -> u64 {
        self.model.plan.seed
    }
}

/// Read, parse and validate a scenario file.
#[pyfunction]
#[pyo3(signature = (path, data_dir=None))]
fn load_file(path: PathBuf, data_dir: Option<PathBuf>) -> PyResult<PyModel> {
    let model = scenario::load_confined(&path, data_dir.as_deref())
        .map_err(|e| ScenarioError::new_err(e.to_string()))?;
    Ok(PyModel {
        model,
        file: path.display().to_string(),
    })
}

/// Parse and validate scenario text; `name` stands for the file in
/// messages, data paths are relative to `base`.
#[pyfunction]
fn parse_text(text: &str, name: &str, base: PathBuf) -> PyResult<PyModel> {
    let title = Path::new(name)
        .file_stem()
        .map_or_else(|| name.to_string(), |s| s.to_string_lossy().into_owned());
    let model = scenario::parse(text, name, &base, &title)
        .map_err(|e| ScenarioError::new_err(e.to_string()))?;
    Ok(PyModel {
        model,
        file: name.to_string(),
    })
}

/// Compile a dict of the scenario file's shape.
#[pyfunction]
fn parse_table(table: &Bound<'_, PyDict>, name: &str, base: PathBuf) -> PyResult<PyModel> {
    let table = to_table(table, name, "")?;
    let model = api::scenario_from_table(&table, name, &base)
        .map_err(|e| ScenarioError::new_err(e.to_string()))?;
    Ok(PyModel {
        model,
        file: name.to_string(),
    })
}

/// A refused value of a dict: `name: key: message`, the form of the
/// scenario's validation errors.
fn table_error(name: &str, key: &str, message: &str) -> PyErr {
    let key = if key.is_empty() { "(top level)" } else { key };
    ScenarioError::new_err(format!(
        "{}: {}: {message}",
        scenario::printable(name),
        scenario::printable(key)
    ))
}

fn to_table(dict: &Bound<'_, PyDict>, name: &str, path: &str) -> PyResult<toml::Table> {
    let mut table = toml::Table::new();
    for (k, v) in dict.iter() {
        let Ok(key) = k.cast::<PyString>() else {
            return Err(table_error(name, path, "every key must be a string"));
        };
        let key: String = key.extract()?;
        let here = if path.is_empty() {
            key.clone()
        } else {
            format!("{path}.{key}")
        };
        // None leaves the key out, as if it were not written.
        if v.is_none() {
            continue;
        }
        table.insert(key, to_value(&v, name, &here)?);
    }
    Ok(table)
}

fn to_value(v: &Bound<'_, PyAny>, name: &str, path: &str) -> PyResult<toml::Value> {
    if v.is_instance_of::<PyBool>() {
        return Ok(toml::Value::Boolean(v.extract()?));
    }
    if let Ok(s) = v.cast::<PyString>() {
        return Ok(toml::Value::String(s.extract()?));
    }
    if v.is_instance_of::<PyFloat>() {
        return Ok(toml::Value::Float(v.extract()?));
    }
    if let Ok(d) = v.cast::<PyDict>() {
        return Ok(toml::Value::Table(to_table(d, name, path)?));
    }
    if v.is_instance_of::<PyList>() || v.is_instance_of::<PyTuple>() {
        let mut items = Vec::new();
        for (i, item) in v.try_iter()?.enumerate() {
            items.push(to_value(&item?, name, &format!("{path}[{}]", i + 1))?);
        }
        return Ok(toml::Value::Array(items));
    }
    // Whole numbers (Python's int, numpy's integers) by __index__, other
    // numbers (numpy's floats) by __float__.
    if let Ok(i) = v.extract::<i64>() {
        return Ok(toml::Value::Integer(i));
    }
    if let Ok(x) = v.extract::<f64>() {
        return Ok(toml::Value::Float(x));
    }
    let kind = v
        .get_type()
        .name()
        .map_or_else(|_| "?".to_string(), |n| n.to_string());
    Err(table_error(
        name,
        path,
        &format!(
            "a value of type {kind} cannot be written in a scenario (use str, int, float, bool, list or dict)"
        ),
    ))
}

// ---------------------------------------------------------------------------
// Simulation: off the GIL, interruptible

/// Run `work` on a worker thread with the GIL released, while this thread
/// (the caller's, the main thread in a notebook) wakes every 50 ms to let
/// Python handle signals: on Ctrl-C the stop flag is set, the library
/// finishes the replications in progress and starts no new one, the
/// result is discarded and `KeyboardInterrupt` is raised.
///
/// Python runs a signal's handler wherever the main thread next executes
/// Python code, and that can be a finalizer or a callback whose exception
/// is discarded ("Exception ignored in ..."): the interrupt would then be
/// lost and the simulation run on. So for the call's duration SIGINT's
/// handler is wrapped ([`StopOnInterrupt`]): the wrapper calls the handler
/// it replaced, and when that raises it also sets the stop flag, which
/// the loop reads whatever became of the exception.
fn interruptible<T: Send>(
    py: Python<'_>,
    threads: Option<usize>,
    work: impl FnOnce(&RunOptions) -> T + Send,
) -> PyResult<T> {
    let stop = std::sync::Arc::new(AtomicBool::new(false));
    let _handler = StopOnInterrupt::install(py, &stop);
    std::thread::scope(|scope| {
        let (sender, receiver) = std::sync::mpsc::channel();
        // Waited on with the GIL released, which needs a Sync reference.
        let receiver = std::sync::Mutex::new(receiver);
        let stop_ref: &AtomicBool = &stop;
        let worker = scope.spawn(move || {
            let opts = RunOptions {
                threads,
                progress: None,
                stop: Some(stop_ref),
            };
            let _ = sender.send(work(&opts));
        });
        let mut interrupted = None;
        let outcome = loop {
            let waited = py.detach(|| match receiver.lock() {
                Ok(r) => r.recv_timeout(Duration::from_millis(50)),
                Err(_) => Err(std::sync::mpsc::RecvTimeoutError::Disconnected),
            });
            match waited {
                Ok(result) => break Some(result),
                Err(std::sync::mpsc::RecvTimeoutError::Disconnected) => break None,
                Err(std::sync::mpsc::RecvTimeoutError::Timeout) => {}
            }
            if interrupted.is_none() {
                if let Err(e) = py.check_signals() {
                    stop.store(true, Ordering::SeqCst);
                    interrupted = Some(e);
                } else if stop.load(Ordering::SeqCst) {
                    // The handler raised somewhere that discarded it.
                    interrupted = Some(PyKeyboardInterrupt::new_err(()));
                }
            }
        };
        let joined = py.detach(|| worker.join());
        if let Some(e) = interrupted {
            return Err(e);
        }
        match (outcome, joined) {
            (Some(result), Ok(())) => Ok(result),
            (_, Err(panic)) => {
                let what = panic
                    .downcast_ref::<&str>()
                    .map(|s| s.to_string())
                    .or_else(|| panic.downcast_ref::<String>().cloned())
                    .unwrap_or_default();
                Err(PyRuntimeError::new_err(format!(
                    "busyhour: internal error (a bug, please report it): {what}"
                )))
            }
            (None, Ok(())) => Err(PyRuntimeError::new_err(
                "busyhour: internal error: the simulation ended without a result",
            )),
        }
    })
}

/// SIGINT's Python handler wrapped for one simulation call (see
/// [`interruptible`]); the handler it replaced comes back when this is
/// dropped. Installed only where Python lets it be (the main thread) and
/// where SIGINT has a Python handler at all (not `SIG_IGN` or `SIG_DFL`):
/// elsewhere nothing changes and `check_signals` alone decides, as before.
struct StopOnInterrupt<'py> {
    signal: Bound<'py, PyAny>,
    previous: Bound<'py, PyAny>,
}

impl<'py> StopOnInterrupt<'py> {
    fn install(py: Python<'py>, stop: &std::sync::Arc<AtomicBool>) -> Option<StopOnInterrupt<'py>> {
        let signal = py.import("signal").ok()?.into_any();
        let sigint = signal.getattr("SIGINT").ok()?;
        let previous = signal.call_method1("getsignal", (&sigint,)).ok()?;
        if !previous.is_callable() {
            return None;
        }
        let inner = previous.clone().unbind();
        let flag = std::sync::Arc::clone(stop);
        let wrapper = pyo3::types::PyCFunction::new_closure(
            py,
            None,
            None,
            move |args: &Bound<'_, PyTuple>,
                  _kwargs: Option<&Bound<'_, PyDict>>|
                  -> PyResult<Py<PyAny>> {
                let py = args.py();
                match inner.bind(py).call1(args) {
                    Ok(v) => Ok(v.unbind()),
                    Err(e) => {
                        flag.store(true, Ordering::SeqCst);
                        Err(e)
                    }
                }
            },
        )
        .ok()?;
        // ValueError off the main thread: leave the handler alone.
        signal.call_method1("signal", (&sigint, wrapper)).ok()?;
        Some(StopOnInterrupt { signal, previous })
    }
}

impl Drop for StopOnInterrupt<'_> {
    fn drop(&mut self) {
        if let Ok(sigint) = self.signal.getattr("SIGINT") {
            let _ = self.signal.call_method1("signal", (sigint, &self.previous));
        }
    }
}

fn overrides(
    replications: Option<u32>,
    precision: Option<f64>,
    max_replications: Option<u32>,
    seed: Option<u64>,
) -> Overrides {
    Overrides {
        replications,
        precision,
        max_replications,
        seed,
    }
}

fn threads_of(threads: Option<usize>) -> PyResult<Option<usize>> {
    match threads {
        Some(0) => Err(PyValueError::new_err(
            "threads: 0: expected at least 1 worker thread (None: one per core)",
        )),
        Some(t) if t > 1024 => Err(PyValueError::new_err(format!(
            "threads: {t}: expected at most 1024 worker threads"
        ))),
        t => Ok(t),
    }
}

/// The document as the binary's `--json` prints it (`report::render`, the
/// binary's one rendering path).
fn to_json(doc: &impl Document) -> PyResult<String> {
    report::render(Format::Json, doc).map_err(|e| PyRuntimeError::new_err(e.to_string()))
}

/// `check`: the JSON document (the model in words, its closed-form
/// figures, problems and notes).
#[pyfunction]
fn check(model: &PyModel) -> PyResult<String> {
    to_json(&api::check(&model.model, &model.file))
}

/// `run`: the JSON document.
#[pyfunction]
#[pyo3(signature = (model, replications=None, precision=None, max_replications=None, seed=None, threads=None))]
fn run(
    py: Python<'_>,
    model: &PyModel,
    replications: Option<u32>,
    precision: Option<f64>,
    max_replications: Option<u32>,
    seed: Option<u64>,
    threads: Option<usize>,
) -> PyResult<String> {
    let o = overrides(replications, precision, max_replications, seed);
    let threads = threads_of(threads)?;
    let (doc, _) = interruptible(py, threads, |opts| {
        api::run(&model.model, &model.file, &o, opts)
    })?
    .map_err(py_error)?;
    to_json(&doc)
}

/// `size`: the JSON document.
#[pyfunction]
#[pyo3(signature = (model, group, goals, replications=None, precision=None, max_replications=None, seed=None, decide_within=None, threads=None))]
#[allow(clippy::too_many_arguments)]
fn size(
    py: Python<'_>,
    model: &PyModel,
    group: &str,
    goals: Vec<String>,
    replications: Option<u32>,
    precision: Option<f64>,
    max_replications: Option<u32>,
    seed: Option<u64>,
    decide_within: Option<u32>,
    threads: Option<usize>,
) -> PyResult<String> {
    let o = overrides(replications, precision, max_replications, seed);
    let threads = threads_of(threads)?;
    let (doc, _) = interruptible(py, threads, |opts| {
        api::size(
            &model.model,
            &model.file,
            group,
            &goals,
            &o,
            decide_within,
            opts,
        )
    })?
    .map_err(py_error)?;
    to_json(&doc)
}

/// `size --goal cost`: the JSON document.
#[pyfunction]
#[pyo3(signature = (model, group, replications=None, precision=None, max_replications=None, seed=None, threads=None))]
#[allow(clippy::too_many_arguments)]
fn size_cost(
    py: Python<'_>,
    model: &PyModel,
    group: &str,
    replications: Option<u32>,
    precision: Option<f64>,
    max_replications: Option<u32>,
    seed: Option<u64>,
    threads: Option<usize>,
) -> PyResult<String> {
    let o = overrides(replications, precision, max_replications, seed);
    let threads = threads_of(threads)?;
    let (doc, _) = interruptible(py, threads, |opts| {
        api::size_cost(&model.model, &model.file, group, &o, opts)
    })?
    .map_err(py_error)?;
    to_json(&doc)
}

/// `size --per-interval`: the JSON document.
#[pyfunction]
#[pyo3(signature = (model, group, goals, rounds=40, replications=None, precision=None, max_replications=None, seed=None, threads=None))]
#[allow(clippy::too_many_arguments)]
fn staffing(
    py: Python<'_>,
    model: &PyModel,
    group: &str,
    goals: Vec<String>,
    rounds: u32,
    replications: Option<u32>,
    precision: Option<f64>,
    max_replications: Option<u32>,
    seed: Option<u64>,
    threads: Option<usize>,
) -> PyResult<String> {
    let o = overrides(replications, precision, max_replications, seed);
    let threads = threads_of(threads)?;
    let (doc, _) = interruptible(py, threads, |opts| {
        api::staffing(&model.model, &model.file, group, &goals, &o, rounds, opts)
    })?
    .map_err(py_error)?;
    to_json(&doc)
}

/// `sweep`: the JSON document.
#[pyfunction]
#[pyo3(signature = (model, scale=None, servers=None, figures=Vec::new(), goals=Vec::new(), replications=None, precision=None, max_replications=None, seed=None, threads=None))]
#[allow(clippy::too_many_arguments)]
fn sweep(
    py: Python<'_>,
    model: &PyModel,
    scale: Option<String>,
    servers: Option<String>,
    figures: Vec<String>,
    goals: Vec<String>,
    replications: Option<u32>,
    precision: Option<f64>,
    max_replications: Option<u32>,
    seed: Option<u64>,
    threads: Option<usize>,
) -> PyResult<String> {
    let o = overrides(replications, precision, max_replications, seed);
    let threads = threads_of(threads)?;
    let axes = SweepAxes { scale, servers };
    let (doc, _) = interruptible(py, threads, |opts| {
        api::sweep(&model.model, &model.file, &axes, &figures, &goals, &o, opts)
    })?
    .map_err(py_error)?;
    to_json(&doc)
}

/// `compare`: design `b` against design `a` (common random numbers): the
/// JSON document.
#[pyfunction]
#[pyo3(signature = (a, b, replications=None, seed=None, threads=None))]
fn compare(
    py: Python<'_>,
    a: &PyModel,
    b: &PyModel,
    replications: Option<u32>,
    seed: Option<u64>,
    threads: Option<usize>,
) -> PyResult<String> {
    let o = overrides(replications, None, None, seed);
    let threads = threads_of(threads)?;
    let (doc, _) = interruptible(py, threads, |opts| {
        api::compare(&a.model, &a.file, &b.model, &b.file, &o, opts)
    })?
    .map_err(py_error)?;
    to_json(&doc)
}

/// `explain`: the assumption ladder's JSON document.
#[pyfunction]
#[pyo3(signature = (model, figures=Vec::new(), replications=None, seed=None, threads=None))]
fn explain(
    py: Python<'_>,
    model: &PyModel,
    figures: Vec<String>,
    replications: Option<u32>,
    seed: Option<u64>,
    threads: Option<usize>,
) -> PyResult<String> {
    let o = overrides(replications, None, None, seed);
    let threads = threads_of(threads)?;
    let (doc, _) = interruptible(py, threads, |opts| {
        api::explain(&model.model, &model.file, &figures, &o, opts)
    })?
    .map_err(py_error)?;
    to_json(&doc)
}

/// `records` of a file (`path`) or of CSV text (`text`, named `name`): the
/// JSON document.
#[pyfunction]
#[pyo3(signature = (path=None, text=None, name="<records>", interval=None, start=None, date=None, duration=None, outcome=None, wait=None, outcome_words=Vec::new(), unix_offset_s=None, days=None, skip_bad=false))]
#[allow(clippy::too_many_arguments)]
fn records(
    py: Python<'_>,
    path: Option<PathBuf>,
    text: Option<String>,
    name: &str,
    interval: Option<String>,
    start: Option<String>,
    date: Option<String>,
    duration: Option<String>,
    outcome: Option<String>,
    wait: Option<String>,
    outcome_words: Vec<(String, String)>,
    unix_offset_s: Option<i32>,
    days: Option<String>,
    skip_bad: bool,
) -> PyResult<String> {
    use busyhour::records::{Columns, Outcome};
    let outcome_words = (outcome_words.into_iter())
        .map(|(word, kind)| match Outcome::from_kind(&kind) {
            Some(o) if !word.trim().is_empty() => Ok((word.trim().to_string(), o)),
            Some(_) => Err(PyValueError::new_err(
                "outcome_words: a word is empty".to_string(),
            )),
            None => Err(PyValueError::new_err(format!(
                "outcome_words: '{word}': the kind '{kind}' must be answered, blocked or abandoned"
            ))),
        })
        .collect::<PyResult<Vec<_>>>()?;
    let request = RecordsRequest {
        interval,
        columns: Columns {
            start,
            date,
            duration,
            outcome,
            wait,
            outcome_words,
            unix_offset_s,
        },
        days,
        skip_bad,
    };
    let doc = py
        .detach(|| match (&path, &text) {
            (Some(p), None) => api::records_file(p, &request),
            (None, Some(t)) => api::records_text(t, name, &request),
            _ => Err(ApiError::Argument(
                "records: give a file path or CSV text, not both".to_string(),
            )),
        })
        .map_err(py_error)?;
    to_json(&doc)
}

// ---------------------------------------------------------------------------
// Formulas, one value or many

/// A whole number of servers (agents, sources, channels) given as a float.
fn whole(name: &str, x: f64) -> Result<u32, String> {
    if x >= 0.0 && x <= f64::from(u32::MAX) && x.fract() == 0.0 {
        Ok(x as u32)
    } else {
        Err(format!(
            "{name} = {x} is not valid: expected a whole number >= 0"
        ))
    }
}

/// The formulas offered element by element: name, argument count, and the
/// library call on one row of arguments.
type Element = fn(&[f64]) -> Result<f64, String>;

fn element(name: &str) -> Option<(usize, Element)> {
    fn e(r: Result<f64, FormulaError>) -> Result<f64, String> {
        r.map_err(|e| e.to_string())
    }
    Some(match name {
        "erlang_b" => (2, |a| e(erlang_b::blocking(whole("servers", a[0])?, a[1]))),
        "erlang_b_continuous" => (2, |a| e(erlang_b::blocking_continuous(a[0], a[1]))),
        "erlang_b_servers" => (2, |a| e(erlang_b::servers_for(a[0], a[1]).map(f64::from))),
        "erlang_b_traffic" => (2, |a| {
            e(erlang_b::traffic_for(whole("servers", a[0])?, a[1]))
        }),
        "erlang_c" => (2, |a| {
            e(erlang_c::wait_probability(whole("agents", a[0])?, a[1]))
        }),
        "erlang_c_mean_wait" => (3, |a| {
            e(erlang_c::mean_wait(whole("agents", a[0])?, a[1], a[2]))
        }),
        "erlang_c_service_level" => (4, |a| {
            e(erlang_c::service_level(
                whole("agents", a[0])?,
                a[1],
                a[2],
                a[3],
            ))
        }),
        "erlang_c_occupancy" => (2, |a| e(erlang_c::occupancy(whole("agents", a[0])?, a[1]))),
        "erlang_c_agents_for_service_level" => (4, |a| {
            e(erlang_c::agents_for_service_level(a[0], a[1], a[2], a[3]).map(f64::from))
        }),
        "erlang_c_agents_for_mean_wait" => (3, |a| {
            e(erlang_c::agents_for_mean_wait(a[0], a[1], a[2]).map(f64::from))
        }),
        _ => return None,
    })
}

fn unknown(name: &str) -> PyErr {
    PyValueError::new_err(format!("no formula is named {name}"))
}

/// One formula on one row of arguments.
#[pyfunction]
fn evaluate(name: &str, args: Vec<f64>) -> PyResult<f64> {
    let (arity, f) = element(name).ok_or_else(|| unknown(name))?;
    if args.len() != arity {
        return Err(PyValueError::new_err(format!(
            "{name} takes {arity} arguments, not {}",
            args.len()
        )));
    }
    f(&args).map_err(PyValueError::new_err)
}

/// One formula on `count` rows: each column the bytes of `count` float64
/// values in the machine's order (numpy's `tobytes()`); the answer the same.
/// With `nan_on_error`, a row the formula refuses gives NaN; otherwise the
/// first such row raises ValueError naming its index.
#[pyfunction]
fn evaluate_many<'py>(
    py: Python<'py>,
    name: &str,
    columns: Vec<Vec<u8>>,
    count: usize,
    nan_on_error: bool,
) -> PyResult<Bound<'py, PyBytes>> {
    let (arity, f) = element(name).ok_or_else(|| unknown(name))?;
    if columns.len() != arity || columns.iter().any(|c| c.len() != count * 8) {
        return Err(PyValueError::new_err(format!(
            "{name} takes {arity} columns of {count} float64 values"
        )));
    }
    let read = |c: &[u8], i: usize| {
        let mut b = [0u8; 8];
        b.copy_from_slice(&c[i * 8..i * 8 + 8]);
        f64::from_ne_bytes(b)
    };
    let out = py.detach(|| -> Result<Vec<u8>, String> {
        let mut out = Vec::with_capacity(count * 8);
        let mut row = vec![0.0; arity];
        for i in 0..count {
            for (slot, c) in row.iter_mut().zip(&columns) {
                *slot = read(c, i);
            }
            let value = match f(&row) {
                Ok(v) => v,
                Err(_) if nan_on_error => f64::NAN,
                Err(e) => return Err(format!("element {i}: {e}")),
            };
            out.extend_from_slice(&value.to_ne_bytes());
        }
        Ok(out)
    });
    let out = out.map_err(PyValueError::new_err)?;
    Ok(PyBytes::new(py, &out))
}

/// Erlang A (M/M/N+M): every figure of the solution as a dict, with the
/// service level when `within_s` is given.
#[pyfunction(name = "erlang_a")]
#[pyo3(signature = (agents, traffic, holding_s, patience_s, within_s=None))]
fn erlang_a_figures<'py>(
    py: Python<'py>,
    agents: u32,
    traffic: f64,
    holding_s: f64,
    patience_s: f64,
    within_s: Option<f64>,
) -> PyResult<Bound<'py, PyDict>> {
    let s = erlang_a::solve(agents, traffic, holding_s, patience_s).map_err(formula_error)?;
    let d = PyDict::new(py);
    d.set_item("wait_probability", s.wait_probability)?;
    d.set_item("abandonment", s.abandonment)?;
    d.set_item("answered", s.answered)?;
    d.set_item("mean_queue", s.mean_queue)?;
    d.set_item("mean_wait_s", s.mean_wait_s)?;
    d.set_item("mean_wait_answered_s", s.mean_wait_answered_s)?;
    d.set_item("carried_traffic", s.carried_traffic)?;
    d.set_item("occupancy", s.occupancy)?;
    match within_s {
        Some(t) if t >= 0.0 && t.is_finite() => {
            d.set_item("service_level", s.service_level(t))?;
            d.set_item("service_level_of_answered", s.service_level_of_answered(t))?;
        }
        Some(t) => {
            return Err(PyValueError::new_err(format!(
                "within_s = {t} is not valid: expected a finite time >= 0 (s)"
            )));
        }
        None => {
            d.set_item("service_level", py.None())?;
            d.set_item("service_level_of_answered", py.None())?;
        }
    }
    Ok(d)
}

/// Engset: time and call congestion of `servers` offered by `sources`
/// sources, each offering `idle_traffic` erlangs while idle.
#[pyfunction(name = "engset")]
fn engset_figures<'py>(
    py: Python<'py>,
    sources: u32,
    servers: u32,
    idle_traffic: f64,
) -> PyResult<Bound<'py, PyDict>> {
    let s = engset::solve(sources, servers, idle_traffic).map_err(formula_error)?;
    let d = PyDict::new(py);
    d.set_item("time_congestion", s.time_congestion)?;
    d.set_item("call_congestion", s.call_congestion)?;
    d.set_item("carried_traffic", s.carried_traffic)?;
    d.set_item("offered_traffic", s.offered_traffic)?;
    Ok(d)
}

/// Riordan's overflow moments: (mean, variance, peakedness).
#[pyfunction]
fn overflow_moments(servers: u32, traffic: f64) -> PyResult<(f64, f64, f64)> {
    let m = overflow::riordan(servers, traffic).map_err(formula_error)?;
    Ok((m.mean, m.variance, m.peakedness()))
}

/// The equivalent random group of an overflow stream: (traffic, servers),
/// by Rapp's approximation or, with `exact`, solved exactly.
#[pyfunction]
fn equivalent_random(mean: f64, variance: f64, exact: bool) -> PyResult<(f64, f64)> {
    let e = if exact {
        overflow::equivalent_random_exact(mean, variance)
    } else {
        overflow::equivalent_random(mean, variance)
    }
    .map_err(formula_error)?;
    Ok((e.traffic, e.servers))
}

/// The final group of an overflow network by the equivalent random method.
#[pyfunction]
fn final_group<'py>(
    py: Python<'py>,
    primaries: Vec<(f64, u32)>,
    direct: f64,
    servers: u32,
) -> PyResult<Bound<'py, PyDict>> {
    let f = overflow::final_group(&primaries, direct, servers).map_err(formula_error)?;
    let d = PyDict::new(py);
    d.set_item("offered_mean", f.overflow_mean)?;
    d.set_item("offered_variance", f.overflow_variance)?;
    d.set_item("peakedness", f.peakedness)?;
    d.set_item("equivalent_traffic", f.equivalent.map(|e| e.traffic))?;
    d.set_item("equivalent_servers", f.equivalent.map(|e| e.servers))?;
    d.set_item("lost_traffic", f.lost_traffic)?;
    d.set_item("final_blocking", f.final_blocking)?;
    d.set_item("total_loss", f.total_loss)?;
    Ok(d)
}

/// Kaufman-Roberts: each class's blocking on `capacity` channels.
#[pyfunction]
fn kaufman_roberts(capacity: u32, classes: Vec<(f64, u32)>) -> PyResult<Vec<f64>> {
    multirate::kaufman_roberts(capacity, &classes).map_err(formula_error)
}

#[pymodule]
fn _busyhour(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("ScenarioError", m.py().get_type::<ScenarioError>())?;
    m.add("CAUTION", busyhour::CAUTION)?;
    m.add("VERSION", env!("CARGO_PKG_VERSION"))?;
    m.add_class::<PyModel>()?;
    m.add_function(wrap_pyfunction!(load_file, m)?)?;
    m.add_function(wrap_pyfunction!(parse_text, m)?)?;
    m.add_function(wrap_pyfunction!(parse_table, m)?)?;
    m.add_function(wrap_pyfunction!(check, m)?)?;
    m.add_function(wrap_pyfunction!(run, m)?)?;
    m.add_function(wrap_pyfunction!(size, m)?)?;
    m.add_function(wrap_pyfunction!(size_cost, m)?)?;
    m.add_function(wrap_pyfunction!(staffing, m)?)?;
    m.add_function(wrap_pyfunction!(sweep, m)?)?;
    m.add_function(wrap_pyfunction!(records, m)?)?;
    m.add_function(wrap_pyfunction!(compare, m)?)?;
    m.add_function(wrap_pyfunction!(explain, m)?)?;
    m.add_function(wrap_pyfunction!(evaluate, m)?)?;
    m.add_function(wrap_pyfunction!(evaluate_many, m)?)?;
    m.add_function(wrap_pyfunction!(erlang_a_figures, m)?)?;
    m.add_function(wrap_pyfunction!(engset_figures, m)?)?;
    m.add_function(wrap_pyfunction!(overflow_moments, m)?)?;
    m.add_function(wrap_pyfunction!(equivalent_random, m)?)?;
    m.add_function(wrap_pyfunction!(final_group, m)?)?;
    m.add_function(wrap_pyfunction!(kaufman_roberts, m)?)?;
    Ok(())
}
