//! The case list of a sweep: a full-factorial grid from a map of parameter arrays, or the
//! given cases from an array of parameter maps.

use super::log::ERROR_COLUMN;
use crate::script::convert::{fail, type_name, Rr};
use rhai::{Array, Dynamic, Map};

/// Parameter names (column order) and each case's values in that order.
#[derive(Debug, Clone)]
pub struct Cases {
    /// Parameter names.
    pub names: Vec<String>,
    /// One row of values per case, in case order.
    pub values: Vec<Vec<Dynamic>>,
}

impl Cases {
    /// Case `i` as the parameter map passed to the case function.
    pub fn map(&self, i: usize) -> Map {
        let mut m = Map::new();
        for (name, v) in self.names.iter().zip(&self.values[i]) {
            m.insert(name.as_str().into(), v.clone());
        }
        m
    }
}

fn check_name(name: &str) -> Rr<()> {
    if name == ERROR_COLUMN {
        return Err(fail(format!(
            "sweep: '{ERROR_COLUMN}' is reserved for the error column; rename the parameter"
        )));
    }
    Ok(())
}

/// Expands `grid`:
/// - a map `#{ a: [..], b: [..] }`: every combination; keys in sorted order, the **last key
///   varies fastest** (`#{ a: [1, 2], b: [10, 20] }` gives (1,10), (1,20), (2,10), (2,20));
///   a value that is not an array is a fixed parameter (one level); to sweep over arrays,
///   wrap them: `#{ x0: [[0, 1], [1, 0]] }`;
/// - an array of maps: the cases as given, in order; every map must have the same keys.
///
/// At most `max_cases` cases.
pub fn expand(grid: &Dynamic, max_cases: usize) -> Rr<Cases> {
    if let Some(m) = grid.read_lock::<Map>() {
        return factorial(&m, max_cases);
    }
    if let Some(a) = grid.read_lock::<Array>() {
        return given(&a, max_cases);
    }
    Err(fail(format!(
        "sweep: grid must be a map of parameter arrays or an array of parameter maps, found {}",
        type_name(grid)
    )))
}

fn factorial(m: &Map, max_cases: usize) -> Rr<Cases> {
    if m.is_empty() {
        return Err(fail("sweep: the grid has no parameters"));
    }
    let mut names = Vec::new();
    let mut levels: Vec<Vec<Dynamic>> = Vec::new();
    let mut total: usize = 1;
    for (k, v) in m.iter() {
        check_name(k)?;
        let lv: Vec<Dynamic> = if let Some(a) = v.read_lock::<Array>() {
            a.iter().map(Dynamic::flatten_clone).collect()
        } else if let Some(x) = v.read_lock::<crate::script::types::Vector>() {
            x.0.iter().map(|&x| Dynamic::from_float(x)).collect()
        } else {
            vec![v.flatten_clone()]
        };
        if lv.is_empty() {
            return Err(fail(format!("sweep: grid parameter '{k}' has no values")));
        }
        total = total
            .checked_mul(lv.len())
            .filter(|&t| t <= max_cases)
            .ok_or_else(|| {
                fail(format!(
                "sweep: the grid has more than {max_cases} cases (the array-size limit)\nhint: \
                 raise it with --max-array-size, or sweep fewer levels"
            ))
            })?;
        names.push(k.to_string());
        levels.push(lv);
    }
    // Each case holds its parameters here, then a result map, a log and a table row:
    // a few hundred bytes at the least. Refused before allocating when the memory budget
    // cannot hold that.
    let per_case = 256 + 64 * levels.len();
    crate::budget::reserve(
        &format!("sweep: a grid of {total} cases"),
        total.saturating_mul(per_case),
    )
    .map_err(fail)?;
    let mut values = Vec::with_capacity(total);
    let mut digit = vec![0usize; levels.len()];
    for _ in 0..total {
        values.push(
            digit
                .iter()
                .zip(&levels)
                .map(|(&d, l)| l[d].clone())
                .collect(),
        );
        // Mixed-radix counter, last position fastest.
        for p in (0..levels.len()).rev() {
            digit[p] += 1;
            if digit[p] < levels[p].len() {
                break;
            }
            digit[p] = 0;
        }
    }
    Ok(Cases { names, values })
}

fn given(a: &Array, max_cases: usize) -> Rr<Cases> {
    if a.len() > max_cases {
        return Err(fail(format!(
            "sweep: {} cases exceed the array-size limit {max_cases}",
            a.len()
        )));
    }
    let mut names: Option<Vec<String>> = None;
    let mut values = Vec::with_capacity(a.len());
    for (i, c) in a.iter().enumerate() {
        let Some(m) = c.read_lock::<Map>() else {
            return Err(fail(format!(
                "sweep: case {i} must be a map of parameters, found {}",
                type_name(c)
            )));
        };
        let keys: Vec<String> = m.keys().map(|k| k.to_string()).collect();
        match &names {
            None => {
                for k in &keys {
                    check_name(k)?;
                }
                names = Some(keys);
            }
            Some(n) if *n != keys => {
                return Err(fail(format!(
                    "sweep: case {i} has parameters [{}], but case 0 has [{}]",
                    keys.join(", "),
                    n.join(", ")
                )));
            }
            Some(_) => {}
        }
        values.push(m.values().map(Dynamic::flatten_clone).collect());
    }
    Ok(Cases {
        names: names.unwrap_or_default(),
        values,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ints(v: &[i64]) -> Dynamic {
        Dynamic::from_array(v.iter().map(|&x| Dynamic::from_int(x)).collect())
    }

    #[test]
    fn last_key_varies_fastest() {
        let mut m = Map::new();
        m.insert("b".into(), ints(&[10, 20, 30]));
        m.insert("a".into(), ints(&[1, 2]));
        m.insert("fixed".into(), Dynamic::from_float(0.5));
        let c = expand(&Dynamic::from_map(m), 100).unwrap();
        assert_eq!(c.names, ["a", "b", "fixed"]);
        let flat: Vec<(i64, i64)> = c
            .values
            .iter()
            .map(|r| (r[0].as_int().unwrap(), r[1].as_int().unwrap()))
            .collect();
        assert_eq!(flat, [(1, 10), (1, 20), (1, 30), (2, 10), (2, 20), (2, 30)]);
    }

    #[test]
    fn limits_and_shapes() {
        let mut m = Map::new();
        m.insert("a".into(), ints(&[1, 2, 3]));
        m.insert("b".into(), ints(&[1, 2, 3]));
        assert!(expand(&Dynamic::from_map(m.clone()), 8).is_err());
        assert!(expand(&Dynamic::from_map(m), 9).is_ok());
        let mut e = Map::new();
        e.insert("a".into(), ints(&[]));
        assert!(expand(&Dynamic::from_map(e), 9).is_err());
        assert!(expand(&Dynamic::from_int(3), 9).is_err());
        let mut c0 = Map::new();
        c0.insert("a".into(), Dynamic::from_int(1));
        let mut c1 = Map::new();
        c1.insert("b".into(), Dynamic::from_int(1));
        let given = Dynamic::from_array(vec![Dynamic::from_map(c0), Dynamic::from_map(c1)]);
        assert!(expand(&given, 9).is_err());
    }
}
