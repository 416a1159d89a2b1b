//! Light syntax colouring of script code for the HTML report.
//!
//! A small hand-written tokenizer for the script language: keywords, numbers, strings
//! (double-quoted with escapes, character literals, backtick strings spanning lines),
//! comments (`//` and nested `/* */`), the names of called or defined functions, and
//! operators. It never fails: anything it does not recognise is passed through as plain
//! text. Every piece of the code is HTML-escaped; the only markup added is
//! `<span class="t?">` around tokens.

use super::push_escaped;

/// Words the language reserves, coloured as keywords.
const KEYWORDS: [&str; 17] = [
    "let", "const", "fn", "if", "else", "for", "in", "while", "loop", "return", "import", "as",
    "true", "false", "break", "continue", "private",
];

/// The kinds of token that get a colour; each maps to one CSS class.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Kind {
    Keyword,
    Number,
    Str,
    Comment,
    Function,
    Operator,
}

impl Kind {
    fn class(self) -> &'static str {
        match self {
            Kind::Keyword => "tk",
            Kind::Number => "tn",
            Kind::Str => "ts",
            Kind::Comment => "tc",
            Kind::Function => "tf",
            Kind::Operator => "to",
        }
    }
}

/// Characters that form operators (runs of them become one token).
fn is_operator(byte: u8) -> bool {
    matches!(
        byte,
        b'+' | b'-'
            | b'*'
            | b'/'
            | b'%'
            | b'='
            | b'<'
            | b'>'
            | b'!'
            | b'&'
            | b'|'
            | b'^'
            | b'?'
            | b':'
            | b'.'
            | b'#'
            | b'~'
    )
}

fn is_ident_start(byte: u8) -> bool {
    byte.is_ascii_alphabetic() || byte == b'_'
}

fn is_ident_continue(byte: u8) -> bool {
    byte.is_ascii_alphanumeric() || byte == b'_'
}

/// Returns the code as HTML: escaped, with coloured spans around tokens.
pub(super) fn highlight(code: &str) -> String {
    let bytes = code.as_bytes();
    let mut out = String::with_capacity(code.len() * 2);
    let mut pos = 0;
    // Whether the previous word was `fn`, so the next identifier names a function.
    let mut after_fn = false;
    while pos < bytes.len() {
        let start = pos;
        let byte = bytes[pos];
        let kind = if byte == b'/' && bytes.get(pos + 1) == Some(&b'/') {
            pos = line_end(bytes, pos);
            Some(Kind::Comment)
        } else if byte == b'/' && bytes.get(pos + 1) == Some(&b'*') {
            pos = block_comment_end(bytes, pos);
            Some(Kind::Comment)
        } else if byte == b'"' {
            pos = quoted_end(bytes, pos, b'"');
            Some(Kind::Str)
        } else if byte == b'\'' {
            pos = quoted_end(bytes, pos, b'\'');
            Some(Kind::Str)
        } else if byte == b'`' {
            pos = backtick_end(bytes, pos);
            Some(Kind::Str)
        } else if byte.is_ascii_digit() {
            pos = number_end(bytes, pos);
            Some(Kind::Number)
        } else if is_ident_start(byte) {
            while pos < bytes.len() && is_ident_continue(bytes[pos]) {
                pos += 1;
            }
            let word = &code[start..pos];
            let kind = if KEYWORDS.contains(&word) {
                Some(Kind::Keyword)
            } else if after_fn || next_is_call(bytes, pos) {
                Some(Kind::Function)
            } else {
                None
            };
            after_fn = word == "fn";
            push_token(&mut out, &code[start..pos], kind);
            continue;
        } else if is_operator(byte) {
            while pos < bytes.len() && is_operator(bytes[pos]) && !starts_comment(bytes, pos) {
                pos += 1;
            }
            Some(Kind::Operator)
        } else {
            // Plain text up to the next byte that could start a token. Stopping only at
            // ASCII bytes keeps every slice on a character boundary.
            pos += 1;
            while pos < bytes.len() && !starts_token(bytes[pos]) {
                pos += 1;
            }
            None
        };
        if kind.is_some() && kind != Some(Kind::Comment) {
            after_fn = false;
        }
        push_token(&mut out, &code[start..pos], kind);
    }
    out
}

fn push_token(out: &mut String, text: &str, kind: Option<Kind>) {
    match kind {
        Some(kind) => {
            out.push_str("<span class=\"");
            out.push_str(kind.class());
            out.push_str("\">");
            push_escaped(out, text);
            out.push_str("</span>");
        }
        None => push_escaped(out, text),
    }
}

/// Whether a byte may begin a coloured token (plain runs stop before it).
fn starts_token(byte: u8) -> bool {
    is_ident_start(byte) || byte.is_ascii_digit() || is_operator(byte) || b"\"'`".contains(&byte)
}

fn starts_comment(bytes: &[u8], pos: usize) -> bool {
    bytes[pos] == b'/' && matches!(bytes.get(pos + 1), Some(b'/') | Some(b'*'))
}

/// Whether the identifier ending at `pos` is followed (after spaces) by `(`.
fn next_is_call(bytes: &[u8], mut pos: usize) -> bool {
    while pos < bytes.len() && (bytes[pos] == b' ' || bytes[pos] == b'\t') {
        pos += 1;
    }
    bytes.get(pos) == Some(&b'(')
}

/// End of a line comment: the newline (not included) or the end of the code.
fn line_end(bytes: &[u8], pos: usize) -> usize {
    bytes[pos..]
        .iter()
        .position(|&b| b == b'\n')
        .map_or(bytes.len(), |n| pos + n)
}

/// End of a block comment starting at `pos` (which holds `/*`); comments nest.
fn block_comment_end(bytes: &[u8], mut pos: usize) -> usize {
    let mut depth = 0usize;
    while pos < bytes.len() {
        if bytes[pos] == b'/' && bytes.get(pos + 1) == Some(&b'*') {
            depth += 1;
            pos += 2;
        } else if bytes[pos] == b'*' && bytes.get(pos + 1) == Some(&b'/') {
            depth -= 1;
            pos += 2;
            if depth == 0 {
                return pos;
            }
        } else {
            pos += 1;
        }
    }
    bytes.len()
}

/// End of a string or character literal opened by `quote` at `pos`: just past the closing
/// quote, or the end of the line when it is unterminated. Backslash escapes are skipped,
/// including an escaped line break (a continued string).
fn quoted_end(bytes: &[u8], mut pos: usize, quote: u8) -> usize {
    pos += 1;
    while pos < bytes.len() {
        match bytes[pos] {
            b'\\' => pos += 2,
            b'\n' => return pos,
            b if b == quote => return pos + 1,
            _ => pos += 1,
        }
    }
    bytes.len()
}

/// End of a backtick string (which may span lines): just past the closing backtick.
fn backtick_end(bytes: &[u8], pos: usize) -> usize {
    bytes[pos + 1..]
        .iter()
        .position(|&b| b == b'`')
        .map_or(bytes.len(), |n| pos + n + 2)
}

/// End of a number literal: decimal with optional fraction and exponent, or a
/// `0x`/`0o`/`0b` integer. `1..5` stays a range (a dot needs a digit after it).
fn number_end(bytes: &[u8], mut pos: usize) -> usize {
    let digits = |pos: &mut usize, radix: u32| {
        while *pos < bytes.len() && (char::from(bytes[*pos]).is_digit(radix) || bytes[*pos] == b'_')
        {
            *pos += 1;
        }
    };
    if bytes[pos] == b'0' && matches!(bytes.get(pos + 1), Some(b'x' | b'o' | b'b')) {
        let radix = match bytes[pos + 1] {
            b'x' => 16,
            b'o' => 8,
            _ => 2,
        };
        pos += 2;
        digits(&mut pos, radix);
        return pos;
    }
    digits(&mut pos, 10);
    if bytes.get(pos) == Some(&b'.') && bytes.get(pos + 1).is_some_and(u8::is_ascii_digit) {
        pos += 1;
        digits(&mut pos, 10);
    }
    if matches!(bytes.get(pos), Some(b'e' | b'E')) {
        let mut exp = pos + 1;
        if matches!(bytes.get(exp), Some(b'+' | b'-')) {
            exp += 1;
        }
        if bytes.get(exp).is_some_and(u8::is_ascii_digit) {
            pos = exp;
            digits(&mut pos, 10);
        }
    }
    pos
}
