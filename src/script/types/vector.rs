//! `Vector`: a list of real numbers held as one block of f64, for signals and grids.

use std::sync::Arc;

/// A list of reals as scripts see it: what `linear_grid`, `log_grid`, a response's `.t`
/// and frequency grids return. It behaves like an array of floats (indexing, `len`,
/// iteration, `map`, `filter`, `push`) but is one shared block of numbers: copying it (a
/// variable read, an argument to a built-in) copies a pointer, a built-in reads its numbers
/// without converting each one, and a change (`v[i] = x`, `v.push(x)`) copies the block
/// first only if another value still holds it.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Vector(pub Arc<Vec<f64>>);

impl Vector {
    /// The numbers, for a change: unshared first if another value holds them.
    pub fn make_mut(&mut self) -> &mut Vec<f64> {
        Arc::make_mut(&mut self.0)
    }

    /// The numbers.
    pub fn as_slice(&self) -> &[f64] {
        &self.0
    }
}

impl From<Vec<f64>> for Vector {
    fn from(v: Vec<f64>) -> Self {
        Vector(Arc::new(v))
    }
}

/// Iterates the numbers by value (`for x in v`); holds the block, not a copy.
pub struct Values {
    data: Arc<Vec<f64>>,
    next: usize,
}

impl Iterator for Values {
    type Item = f64;
    fn next(&mut self) -> Option<f64> {
        let x = self.data.get(self.next).copied();
        self.next += 1;
        x
    }
}

impl IntoIterator for Vector {
    type Item = f64;
    type IntoIter = Values;
    fn into_iter(self) -> Values {
        Values {
            data: self.0,
            next: 0,
        }
    }
}

impl super::ValueType for Vector {
    const NAME: &'static str = "Vector";
    fn show(&self, style: crate::display::Style) -> String {
        crate::display::real_list(&self.0, style)
    }
    fn json(&self) -> serde_json::Value {
        serde_json::Value::Array(
            self.0
                .iter()
                .map(|&x| crate::script::json::float(x))
                .collect(),
        )
    }
}
