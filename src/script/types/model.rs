//! `System`, `TransferFunction`, `Response` and `Figure` as scripts see them.

use crate::numeric::lti::system::StateSpace;
use crate::numeric::lti::tf::TransferFunction as Tf;

/// A state-space model, as scripts see it.
#[derive(Debug, Clone, PartialEq)]
pub struct System(pub StateSpace);

/// A transfer function, as scripts see it.
#[derive(Debug, Clone, PartialEq)]
pub struct TransferFunction(pub Tf);

/// A figure, as scripts see it.
#[derive(Debug, Clone, PartialEq)]
pub struct Figure(pub crate::plot::Figure);

use crate::display::Style;
use crate::script::json::{float, matrix};
use serde_json::{json, Value};

fn list(c: &[f64]) -> Value {
    Value::Array(c.iter().map(|&x| float(x)).collect())
}

impl super::ValueType for System {
    const NAME: &'static str = "System";
    fn show(&self, style: Style) -> String {
        let s = &self.0;
        crate::display::system(
            &s.a,
            &s.b,
            &s.c,
            &s.d,
            s.dt,
            [&s.names.inputs, &s.names.outputs, &s.names.states],
            style,
        )
    }
    fn json(&self) -> Value {
        let s = &self.0;
        json!({
            "A": matrix(&s.a), "B": matrix(&s.b), "C": matrix(&s.c), "D": matrix(&s.d),
            "dt": float(s.dt),
        })
    }
}

impl super::ValueType for TransferFunction {
    const NAME: &'static str = "TransferFunction";
    fn show(&self, style: Style) -> String {
        crate::display::transfer_function(&self.0.num, &self.0.den, self.0.dt, style)
    }
    fn json(&self) -> Value {
        json!({ "num": list(&self.0.num), "den": list(&self.0.den), "dt": float(self.0.dt) })
    }
}

impl super::ValueType for Figure {
    const NAME: &'static str = "Figure";
    fn show(&self, _: Style) -> String {
        crate::script::builtins::plot::describe(self)
    }
    /// The data the figure draws: its title and, per panel, the axis labels and each
    /// series' label and points.
    fn json(&self) -> Value {
        let f = &self.0;
        let panels: Vec<Value> = f
            .panels
            .iter()
            .map(|p| {
                let series: Vec<Value> = p
                    .series
                    .iter()
                    .map(|s| json!({ "label": s.label, "x": list(&s.x), "y": list(&s.y) }))
                    .collect();
                json!({ "x_label": p.x_label, "y_label": p.y_label, "series": series })
            })
            .collect();
        json!({ "title": f.title, "panels": panels })
    }
}
