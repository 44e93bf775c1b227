//! `descry._native`: the Rust half of the Python package. Columns come in
//! and features go out through the Arrow C stream interface, so no value is
//! converted one by one in Python; the work runs with the GIL released, on
//! descry's threads. The typed Python layer (`descry/`) turns the Arrow
//! results into the caller's kind of table.

use std::ffi::CStr;
use std::path::PathBuf;

use polars::prelude::*;
use polars_arrow::array::{Array, StructArray};
use polars_arrow::datatypes::{ArrowDataType, Field as ArrowField};
use polars_arrow::ffi;
use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;
use pyo3::types::PyCapsule;

use descry::pipeline::{features_in_memory, lookup_table, lookup_table_evaluated, Description};
use descry::propose::{propose as draft_ruleset, ProposeOptions, PROPOSE_SCHEMA};
use descry::read::text_of;
use descry::report::drift::{drift, read_baseline, write_baseline, BaselineFigures, Drop};
use descry::report::explain::explain;
use descry::report::DriftLimits;
use descry::ruleset::ValueKind;
use descry::survey::{survey as survey_column, SurveyOptions, DEFAULT_PLACEHOLDERS};
use descry::table::schema::readable;
use descry::{CoverageReport, Ruleset, Vocabulary};

const STREAM: &CStr = c"arrow_array_stream";

/// A Python exception of `descry._errors`, built with `args`.
fn python_error<'py, A>(py: Python<'py>, class: &str, args: A) -> PyErr
where
    A: pyo3::call::PyCallArgs<'py>,
{
    let made = py
        .import("descry._errors")
        .and_then(|m| m.getattr(class))
        .and_then(|c| c.call1(args));
    match made {
        Ok(e) => PyErr::from_value(e),
        Err(e) => e,
    }
}

fn input_error(message: impl std::fmt::Display) -> PyErr {
    Python::attach(|py| python_error(py, "InputError", (message.to_string(),)))
}

/// A descry error as the Python exception of its kind, with the same
/// message the command line prints.
fn descry_error(e: descry::Error) -> PyErr {
    match e {
        descry::Error::Ruleset(r) => ruleset_error(&r),
        other => input_error(other),
    }
}

fn ruleset_error(e: &descry::RulesetError) -> PyErr {
    Python::attach(|py| {
        python_error(
            py,
            "RulesetError",
            (
                e.to_string(),
                e.file.clone(),
                e.line,
                e.rule.clone(),
                e.pattern.as_ref().map(|(_, offset)| *offset),
            ),
        )
    })
}

fn polars_error(e: PolarsError) -> PyErr {
    input_error(e)
}

/// A ruleset, loaded and compiled once.
#[pyclass(name = "Ruleset", module = "descry", frozen)]
struct PyRuleset {
    rules: Ruleset,
    /// The bytes the ruleset was read from, hashed into baselines.
    text: String,
}

#[pymethods]
impl PyRuleset {
    /// Load a ruleset file (TOML).
    #[staticmethod]
    fn load(py: Python<'_>, path: PathBuf) -> PyResult<Self> {
        let name = path.display().to_string();
        let text = Ruleset::read_text(&path).map_err(|e| {
            let e = descry::RulesetError::new(&name, e.to_string());
            Python::attach(|py| {
                python_error(py, "RulesetError", (e.message.clone(), e.file.clone()))
            })
        })?;
        let rules = py
            .detach(|| Ruleset::from_toml(&text, &name))
            .map_err(|e| ruleset_error(&e))?;
        Ok(PyRuleset { rules, text })
    }

    /// A ruleset from TOML text; `name` stands for the file in messages.
    #[staticmethod]
    #[pyo3(signature = (text, name = "<string>"))]
    fn from_toml(text: String, name: &str) -> PyResult<Self> {
        let rules = Ruleset::from_toml(&text, name).map_err(|e| ruleset_error(&e))?;
        Ok(PyRuleset { rules, text })
    }

    /// The column the ruleset describes, if it names one.
    #[getter]
    fn column(&self) -> Option<String> {
        self.rules.column.clone()
    }

    /// The file the ruleset came from (or the name given to `from_toml`).
    #[getter]
    fn file(&self) -> String {
        self.rules.file.clone()
    }

    /// The TOML text.
    #[getter]
    fn text(&self) -> String {
        self.text.clone()
    }

    /// Each rule as (name, output column, kind, line in the file).
    #[getter]
    fn features(&self) -> Vec<(String, String, &'static str, usize)> {
        self.rules
            .features
            .iter()
            .map(|f| (f.name.clone(), f.output.clone(), f.rule.kind(), f.line))
            .collect()
    }

    /// Whether the ruleset fixes every output type (every count has a
    /// `range`), so that the types are known before any value is read.
    #[getter]
    fn types_fixed(&self) -> bool {
        descry::encode::Encoder::types_fixed_by_ruleset(&self.rules)
    }

    /// The output columns of counts with no `range`, whose type depends on
    /// the values read.
    #[getter]
    fn unfixed_counts(&self) -> Vec<String> {
        self.rules
            .features
            .iter()
            .filter(|f| matches!(&f.rule, descry::ruleset::Rule::Count(c) if c.range.is_none()))
            .map(|f| f.output.clone())
            .collect()
    }

    /// Warnings found while loading (likely slips in the ruleset).
    #[getter]
    fn warnings(&self) -> Vec<String> {
        self.rules.warnings.iter().map(|w| w.to_string()).collect()
    }

    /// What every rule does to each value, as JSON (the structure of
    /// `descry explain --format json`).
    #[pyo3(signature = (values, fired_only = false))]
    fn explain_json(&self, values: Vec<String>, fired_only: bool) -> PyResult<String> {
        let explained: Vec<_> = values
            .iter()
            .map(|v| explain(&self.rules, v, fired_only))
            .collect();
        serde_json::to_string(&explained).map_err(|e| PyValueError::new_err(e.to_string()))
    }

    fn __repr__(&self) -> String {
        format!(
            "Ruleset({:?}, column={:?}, {} rules)",
            self.rules.file,
            self.rules.column.as_deref().unwrap_or(""),
            self.rules.features.len()
        )
    }
}

/// Record batches leaving Rust through the Arrow C stream interface, once.
#[pyclass(module = "descry", frozen)]
struct ArrowStream {
    stream: std::sync::Mutex<Option<ffi::ArrowArrayStream>>,
}

#[pymethods]
impl ArrowStream {
    #[pyo3(signature = (requested_schema = None))]
    fn __arrow_c_stream__<'py>(
        &self,
        py: Python<'py>,
        requested_schema: Option<Bound<'py, PyAny>>,
    ) -> PyResult<Bound<'py, PyCapsule>> {
        let _ = requested_schema;
        let stream = self
            .stream
            .lock()
            .map_err(|_| PyValueError::new_err("this Arrow stream failed before"))?
            .take()
            .ok_or_else(|| PyValueError::new_err("this Arrow stream was already read"))?;
        PyCapsule::new_with_value(py, stream, STREAM)
    }
}

/// A column read from any object that exports the Arrow C stream interface
/// (`__arrow_c_stream__`): a pyarrow Array or ChunkedArray, a polars Series.
fn import_column(obj: &Bound<'_, PyAny>, name: &str) -> PyResult<Series> {
    let capsule = obj.call_method0("__arrow_c_stream__")?;
    let capsule = capsule.cast::<PyCapsule>()?;
    let pointer = capsule.pointer_checked(Some(STREAM))?;
    // Take the stream out of the capsule; the capsule keeps a released one.
    let stream = unsafe {
        std::ptr::replace(
            pointer.as_ptr() as *mut ffi::ArrowArrayStream,
            ffi::ArrowArrayStream::empty(),
        )
    };
    let mut reader = unsafe { ffi::ArrowArrayStreamReader::try_new(Box::new(stream)) }
        .map_err(|e| input_error(format!("column {name:?}: {e}")))?;
    let field = reader.field().clone();
    // polars, as descry builds it, stops the process on a type it was built
    // without; say which column instead, as the command line does.
    if !readable(&field.dtype) {
        return Err(input_error(format!(
            "column {name:?} has the type {:?}, which descry cannot read (its polars is built without \
             that type); convert the column to a plain type, or leave it out",
            field.dtype
        )));
    }
    let mut chunks = Vec::new();
    while let Some(chunk) = unsafe { reader.next() } {
        chunks.push(chunk.map_err(|e| input_error(format!("column {name:?}: {e}")))?);
    }
    // A column of no chunks (an empty pyarrow ChunkedArray) is a column of
    // no rows.
    if chunks.is_empty() {
        chunks.push(polars_arrow::array::new_empty_array(field.dtype.clone()));
    }
    let field = ArrowField::new(name.into(), field.dtype, true);
    Series::try_from((&field, chunks))
        .map_err(|e| input_error(format!("column {name:?}: cannot be read as text: {e}")))
}

/// The distinct values of a column and their rows: from the rows
/// themselves, or, with `counts`, from a vocabulary table (one row per
/// distinct value, its row count in `counts`; null values may be one row).
fn vocabulary(series: &Series, counts: Option<&Series>) -> PyResult<Vocabulary> {
    let text = text_of(&series.clone().into_column()).map_err(polars_error)?;
    let Some(counts) = counts else {
        return Ok(Vocabulary::build(text.iter()));
    };
    let counts = counts
        .cast(&DataType::Int64)
        .map_err(|e| input_error(format!("the counts are not whole numbers: {e}")))?;
    let counts = counts.i64().map_err(polars_error)?;
    let mut vocab = Vocabulary::default();
    let mut seen = std::collections::HashSet::new();
    for (row, (value, n)) in text.iter().zip(counts.iter()).enumerate() {
        let n = match n {
            Some(n) if n >= 0 => n as u64,
            Some(n) => return Err(input_error(format!("row {row}: the count {n} is negative"))),
            None => return Err(input_error(format!("row {row}: the count is null"))),
        };
        match value {
            None => vocab.null_rows += n,
            Some(v) => {
                if !seen.insert(v) {
                    return Err(input_error(format!(
                        "row {row}: the value {v:?} appears twice in the vocabulary table"
                    )));
                }
                vocab.values.push(v.to_owned());
                vocab.counts.push(n);
            }
        }
    }
    Ok(vocab)
}

/// The optional counts column of a vocabulary table.
fn import_counts(counts: Option<&Bound<'_, PyAny>>) -> PyResult<Option<Series>> {
    counts.map(|c| import_column(c, "counts")).transpose()
}

/// The lookup table of the rulesets on a column (one row per distinct
/// non-null value: `value`, `rows` and the features, in `apply`'s types),
/// from its rows or, with `counts`, from a vocabulary table.
#[pyfunction]
#[pyo3(signature = (column, name, rulesets, counts = None))]
fn lookup(
    py: Python<'_>,
    column: Bound<'_, PyAny>,
    name: String,
    rulesets: Vec<PyRef<'_, PyRuleset>>,
    counts: Option<Bound<'_, PyAny>>,
) -> PyResult<ArrowStream> {
    let series = import_column(&column, &name)?;
    let counts = import_counts(counts.as_ref())?;
    let rules: Vec<&Ruleset> = rulesets.iter().map(|r| &r.rules).collect();
    let stream = py.detach(|| -> PyResult<ffi::ArrowArrayStream> {
        let vocab = vocabulary(&series, counts.as_ref())?;
        let table = lookup_table(&vocab, &rules).map_err(polars_error)?;
        let height = table.height();
        export_features(table.columns().to_vec(), height)
    })?;
    Ok(ArrowStream {
        stream: std::sync::Mutex::new(Some(stream)),
    })
}

/// The feature columns exported as one struct array per batch.
fn export_features(columns: Vec<Column>, height: usize) -> PyResult<ffi::ArrowArrayStream> {
    let level = CompatLevel::oldest();
    let mut fields = Vec::new();
    let mut arrays: Vec<Box<dyn Array>> = Vec::new();
    for c in columns {
        let s = c.as_materialized_series().rechunk();
        fields.push(s.field().to_arrow(level));
        arrays.push(s.to_arrow(0, level));
    }
    let dtype = ArrowDataType::Struct(fields);
    let batch = StructArray::try_new(dtype.clone(), height, arrays, None)
        .map_err(|e| PyValueError::new_err(e.to_string()))?;
    let field = ArrowField::new("features".into(), dtype, false);
    let batch: Box<dyn Array> = Box::new(batch);
    Ok(ffi::export_iterator(
        Box::new(std::iter::once(Ok(batch))),
        field,
    ))
}

/// The features of `rulesets` (each with the column it describes) for the
/// columns given as (name, Arrow stream source): one stream of struct
/// batches, a field per feature.
#[pyfunction]
fn features(
    py: Python<'_>,
    columns: Vec<(String, Bound<'_, PyAny>)>,
    rulesets: Vec<(PyRef<'_, PyRuleset>, String)>,
) -> PyResult<ArrowStream> {
    let mut series = Vec::new();
    for (name, obj) in &columns {
        series.push(import_column(obj, name)?.into_column());
    }
    let height = series.first().map_or(0, |c| c.len());
    let descriptions: Vec<Description> = rulesets
        .iter()
        .map(|(r, column)| Description {
            rules: r.rules.clone(),
            column: column.clone(),
        })
        .collect();
    let stream = py.detach(move || -> PyResult<ffi::ArrowArrayStream> {
        let table = DataFrame::new(height, series).map_err(polars_error)?;
        let features = features_in_memory(&table, descriptions).map_err(polars_error)?;
        export_features(features, height)
    })?;
    Ok(ArrowStream {
        stream: std::sync::Mutex::new(Some(stream)),
    })
}

/// The feature index of `name`: an output column first, then a rule name.
fn feature_index(rules: &Ruleset, name: &str) -> PyResult<usize> {
    rules
        .features
        .iter()
        .position(|f| f.output == name)
        .or_else(|| rules.features.iter().position(|f| f.name == name))
        .ok_or_else(|| {
            let known: Vec<&str> = rules.features.iter().map(|f| f.output.as_str()).collect();
            input_error(format!(
                "require {name:?}: no rule has that name or output column; the output columns are: {}",
                known.join(", ")
            ))
        })
}

/// The `descry.check/1` report of one ruleset on one column, as JSON, with
/// the gates judged; with `baseline`, the drift against it.
#[pyfunction]
#[pyo3(signature = (column, name, rules, min_coverage = None, require = Vec::new(), baseline = None, save_baseline = None, limits = (None, None, None, None), counts = None))]
#[allow(clippy::too_many_arguments)]
fn check(
    py: Python<'_>,
    column: Bound<'_, PyAny>,
    name: String,
    rules: PyRef<'_, PyRuleset>,
    min_coverage: Option<f64>,
    require: Vec<(String, f64)>,
    baseline: Option<PathBuf>,
    save_baseline: Option<PathBuf>,
    limits: (Option<f64>, Option<f64>, Option<f64>, Option<f64>),
    counts: Option<Bound<'_, PyAny>>,
) -> PyResult<String> {
    let series = import_column(&column, &name)?;
    let counts = import_counts(counts.as_ref())?;
    let required: Vec<(usize, f64)> = require
        .iter()
        .map(|(f, share)| Ok((feature_index(&rules.rules, f)?, *share)))
        .collect::<PyResult<_>>()?;
    let (rules, text) = (&rules.rules, rules.text.as_str());
    py.detach(|| {
        let vocab = vocabulary(&series, counts.as_ref())?;
        let eval = rules.evaluate_all(&vocab.values);
        let mut report = CoverageReport::build(rules, &name, &vocab, &eval);
        report.judge(rules, min_coverage, &required);
        if baseline.is_some() || save_baseline.is_some() {
            let table = lookup_table_evaluated(&vocab, &[(rules, &eval)]).map_err(polars_error)?;
            let figures = BaselineFigures::of(&report, text.as_bytes());
            let this = Drop { table, figures };
            if let Some(base) = &baseline {
                let (table, figures) = read_baseline(base).map_err(descry_error)?;
                if figures.column != name {
                    return Err(input_error(format!(
                        "{}: the baseline describes column {:?}, and this check describes column {name:?}; \
                         give the baseline saved with this ruleset",
                        base.display(),
                        figures.column
                    )));
                }
                let old = Drop { table, figures };
                let classify = |i: usize| {
                    let considered = rules.kind_of(&eval.normalized[i]) == ValueKind::Considered;
                    (
                        considered,
                        considered && eval.outcomes[i].iter().any(|o| o.fired),
                    )
                };
                let found = drift(&base.display().to_string(), &old, &this, rules, classify)
                    .map_err(polars_error)?;
                report.drift = Some(found);
                let (max_new_share, max_new_uncovered_share, max_psi, max_shift) = limits;
                report.judge_drift(&DriftLimits {
                    max_new_share,
                    max_new_uncovered_share,
                    max_psi,
                    max_shift,
                });
            }
            if let Some(save) = &save_baseline {
                write_baseline(save, this.table, &this.figures).map_err(descry_error)?;
            }
        }
        serde_json::to_string(&report).map_err(|e| PyValueError::new_err(e.to_string()))
    })
}

/// The `descry.survey/1` report of a column, as JSON.
#[pyfunction]
#[pyo3(signature = (column, name, top = 20, examples = 3, placeholders = Vec::new(), default_placeholders = true))]
fn survey(
    py: Python<'_>,
    column: Bound<'_, PyAny>,
    name: String,
    top: usize,
    examples: usize,
    placeholders: Vec<String>,
    default_placeholders: bool,
) -> PyResult<String> {
    let series = import_column(&column, &name)?;
    py.detach(|| {
        let vocab = vocabulary(&series, None)?;
        let mut all: Vec<String> = if default_placeholders {
            DEFAULT_PLACEHOLDERS.iter().map(|s| s.to_string()).collect()
        } else {
            Vec::new()
        };
        all.extend(placeholders);
        let opts = SurveyOptions {
            placeholders: all,
            top,
            examples,
            ..SurveyOptions::default()
        };
        let report = survey_column(&vocab, &name, &opts);
        serde_json::to_string(&report).map_err(|e| PyValueError::new_err(e.to_string()))
    })
}

/// The `descry.cluster/1` report of a column, as JSON.
#[pyfunction]
#[pyo3(signature = (column, name, method = "letters".to_owned(), threshold = None, q = 3, loose_digits = false, max_diameter = None))]
#[allow(clippy::too_many_arguments)]
fn cluster(
    py: Python<'_>,
    column: Bound<'_, PyAny>,
    name: String,
    method: String,
    threshold: Option<String>,
    q: usize,
    loose_digits: bool,
    max_diameter: Option<String>,
) -> PyResult<String> {
    use descry::cluster::{
        cluster as cluster_column, method::method_of, ClusterOptions, Digits, Method,
    };
    let chosen = method_of(&method, threshold.as_deref(), q).map_err(input_error)?;
    let cap =
        match (max_diameter, chosen) {
            (None, _) => None,
            (Some(d), Method::Fuzzy(_)) => {
                match method_of(&method, Some(&d), q).map_err(input_error)? {
                    Method::Fuzzy(cap) => Some(cap),
                    _ => None,
                }
            }
            (Some(_), _) => return Err(input_error(
                "max_diameter applies to the fuzzy methods (qgram, levenshtein, osa, jaro-winkler)",
            )),
        };
    let series = import_column(&column, &name)?;
    py.detach(|| {
        let vocab = vocabulary(&series, None)?;
        let opts = ClusterOptions {
            digits: if loose_digits {
                Digits::Loose
            } else {
                Digits::Strict
            },
            max_diameter: cap,
            ..ClusterOptions::new(chosen)
        };
        let report = cluster_column(&vocab, &name, &opts);
        serde_json::to_string(&report).map_err(|e| PyValueError::new_err(e.to_string()))
    })
}

/// A drafted ruleset for a column: (its TOML, the `descry.propose/1`
/// report as JSON, less the output path).
#[pyfunction]
#[pyo3(signature = (column, name, min_share = None, max_share = None, max_rules = None, prefix = None, columns = Vec::new()))]
#[allow(clippy::too_many_arguments)]
fn propose(
    py: Python<'_>,
    column: Bound<'_, PyAny>,
    name: String,
    min_share: Option<f64>,
    max_share: Option<f64>,
    max_rules: Option<usize>,
    prefix: Option<String>,
    columns: Vec<String>,
) -> PyResult<(String, String)> {
    let series = import_column(&column, &name)?;
    py.detach(|| {
        let vocab = vocabulary(&series, None)?;
        let defaults = ProposeOptions::default();
        let opts = ProposeOptions {
            min_share: min_share.unwrap_or(defaults.min_share),
            max_share: max_share.unwrap_or(defaults.max_share),
            max_rules: max_rules.unwrap_or(defaults.max_rules),
            prefix: prefix.unwrap_or_else(|| format!("{}_", descry::propose::rule_name(&name))),
            columns,
            ..defaults
        };
        let draft = draft_ruleset(&vocab, &name, &opts).map_err(|e| ruleset_error(&e))?;
        let text = draft.to_toml();
        let rules = Ruleset::from_toml(&text, "<draft>").map_err(|e| ruleset_error(&e))?;
        let eval = rules.evaluate_all(&vocab.values);
        let check = CoverageReport::build(&rules, &name, &vocab, &eval);
        let report = serde_json::json!({
            "schema": PROPOSE_SCHEMA,
            "output": serde_json::Value::Null,
            "draft": &draft,
            "unmatched_before": serde_json::Value::Null,
            "check": &check,
        });
        Ok((text, report.to_string()))
    })
}

#[pymodule]
fn _native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<PyRuleset>()?;
    m.add_class::<ArrowStream>()?;
    m.add_function(wrap_pyfunction!(features, m)?)?;
    m.add_function(wrap_pyfunction!(check, m)?)?;
    m.add_function(wrap_pyfunction!(survey, m)?)?;
    m.add_function(wrap_pyfunction!(lookup, m)?)?;
    m.add_function(wrap_pyfunction!(cluster, m)?)?;
    m.add_function(wrap_pyfunction!(propose, m)?)?;
    m.add("VERSION", env!("CARGO_PKG_VERSION"))?;
    Ok(())
}
