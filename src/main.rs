//! The `statebook` command line: parse, call the library, map errors to exit codes
//! (0 success, 1 script error or drift, 2 bad command-line use).

use clap::{Args, Parser, Subcommand};
use statebook::notebook::output::NotebookRun;
use statebook::notebook::NotebookError;
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
    /// Take every sweep's table from this sweep-results file (what `statebook merge`
    /// writes) instead of running its cases: the last step of a cluster run.
    #[arg(long, value_name = "FILE", global = true)]
    sweeps_from: Option<PathBuf>,
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

/// Why a command did not succeed: the one error type of the command line. `main` prints it
/// once ([`CliError::print`]) and exits with [`CliError::exit_code`].
#[derive(Debug)]
enum CliError {
    /// Bad command-line use (exit 2): `error: …`.
    Usage(String),
    /// The command failed (exit 1): `error: …` (a message may carry `hint:` lines).
    Failed(String),
    /// Reading, merging or checking notebook files failed (exit 1): `error: …`.
    Notebook(NotebookError),
    /// A script stopped on an error (exit 1): the diagnostic is already worded with its
    /// `file:line:col` and source line; `note` says what was not written because of it.
    Script {
        /// The rendered diagnostic.
        diagnostic: String,
        /// What the command left undone, if anything.
        note: Option<&'static str>,
    },
    /// The failure is already on screen (exit 1): `check`'s drift report, or what the
    /// REPL said when it could not go on.
    Reported,
}

impl CliError {
    /// 2 for bad command-line use, 1 for everything else that did not succeed.
    fn exit_code(&self) -> u8 {
        match self {
            CliError::Usage(_) => 2,
            CliError::Failed(_)
            | CliError::Notebook(_)
            | CliError::Script { .. }
            | CliError::Reported => 1,
        }
    }

    /// Prints the error on standard error (nothing for one already reported).
    fn print(&self) {
        match self {
            CliError::Usage(m) | CliError::Failed(m) => eprintln!("error: {m}"),
            CliError::Notebook(e) => eprintln!("error: {e}"),
            CliError::Script { diagnostic, note } => {
                eprintln!("{diagnostic}");
                if let Some(n) = note {
                    eprintln!("note: {n}");
                }
            }
            CliError::Reported => {}
        }
    }
}

type CliResult = Result<(), CliError>;

/// A failed write of `path`.
fn cannot_write(path: &Path, e: impl std::fmt::Display) -> CliError {
    CliError::Failed(format!("cannot write {}: {e}", path.display()))
}

/// The first error of a run, as a [`CliError::Script`] with `note`.
fn script_failed(r: &NotebookRun, note: Option<&'static str>) -> CliResult {
    match run::first_error(r) {
        Some(e) => Err(CliError::Script {
            diagnostic: e.to_string(),
            note,
        }),
        None => Ok(()),
    }
}

/// Runs the command (or the REPL) and turns its outcome into the exit code, printing an
/// error once.
fn dispatch(cli: Cli) -> u8 {
    let result = check_common(&cli.common).and_then(|()| match &cli.command {
        None => match statebook::repl::start(cli.common_options()) {
            0 => Ok(()),
            _ => Err(CliError::Reported),
        },
        Some(command) => command_result(command, &cli.common),
    });
    match result {
        Ok(()) => 0,
        Err(e) => {
            e.print();
            e.exit_code()
        }
    }
}

/// Options shared by every command that must hold before anything runs.
fn check_common(common: &Common) -> CliResult {
    if common
        .max_call_depth
        .is_some_and(|d| d > statebook::guard::MAX_CALL_DEPTH)
    {
        return Err(CliError::Usage(format!(
            "--max-call-depth may be at most {} (each level needs native stack)",
            statebook::guard::MAX_CALL_DEPTH
        )));
    }
    Ok(())
}

fn command_result(command: &Command, common: &Common) -> CliResult {
    match command {
        Command::Run {
            file,
            shard,
            sweep_results,
        } => cmd_run(file, *shard, sweep_results.as_deref(), common),
        Command::Merge { parts, output } => cmd_merge(parts, output),
        Command::Render {
            file,
            output,
            format,
        } => cmd_render(
            file,
            output.as_deref(),
            matches!(format, Format::Md),
            common,
        ),
        Command::Check { file, tolerance } => cmd_check(file, *tolerance, common),
        Command::Help { name } => cmd_help(name.as_deref()),
        Command::New { file } => cmd_new(file),
        Command::FromSession { log, output, title } => {
            cmd_from_session(log, output, title.as_deref())
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

/// Reads and runs a file; returns the run and its session.
fn execute(file: &Path, common: &Common) -> Result<(NotebookRun, Session), CliError> {
    execute_planned(file, common, SweepPlan::default()).map(|(r, s, _)| (r, s))
}

/// [`execute`] with a sweep plan; also returns the file's SHA-256.
fn execute_planned(
    file: &Path,
    common: &Common,
    plan: SweepPlan,
) -> Result<(NotebookRun, Session, String), CliError> {
    let (text, sha) = files::read_analysis(file).map_err(CliError::Notebook)?;
    let name = file.display().to_string();
    let stored = match &common.sweeps_from {
        Some(p) => {
            if plan.shard.is_some() {
                return Err(CliError::Usage(
                    "--sweeps-from takes the merged tables of every shard; it cannot be \
                     combined with --shard"
                        .into(),
                ));
            }
            let t = statebook::budget::read_bounded(p)
                .map_err(|e| CliError::Failed(format!("cannot read {}: {e}", p.display())))?;
            let sweeps = sweeps::parse_results(&p.display().to_string(), &t, &sha)
                .map_err(CliError::Failed)?;
            Some((p, sweeps))
        }
        None => None,
    };
    let mut session = Session::new(&common.options(&folder_of(file)));
    session.plan_sweeps(plan);
    let held = stored
        .as_ref()
        .map(|(p, s)| (p.display().to_string(), s.len()));
    if let Some((_, sweeps)) = stored {
        session.take_sweeps_from(sweeps);
    }
    // A shard run goes on past failing cells, so that every sweep runs its slice.
    let keep_going = plan.shard.is_some();
    let r = run::run_text_with(
        &mut session,
        &text,
        &name,
        files::provenance(&name, &sha),
        keep_going,
    );
    if let Some((p, count)) = held {
        let ran = session.sweeps_begun();
        if run::first_error(&r).is_none() && ran != count {
            return Err(CliError::Failed(format!(
                "{p} holds {count} sweep{}, but the run made {ran}: the results come from \
                 another version of the analysis\nhint: run the shards and the merge again",
                if count == 1 { "" } else { "s" }
            )));
        }
    }
    Ok((r, session, sha))
}

fn parse_shard(s: &str) -> Result<Shard, String> {
    Shard::parse(s)
}

fn cmd_run(
    file: &Path,
    shard: Option<Shard>,
    sweep_results: Option<&Path>,
    common: &Common,
) -> CliResult {
    let plan = SweepPlan {
        shard,
        keep_log: shard.is_some() || sweep_results.is_some(),
    };
    let out = match shard {
        Some(s) => Some(
            sweep_results
                .map(Path::to_path_buf)
                .unwrap_or_else(|| sweeps::default_shard_path(file, s)),
        ),
        None => sweep_results.map(Path::to_path_buf),
    };
    // Before the first case runs: a missing folder is made, an unwritable one refused.
    if let Some(p) = &out {
        ready_to_write(p)?;
    }
    let (r, session, sha) = execute_planned(file, common, plan)?;
    print!("{}", run::transcript(&r));
    let logs = session.sweep_logs();
    let Some(path) = out else {
        return script_failed(&r, None);
    };
    let text = match shard {
        Some(s) => {
            // A shard run delivers its slice even when later cells fail on the partial
            // tables (a plot of the whole grid, a check of every case): the run went on
            // past them (`keep_going`), and they only make sense on the merged results.
            let failed: Vec<sweeps::CellFailure> =
                run::errors(&r).into_iter().map(failure_of).collect();
            if logs.is_empty() && !failed.is_empty() {
                return script_failed(&r, Some("no shard written: no sweep ran"));
            }
            for f in &failed {
                eprintln!(
                    "note: line {} failed on this shard's partial sweep tables ({}); the run \
                     went on (a shard run writes no records or report: merge the shards, then \
                     render with --sweeps-from)",
                    f.line, f.message
                );
            }
            sweeps::shard_text(&sha, s, &logs, failed)
        }
        None => {
            script_failed(&r, Some("no sweep results written"))?;
            sweeps::run_results_text(&sha, &logs)
        }
    };
    statebook::sandbox::write_atomic(&path, text.as_bytes()).map_err(|e| cannot_write(&path, e))?;
    println!("wrote {}", path.display());
    Ok(())
}

/// Makes the folder of `path` if it is missing and checks that a file can be written
/// there (a temporary made and removed), so that a long run does not fail at its end.
fn ready_to_write(path: &Path) -> CliResult {
    statebook::safe_fs::prepare(&statebook::safe_fs::resolve(path), &[], true)
        .map(drop)
        .map_err(|e| cannot_write(path, e))
}

/// Where a rendered diagnostic (`error: …` then `at FILE:LINE:COL`) says a cell failed.
fn failure_of(diagnostic: &str) -> sweeps::CellFailure {
    let message = diagnostic
        .lines()
        .next()
        .unwrap_or("")
        .trim_start_matches("error: ")
        .to_string();
    let line = diagnostic
        .lines()
        .find_map(|l| l.trim().strip_prefix("at "))
        .and_then(|at| at.rsplit(':').nth(1))
        .and_then(|n| n.parse().ok())
        .unwrap_or(0);
    sweeps::CellFailure { line, message }
}

fn cmd_merge(parts: &[PathBuf], output: &Path) -> CliResult {
    let mut texts = Vec::with_capacity(parts.len());
    for p in parts {
        let t = statebook::budget::read_bounded(p)
            .map_err(|e| CliError::Failed(format!("cannot read {}: {e}", p.display())))?;
        texts.push((p.display().to_string(), t));
    }
    ready_to_write(output)?;
    let merged = sweeps::merge(&texts).map_err(CliError::Notebook)?;
    for w in &merged.warnings {
        eprintln!("warning: {w}");
    }
    statebook::sandbox::write_atomic(output, merged.text.as_bytes())
        .map_err(|e| cannot_write(output, e))?;
    println!("wrote {} (from {} shards)", output.display(), parts.len());
    Ok(())
}

fn cmd_render(file: &Path, output: Option<&Path>, markdown: bool, common: &Common) -> CliResult {
    // One render of a file at a time, so that the report and the results file of two
    // concurrent renders cannot mix (a folder where no lock file can be made is read-only,
    // and the writes below fail there anyway).
    let _lock = statebook::safe_fs::lock(&statebook::safe_fs::resolve(file), true).ok();
    if let Some(o) = output {
        ready_to_write(o)?;
    }
    let (r, session) = execute(file, common)?;
    script_failed(
        &r,
        Some("no report written; an existing report was left as it was"),
    )?;
    let inputs = session.sandbox().files_read();
    let written =
        statebook::report::write_outputs(file, output, markdown, &r, &session.records(), &inputs)
            .map_err(CliError::Failed)?;
    for w in written {
        println!("wrote {}", w.display());
    }
    Ok(())
}

fn cmd_check(file: &Path, tolerance: f64, common: &Common) -> CliResult {
    if !(tolerance.is_finite() && tolerance >= 0.0) {
        return Err(CliError::Usage(format!(
            "--tolerance must be a finite number ≥ 0, found {tolerance}"
        )));
    }
    let (r, session) = execute(file, common)?;
    script_failed(&r, None)?;
    // Shared with other checks, never while a render is renaming its pair into place.
    let _lock = statebook::safe_fs::lock(&statebook::safe_fs::resolve(file), false).ok();
    let report = check::compare_with_saved(file, &session.records(), tolerance)
        .map_err(CliError::Notebook)?;
    print!("{}", report.text);
    if report.passed {
        Ok(())
    } else {
        Err(CliError::Reported)
    }
}

fn cmd_help(name: Option<&str>) -> CliResult {
    use statebook::script::docs;
    match name {
        None => print!("{}", docs::overview()),
        Some(n) => {
            let d = docs::find(n).ok_or_else(|| {
                CliError::Failed(format!(
                    "no built-in named '{n}'\nhint: `statebook help` lists them all"
                ))
            })?;
            println!("{}", docs::page(&d));
        }
    }
    Ok(())
}

/// Refuses to replace an existing file (`new` and `from-session` never overwrite).
fn refuse_existing(file: &Path, command: &str) -> CliResult {
    if file.exists() {
        return Err(CliError::Failed(format!(
            "{} already exists; statebook {command} never overwrites a file",
            file.display()
        )));
    }
    Ok(())
}

fn cmd_new(file: &Path) -> CliResult {
    refuse_existing(file, "new")?;
    let stem = file
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    statebook::sandbox::write_atomic(file, check::starter(&stem).as_bytes())
        .map_err(|e| cannot_write(file, e))?;
    println!("wrote {}", file.display());
    println!(
        "next: statebook run {0}   or   statebook render {0}",
        file.display()
    );
    Ok(())
}

fn cmd_from_session(log: &Path, output: &Path, title: Option<&str>) -> CliResult {
    use statebook::notebook::session_log;
    refuse_existing(output, "from-session")?;
    let (text, _) = files::read_analysis(log).map_err(CliError::Notebook)?;
    let stem = output
        .file_stem()
        .map(|s| s.to_string_lossy().replace(['-', '_'], " "))
        .unwrap_or_default();
    let title = title.map(str::to_string).unwrap_or(stem);
    let (analysis, summary) = session_log::to_analysis(&text, &log.display().to_string(), &title)
        .map_err(|m| CliError::Failed(format!("{}: {m}", log.display())))?;
    statebook::sandbox::write_atomic(output, analysis.as_bytes())
        .map_err(|e| cannot_write(output, e))?;
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
    Ok(())
}
