//! Statistics on lists of numbers: `min`, `max`, `sum`, `mean`, `median`, `std_dev`,
//! `percentile` (arrays of numbers, or matrices: all entries).

use crate::numeric::stats;
use crate::script::convert::{to_f64_vec, Rr};
use crate::script::declare::{Call, Param};
use crate::script::types::Matrix;
use rhai::{Dynamic, FLOAT};

/// The numbers of a list: an array of ints/floats, or every entry of a Matrix.
struct Sample(Vec<f64>);

impl Param for Sample {
    const KIND: &'static str = "[number] | Matrix";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        // Statistics of a whole matrix are of all its entries; anything else is a list.
        if let Some(m) = v.read_lock::<Matrix>() {
            return Ok(Sample(m.0.iter().copied().collect()));
        }
        to_f64_vec(&v, call.name, arg).map(Sample)
    }
}

crate::builtins! {
    /// the smallest of a list of numbers (or of two numbers)
    ///
    /// x: an array of numbers or a Matrix (all entries). A NaN entry is an error naming
    /// its index, never skipped. Of two ints the result is an int.
    ///
    /// example:
    ///     min([3, -1.5, 2])   // -1.5
    #[family = "numbers"]
    fn min(call, x: Sample) -> FLOAT {
        stats::min(&x.0).map_err(call.num())
    }
    fn min(call, a: FLOAT, b: FLOAT) -> FLOAT as "number" {
        Ok(a.min(b))
    }

    /// the largest of a list of numbers (or of two numbers)
    ///
    /// x: an array of numbers or a Matrix (all entries). A NaN entry is an error. Of two
    /// ints the result is an int.
    ///
    /// example:
    ///     max(modes(state_space([[0, 1], [-4, -0.4]], [[0], [1]], [[1, 0]], 0)).map(|m| m.damping))
    #[family = "numbers"]
    fn max(call, x: Sample) -> FLOAT {
        stats::max(&x.0).map_err(call.num())
    }
    fn max(call, a: FLOAT, b: FLOAT) -> FLOAT as "number" {
        Ok(a.max(b))
    }

    /// the sum of a list of numbers (compensated: no error growth with length)
    ///
    /// x: an array of numbers or a Matrix (all entries).
    ///
    /// example:
    ///     sum([0.1, 0.2, 0.3])
    #[family = "numbers"]
    fn sum(call, x: Sample) -> FLOAT {
        stats::sum(&x.0).map_err(call.num())
    }

    /// the arithmetic mean of a list of numbers
    ///
    /// x: an array of numbers or a Matrix (all entries).
    ///
    /// example:
    ///     mean([1, 2, 3, 4])   // 2.5
    #[family = "numbers"]
    fn mean(call, x: Sample) -> FLOAT {
        stats::mean(&x.0).map_err(call.num())
    }

    /// the middle value of a list of numbers (mean of the two middle ones)
    ///
    /// x: an array of numbers or a Matrix (all entries).
    ///
    /// example:
    ///     median([5, 1, 4, 2])   // 3
    #[family = "numbers"]
    fn median(call, x: Sample) -> FLOAT {
        stats::median(&x.0).map_err(call.num())
    }

    /// the sample standard deviation (divides by n − 1; needs two numbers or more)
    ///
    /// x: an array of numbers or a Matrix (all entries).
    ///
    /// example:
    ///     std_dev([1, 2, 3, 4])   // 1.29099…
    #[family = "numbers"]
    fn std_dev(call, x: Sample) -> FLOAT {
        stats::std_dev(&x.0).map_err(call.num())
    }

    /// the p-th percentile (p from 0 to 100), interpolated between sorted values
    ///
    /// x: an array of numbers or a Matrix (all entries). Position (n − 1)·p/100 in the
    /// sorted list, linear between neighbours (Hyndman & Fan 1996, definition 7);
    /// percentile(x, 50) is the median.
    ///
    /// example:
    ///     percentile([1, 2, 3, 4], 25)   // 1.75
    #[family = "numbers"]
    fn percentile(call, x: Sample, p: FLOAT) -> FLOAT {
        stats::percentile(&x.0, p).map_err(call.num())
    }
}
