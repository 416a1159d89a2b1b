//! `Response`: a time response as scripts see it.

use crate::numeric::time::simulate::Response as Data;
use nalgebra::DMatrix;
use std::sync::Arc;

/// The samples of a response, shared: reading `.t` or `.y` hands out the same numbers
/// without a copy.
#[derive(Debug, Clone, PartialEq)]
pub struct Samples {
    /// Sample times in seconds.
    pub t: Arc<Vec<f64>>,
    /// Outputs, N×p.
    pub y: Arc<DMatrix<f64>>,
    /// States, N×n; `None` when not kept.
    pub x: Option<Arc<DMatrix<f64>>>,
    /// Inputs, N×m.
    pub u: Arc<DMatrix<f64>>,
}

impl From<Data> for Samples {
    fn from(d: Data) -> Self {
        Samples {
            t: Arc::new(d.t),
            y: Arc::new(d.y),
            x: d.x.map(Arc::new),
            u: Arc::new(d.u),
        }
    }
}

/// A time response (`.t`, `.y`, `.x`, `.u`, one row per sample) with the names that plots
/// and displays use.
#[derive(Debug, Clone, PartialEq)]
pub struct Response {
    /// The samples.
    pub data: Samples,
    /// What produced it, in words ("step response", "simulation", "ODE solution" …).
    pub kind: String,
    /// Names of the outputs (empty: unnamed).
    pub outputs: Vec<String>,
    /// Legend text when several responses are overlaid (e.g. the input of a step).
    pub label: Option<String>,
    /// Sample time of a discrete model's response; 0 for a continuous one.
    pub dt: f64,
}

impl Response {
    /// One line describing the response.
    pub fn summary(&self) -> String {
        let d = &self.data;
        let n = d.t.len();
        let span = match (d.t.first(), d.t.last()) {
            (Some(a), Some(b)) => format!(" over {} – {} s", short(*a), short(*b)),
            _ => String::new(),
        };
        let plural = |k: usize, w: &str| format!("{k} {w}{}", if k == 1 { "" } else { "s" });
        let states = match &d.x {
            Some(x) => plural(x.ncols(), "state"),
            None => "states not kept".into(),
        };
        let domain = if self.dt > 0.0 {
            format!(" · discrete (dt = {} s)", short(self.dt))
        } else {
            String::new()
        };
        format!(
            "{}{} · {}{span} · {}, {}, {}{domain}",
            self.kind,
            self.label
                .as_ref()
                .map(|l| format!(" “{l}”"))
                .unwrap_or_default(),
            plural(n, "sample"),
            plural(d.y.ncols(), "output"),
            plural(d.u.ncols(), "input"),
            states,
        )
    }
}

/// A number with at most 6 significant digits, shortest form.
fn short(x: f64) -> String {
    let r: f64 = format!("{x:.5e}").parse().unwrap_or(x);
    format!("{r}")
}

impl super::ValueType for Response {
    const NAME: &'static str = "Response";
    fn show(&self, _: crate::display::Style) -> String {
        self.summary()
    }
    fn json(&self) -> serde_json::Value {
        crate::script::builtins::time::response_json(self)
    }
}
