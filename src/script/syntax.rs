//! Engineer-friendly syntax on top of the engine's tokenizer.
//!
//! - `^` is a power, with the precedence and right associativity of a power
//!   (`1 + k ^ 2` is `1 + (k ^ 2)`, `2 ^ 3 ^ 2` is `2 ^ 9`): the tokenizer's `^` (bitwise
//!   exclusive or, which binds more loosely than every other operator) is mapped to the
//!   power token before parsing, and `^=` to `**=`. Registering `^` as a function would
//!   have kept the exclusive-or precedence and made `1 + k ^ 2` mean `(1 + k) ^ 2`.
//! - A minus sign in front of a power is refused as ambiguous. The engine binds a unary
//!   minus tighter than any binary operator, so `-x ^ 2` would mean `(-x) ^ 2`, while an
//!   engineer reads −x². The error asks for `-(x ^ 2)` or `(-x) ^ 2`.

use rhai::{Engine, LexError, Token};
use std::cell::Cell;

/// How far the tokenizer is into an operand that began with a unary minus.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Negated {
    /// Not inside such an operand.
    No,
    /// Inside one, `depth` brackets deep relative to the minus sign.
    At { depth: u32 },
}

thread_local! {
    // The mapper is a plain `Fn` shared by every compile of the engine; the tokenizer of one
    // compile runs on one thread from start to end-of-input, where the state is reset.
    static NEGATED: Cell<Negated> = const { Cell::new(Negated::No) };
    // Whether the previous token was `}`.
    static AFTER_BRACE: Cell<bool> = const { Cell::new(false) };
    // The position of the last token seen, as (line, column).
    static LAST_POSITION: Cell<(usize, usize)> = const { Cell::new((0, 0)) };
}

const AMBIGUOUS: &str = "a minus sign in front of a power is ambiguous: write -(a ^ b) for \
                         the negated power, or (-a) ^ b for the power of the negated number";

/// Installs the token mapper on `engine`.
pub fn install(engine: &mut Engine) {
    #[allow(deprecated)] // the API is marked volatile, not deprecated
    engine.on_parse_token(|token, pos, _state| {
        // Token positions grow within one compile; a position at or before the last one
        // seen is the start of another compile (whose end-of-input may not have reached
        // the mapper), so the state starts afresh.
        let key = (pos.line().unwrap_or(0), pos.position().unwrap_or(0));
        if LAST_POSITION.with(|c| c.replace(key)) >= key {
            NEGATED.with(|c| c.set(Negated::No));
            AFTER_BRACE.with(|c| c.set(false));
        }
        map(token)
    });
}

/// Maps one token (see the module documentation).
fn map(token: Token) -> Token {
    let token = match token {
        Token::XOr => Token::PowerOf,
        Token::XOrAssign => Token::PowerOfAssign,
        t => t,
    };
    let state = NEGATED.with(Cell::get);
    let after_brace = AFTER_BRACE.with(|c| c.replace(matches!(token, Token::RightBrace)));
    let next = match (&token, state) {
        (Token::EOF, _) => {
            AFTER_BRACE.with(|c| c.set(false));
            Negated::No
        }
        (Token::UnaryMinus, _) => Negated::At { depth: 0 },
        // After `}` the tokenizer cannot tell a new statement `-x ^ 2` from a binary minus
        // (`if c { 1 } else { 2 } - x ^ 2`); both are refused rather than one misread.
        (Token::Minus, _) if after_brace => Negated::At { depth: 0 },
        // The tokenizer folds a minus sign into a following number: a negative literal.
        (Token::IntegerConstant(n), Negated::No) if *n < 0 => Negated::At { depth: 0 },
        (Token::FloatConstant(f), Negated::No) if *f.0 < 0.0 => Negated::At { depth: 0 },
        (_, Negated::No) => Negated::No,
        (Token::PowerOf, Negated::At { depth: 0 }) => {
            NEGATED.with(|c| c.set(Negated::No));
            return Token::LexError(Box::new(LexError::ImproperSymbol(
                "^".into(),
                AMBIGUOUS.into(),
            )));
        }
        (Token::LeftParen | Token::LeftBracket | Token::QuestionBracket, Negated::At { depth }) => {
            Negated::At { depth: depth + 1 }
        }
        (Token::RightParen | Token::RightBracket, Negated::At { depth: 0 }) => Negated::No,
        (Token::RightParen | Token::RightBracket, Negated::At { depth }) => {
            Negated::At { depth: depth - 1 }
        }
        (Token::SemiColon | Token::LeftBrace | Token::RightBrace, _) => Negated::No,
        (_, Negated::At { depth }) if depth > 0 => state,
        (
            Token::Identifier(_)
            | Token::IntegerConstant(_)
            | Token::FloatConstant(_)
            | Token::StringConstant(_)
            | Token::CharConstant(_)
            | Token::True
            | Token::False
            | Token::Unit
            | Token::Period
            | Token::Elvis
            | Token::DoubleColon,
            _,
        ) => state,
        _ => Negated::No,
    };
    NEGATED.with(|c| c.set(next));
    token
}

#[cfg(test)]
mod tests {
    use rhai::Dynamic;

    fn engine() -> rhai::Engine {
        let mut e = rhai::Engine::new();
        e.set_fast_operators(false);
        super::install(&mut e);
        crate::script::builtins::arith::register(&mut e);
        e
    }

    fn eval(code: &str) -> Result<Dynamic, String> {
        engine().eval::<Dynamic>(code).map_err(|e| e.to_string())
    }

    fn float(code: &str) -> f64 {
        let v = eval(code).unwrap_or_else(|e| panic!("{code}: {e}"));
        v.as_float()
            .or_else(|_| v.as_int().map(|i| i as f64))
            .unwrap_or(f64::NAN)
    }

    #[test]
    fn caret_is_a_power_with_power_precedence() {
        // Before this mapping `k ^ 2` was bitwise exclusive or: 3 ^ 2 gave 1.
        assert_eq!(float("let k = 3; k ^ 2"), 9.0);
        assert_eq!(float("1 + 3 ^ 2"), 10.0);
        assert_eq!(float("2 * 3 ^ 2"), 18.0);
        assert_eq!(float("if 3 ^ 2 == 9 { 1 } else { 0 }"), 1.0);
        assert_eq!(float("2 ^ 3 ^ 2"), 512.0); // right associative, as in mathematics
        assert_eq!(float("2.0 ^ 3"), 8.0);
        assert_eq!(float("4 ^ 0.5"), 2.0);
        assert_eq!(float("2 ^ -1"), 0.5);
        assert_eq!(float("let x = 3; x ^= 2; x"), 9.0);
        assert_eq!(float("(-2) ^ 2"), 4.0);
        assert_eq!(float("-(2 ^ 2)"), -4.0);
        assert_eq!(float("1 - 2 ^ 2"), -3.0);
        assert_eq!(float("let x = 2; 1 - x ^ 2"), -3.0);
    }

    #[test]
    fn minus_before_a_power_is_refused() {
        for code in [
            "-2 ^ 2",
            "-2.5 ^ 2",
            "let x = 2; -x ^ 2",
            "let x = 2; let y = -x ^ 2; y",
            "let x = [2]; -x[0] ^ 2",
            "let x = 2; -x.abs() ^ 2",
            "fn f(a) { a } -f(2) ^ 2",
            "let x = 2; 1 + (-x ^ 2)",
            "-2 ** 2",
        ] {
            let e = eval(code).expect_err(code);
            assert!(e.contains("ambiguous"), "{code}: {e}");
        }
        // The state does not leak into the next compile.
        let e = engine();
        assert!(e.compile("let x = -2").is_ok());
        let r = e.eval::<i64>("3 ^ 2");
        assert!(matches!(r, Ok(9)), "{r:?}");
    }
}
