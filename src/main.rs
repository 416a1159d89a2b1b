//! The `statebook` command line: parse, call the library, map errors to exit codes
//! (0 success, 1 script error or drift, 2 bad command-line use).

use clap::{Args, Parser, Subcommand};
use statebook::notebook::{check, files, run, sweeps};
use statebook::sandbox::Limits;
use statebook::script::sweep::{Shard, SweepPlan};
use statebook::{Session, SessionOptions};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// statebook — notebook-style analysis of linear state-space models.
///
/// Run without a command for the interactive prompt.
#[derive(Parser)]
#[command(name = "statebook", version, about, long_about = None, disable_help_subcommand = true)]
struct Cli {
    #[command(subcommand)]
    command: Option<Command>,
    #[command(flatten)]
    common: Common,
}

#[derive(Subcommand)]
enum Command {
    /// Run an analysis file and print each cell's outputs.
    Run {
        /// The analysis file (.sbook).
        file: PathBuf,
        /// Run only slice K of N of every sweep (cases with index mod N = K-1) and write
        /// the slice's results to a shard file for `statebook merge`.
        #[arg(long, value_name = "K/N", value_parser = parse_shard)]
        shard: Option<Shard>,
        /// Where to write sweep results: the shard file with --shard (default
        /// FILE-stem.shard-K-of-N.json beside FILE), else the complete results of every
        /// sweep (what `statebook merge` produces from the shards).
        #[arg(long, value_name = "PATH")]
        sweep_results: Option<PathBuf>,
    },
    /// Combine the shard files of a sharded run into the sweep results of a single run.
    Merge {
        /// The shard files (all N of them, in any order).
        #[arg(required = true)]
        parts: Vec<PathBuf>,
        /// Where to write the combined sweep results.
        #[arg(short, long, value_name = "OUT")]
        output: PathBuf,
    },
    /// Render an analysis file to one self-contained report (and save its records).
    Render {
        /// The analysis file (.sbook).
        file: PathBuf,
        /// Where to write the report (default: beside the file, .html or .md).
        #[arg(short, long)]
        output: Option<PathBuf>,
        /// Report format.
        #[arg(long, value_enum, default_value = "html")]
        format: Format,
    },
    /// Re-run an analysis file and compare every record with its saved results.
    Check {
        /// The analysis file (.sbook).
        file: PathBuf,
        /// Relative tolerance for numbers.
        #[arg(long, default_value_t = 1e-9)]
        tolerance: f64,
    },
    /// Show the built-ins by family, or the help page of one.
    Help {
        /// A built-in's name.
        name: Option<String>,
    },
    /// Write a starter analysis file.
    New {
        /// The file to create (must not exist).
        file: PathBuf,
    },
    /// Turn a REPL session log into an analysis file (keeps the inputs that ran).
    FromSession {
        /// The session log (under .statebook/sessions/ where the REPL ran).
        log: PathBuf,
        /// The analysis file to write (must not exist).
        #[arg(short, long)]
        output: PathBuf,
        /// Title of the analysis (default: from the output file's name).
        #[arg(long)]
        title: Option<String>,
    },
}

#[derive(Clone, Copy, clap::ValueEnum)]
enum Format {
    Html,
    Md,
}

#[derive(Args, Clone)]
struct Common {
    /// Also allow scripts to read below DIR.
    #[arg(long, value_name = "DIR", global = true)]
    allow_read: Vec<PathBuf>,
    /// Also allow scripts to read and write below DIR.
    #[arg(long, value_name = "DIR", global = true)]
    allow_write: Vec<PathBuf>,
    /// Most script operations per cell.
    #[arg(long, value_name = "N", global = true)]
    max_operations: Option<u64>,
    /// Deepest nesting of function calls.
    #[arg(long, value_name = "N", global = true)]
    max_call_depth: Option<usize>,
    /// Longest string in bytes.
    #[arg(long, value_name = "N", global = true)]
    max_string_size: Option<usize>,
    /// Longest array.
    #[arg(long, value_name = "N", global = true)]
    max_array_size: Option<usize>,
    /// Largest matrix in entries.
    #[arg(long, value_name = "N", global = true)]
    max_matrix_entries: Option<usize>,
    /// Stop the run after this many seconds of wall-clock time.
    #[arg(long, value_name = "SECONDS", global = true)]
    timeout: Option<f64>,
    /// Memory budget of the whole run: bytes, or with a K, M or G suffix (e.g. 2G).
    /// Default: half of physical memory, at most 16G.
    #[arg(long, value_name = "SIZE", global = true, value_parser = statebook::budget::parse_size)]
    max_memory: Option<usize>,
}

impl Common {
    fn options(&self, root: &Path) -> SessionOptions {
        let mut limits = Limits::default();
        if let Some(v) = self.max_operations {
            limits.operations = v;
        }
        if let Some(v) = self.max_call_depth {
            limits.call_depth = v.min(statebook::guard::MAX_CALL_DEPTH);
        }
        if let Some(v) = self.max_string_size {
            limits.string_size = v;
        }
        if let Some(v) = self.max_array_size {
            limits.array_size = v;
        }
        if let Some(v) = self.max_matrix_entries {
            limits.matrix_entries = v;
        }
        if let Some(v) = self.timeout {
            limits.timeout_seconds = v.max(0.0);
        }
        if let Some(v) = self.max_memory {
            limits.memory_bytes = v;
        }
        SessionOptions {
            root: root.to_path_buf(),
            allow_read: self.allow_read.clone(),
            allow_write: self.allow_write.clone(),
            limits,
        }
    }
}

fn folder_of(file: &Path) -> PathBuf {
    match file.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

fn main() -> ExitCode {
    statebook::guard::install_panic_hook();
    let cli = Cli::parse();
    if let (Some(t), Some(_)) = (cli.common.timeout, &cli.command) {
        statebook::budget::start_watchdog(t);
    }
    statebook::budget::set_budget(
        cli.common
            .max_memory
            .unwrap_or_else(statebook::budget::default_budget),
    );
    // Everything runs on a thread with a large stack, so deep (but limited) recursion in
    // scripts, nested data and their display never reach the end of the native stack.
    let worker = std::thread::Builder::new()
        .name("statebook".into())
        .stack_size(statebook::guard::STACK_BYTES)
        .spawn(move || dispatch(cli));
    let code = match worker.map(|w| w.join()) {
        Ok(Ok(code)) => code,
        Ok(Err(_)) => 1,
        Err(e) => {
            eprintln!("error: cannot start: {e}");
            1
        }
    };
    ExitCode::from(code)
}

fn dispatch(cli: Cli) -> u8 {
    if cli
        .common
        .max_call_depth
        .is_some_and(|d| d > statebook::guard::MAX_CALL_DEPTH)
    {
        eprintln!(
            "error: --max-call-depth may be at most {} (each level needs native stack)",
            statebook::guard::MAX_CALL_DEPTH
        );
        return 2;
    }
    match cli.command {
        None => statebook::repl::start(cli.common_options()),
        Some(Command::Run {
            file,
            shard,
            sweep_results,
        }) => cmd_run(&file, shard, sweep_results.as_deref(), &cli.common),
        Some(Command::Merge { parts, output }) => cmd_merge(&parts, &output),
        Some(Command::Render {
            file,
            output,
            format,
        }) => cmd_render(
            &file,
            output.as_deref(),
            matches!(format, Format::Md),
            &cli.common,
        ),
        Some(Command::Check { file, tolerance }) => cmd_check(&file, tolerance, &cli.common),
        Some(Command::Help { name }) => cmd_help(name.as_deref()),
        Some(Command::New { file }) => cmd_new(&file),
        Some(Command::FromSession { log, output, title }) => {
            cmd_from_session(&log, &output, title.as_deref())
        }
    }
}

impl Cli {
    /// The REPL's sandbox is rooted at the working directory.
    fn common_options(&self) -> SessionOptions {
        let cwd = std::env::current_dir().unwrap_or_else(|_| PathBuf::from("."));
        self.common.options(&cwd)
    }
}

/// Reads and runs a file; prints errors; returns the run or an exit code.
fn execute(
    file: &Path,
    common: &Common,
) -> Result<(statebook::notebook::output::NotebookRun, Session), u8> {
    execute_planned(file, common, SweepPlan::default()).map(|(r, s, _)| (r, s))
}

/// [`execute`] with a sweep plan; also returns the file's SHA-256.
fn execute_planned(
    file: &Path,
    common: &Common,
    plan: SweepPlan,
) -> Result<(statebook::notebook::output::NotebookRun, Session, String), u8> {
    let (text, sha) = files::read_analysis(file).map_err(|m| {
        eprintln!("error: {m}");
        1u8
    })?;
    let name = file.display().to_string();
    let mut session = Session::new(&common.options(&folder_of(file)));
    session.plan_sweeps(plan);
    let r = run::run_text(&mut session, &text, &name, files::provenance(&name, &sha));
    Ok((r, session, sha))
}

fn parse_shard(s: &str) -> Result<Shard, String> {
    Shard::parse(s)
}

fn cmd_run(file: &Path, shard: Option<Shard>, sweep_results: Option<&Path>, common: &Common) -> u8 {
    let plan = SweepPlan {
        shard,
        keep_log: shard.is_some() || sweep_results.is_some(),
    };
    let (r, session, sha) = match execute_planned(file, common, plan) {
        Ok(v) => v,
        Err(c) => return c,
    };
    print!("{}", run::transcript(&r));
    if let Some(e) = run::first_error(&r) {
        eprintln!("{e}");
        if plan.keep_log {
            eprintln!("note: no sweep results written");
        }
        return 1;
    }
    let logs = session.sweep_logs();
    let (path, text) = match shard {
        Some(s) => (
            sweep_results
                .map(Path::to_path_buf)
                .unwrap_or_else(|| sweeps::default_shard_path(file, s)),
            sweeps::shard_text(&sha, s, &logs),
        ),
        None => match sweep_results {
            Some(p) => (p.to_path_buf(), sweeps::run_results_text(&sha, &logs)),
            None => return 0,
        },
    };
    match statebook::sandbox::write_atomic(&path, text.as_bytes()) {
        Ok(()) => {
            println!("wrote {}", path.display());
            0
        }
        Err(e) => {
            eprintln!("error: cannot write {}: {e}", path.display());
            1
        }
    }
}

fn cmd_merge(parts: &[PathBuf], output: &Path) -> u8 {
    let mut texts = Vec::with_capacity(parts.len());
    for p in parts {
        match statebook::budget::read_bounded(p) {
            Ok(t) => texts.push((p.display().to_string(), t)),
            Err(e) => {
                eprintln!("error: cannot read {}: {e}", p.display());
                return 1;
            }
        }
    }
    let merged = match sweeps::merge(&texts) {
        Ok(m) => m,
        Err(m) => {
            eprintln!("error: {m}");
            return 1;
        }
    };
    match statebook::sandbox::write_atomic(output, merged.as_bytes()) {
        Ok(()) => {
            println!("wrote {} (from {} shards)", output.display(), parts.len());
            0
        }
        Err(e) => {
            eprintln!("error: cannot write {}: {e}", output.display());
            1
        }
    }
}

fn cmd_render(file: &Path, output: Option<&Path>, markdown: bool, common: &Common) -> u8 {
    // One render of a file at a time, so that the report and the results file of two
    // concurrent renders cannot mix (a folder where no lock file can be made is read-only,
    // and the writes below fail there anyway).
    let _lock = statebook::safe_fs::lock(&statebook::safe_fs::resolve(file), true).ok();
    let (r, session) = match execute(file, common) {
        Ok(v) => v,
        Err(c) => return c,
    };
    if let Some(e) = run::first_error(&r) {
        eprintln!("{e}");
        eprintln!("note: no report written; an existing report was left as it was");
        return 1;
    }
    let inputs = session.sandbox().files_read();
    match statebook::report::write_outputs(file, output, markdown, &r, &session.records(), &inputs)
    {
        Ok(written) => {
            for w in written {
                println!("wrote {}", w.display());
            }
            0
        }
        Err(m) => {
            eprintln!("error: {m}");
            1
        }
    }
}

fn cmd_check(file: &Path, tolerance: f64, common: &Common) -> u8 {
    if !(tolerance.is_finite() && tolerance >= 0.0) {
        eprintln!("error: --tolerance must be a finite number ≥ 0, found {tolerance}");
        return 2;
    }
    let (r, session) = match execute(file, common) {
        Ok(v) => v,
        Err(c) => return c,
    };
    if let Some(e) = run::first_error(&r) {
        eprintln!("{e}");
        return 1;
    }
    // Shared with other checks, never while a render is renaming its pair into place.
    let _lock = statebook::safe_fs::lock(&statebook::safe_fs::resolve(file), false).ok();
    match check::compare_with_saved(file, &session.records(), tolerance) {
        Ok(report) => {
            print!("{}", report.text);
            if report.passed {
                0
            } else {
                1
            }
        }
        Err(m) => {
            eprintln!("error: {m}");
            1
        }
    }
}

fn cmd_help(name: Option<&str>) -> u8 {
    use statebook::script::docs;
    match name {
        None => {
            print!("{}", docs::overview());
            0
        }
        Some(n) => match docs::find(n) {
            Some(d) => {
                println!("{}", docs::page(&d));
                0
            }
            None => {
                eprintln!("error: no built-in named '{n}'\nhint: `statebook help` lists them all");
                1
            }
        },
    }
}

fn cmd_new(file: &Path) -> u8 {
    if file.exists() {
        eprintln!(
            "error: {} already exists; statebook new never overwrites a file",
            file.display()
        );
        return 1;
    }
    let stem = file
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    match statebook::sandbox::write_atomic(file, check::starter(&stem).as_bytes()) {
        Ok(()) => {
            println!("wrote {}", file.display());
            println!(
                "next: statebook run {0}   or   statebook render {0}",
                file.display()
            );
            0
        }
        Err(e) => {
            eprintln!("error: cannot write {}: {e}", file.display());
            1
        }
    }
}

fn cmd_from_session(log: &Path, output: &Path, title: Option<&str>) -> u8 {
    use statebook::notebook::session_log;
    if output.exists() {
        eprintln!(
            "error: {} already exists; statebook from-session never overwrites a file",
            output.display()
        );
        return 1;
    }
    let (text, _) = match files::read_analysis(log) {
        Ok(v) => v,
        Err(m) => {
            eprintln!("error: {m}");
            return 1;
        }
    };
    let stem = output
        .file_stem()
        .map(|s| s.to_string_lossy().replace(['-', '_'], " "))
        .unwrap_or_default();
    let title = title.map(str::to_string).unwrap_or(stem);
    let (analysis, summary) =
        match session_log::to_analysis(&text, &log.display().to_string(), &title) {
            Ok(v) => v,
            Err(m) => {
                eprintln!("error: {}: {m}", log.display());
                return 1;
            }
        };
    if let Err(e) = statebook::sandbox::write_atomic(output, analysis.as_bytes()) {
        eprintln!("error: cannot write {}: {e}", output.display());
        return 1;
    }
    println!(
        "wrote {} ({} input{} kept, {} left out)",
        output.display(),
        summary.kept,
        if summary.kept == 1 { "" } else { "s" },
        summary.left_out.len()
    );
    for (line, why) in &summary.left_out {
        println!("  left out: the input at {}:{line} ({why})", log.display());
    }
    0
}
