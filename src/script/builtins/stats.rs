//! Statistics on lists of numbers: `min`, `max`, `sum`, `mean`, `median`, `std_dev`,
//! `percentile` (arrays of numbers, or matrices: all entries).

use crate::numeric::stats;
use crate::script::convert::{num, to_f64, to_f64_vec, Rr};
use crate::script::docs::Doc;
use crate::script::types::Matrix;
use rhai::{Array, Dynamic, Engine, FLOAT};

/// Help entries of this file.
pub const DOCS: &[Doc] = &[
    Doc {
        name: "min",
        family: "numbers",
        usage: "min(x) → float\nmin(a, b) → number",
        summary: "the smallest of a list of numbers (or of two numbers)",
        details: "x: an array of numbers or a Matrix (all entries). A NaN entry is an error \
                  naming its index, never skipped.",
        example: "min([3, -1.5, 2])   // -1.5",
    },
    Doc {
        name: "max",
        family: "numbers",
        usage: "max(x) → float\nmax(a, b) → number",
        summary: "the largest of a list of numbers (or of two numbers)",
        details: "x: an array of numbers or a Matrix (all entries). A NaN entry is an error.",
        example: "max(modes(state_space([[0, 1], [-4, -0.4]], [[0], [1]], [[1, 0]], 0))\
                  .map(|m| m.damping))",
    },
    Doc {
        name: "sum",
        family: "numbers",
        usage: "sum(x) → float",
        summary: "the sum of a list of numbers (compensated: no error growth with length)",
        details: "x: an array of numbers or a Matrix (all entries).",
        example: "sum([0.1, 0.2, 0.3])",
    },
    Doc {
        name: "mean",
        family: "numbers",
        usage: "mean(x) → float",
        summary: "the arithmetic mean of a list of numbers",
        details: "x: an array of numbers or a Matrix (all entries).",
        example: "mean([1, 2, 3, 4])   // 2.5",
    },
    Doc {
        name: "median",
        family: "numbers",
        usage: "median(x) → float",
        summary: "the middle value of a list of numbers (mean of the two middle ones)",
        details: "x: an array of numbers or a Matrix (all entries).",
        example: "median([5, 1, 4, 2])   // 3",
    },
    Doc {
        name: "std_dev",
        family: "numbers",
        usage: "std_dev(x) → float",
        summary: "the sample standard deviation (divides by n − 1; needs two numbers or more)",
        details: "x: an array of numbers or a Matrix (all entries).",
        example: "std_dev([1, 2, 3, 4])   // 1.29099…",
    },
    Doc {
        name: "percentile",
        family: "numbers",
        usage: "percentile(x, p) → float",
        summary: "the p-th percentile (p from 0 to 100), interpolated between sorted values",
        details: "x: an array of numbers or a Matrix (all entries). Position (n − 1)·p/100 \
                  in the sorted list, linear between neighbours (Hyndman & Fan 1996, \
                  definition 7); percentile(x, 50) is the median.",
        example: "percentile([1, 2, 3, 4], 25)   // 1.75",
    },
];

/// The numbers of `v`: an array of ints/floats, or every entry of a Matrix.
fn numbers(v: &Dynamic, fname: &str) -> Rr<Vec<f64>> {
    // Statistics of a whole matrix are of all its entries; anything else is a list.
    if let Some(m) = v.read_lock::<Matrix>() {
        return Ok(m.0.iter().copied().collect());
    }
    to_f64_vec(v, fname, "x")
}

/// Registers the statistics built-ins.
pub fn register(engine: &mut Engine) {
    macro_rules! one {
        ($($name:literal => $f:path),* $(,)?) => {$(
            engine.register_fn($name, |x: Array| -> Rr<FLOAT> {
                $f(&numbers(&Dynamic::from_array(x), $name)?).map_err(num($name))
            });
            engine.register_fn($name, |x: Matrix| -> Rr<FLOAT> {
                $f(&numbers(&Dynamic::from(x), $name)?).map_err(num($name))
            });
        )*};
    }
    one!(
        "min" => stats::min, "max" => stats::max, "sum" => stats::sum,
        "mean" => stats::mean, "median" => stats::median, "std_dev" => stats::std_dev,
    );
    engine.register_fn("percentile", |x: Dynamic, p: Dynamic| -> Rr<FLOAT> {
        let p = to_f64(&p, "percentile", "p")?;
        stats::percentile(&numbers(&x, "percentile")?, p).map_err(num("percentile"))
    });
}
