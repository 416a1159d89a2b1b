//! Fuzzes the analysis-file cell parser and the report writers that read its cells
//! (prose Markdown, code highlighting): any text must parse without panicking, every code
//! line must sit in the padded code exactly where the file had it, and both reports of
//! the unrun cells must render.
#![no_main]

use libfuzzer_sys::fuzz_target;
use statebook::notebook::files;
use statebook::notebook::output::{CellRun, NotebookRun, Output};
use statebook::notebook::parse::{parse, LineKind};

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let doc = parse(text);
    let mut cells = Vec::new();
    for cell in &doc.cells {
        let padded = cell.code_text();
        let padded_lines: Vec<&str> = padded.split('\n').collect();
        for l in cell.lines.iter().filter(|l| l.kind == LineKind::Code) {
            assert_eq!(padded_lines.get(l.number - cell.first_line()).copied(), Some(l.text.as_str()));
        }
        cells.push(CellRun {
            title: cell.title.clone(),
            prose: cell.prose(),
            code: cell.code(),
            first_line: cell.first_line(),
            outputs: vec![
                Output::Note(cell.prose()),
                Output::Text(cell.code()),
                Output::Warning(cell.title.clone()),
            ],
        });
    }
    let run = NotebookRun {
        title: doc.title.clone().unwrap_or_default(),
        cells,
        failed: false,
        provenance: files::provenance("fuzz.sbook", ""),
    };
    let _ = statebook::report::render_html(&run);
    let _ = statebook::report::render_markdown(&run, "fuzz");
});
