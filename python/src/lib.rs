//! The Python face of plumb: `profile(path, **options)` returns the same document as
//! `plumb profile --json`, and `open(path, **options)` gives a `Graph` with per-node numpy
//! arrays. Options are read by the library's own keyword reader (the command line's parser), so
//! their names, defaults and checks are the command line's. Work runs with the GIL released.

use std::path::PathBuf;
use std::sync::{Arc, OnceLock};

use numpy::{IntoPyArray, PyArray1, PyArrayMethods};
use plumb::error::{Error, ErrorClass};
use plumb::profile::settings::{self, LoadSettings, PlanSettings, Word};
use plumb::progress::Quiet;
use plumb::store::graph::NodeIds;
use pyo3::exceptions::{PyException, PyImportError};
use pyo3::prelude::*;
use pyo3::types::{PyBool, PyDict, PyFloat, PyInt, PyList, PyString, PyTuple};

pyo3::create_exception!(
    _plumb,
    PlumbError,
    PyException,
    "Any failure of plumb; carries `message`, `path`, `line`, `byte_offset` and `exit_code` (the \
     command line's exit status for the same failure)."
);
pyo3::create_exception!(
    _plumb,
    InputError,
    PlumbError,
    "The input is malformed or breaks a limit (exit code 3); `line` and `byte_offset` place it."
);
pyo3::create_exception!(
    _plumb,
    ReadError,
    PlumbError,
    "A file could not be opened, read or written (exit code 4)."
);
pyo3::create_exception!(
    _plumb,
    BudgetError,
    PlumbError,
    "The work would exceed the memory budget or the scratch disk (exit code 5)."
);
pyo3::create_exception!(
    _plumb,
    OptionError,
    PlumbError,
    "An option is unknown or its value is refused (exit code 2)."
);

/// A plumb error as the matching Python exception, with the CLI's message and position.
fn to_py(e: Error) -> PyErr {
    let message = e.to_string();
    let (err, code) = match e.class() {
        ErrorClass::BadInput => (InputError::new_err(message.clone()), 3),
        ErrorClass::Io => (ReadError::new_err(message.clone()), 4),
        ErrorClass::Budget => (BudgetError::new_err(message.clone()), 5),
        ErrorClass::Usage => (OptionError::new_err(message.clone()), 2),
    };
    Python::attach(|py| {
        let v = err.value(py);
        let pos = e.position();
        // Setting attributes on a fresh exception instance cannot fail short of memory.
        let _ = v.setattr("message", &message);
        let _ = v.setattr("path", e.path().map(|p| p.to_string_lossy().into_owned()));
        let _ = v.setattr("line", pos.map(|p| p.line));
        let _ = v.setattr("byte_offset", pos.filter(|p| !p.rows).map(|p| p.byte));
        let _ = v.setattr("exit_code", code);
    });
    err
}

fn option_error(problem: String) -> PyErr {
    to_py(Error::Parameters { problem })
}

/// Keyword arguments as the library's words: switches, or text in the command line's spelling.
/// `None` keeps the default; `threads` is taken out for the pool.
/// Keyword arguments as `name=value` words.
type Words = Vec<(String, Word)>;

fn words(kwargs: Option<&Bound<'_, PyDict>>) -> PyResult<(Words, Option<usize>)> {
    let mut out = Vec::new();
    let mut threads = None;
    let Some(kwargs) = kwargs else {
        return Ok((out, threads));
    };
    for (k, v) in kwargs.iter() {
        let key: String = k.extract()?;
        if v.is_none() {
            continue;
        }
        if key == "threads" {
            let t: usize = v
                .extract()
                .map_err(|_| option_error(format!("threads must be a whole number, got {v}")))?;
            if t == 0 {
                return Err(option_error("threads must be at least 1".into()));
            }
            threads = Some(t);
            continue;
        }
        let word = if v.is_instance_of::<PyBool>() {
            Word::Switch(v.extract()?)
        } else if v.is_instance_of::<PyList>() || v.is_instance_of::<PyTuple>() {
            let parts: Vec<String> = v
                .try_iter()?
                .map(|x| x.and_then(|x| text_of(&x)))
                .collect::<PyResult<_>>()?;
            Word::Text(parts.join(","))
        } else {
            Word::Text(text_of(&v)?)
        };
        out.push((key, word));
    }
    Ok((out, threads))
}

fn text_of(v: &Bound<'_, PyAny>) -> PyResult<String> {
    if v.is_instance_of::<PyString>()
        || v.is_instance_of::<PyInt>()
        || v.is_instance_of::<PyFloat>()
    {
        Ok(v.str()?.to_string())
    } else if let Ok(p) = v.extract::<PathBuf>() {
        Ok(p.to_string_lossy().into_owned())
    } else {
        Err(option_error(format!(
            "option values are text, numbers, switches or lists of them; got {}",
            v.get_type().name()?
        )))
    }
}

fn read_settings(
    kwargs: Option<&Bound<'_, PyDict>>,
) -> PyResult<(LoadSettings, PlanSettings, Option<usize>)> {
    let (words, threads) = words(kwargs)?;
    let (load, plan) = settings::from_keywords(&words).map_err(|e| to_py(e.into()))?;
    Ok((load, plan, threads))
}

/// Run `f` on a pool of `threads` (or the global one), with the GIL released.
fn detached<T: Send>(
    py: Python<'_>,
    threads: Option<usize>,
    f: impl FnOnce() -> Result<T, Error> + Send,
) -> PyResult<T> {
    py.detach(|| match threads {
        Some(t) => match rayon::ThreadPoolBuilder::new().num_threads(t).build() {
            Ok(pool) => pool.install(f),
            Err(e) => Err(Error::Parameters {
                problem: format!("cannot start {t} threads: {e}"),
            }),
        },
        None => f(),
    })
    .map_err(to_py)
}

fn json_to_py(py: Python<'_>, text: &str) -> PyResult<Py<PyAny>> {
    Ok(py.import("json")?.call_method1("loads", (text,))?.unbind())
}

fn profile_document(
    g: &plumb::Graph,
    plan: &PlanSettings,
    source: Option<&std::path::Path>,
) -> Result<(String, plumb::profile::NodeTable), Error> {
    // Options read inside the pool, so the cost model assumes the pool's threads.
    let opts = plan.options();
    let (p, table) = plumb::profile::profile(g, &opts, &Quiet);
    let report = plumb::profile::report::Report::new(p, source, &opts)?.with_sketch(g);
    let text = serde_json::to_string(&report).map_err(|e| Error::Parameters {
        problem: format!("the report could not be written as JSON: {e}"),
    })?;
    Ok((text, table))
}

/// profile(path, **options) -> dict
///
/// Profile an edge list, Matrix Market, Parquet or store file and return the same document as
/// `plumb profile --json` (a dict). Options are the command line's, spelt with `_`.
#[pyfunction]
#[pyo3(signature = (path, **options))]
fn profile(
    py: Python<'_>,
    path: PathBuf,
    options: Option<&Bound<'_, PyDict>>,
) -> PyResult<Py<PyAny>> {
    let (load, plan, threads) = read_settings(options)?;
    let text = detached(py, threads, || {
        let g = plumb::store::load::load(&path, &load.options(), &Quiet)?;
        profile_document(&g, &plan, Some(&path)).map(|(t, _)| t)
    })?;
    json_to_py(py, &text)
}

/// open(path, **options) -> Graph
///
/// Read an edge list, Matrix Market, Parquet or store file into a Graph. Options are the
/// command line's input options, spelt with `_`.
#[pyfunction]
#[pyo3(signature = (path, **options))]
fn open(py: Python<'_>, path: PathBuf, options: Option<&Bound<'_, PyDict>>) -> PyResult<Graph> {
    let (load, _plan, threads) = read_settings(options)?;
    let given: Vec<String> = options
        .map(|d| d.keys().iter().map(|k| k.to_string()).collect())
        .unwrap_or_default();
    let load_names = settings::load_keyword_names();
    let plan_only: Vec<&String> = given
        .iter()
        .filter(|k| *k != "threads" && !load_names.contains(&k.replace('-', "_")))
        .collect();
    if !plan_only.is_empty() {
        return Err(option_error(format!(
            "open() takes the input options only; {} belong(s) to Graph.profile()",
            plan_only
                .iter()
                .map(|s| s.as_str())
                .collect::<Vec<_>>()
                .join(", ")
        )));
    }
    let g = detached(py, threads, || {
        plumb::store::load::load(&path, &load.options(), &Quiet)
    })?;
    Ok(Graph {
        g: Arc::new(g),
        path,
        threads,
        triangles: OnceLock::new(),
        components: OnceLock::new(),
    })
}

/// A loaded graph: node and edge counts, and per-node arrays indexed by dense node index
/// (0 .. nodes - 1, in ascending order of the original ids).
#[pyclass(module = "plumb", frozen)]
struct Graph {
    g: Arc<plumb::Graph>,
    path: PathBuf,
    threads: Option<usize>,
    triangles: OnceLock<Py<PyArray1<u64>>>,
    components: OnceLock<Py<PyArray1<u32>>>,
}

/// Numpy arrays handed out are read-only: they are cached, and shared by every caller.
fn frozen<'py, T: numpy::Element>(a: Bound<'py, PyArray1<T>>) -> PyResult<Bound<'py, PyArray1<T>>> {
    let kw = PyDict::new(a.py());
    kw.set_item("write", false)?;
    a.call_method("setflags", (), Some(&kw))?;
    Ok(a)
}

impl Graph {
    fn directed_degree<'py>(
        &self,
        py: Python<'py>,
        out: bool,
    ) -> PyResult<Option<Bound<'py, PyArray1<u32>>>> {
        let Some(dir) = self.g.directions.as_deref() else {
            return Ok(None);
        };
        let (o, i) = plumb::exact::directed::degrees(&self.g.csr, dir);
        frozen(if out { o } else { i }.into_pyarray(py)).map(Some)
    }
}

#[pymethods]
impl Graph {
    /// Number of nodes.
    #[getter]
    fn nodes(&self) -> usize {
        self.g.node_count()
    }

    /// Number of undirected edges, after removing self-loops and repeated pairs.
    #[getter]
    fn edges(&self) -> u64 {
        self.g.edge_count()
    }

    /// The file this graph was read from.
    #[getter]
    fn path(&self) -> PathBuf {
        self.path.clone()
    }

    /// What reading found (the `intake` part of the profile document), as a dict.
    #[getter]
    fn intake(&self, py: Python<'_>) -> PyResult<Py<PyAny>> {
        let text = serde_json::to_string(&self.g.intake)
            .map_err(|e| option_error(format!("intake as JSON: {e}")))?;
        json_to_py(py, &text)
    }

    /// Original ids by dense index: int64 for integer ids, else an object array of str.
    #[getter]
    fn ids(&self, py: Python<'_>) -> PyResult<Py<PyAny>> {
        let n = self.g.node_count();
        let arr: Py<PyAny> = match &self.g.ids {
            NodeIds::Range { first, .. } => {
                let first = *first as i64;
                frozen(PyArray1::<i64>::arange(py, first, first + n as i64, 1))?
                    .into_any()
                    .unbind()
            }
            NodeIds::Ints(v) => {
                // Ids above i64::MAX cannot be int64; keep them exact as uint64.
                if v.iter().any(|&x| x > i64::MAX as u64) {
                    frozen(PyArray1::<u64>::from_slice(py, v))?
                        .into_any()
                        .unbind()
                } else {
                    let v: Vec<i64> = v.iter().map(|&x| x as i64).collect();
                    frozen(v.into_pyarray(py))?.into_any().unbind()
                }
            }
            NodeIds::Text { .. } => {
                let labels: Vec<String> = (0..n as u32)
                    .map(|i| self.g.ids.label(i).into_owned())
                    .collect();
                let np = py.import("numpy")?;
                let kw = PyDict::new(py);
                kw.set_item("dtype", "object")?;
                np.call_method("array", (labels,), Some(&kw))?.unbind()
            }
        };
        Ok(arr)
    }

    /// Degree of each node (uint32).
    #[getter]
    fn degree<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<u32>>> {
        let csr = &self.g.csr;
        let d: Vec<u32> = (0..csr.node_count() as u32)
            .map(|v| csr.degree(v))
            .collect();
        frozen(d.into_pyarray(py))
    }

    /// Out-degree of each node (uint32) when the file was read with `directed=True`, else None.
    #[getter]
    fn out_degree<'py>(&self, py: Python<'py>) -> PyResult<Option<Bound<'py, PyArray1<u32>>>> {
        self.directed_degree(py, true)
    }

    /// In-degree of each node (uint32) when the file was read with `directed=True`, else None.
    #[getter]
    fn in_degree<'py>(&self, py: Python<'py>) -> PyResult<Option<Bound<'py, PyArray1<u32>>>> {
        self.directed_degree(py, false)
    }

    /// Triangles through each node (uint64), counted exactly on first use.
    #[getter]
    fn triangles<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<u64>>> {
        if let Some(a) = self.triangles.get() {
            return Ok(a.bind(py).clone());
        }
        let g = Arc::clone(&self.g);
        let t = detached(py, self.threads, move || {
            Ok(plumb::exact::triangles::count(&g.csr).per_node)
        })?;
        let a = frozen(t.into_pyarray(py))?;
        let _ = self.triangles.set(a.clone().unbind());
        Ok(a)
    }

    /// Local clustering coefficient of each node (float64; 0 where the degree is under 2),
    /// Watts and Strogatz (1998).
    #[getter]
    fn clustering<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<f64>>> {
        let tri = self.triangles(py)?;
        let tri = tri.readonly();
        let c = plumb::exact::clustering::local_from(&self.g.csr, tri.as_slice()?);
        frozen(c.into_pyarray(py))
    }

    /// Component of each node by size rank (uint32): 1 is the giant component, then by size.
    #[getter]
    fn component<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<u32>>> {
        if let Some(a) = self.components.get() {
            return Ok(a.bind(py).clone());
        }
        let g = Arc::clone(&self.g);
        let r = detached(py, self.threads, move || {
            Ok(plumb::exact::components::components(&g.csr).ranks())
        })?;
        let a = frozen(r.into_pyarray(py))?;
        let _ = self.components.set(a.clone().unbind());
        Ok(a)
    }

    /// table() -> pandas.DataFrame
    ///
    /// One row per node: id, degree, triangles, clustering, component (needs pandas).
    fn table(&self, py: Python<'_>) -> PyResult<Py<PyAny>> {
        let pd = py.import("pandas").map_err(|_| {
            PyImportError::new_err(
                "Graph.table() needs pandas (pip install pandas); the per-node arrays \
                 (ids, degree, triangles, clustering, component) work without it",
            )
        })?;
        let cols = PyDict::new(py);
        cols.set_item("id", self.ids(py)?)?;
        cols.set_item("degree", self.degree(py)?)?;
        cols.set_item("triangles", self.triangles(py)?)?;
        cols.set_item("clustering", self.clustering(py)?)?;
        cols.set_item("component", self.component(py)?)?;
        Ok(pd.call_method1("DataFrame", (cols,))?.unbind())
    }

    /// profile(**options) -> dict
    ///
    /// Profile this graph: the same document as `plumb profile --json`. Options are the
    /// command line's figure options (exact_within, clustering, distances, level, seed, …).
    #[pyo3(signature = (**options))]
    fn profile(&self, py: Python<'_>, options: Option<&Bound<'_, PyDict>>) -> PyResult<Py<PyAny>> {
        if let Some(d) = options {
            let load_names = settings::load_keyword_names();
            for k in d.keys() {
                let k = k.to_string();
                if load_names.contains(&k.replace('-', "_")) {
                    return Err(option_error(format!(
                        "{k} is an input option: give it to plumb.open(), which reads the file"
                    )));
                }
            }
        }
        let (_load, plan, threads) = read_settings(options)?;
        let g = Arc::clone(&self.g);
        let path = self.path.clone();
        let threads = threads.or(self.threads);
        let text = detached(py, threads, move || {
            profile_document(&g, &plan, Some(&path)).map(|(t, _)| t)
        })?;
        json_to_py(py, &text)
    }

    /// Whether the file was read as directed.
    #[getter]
    fn directed(&self) -> bool {
        self.g.directions.is_some()
    }

    fn __len__(&self) -> usize {
        self.g.node_count()
    }

    fn __repr__(&self) -> String {
        format!(
            "<plumb.Graph {}: {} nodes, {} edges>",
            self.path.display(),
            self.g.node_count(),
            self.g.edge_count()
        )
    }
}

/// Names of every option `profile()` accepts, as keyword arguments.
#[pyfunction]
fn option_names() -> Vec<String> {
    let mut v = settings::keyword_names();
    v.push("threads".into());
    v
}

#[pymodule]
fn _plumb(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(profile, m)?)?;
    m.add_function(wrap_pyfunction!(open, m)?)?;
    m.add_function(wrap_pyfunction!(option_names, m)?)?;
    m.add_class::<Graph>()?;
    let py = m.py();
    m.add("PlumbError", py.get_type::<PlumbError>())?;
    m.add("InputError", py.get_type::<InputError>())?;
    m.add("ReadError", py.get_type::<ReadError>())?;
    m.add("BudgetError", py.get_type::<BudgetError>())?;
    m.add("OptionError", py.get_type::<OptionError>())?;
    m.add("__version__", env!("CARGO_PKG_VERSION"))?;
    Ok(())
}
