//! Markdown prose (a cell's `//>` lines and `note` outputs) → HTML.
//!
//! An analysis file is often someone else's, so its prose is treated as untrusted text:
//! raw HTML is shown as text rather than passed through, images are not fetched (their
//! alt text is shown instead), and links survive only with a harmless destination
//! (a relative path, a `#fragment`, or an `http`, `https` or `mailto` address). Headings
//! are moved down two levels so that prose never outranks the cell titles, and footnote
//! ids carry a per-block prefix so that footnotes of different cells cannot collide.

use pulldown_cmark::{html, CowStr, Event, HeadingLevel, Options, Parser, Tag, TagEnd};

/// Markdown extensions enabled for prose.
fn options() -> Options {
    Options::ENABLE_TABLES | Options::ENABLE_FOOTNOTES | Options::ENABLE_STRIKETHROUGH
}

/// Renders Markdown to an HTML fragment. `scope` (e.g. `cell-3`) prefixes footnote ids.
pub(super) fn markdown_to_html(markdown: &str, scope: &str) -> String {
    let mut links_kept: Vec<bool> = Vec::new();
    let events = Parser::new_ext(markdown, options()).filter_map(|event| match event {
        Event::Html(raw) | Event::InlineHtml(raw) => Some(Event::Text(raw)),
        Event::Start(Tag::HtmlBlock) => Some(Event::Start(Tag::Paragraph)),
        Event::End(TagEnd::HtmlBlock) => Some(Event::End(TagEnd::Paragraph)),
        Event::Start(Tag::Heading {
            level,
            id,
            classes,
            attrs,
        }) => Some(Event::Start(Tag::Heading {
            level: demote(level),
            id,
            classes,
            attrs,
        })),
        Event::End(TagEnd::Heading(level)) => Some(Event::End(TagEnd::Heading(demote(level)))),
        Event::Start(Tag::Image { .. }) => Some(Event::Text("[image not embedded: ".into())),
        Event::End(TagEnd::Image) => Some(Event::Text("]".into())),
        Event::Start(Tag::Link {
            link_type,
            dest_url,
            title,
            id,
        }) => {
            let keep = is_safe_destination(&dest_url);
            links_kept.push(keep);
            keep.then_some(Event::Start(Tag::Link {
                link_type,
                dest_url,
                title,
                id,
            }))
        }
        Event::End(TagEnd::Link) => links_kept
            .pop()
            .unwrap_or(false)
            .then_some(Event::End(TagEnd::Link)),
        Event::FootnoteReference(name) => Some(Event::FootnoteReference(scoped(scope, &name))),
        Event::Start(Tag::FootnoteDefinition(name)) => {
            Some(Event::Start(Tag::FootnoteDefinition(scoped(scope, &name))))
        }
        other => Some(other),
    });
    let mut out = String::with_capacity(markdown.len() * 3 / 2);
    html::push_html(&mut out, events);
    out
}

/// Makes untrusted Markdown prose safe to pass on in a Markdown report, with the same
/// policy as [`markdown_to_html`]: raw HTML (blocks and inline tags) is escaped so that it
/// shows as text, and a link with a harmful destination (`javascript:`, `data:` …) or an
/// image is written out as escaped plain text, so no viewer follows or fetches it.
/// Everything else is left byte for byte.
pub fn sanitize_markdown(markdown: &str) -> String {
    let mut edits: Vec<(std::ops::Range<usize>, String)> = Vec::new();
    for (event, range) in Parser::new_ext(markdown, options()).into_offset_iter() {
        let source = markdown.get(range.clone()).unwrap_or("");
        let edit = match &event {
            Event::Html(_) | Event::InlineHtml(_) => Some(escape_markup(source)),
            Event::Start(Tag::Link { dest_url, .. }) if !is_safe_destination(dest_url) => {
                Some(escape_markdown(source))
            }
            Event::Start(Tag::Image { .. }) => Some(format!(
                "\\[image not embedded: {}\\]",
                escape_markdown(source)
            )),
            _ => None,
        };
        if let Some(text) = edit {
            if edits.last().is_none_or(|(r, _)| range.start >= r.end) {
                edits.push((range, text));
            }
        }
    }
    let mut out = String::with_capacity(markdown.len() + 16 * edits.len());
    let mut at = 0;
    for (range, text) in edits {
        out.push_str(markdown.get(at..range.start).unwrap_or(""));
        out.push_str(&text);
        at = range.end;
    }
    out.push_str(markdown.get(at..).unwrap_or(""));
    out
}

/// `&`, `<` and `>` as character references, which Markdown shows as the characters.
fn escape_markup(text: &str) -> String {
    text.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

/// Backslash-escapes every character Markdown could read as a link, image or tag.
fn escape_markdown(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 8);
    for ch in text.chars() {
        if "\\`*_[]()<>!#|&".contains(ch) {
            out.push('\\');
        }
        out.push(ch);
    }
    out
}

/// The heading level two below `level` (`#` in prose becomes `<h3>`), at most `<h6>`.
fn demote(level: HeadingLevel) -> HeadingLevel {
    match level {
        HeadingLevel::H1 => HeadingLevel::H3,
        HeadingLevel::H2 => HeadingLevel::H4,
        HeadingLevel::H3 => HeadingLevel::H5,
        _ => HeadingLevel::H6,
    }
}

/// A footnote label made unique to its block of prose.
fn scoped(scope: &str, name: &str) -> CowStr<'static> {
    CowStr::from(format!("{scope}-fn-{name}"))
}

/// Whether a link destination is harmless to keep: no scheme at all (relative path or
/// fragment), or one of `http`, `https`, `mailto`.
fn is_safe_destination(url: &str) -> bool {
    let url = url.trim();
    let scheme_end = url.find(|c: char| !(c.is_ascii_alphanumeric() || "+-.".contains(c)));
    match scheme_end {
        Some(end) if end > 0 && url[end..].starts_with(':') => {
            let scheme = url[..end].to_ascii_lowercase();
            matches!(scheme.as_str(), "http" | "https" | "mailto")
        }
        _ => !url.contains(':') || url.starts_with('#') || url.starts_with('/'),
    }
}
