//! Tests of both report writers on hand-built runs.

use super::highlight::highlight;
use super::prose::markdown_to_html;
use super::{render_html, render_markdown};
use crate::notebook::output::{CellRun, NotebookRun, Provenance};
use crate::script::output::Output;

const SVG_NS: &str = "http://www.w3.org/2000/svg";

fn svg(label: &str) -> String {
    format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"{SVG_NS}\" width=\"200\" \
         height=\"100\" viewBox=\"0 0 200 100\"><text x=\"10\" y=\"50\">{label}</text></svg>"
    )
}

fn cell(title: &str, prose: &str, code: &str, first_line: usize, outputs: Vec<Output>) -> CellRun {
    CellRun {
        title: title.into(),
        prose: prose.into(),
        code: code.into(),
        first_line,
        outputs,
    }
}

fn provenance() -> Provenance {
    Provenance {
        version: "0.1.0".into(),
        file_name: "motor.sbook".into(),
        sha256: "ab".repeat(32),
        date: "2025-01-02 03:04 UTC".into(),
        platform: "linux x86_64".into(),
        results_sha256: "cd".repeat(32),
    }
}

/// A run with every kind of output, prose with lists and a table, and an empty cell.
fn sample_run() -> NotebookRun {
    let prose = "Some *emphasis* and **strong** text.\n\n# Prose heading\n\n- first\n- second\n\n\
                 | pole | damping |\n|---|---|\n| -1 | 1.0 |\n\n<script>alert(1)</script>\n\n\
                 A note[^a].\n\n[^a]: The footnote.";
    NotebookRun {
        title: "Motor model".into(),
        cells: vec![
            cell("", "", "", 1, vec![]),
            cell(
                "Motor model",
                prose,
                "let a = 1; let b = 2; let c = true;\nif a < b && c { print(\"yes\"); }",
                1,
                vec![Output::Text("yes".into()), Output::Text("again".into())],
            ),
            cell(
                "Results",
                "",
                "show(poles(plant));",
                14,
                vec![
                    Output::Value("[-1+2j, -1-2j]".into()),
                    Output::Note("Poles are **stable**.".into()),
                    Output::Figure {
                        svg: svg("one"),
                        title: Some("Step <response>".into()),
                    },
                    Output::Figure {
                        svg: svg("two"),
                        title: None,
                    },
                    Output::Warning("condition number 1e12 is large".into()),
                ],
            ),
            cell("Nothing here", "", "", 20, vec![]),
        ],
        failed: false,
        provenance: provenance(),
    }
}

fn failed_run() -> NotebookRun {
    let mut run = sample_run();
    run.cells.push(cell(
        "Design",
        "",
        "let k = assign_poles(plant, [1]);",
        22,
        vec![Output::Error(
            "error: motor.sbook:23:9: expected 2 poles, found 1".into(),
        )],
    ));
    run.failed = true;
    run
}

#[test]
fn no_http_outside_svg_namespace() {
    let html = render_html(&sample_run());
    assert!(!html.replace(SVG_NS, "").contains("http"));
    let md = render_markdown(&sample_run(), "motor");
    assert!(!md.text.contains("http"));
}

#[test]
fn one_svg_per_figure_and_prolog_stripped() {
    let html = render_html(&sample_run());
    assert_eq!(html.matches("<svg").count(), 2);
    assert_eq!(html.matches("<figure").count(), 2);
    assert!(!html.contains("<?xml"));
    assert!(html.contains("<span class=\"fig-num\">Figure 1</span> Step &lt;response&gt;"));
    assert!(html.contains("<span class=\"fig-num\">Figure 2</span></figcaption>"));
}

#[test]
fn markdown_prose_is_rendered() {
    let html = render_html(&sample_run());
    assert!(html.contains("<em>emphasis</em>"));
    assert!(html.contains("<strong>strong</strong>"));
    assert!(html.contains("<h3>Prose heading</h3>"));
    assert!(html.contains("<li>first</li>"));
    assert!(html.contains("<table>"));
    assert!(html.contains("<th>damping</th>"));
    assert!(html.contains("<td>1.0</td>"));
    assert!(html.contains("id=\"cell-1-fn-a\""));
    assert!(html.contains("Poles are <strong>stable</strong>."));
}

#[test]
fn raw_html_in_prose_is_escaped() {
    let html = render_html(&sample_run());
    assert!(html.contains("&lt;script&gt;alert(1)&lt;/script&gt;"));
    assert!(!html.contains("<script"));
    let inline = markdown_to_html("a <b onclick=\"x()\">b</b>", "s");
    assert!(!inline.contains("<b"), "{inline}");
}

#[test]
fn unsafe_links_and_images_are_dropped() {
    let html = markdown_to_html("[x](javascript:alert(1)) [y](#cell-2) ![pic](a.png)", "s");
    assert!(!html.contains("javascript"), "{html}");
    assert!(html.contains("<a href=\"#cell-2\">y</a>"));
    assert!(!html.contains("<img"));
    assert!(html.contains("[image not embedded: pic]"));
}

#[test]
fn code_is_highlighted_and_escaped() {
    let out = highlight("if a < b && c { f(\"<x>\\\"\"); } // done <");
    assert!(out.contains("<span class=\"tk\">if</span>"));
    assert!(out.contains("<span class=\"to\">&lt;</span>"));
    assert!(out.contains("<span class=\"to\">&amp;&amp;</span>"));
    assert!(out.contains("<span class=\"tf\">f</span>"));
    assert!(out.contains("<span class=\"ts\">&quot;&lt;x&gt;\\&quot;&quot;</span>"));
    assert!(out.contains("<span class=\"tc\">// done &lt;</span>"));
    let stripped: String = {
        let mut s = out.clone();
        for tag in ["tk", "tn", "ts", "tc", "tf", "to"] {
            s = s.replace(&format!("<span class=\"{tag}\">"), "");
        }
        s.replace("</span>", "")
    };
    assert!(
        !stripped.contains('<') && !stripped.contains('>'),
        "{stripped}"
    );
    let html = render_html(&sample_run());
    assert!(
        html.contains("a <span class=\"to\">&lt;</span> b <span class=\"to\">&amp;&amp;</span> c")
    );
}

#[test]
fn highlight_covers_numbers_comments_and_backticks() {
    let out = highlight("fn go(x) { 1.5e-3 + 0xff; 1..5 } /* a /* b */ c */ `multi\nline` 'q'");
    assert!(out.contains("<span class=\"tk\">fn</span> <span class=\"tf\">go</span>"));
    assert!(out.contains("<span class=\"tn\">1.5e-3</span>"));
    assert!(out.contains("<span class=\"tn\">0xff</span>"));
    assert!(out.contains(
        "<span class=\"tn\">1</span><span class=\"to\">..</span><span class=\"tn\">5</span>"
    ));
    assert!(out.contains("<span class=\"tc\">/* a /* b */ c */</span>"));
    assert!(out.contains("<span class=\"ts\">`multi\nline`</span>"));
    assert!(out.contains("<span class=\"ts\">&#39;q&#39;</span>"));
    // Unterminated pieces and non-ASCII text never panic and keep every character.
    for code in ["\"open", "/* open", "`open", "é + ü", "\"\\é\"", "x = 'ä"] {
        let out = highlight(code);
        assert!(!out.is_empty());
    }
}

#[test]
fn reports_are_byte_stable() {
    let run = sample_run();
    assert_eq!(render_html(&run), render_html(&run.clone()));
    assert_eq!(
        render_markdown(&run, "m"),
        render_markdown(&run.clone(), "m")
    );
    // Only the provenance block depends on the date and platform.
    let mut later = run.clone();
    later.provenance.date = "2031-12-31 23:59 UTC".into();
    later.provenance.platform = "macos aarch64".into();
    let (a, b) = (render_html(&run), render_html(&later));
    let cut = |s: &str| s[..s.find("<footer").unwrap_or(s.len())].to_string();
    assert_eq!(cut(&a), cut(&b));
}

#[test]
fn layout_ids_headings_and_empty_cells() {
    let html = render_html(&sample_run());
    assert_eq!(html.matches("<h1>").count(), 1);
    assert!(html.contains("<h1>Motor model</h1>"));
    // The leading untitled cell is empty and left out; the titling cell has no h2.
    assert!(!html.contains("id=\"cell-0\""));
    assert!(html.contains("<section class=\"cell\" id=\"cell-1\">"));
    assert!(!html.contains("<h2>Motor model</h2>"));
    assert!(html.contains("<h2>Results</h2>"));
    assert!(html.contains("<section class=\"cell cell-empty\" id=\"cell-3\">"));
    // Consecutive prints form one block.
    assert!(html.contains("<pre class=\"out-text\">yes\nagain</pre>"));
    assert!(html.contains("<pre class=\"out-value\">[-1+2j, -1-2j]</pre>"));
    assert!(html.contains("<span class=\"callout-tag\">warning:</span>"));
    assert!(html.contains("motor.sbook") && html.contains(&"ab".repeat(32)));
    assert!(html.contains("licensed professional engineer"));
    assert!(!html.contains("class=\"banner-failed\""));
}

#[test]
fn failed_run_shows_banner_and_error() {
    let html = render_html(&failed_run());
    assert!(html.contains("class=\"banner-failed\""));
    assert!(
        html.contains("stopped on an error</strong> in <a href=\"#cell-4\">the cell “Design”</a>")
    );
    assert!(html.contains("(line 22)"));
    assert!(html.contains("class=\"out-error\""));
    assert!(html.contains("expected 2 poles, found 1"));
    let md = render_markdown(&failed_run(), "m");
    assert!(md
        .text
        .contains("> **This analysis stopped on an error** in the cell “Design”"));
}

#[test]
fn markdown_report_names_figures_deterministically() {
    let md = render_markdown(&sample_run(), "motor");
    let names: Vec<&str> = md.figures.iter().map(|(name, _)| name.as_str()).collect();
    assert_eq!(names, ["motor-fig-02-1.svg", "motor-fig-02-2.svg"]);
    assert!(md
        .text
        .contains("![Step \\<response\\>](motor-fig-02-1.svg)"));
    assert!(md.text.contains("![Figure 2](motor-fig-02-2.svg)"));
    for (_, file) in &md.figures {
        assert!(file.starts_with("<svg") && !file.contains("<?xml"));
    }
    assert!(md.text.starts_with("# Motor model\n\n"));
    assert!(md.text.contains("```rhai\nlet a = 1;"));
    assert!(md.text.contains("```text\nyes\nagain\n```"));
    assert!(md.text.contains("### Prose heading"));
    assert!(md.text.contains("## Results\n"));
    assert!(md.text.contains("> **warning:** condition number"));
    assert!(md.text.contains("- SHA-256: `abab"));
    assert!(md.text.contains("## Before you rely on these results"));
    let spaced = render_markdown(&sample_run(), "my motor");
    assert!(spaced.text.contains("(<my motor-fig-02-1.svg>)"));
}

#[test]
fn markdown_fences_outgrow_backticks_in_content() {
    let mut run = sample_run();
    run.cells[2].outputs = vec![Output::Value("```\ninner\n```".into())];
    let md = render_markdown(&run, "m");
    assert!(md.text.contains("````text\n```\ninner\n```\n````"));
}

#[test]
fn empty_run_renders() {
    let run = NotebookRun {
        title: String::new(),
        cells: vec![],
        failed: true,
        provenance: provenance(),
    };
    let html = render_html(&run);
    assert!(html.contains("<h1>Analysis</h1>") && html.ends_with("</html>\n"));
    assert!(render_markdown(&run, "x").figures.is_empty());
}

/// Removes the colouring spans and undoes the escaping, giving back the code.
fn plain(highlighted: &str) -> String {
    let mut s = highlighted.to_string();
    for tag in ["tk", "tn", "ts", "tc", "tf", "to"] {
        s = s.replace(&format!("<span class=\"{tag}\">"), "");
    }
    s.replace("</span>", "")
        .replace("&lt;", "<")
        .replace("&gt;", ">")
        .replace("&quot;", "\"")
        .replace("&#39;", "'")
        .replace("&amp;", "&")
}

#[test]
fn highlight_keeps_every_character_of_every_prefix() {
    let code = "fn f(x) { /* é /* ü */ */ let s = \"a\\\"é\\\n\"; `t ${x}` + 'ä' }\n\
                // ω → ∞\nlet y = 1.5e+3 * 0b1010 ..= x.g () <= -2;";
    for (end, _) in code.char_indices().chain([(code.len(), ' ')]) {
        let prefix = &code[..end];
        assert_eq!(plain(&highlight(prefix)), prefix);
    }
}
