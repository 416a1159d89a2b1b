//! Parameter-study built-ins: `sweep` and `random_cases` (declared), the
//! methods of the `Table` a sweep returns (declared), and its properties (registered in
//! `register`, documented on the `Table` page in `DOCS`). The machinery (workers, grid,
//! shards) is `script::sweep`; the sampling is `numeric::sampling`.

use crate::numeric::sampling::{self, Distribution};
use crate::script::convert::{fail, to_count, to_f64, type_name, Rr};
use crate::script::declare::{Call, Param};
use crate::script::docs::Doc;
use crate::script::state;
use crate::script::sweep::run::RunOptions;
use crate::script::sweep::{self, Table};
use rhai::{Array, Dynamic, Engine, FnPtr, Map, FLOAT, INT};

/// The pages of the `Table` methods and properties, registered by hand in [`register`]
/// (`sweep` and `random_cases` are declared in `BUILTINS`).
pub const DOCS: &[Doc] = &[
    Doc {
        name: "Table",
        family: "parameter studies",
        usage: "table.column(name) → array\ntable.rows → array of maps\ntable.row(i) → map\n\
                table.columns, table.parameters, table.results → arrays of names\n\
                table.cases → case indices\ntable.errors → error text or () per row\n\
                table.logs → printed text per row\ntable.len(), table.failure_count",
        summary: "the value a sweep returns: one row per case, parameters then results",
        details: "Columns: the parameter names (grid order), then the result names (the sorted \
                  union of the keys the cases returned). A row is a map of its columns; a \
                  failed case has () in its result columns — use table.successes().column(name) \
                  for plots. A table from a sharded run holds only that shard's cases; \
                  table.cases gives their indices in the full sweep.",
        example: "let t = sweep(#{ k: [1, 4, 9] }, |p| #{ worst_damping: 0.2 / p.k });\nplot(t.column(\"k\"), t.column(\"worst_damping\"))",
    },
];

crate::builtins! {
    /// runs f on every case of a parameter grid, in parallel on all cores
    ///
    /// grid: a map of parameter arrays — every combination, keys in sorted order, the last
    /// key varying fastest (#{ a: [1, 2], b: [10, 20] } gives (1,10), (1,20), (2,10),
    /// (2,20)); a value that is not an array is a fixed parameter — or an array of
    /// parameter maps (the cases as given, e.g. from random_cases).
    ///
    /// f: a function of one parameter map returning a map of results (another value v
    /// counts as #{ value: v }): a function name, Fn("name"), or a closure. Each worker
    /// runs f in its own engine with the functions defined so far; a closure's captured
    /// variables are copied into every case, so changing them inside f changes nothing
    /// outside. f cannot see other variables of the analysis: pass what it needs in the
    /// grid or capture it.
    ///
    /// Results: a Table (columns: parameters, then results; one row per case, in case
    /// order whatever the scheduling). A failing case is listed with its parameters and
    /// error (a warning names the first) and the rest still run.
    ///
    /// Text printed inside f goes to the case's log (table.logs), not the cell; record
    /// inside f has no effect. Limits (operations, call depth) apply per case. A progress
    /// bar appears on stderr for sweeps longer than half a second when stderr is a
    /// terminal.
    ///
    /// options: #{ parallel: true, threads: one per core, stop_on_error: false, progress:
    /// true } — stop_on_error makes the first failure (the lowest case index among the
    /// cases run) an error of the sweep.
    ///
    /// With `statebook run FILE --shard K/N` each sweep runs only the cases whose index i
    /// has i mod N = K − 1; see `statebook merge`.
    ///
    /// example:
    ///     fn plant_case(p) {
    ///       let sys = state_space([[0, 1], [-p.k, -p.c]], [[0], [1]], [[1, 0]], 0);
    ///       #{ worst_damping: min(modes(sys).map(|m| m.damping)) }
    ///     }
    ///     let t = sweep(#{ k: [1, 4, 9], c: [0.2, 0.4] }, plant_case);
    ///     t.column("worst_damping")
    #[family = "parameter studies"]
    fn sweep(call, grid: Dynamic, f: CaseFunction) -> Table {
        run_sweep(&call, &grid, f, &Map::new())
    }
    fn sweep(call, grid: Dynamic, f: CaseFunction, options: Map) -> Table {
        run_sweep(&call, &grid, f, &options)
    }

    /// seeded Monte Carlo cases: uniform [low, high] or normal #{ mean, std }
    ///
    /// spec: a map from parameter name to [low, high] (uniform), #{ mean, std } (normal) or
    /// a number (fixed). count: number of cases. seed: an integer.
    ///
    /// The same spec, count and seed give the same numbers on every run and machine
    /// (xoshiro256** seeded by SplitMix64; normal by the polar method; only IEEE basic
    /// operations, sqrt and a logarithm of our own). Each parameter has its own stream, so
    /// adding a parameter leaves the others' samples unchanged, and the first n cases of a
    /// larger count are the cases of count n.
    ///
    /// example:
    ///     let cases = random_cases(#{ k: [0.9, 1.1], m: #{ mean: 2.0, std: 0.05 } }, 500, 7);
    ///     cases[0]
    #[family = "parameter studies"]
    fn random_cases(call, spec: Map, count: usize, seed: Seed) -> Array as "array of maps" {
        random_cases(&call, &spec, count, seed.0)
    }

    /// one column of a sweep table, as an array in row order
    ///
    /// name: a parameter or result name (table.columns lists them). A failed case has () in
    /// its result columns; table.successes().column(name) leaves them out.
    ///
    /// example:
    ///     let t = sweep(#{ k: [1, 4, 9] }, |p| #{ worst_damping: 0.2 / p.k });
    ///     plot(t.column("k"), t.column("worst_damping"))
    #[family = "parameter studies"]
    fn column(call, &mut table: Table, name: String) -> Array {
        let j = column_of(table, &name, call.name)?;
        Ok(table.rows.iter().map(|r| r.values[j].clone()).collect())
    }

    /// one row of a sweep table, as a map of its columns
    ///
    /// i: the row index, from 0 (a sharded run's table holds only its slice; table.cases
    /// gives each row's index in the full sweep).
    ///
    /// example:
    ///     let t = sweep(#{ k: [1, 4, 9] }, |p| #{ worst_damping: 0.2 / p.k });
    ///     t.row(0).worst_damping
    #[family = "parameter studies"]
    fn row(call, &mut table: Table, i: usize) -> Map {
        table.row_map(i).ok_or_else(|| {
            call.fail(format_args!(
                "index {i} is out of range (the table has {} rows)",
                table.rows.len()
            ))
        })
    }

    /// the number of rows (cases) of a sweep table
    ///
    /// example:
    ///     let t = sweep(#{ k: [1, 4, 9] }, |p| #{ worst_damping: 0.2 / p.k });
    ///     t.len()
    #[family = "parameter studies"]
    fn len(call, &mut table: Table) -> INT {
        Ok(table.rows.len() as INT)
    }

    /// the failed cases, the successful ones, or the rows where f(row) is true
    ///
    /// f: a function of a row map returning true or false. Each returns a new Table with
    /// the same columns.
    ///
    /// example:
    ///     let t = sweep(#{ k: [1, 4, 9] }, |p| #{ worst_damping: 0.2 / p.k });
    ///     t.filter(|r| r.k > 2).len() + t.failures().len() + t.successes().len()
    #[family = "parameter studies"]
    fn failures(call, &mut table: Table) -> Table {
        Ok(table.retain(|r| r.error.is_some()))
    }
    fn successes(call, &mut table: Table) -> Table {
        Ok(table.retain(|r| r.error.is_none()))
    }
    fn filter(call, &mut table: Table, f: FnPtr) -> Table {
        let mut keep = Vec::with_capacity(table.rows.len());
        for i in 0..table.rows.len() {
            let row = Dynamic::from_map(table.row_map(i).unwrap_or_default());
            let v: Dynamic = f.call_within_context(call.ctx(), (row,))?;
            keep.push(v.as_bool().map_err(|_| {
                call.fail(format_args!(
                    "the function must return true or false, found {}",
                    type_name(&v)
                ))
            })?);
        }
        let mut k = keep.into_iter();
        Ok(table.retain(|_| k.next().unwrap_or(false)))
    }

    /// the row whose numeric column name is smallest (or largest)
    ///
    /// Failed cases and NaN values are skipped; ties go to the earliest row.
    ///
    /// example:
    ///     let t = sweep(#{ k: [1, 4, 9] }, |p| #{ worst_damping: 0.2 / p.k });
    ///     record("worst_case", t.row_with_smallest("worst_damping"));
    ///     t.row_with_largest("worst_damping").k
    #[family = "parameter studies"]
    fn row_with_smallest(call, &mut table: Table, name: String) -> Map {
        extreme_row(&call, table, &name, false)
    }
    fn row_with_largest(call, &mut table: Table, name: String) -> Map {
        extreme_row(&call, table, &name, true)
    }

    /// the distinct values of a column, in order of first appearance
    ///
    /// For a grid sweep these are the grid's levels of that parameter; () (a failed case)
    /// is left out.
    ///
    /// example:
    ///     let t = sweep(#{ k: [1, 4, 9] }, |p| #{ worst_damping: 0.2 / p.k });
    ///     for k in t.distinct_values("k") { print(k); }
    #[family = "parameter studies"]
    fn distinct_values(call, &mut table: Table, name: String) -> Array {
        let j = column_of(table, &name, call.name)?;
        let mut seen = std::collections::HashSet::new();
        let mut out = Array::new();
        for r in &table.rows {
            let v = &r.values[j];
            if v.is_unit() {
                continue;
            }
            let key = crate::script::json::encode(v).to_string();
            if seen.insert(key) {
                out.push(v.clone());
            }
        }
        Ok(out)
    }

    /// writes a sweep table as CSV (inside the analysis folder)
    ///
    /// A header line of column names, then one line per case; floats in their shortest
    /// exact form, () as an empty field, a case_error column when a case failed.
    /// record(name, table) and to_json(table) give an object of columns ({"k": [..],
    /// "worst_damping": [..]}, plus "case_error" when a case failed).
    ///
    /// example:
    ///     let t = sweep(#{ k: [1, 4, 9] }, |p| #{ worst_damping: 0.2 / p.k });
    ///     t.save_csv("tolerance-study.csv");
    #[family = "parameter studies"]
    fn save_csv(call, &mut table: Table, path: String) -> () {
        call.write_file(&path, table.to_csv().as_bytes())
    }
}

fn opt_bool(m: &Map, key: &str) -> Rr<Option<bool>> {
    match m.get(key) {
        None => Ok(None),
        Some(v) => v.as_bool().map(Some).map_err(|_| {
            fail(format!(
                "sweep: option {key} must be true or false, found {}",
                type_name(v)
            ))
        }),
    }
}

fn run_options(m: &Map) -> Rr<RunOptions> {
    const KNOWN: &[&str] = &["parallel", "threads", "stop_on_error", "progress"];
    for k in m.keys() {
        if !KNOWN.contains(&k.as_str()) {
            return Err(fail(format!(
                "sweep: unknown option '{k}' (known: {})",
                KNOWN.join(", ")
            )));
        }
    }
    let d = RunOptions::default();
    let threads = match m.get("threads") {
        None => None,
        Some(v) => {
            let n = to_count(v, "sweep", "option threads")?;
            if n == 0 {
                return Err(fail("sweep: option threads must be at least 1"));
            }
            Some(n.min(1024))
        }
    };
    Ok(RunOptions {
        parallel: opt_bool(m, "parallel")?.unwrap_or(d.parallel),
        threads,
        stop_on_error: opt_bool(m, "stop_on_error")?.unwrap_or(d.stop_on_error),
        progress: opt_bool(m, "progress")?.unwrap_or(d.progress),
    })
}

/// The function a sweep runs on each case: a closure, `Fn("name")` or a function name.
struct CaseFunction(FnPtr);

impl Param for CaseFunction {
    const KIND: &'static str = "function";
    fn from_arg(f: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        if let Some(p) = crate::script::convert::as_fnptr(&f) {
            return Ok(CaseFunction(p));
        }
        if f.is_string() {
            return FnPtr::new(f.to_string())
                .map(CaseFunction)
                .map_err(|e| call.fail(format_args!("{arg}: {e}")));
        }
        Err(call.fail(format_args!(
            "{arg} must be a function (a name, Fn(\"name\") or a closure), found {}",
            type_name(&f)
        )))
    }
}

/// The seed of `random_cases`: an integer (a float, even a whole one, is refused so that
/// a seed is never the result of arithmetic that may round).
struct Seed(INT);

impl Param for Seed {
    const KIND: &'static str = "int";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        v.as_int().map(Seed).map_err(|_| {
            call.fail(format_args!(
                "{arg} must be an integer, found {}",
                type_name(&v)
            ))
        })
    }
}

fn run_sweep(call: &Call, grid: &Dynamic, f: CaseFunction, opts: &Map) -> Rr<Table> {
    let Some(st) = state::of(call.ctx()) else {
        return Err(call.fail("no session"));
    };
    let opts = run_options(opts)?;
    sweep::sweep(&st, grid, f.0, &opts)
}

fn distribution(name: &str, v: &Dynamic) -> Rr<Option<Distribution>> {
    let what = format!("spec.{name}");
    if let Some(a) = v.read_lock::<Array>() {
        if a.len() != 2 {
            return Err(fail(format!(
                "random_cases: {what} must be [low, high], found an array of {}",
                a.len()
            )));
        }
        let low = to_f64(&a[0], "random_cases", &format!("{what}[0]"))?;
        let high = to_f64(&a[1], "random_cases", &format!("{what}[1]"))?;
        return Ok(Some(Distribution::Uniform { low, high }));
    }
    if let Some(m) = v.read_lock::<Map>() {
        for k in m.keys() {
            if k != "mean" && k != "std" {
                return Err(fail(format!(
                    "random_cases: {what} has '{k}'; a normal parameter is #{{ mean, std }}"
                )));
            }
        }
        let get = |k: &str| -> Rr<f64> {
            let x = m.get(k).ok_or_else(|| {
                fail(format!(
                    "random_cases: {what} needs '{k}' (a normal parameter is #{{ mean, std }})"
                ))
            })?;
            to_f64(x, "random_cases", &format!("{what}.{k}"))
        };
        return Ok(Some(Distribution::Normal {
            mean: get("mean")?,
            std: get("std")?,
        }));
    }
    if v.is::<INT>() || v.is::<FLOAT>() {
        return Ok(None);
    }
    Err(fail(format!(
        "random_cases: {what} must be [low, high], #{{ mean, std }} or a number, found {}",
        type_name(v)
    )))
}

fn random_cases(call: &Call, spec: &Map, count: usize, seed: INT) -> Rr<Array> {
    let limit = state::of(call.ctx())
        .map(|s| s.limits.array_size)
        .unwrap_or(usize::MAX);
    if count > limit {
        return Err(call.fail(format_args!(
            "{count} cases exceed the array-size limit {limit}"
        )));
    }
    let mut columns: Vec<(String, Vec<Dynamic>)> = Vec::new();
    for (name, v) in spec.iter() {
        let values = match distribution(name, v)? {
            Some(d) => sampling::sample(d, name, count, seed as u64)
                .map_err(call.num())?
                .into_iter()
                .map(Dynamic::from_float)
                .collect(),
            None => vec![v.clone(); count],
        };
        columns.push((name.to_string(), values));
    }
    Ok((0..count)
        .map(|i| {
            let mut m = Map::new();
            for (name, values) in &columns {
                m.insert(name.as_str().into(), values[i].clone());
            }
            Dynamic::from_map(m)
        })
        .collect())
}

fn column_of(t: &Table, name: &str, fname: &str) -> Rr<usize> {
    t.position(name).ok_or_else(|| {
        fail(format!(
            "{fname}: the table has no column '{name}' (columns: {})",
            t.columns().join(", ")
        ))
    })
}

fn extreme_row(call: &Call, t: &Table, name: &str, largest: bool) -> Rr<Map> {
    let fname = call.name;
    let j = column_of(t, name, fname)?;
    let mut best: Option<(usize, f64)> = None;
    for (i, r) in t.rows.iter().enumerate() {
        if r.error.is_some() {
            continue;
        }
        let v = &r.values[j];
        let Ok(x) = to_f64(v, fname, "value") else {
            continue;
        };
        if x.is_nan() {
            continue;
        }
        let better = match best {
            None => true,
            Some((_, b)) => (largest && x > b) || (!largest && x < b),
        };
        if better {
            best = Some((i, x));
        }
    }
    let Some((i, _)) = best else {
        return Err(fail(format!(
            "{fname}: column '{name}' has no numeric value in a successful case"
        )));
    };
    t.row_map(i)
        .ok_or_else(|| fail(format!("{fname}: no row {i}")))
}

fn names(v: &[String]) -> Array {
    v.iter().map(|s| Dynamic::from(s.clone())).collect()
}

/// Registers the properties of a `Table` (documented on its page in `DOCS`); its methods,
/// `sweep` and `random_cases` are declared in `BUILTINS`.
pub fn register(engine: &mut Engine) {
    engine.register_get("rows", |t: &mut Table| -> Array {
        (0..t.rows.len())
            .filter_map(|i| t.row_map(i).map(Dynamic::from_map))
            .collect()
    });
    engine.register_get("columns", |t: &mut Table| names(&t.columns()));
    engine.register_get("parameters", |t: &mut Table| names(&t.parameters));
    engine.register_get("results", |t: &mut Table| names(&t.results));
    engine.register_get("cases", |t: &mut Table| -> Array {
        t.rows
            .iter()
            .map(|r| Dynamic::from_int(r.case as INT))
            .collect()
    });
    engine.register_get("errors", |t: &mut Table| -> Array {
        t.rows
            .iter()
            .map(|r| r.error.clone().map(Dynamic::from).unwrap_or(Dynamic::UNIT))
            .collect()
    });
    engine.register_get("logs", |t: &mut Table| -> Array {
        t.rows
            .iter()
            .map(|r| Dynamic::from(r.log.clone()))
            .collect()
    });
    engine.register_get("failure_count", |t: &mut Table| t.failure_count() as INT);
}
