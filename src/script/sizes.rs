//! Size limits of strings, arrays and BLOBs checked where they grow, in O(1).
//!
//! The engine's own size limits are one switch with a walk over the whole value after
//! every change to it (quadratic growth: 300 000 `push`es took 24 s, and 200 000 levels
//! of `a = [a]` did not finish). They are off; the session-wide memory budget
//! (`crate::budget`, checked after every operation) bounds the total, and these
//! replacements keep a per-value limit where a value grows: a string's length in bytes
//! (`--max-string-size`) on `+`, `+=`, `append`, `pad` and `replace`, and the top-level length of an
//! array or BLOB (`--max-array-size`) on `push`, `+`, `+=`, `append`, `pad`, `blob`.
//! Each checks the size of the result before building it, so a doubling loop is refused
//! at the limit instead of after copying gigabytes.

use super::docs::Doc;
use rhai::{Array, Blob, Dynamic, Engine, EvalAltResult, ImmutableString, Position, INT};

type R<T> = Result<T, Box<EvalAltResult>>;

/// Help pages of the engine's own array and string functions that are registered again
/// here with size checks.
pub const DOCS: &[Doc] = &[
    Doc {
        name: "push",
        family: "lists and text",
        usage: "list.push(value)",
        summary: "appends one value to the end of an array",
        details: "The array may hold at most --max-array-size entries (checked before it grows).",
        example: "let poles_seen = [];\npoles_seen.push(-1.5);\npoles_seen.len()   // 1",
    },
    Doc {
        name: "append",
        family: "lists and text",
        usage: "list.append(other_list)\ntext.append(more_text)",
        summary: "appends every entry of another array (or more text to a string)",
        details: "Sizes are checked before growing: --max-array-size for arrays, \
                  --max-string-size (bytes) for strings. a += b does the same.",
        example: "let a = [1, 2];\na.append([3]);\na   // [1, 2, 3]",
    },
    Doc {
        name: "pad",
        family: "lists and text",
        usage: "list.pad(length, value)\ntext.pad(length, character_or_text)",
        summary: "extends an array (or a string) to a length by repeating a value",
        details: "Nothing happens when it is already that long. Sizes are checked before \
                  growing (--max-array-size, --max-string-size).",
        example: "let gains = [1.0];\ngains.pad(3, 0.0);\ngains   // [1.0, 0.0, 0.0]",
    },
    Doc {
        name: "blob",
        family: "lists and text",
        usage: "blob(length) → BLOB\nblob(length, byte) → BLOB",
        summary: "a byte buffer of a given length (filled with zeros or a byte value)",
        details: "length is checked against --max-array-size before anything is allocated.",
        example: "blob(4).len()   // 4",
    },
    Doc {
        name: "replace",
        family: "lists and text",
        usage: "text.replace(find, substitute)",
        summary: "replaces every occurrence of some text (or a character) in a string, in place",
        details: "find and substitute: strings or single characters. The length of the \
                  result is checked against --max-string-size (bytes) before it is built.",
        example: "let unit = \"rad/s\";\nunit.replace(\"rad\", \"deg\");\nunit   // \"deg/s\"",
    },
];

fn too_large(what: &str) -> Box<EvalAltResult> {
    EvalAltResult::ErrorDataTooLarge(what.to_string(), Position::NONE).into()
}

fn fits(what: &str, len: Option<usize>, limit: usize) -> R<()> {
    match len {
        Some(n) if limit == 0 || n <= limit => Ok(()),
        _ => Err(too_large(what)),
    }
}

const STR: &str = "Length of string";
const ARR: &str = "Size of array";
const BLOB: &str = "Size of BLOB";

/// Registers the checked versions (registered functions take precedence over the
/// engine's built-in operators, as `set_fast_operators(false)` is set).
pub fn register(e: &mut Engine, string_size: usize, array_size: usize) {
    let sl = string_size;
    e.register_fn(
        "+",
        move |a: ImmutableString, b: ImmutableString| -> R<ImmutableString> {
            fits(STR, a.len().checked_add(b.len()), sl)?;
            Ok(a + b)
        },
    );
    e.register_fn(
        "+",
        move |a: ImmutableString, c: char| -> R<ImmutableString> {
            fits(STR, a.len().checked_add(c.len_utf8()), sl)?;
            Ok(a + c)
        },
    );
    e.register_fn(
        "+",
        move |c: char, a: ImmutableString| -> R<ImmutableString> {
            fits(STR, a.len().checked_add(c.len_utf8()), sl)?;
            let mut s = String::with_capacity(a.len() + c.len_utf8());
            s.push(c);
            s.push_str(&a);
            Ok(s.into())
        },
    );
    for name in ["+=", "append"] {
        e.register_fn(
            name,
            move |a: &mut ImmutableString, b: ImmutableString| -> R<()> {
                fits(STR, a.len().checked_add(b.len()), sl)?;
                *a += b;
                Ok(())
            },
        );
        e.register_fn(name, move |a: &mut ImmutableString, c: char| -> R<()> {
            fits(STR, a.len().checked_add(c.len_utf8()), sl)?;
            a.make_mut().push(c);
            Ok(())
        });
    }
    // `replace`: the result's length is known before it is built (non-overlapping matches,
    // as `str::replace` counts them; an empty pattern matches before every character and
    // at the end).
    fn replaced_len(s: &str, find: &str, sub: &str) -> Option<usize> {
        let count = if find.is_empty() {
            s.chars().count() + 1
        } else {
            s.matches(find).count()
        };
        let removed = count.checked_mul(find.len())?;
        s.len()
            .checked_sub(removed)?
            .checked_add(count.checked_mul(sub.len())?)
    }
    let replace = move |s: &mut ImmutableString, find: &str, sub: &str| -> R<()> {
        if s.is_empty() {
            return Ok(());
        }
        fits(STR, replaced_len(s, find, sub), sl)?;
        *s = s.replace(find, sub).into();
        Ok(())
    };
    e.register_fn(
        "replace",
        move |s: &mut ImmutableString, find: ImmutableString, sub: ImmutableString| {
            replace(s, &find, &sub)
        },
    );
    e.register_fn(
        "replace",
        move |s: &mut ImmutableString, find: ImmutableString, sub: char| {
            replace(s, &find, &sub.to_string())
        },
    );
    e.register_fn(
        "replace",
        move |s: &mut ImmutableString, find: char, sub: ImmutableString| {
            replace(s, &find.to_string(), &sub)
        },
    );
    e.register_fn(
        "replace",
        move |s: &mut ImmutableString, find: char, sub: char| {
            replace(s, &find.to_string(), &sub.to_string())
        },
    );
    e.register_fn(
        "pad",
        move |s: &mut ImmutableString, len: INT, c: char| -> R<()> {
            let Ok(len) = usize::try_from(len) else {
                return Ok(());
            };
            let have = s.chars().count();
            if len <= have {
                return Ok(());
            }
            let add = len - have;
            fits(
                STR,
                add.checked_mul(c.len_utf8())
                    .and_then(|b| b.checked_add(s.len())),
                sl,
            )?;
            let p = s.make_mut();
            p.extend(std::iter::repeat_n(c, add));
            Ok(())
        },
    );
    e.register_fn(
        "pad",
        move |s: &mut ImmutableString, len: INT, padding: ImmutableString| -> R<()> {
            let Ok(len) = usize::try_from(len) else {
                return Ok(());
            };
            let have = s.chars().count();
            let unit = padding.chars().count();
            if len <= have || unit == 0 {
                return Ok(());
            }
            // At most `len - have` characters of at most 4 bytes each.
            let widest = padding.chars().map(char::len_utf8).max().unwrap_or(1);
            fits(
                STR,
                (len - have)
                    .checked_mul(widest)
                    .and_then(|b| b.checked_add(s.len())),
                sl,
            )?;
            let p = s.make_mut();
            p.extend(padding.chars().cycle().take(len - have));
            Ok(())
        },
    );

    let al = array_size;
    e.register_fn("push", move |a: &mut Array, x: Dynamic| -> R<()> {
        fits(ARR, a.len().checked_add(1), al)?;
        a.push(x);
        Ok(())
    });
    e.register_fn("+", move |mut a: Array, b: Array| -> R<Array> {
        fits(ARR, a.len().checked_add(b.len()), al)?;
        a.extend(b);
        Ok(a)
    });
    for name in ["+=", "append"] {
        e.register_fn(name, move |a: &mut Array, b: Array| -> R<()> {
            fits(ARR, a.len().checked_add(b.len()), al)?;
            a.extend(b);
            Ok(())
        });
    }
    e.register_fn("pad", move |a: &mut Array, len: INT, x: Dynamic| -> R<()> {
        let Ok(len) = usize::try_from(len) else {
            return Ok(());
        };
        if len <= a.len() {
            return Ok(());
        }
        fits(ARR, Some(len), al)?;
        reserve(len - a.len(), std::mem::size_of::<Dynamic>())?;
        a.resize(len, x);
        Ok(())
    });
    let blob = move |len: INT, value: INT| -> R<Blob> {
        let len = usize::try_from(len).unwrap_or(0);
        fits(BLOB, Some(len), al)?;
        reserve(len, 1)?;
        Ok(vec![(value & 0xff) as u8; len])
    };
    e.register_fn("blob", move |len: INT| blob(len, 0));
    e.register_fn("blob", blob);
    e.register_fn("pad", move |b: &mut Blob, len: INT, value: INT| -> R<()> {
        let len = usize::try_from(len).unwrap_or(0);
        if len <= b.len() {
            return Ok(());
        }
        fits(BLOB, Some(len), al)?;
        reserve(len - b.len(), 1)?;
        b.resize(len, (value & 0xff) as u8);
        Ok(())
    });
}

/// Refuses `n` elements of `size` bytes the memory budget has no room for.
fn reserve(n: usize, size: usize) -> R<()> {
    crate::budget::reserve("", n.saturating_mul(size)).map_err(|m| super::convert::fail(&m))
}
