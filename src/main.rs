//! The tapplan binary: parses arguments, calls the library, maps outcomes to exit codes
//! (0 ok, 1 a check or target failed, 2 bad input or usage).

mod cli;

use std::path::Path;
use std::process::ExitCode;

use clap::Parser;

use cli::{Cli, Command};
use tapplan::output::files::{WriteError, write_output};

/// Returns the outcome from a command when a step has already reported its failure.
macro_rules! tryo {
    ($e:expr) => {
        match $e {
            Ok(v) => v,
            Err(o) => return Ok(o),
        }
    };
}

/// `println!` and `print!` through [`put`]: a reader that closes the pipe early
/// (`tapplan check … | head`) gets no panic, and the exit status still tells the outcome.
macro_rules! outln {
    () => {
        put(format_args!(""), true)?
    };
    ($($arg:tt)*) => {
        put(format_args!($($arg)*), true)?
    };
}
macro_rules! out {
    ($($arg:tt)*) => {
        put(format_args!($($arg)*), false)?
    };
}

/// `eprintln!` and `eprint!` with control characters escaped (line breaks kept): text from a
/// file (a scheme name, an unknown key, a file name) cannot drive the terminal.
macro_rules! eprintln {
    () => {
        err_text(format_args!(""), true)
    };
    ($($arg:tt)*) => {
        err_text(format_args!($($arg)*), true)
    };
}
macro_rules! eprint {
    ($($arg:tt)*) => {
        err_text(format_args!($($arg)*), false)
    };
}

/// Writes to standard error with control characters escaped (see [`eprintln!`]).
fn err_text(args: std::fmt::Arguments, newline: bool) {
    use std::io::Write;
    let text = args.to_string();
    let text = tapplan::text::escape_controls_keep_lines(&text);
    let mut e = std::io::stderr().lock();
    let _ = e.write_all(text.as_bytes());
    if newline {
        let _ = e.write_all(b"\n");
    }
}

/// How a command ended.
enum Outcome {
    Ok,
    Failed,
    BadInput,
}

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let _ = e.print();
            return ExitCode::from(if e.use_stderr() { 2 } else { 0 });
        }
    };
    match run(cli) {
        Ok(Outcome::Ok) => ExitCode::SUCCESS,
        Ok(Outcome::Failed) => ExitCode::from(1),
        Ok(Outcome::BadInput) => ExitCode::from(2),
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::from(2)
        }
    }
}

/// Writes an output whole (see [`write_output`]). When the output is standard output and its
/// reader has closed the pipe, the rest is dropped, as [`put`] does.
fn emit(path: &Path, bytes: &[u8], inputs: &[&Path]) -> Result<(), WriteError> {
    match write_output(path, bytes, inputs) {
        Err(e) if e.io_kind() == Some(std::io::ErrorKind::BrokenPipe) => Ok(()),
        r => r,
    }
}

/// A path as shown on the terminal: control characters escaped.
fn shown(p: &Path) -> String {
    tapplan::text::escape_controls(&p.display().to_string()).into_owned()
}

/// Writes to standard output. Once its reader has closed the pipe the rest is dropped: the
/// command still finishes, and its exit status still tells its outcome.
/// Control characters in the text are escaped (line breaks kept): text from a file cannot
/// drive the terminal.
fn put(args: std::fmt::Arguments, newline: bool) -> std::io::Result<()> {
    use std::io::Write;
    let text = args.to_string();
    let text = tapplan::text::escape_controls_keep_lines(&text);
    let mut o = std::io::stdout().lock();
    let r = o
        .write_all(text.as_bytes())
        .and_then(|_| if newline { o.write_all(b"\n") } else { Ok(()) });
    match r {
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
        Err(e) => Err(std::io::Error::new(
            e.kind(),
            format!(
                "could not write to standard output: {}",
                tapplan::input::plain_io(&e)
            ),
        )),
        r => r,
    }
}

fn run(cli: Cli) -> anyhow::Result<Outcome> {
    match cli.command {
        Command::New(a) => cmd_new(a),
        Command::Check(a) => cmd_check(a),
        Command::Rules(a) => cmd_rules(a),
        Command::Run(a) => cmd_run(a),
        Command::Size(a) => cmd_size(a),
        Command::Plan(a) => cmd_plan(a),
        Command::Verify(a) => cmd_verify(a),
        Command::Pumptest(a) => cmd_pumptest(a),
    }
}

/// Prints a note on standard error if the work takes longer than about a second.
struct Progress {
    done: std::sync::Arc<std::sync::atomic::AtomicBool>,
}

impl Progress {
    fn start(what: String) -> Progress {
        use std::io::IsTerminal;
        let done = std::sync::Arc::new(std::sync::atomic::AtomicBool::new(false));
        if std::io::stderr().is_terminal() {
            let d = done.clone();
            std::thread::spawn(move || {
                std::thread::sleep(std::time::Duration::from_millis(1000));
                if !d.load(std::sync::atomic::Ordering::Relaxed) {
                    eprintln!("{what} …");
                }
            });
        }
        Progress { done }
    }
}

impl Drop for Progress {
    fn drop(&mut self) {
        self.done.store(true, std::sync::atomic::Ordering::Relaxed);
    }
}

fn cmd_size(a: cli::SizeArgs) -> anyhow::Result<Outcome> {
    use tapplan::output::table;
    let loaded = tryo!(load(&a.file));
    let s = &loaded.scheme;
    let rules = match rule_set(&a.rules) {
        Ok(r) => r,
        Err(o) => return Ok(o),
    };
    let m = tryo!(model(&loaded));
    let n_designs = match tapplan::sizing::estimate_search(&m) {
        Ok(est) => {
            if est.year_simulations > tapplan::sizing::LARGE_SEARCH_YEAR_SIMULATIONS {
                eprintln!(
                    "{}: large search: {} pump sets × {} array sizes × {} tank sizes = {} designs in the ranges; up to about {} ensemble checks ({} year-simulations)",
                    a.file.display(),
                    est.pump_sets,
                    est.array_sizes,
                    est.tank_sizes,
                    est.designs_in_ranges,
                    est.ensemble_checks,
                    est.year_simulations
                );
            }
            est.designs_in_ranges
        }
        Err(_) => 0, // the search itself reports the problem
    };
    let plan = {
        let _p = Progress::start(format!(
            "sizing {}: searching {n_designs} designs in the ranges over {} weather year(s)",
            s.info.name,
            m.weather_years()
        ));
        match tapplan::sizing::size_with_rules(&m, &rules) {
            Ok(mut p) => {
                // tools reading the JSON get the horizon table of every year
                if a.json.is_some() {
                    tapplan::sizing::complete_horizon(&m, &mut p);
                }
                p
            }
            Err(e) => {
                eprint!("{}", loaded.problem(&e.to_string()));
                return Ok(Outcome::BadInput);
            }
        }
    };
    let cur = &s.info.currency;
    let json_stdout = a
        .json
        .as_ref()
        .is_some_and(|p| tapplan::output::files::is_stdout(p));
    if !json_stdout {
        outln!("{}", s.info.name);
        out!("{}", table::plan_summary(&plan, cur));
        if !plan.alternatives.is_empty() {
            outln!("{}", table::alternatives_table(&plan, cur));
        }
        if !plan.front.is_empty() {
            outln!("{}", table::front_table(&plan, cur));
        }
        if !plan.staging.is_empty() {
            outln!("{}", table::staging_table(&plan, cur));
        }
        if !plan.sensitivity.is_empty() {
            outln!("{}", table::sensitivity_table(&plan, cur));
        }
        outln!(
            "Search: {} pump sets × {} array sizes × {} tank sizes = {} designs in the ranges; {} ensemble checks, {} year-simulations ({} further passes to reach periodic states).",
            plan.stats.pump_sets,
            plan.stats.array_sizes,
            plan.stats.tank_sizes,
            plan.stats.designs_in_ranges,
            plan.stats.designs_evaluated,
            plan.stats.year_simulations,
            plan.stats.extra_passes
        );
        for n in &plan.notes {
            outln!("note: {n}");
        }
    }
    if let Some(p) = &a.json {
        let mut text = serde_json::to_string_pretty(&plan)?;
        text.push('\n');
        let inputs: [&Path; 1] = [&a.file];
        emit(p, text.as_bytes(), &inputs)
            .map_err(|e| anyhow::anyhow!("could not write the JSON: {e}"))?;
    }
    let acceptable = plan.verdict.as_ref().is_none_or(|v| v.acceptable);
    Ok(if plan.chosen.is_some() && acceptable {
        Outcome::Ok
    } else {
        Outcome::Failed
    })
}

/// Loads a scheme, printing its problems (exit 2) when it is not valid.
fn load(path: &Path) -> Result<tapplan::scheme::Loaded, Outcome> {
    match tapplan::scheme::load_file(path) {
        Ok(l) => Ok(l),
        Err(e) => {
            eprint!("{e}");
            Err(Outcome::BadInput)
        }
    }
}

/// Builds the engine model, reporting input problems found while preparing (exit 2).
fn model(loaded: &tapplan::scheme::Loaded) -> Result<tapplan::simulate::Model, Outcome> {
    tapplan::simulate::Model::new(&loaded.scheme).map_err(|e| {
        eprint!("{}", loaded.problem(&e.to_string()));
        Outcome::BadInput
    })
}

/// The design options given, checked against each other and against the scheme: a pump type
/// named twice, or an array size for a scheme without a solar-driven pump, is refused.
fn overrides(
    a: &cli::DesignArgs,
    s: &tapplan::scheme::Scheme,
) -> Result<tapplan::simulate::DesignOverrides, Outcome> {
    let mut pumps: Vec<(String, u32)> = Vec::new();
    for p in &a.pumps {
        match tapplan::simulate::parse_pump_override(p) {
            Ok(x) => {
                if let Some((_, n)) = pumps.iter().find(|(name, _)| *name == x.0) {
                    eprintln!(
                        "error: --pumps names `{}` twice ({n} and {} units); give each pump type once",
                        tapplan::text::escape_controls(&x.0),
                        x.1
                    );
                    return Err(Outcome::BadInput);
                }
                pumps.push(x)
            }
            Err(e) => {
                eprintln!("error: --pumps {}", tapplan::text::escape_controls(&e));
                return Err(Outcome::BadInput);
            }
        }
    }
    if a.array_kwp.is_some() && !s.uses_solar() {
        eprintln!(
            "error: --array-kwp: the scheme has no solar-driven pump, so an array size would change nothing; leave the option out or add a pump with `drive: solar`"
        );
        return Err(Outcome::BadInput);
    }
    Ok(tapplan::simulate::DesignOverrides {
        tank_m3: a.tank_m3,
        pumps,
        array_kwp: a.array_kwp,
    })
}

fn cmd_run(a: cli::RunArgs) -> anyhow::Result<Outcome> {
    use tapplan::output::table;
    if let Some(why) = output_clash(&a.hourly, &a.json) {
        eprintln!("error: {why}");
        return Ok(Outcome::BadInput);
    }
    let loaded = tryo!(load(&a.file));
    let s = &loaded.scheme;
    let o = tryo!(overrides(&a.design, s));
    let design = match tapplan::simulate::resolve_design(s, &o) {
        Ok(d) => d,
        Err(e) => {
            eprintln!("{}: {e}", a.file.display());
            return Ok(Outcome::BadInput);
        }
    };
    let rules = tryo!(rule_set(&a.rules));
    let m = tryo!(model(&loaded));
    let r = tapplan::simulate::run_report(&m, &design);
    let verdict = tapplan::sizing::judge(s, &r, &rules);
    let to_stdout = |p: &Option<std::path::PathBuf>| {
        p.as_ref()
            .is_some_and(|p| tapplan::output::files::is_stdout(p))
    };
    let quiet_tables = a.quiet || to_stdout(&a.hourly) || to_stdout(&a.json);
    if !quiet_tables {
        outln!("{}", s.info.name);
        outln!(
            "{}",
            table::annual_table(&r.year, r.storage_days_of_average_demand)
        );
        if !r.year.boreholes.is_empty() {
            outln!("{}", table::borehole_table(&r.year));
        }
        outln!("{}", table::monthly_table(&r.year));
        if r.first_year.years_run > 1 {
            outln!("{}", table::ensemble_table(&r.first_year, &r.horizon_year));
        }
        outln!("{}", table::horizon_table(&r));
        outln!("Operating rules of this run:");
        for rule in &r.rules {
            outln!("  - {rule}");
        }
        for w in &r.warnings {
            outln!("  warning: {w}");
        }
        outln!("{}", table::verdict_line(&verdict));
    }
    let inputs: [&Path; 1] = [&a.file];
    if let Some(p) = &a.hourly {
        let hourly = r.year.hourly.as_ref().expect("hourly kept");
        let text = tapplan::output::csv::hourly_csv(r.year.year, r.year.start_level_m3, hourly);
        emit(p, text.as_bytes(), &inputs)
            .map_err(|e| anyhow::anyhow!("could not write the hourly CSV: {e}"))?;
    }
    if let Some(p) = &a.json {
        /// The run's figures with the rules' verdict on its design beside them.
        #[derive(serde::Serialize)]
        struct RunJson<'a> {
            #[serde(flatten)]
            report: &'a tapplan::simulate::RunReport,
            verdict: &'a tapplan::sizing::Verdict,
        }
        let mut text = serde_json::to_string_pretty(&RunJson {
            report: &r,
            verdict: &verdict,
        })?;
        text.push('\n');
        emit(p, text.as_bytes(), &inputs)
            .map_err(|e| anyhow::anyhow!("could not write the JSON: {e}"))?;
    }
    if !(to_stdout(&a.hourly) || to_stdout(&a.json)) {
        outln!("{}", table::run_summary_line(&r));
    } else {
        eprintln!("{}", table::run_summary_line(&r));
    }
    Ok(Outcome::Ok)
}

fn cmd_new(a: cli::NewArgs) -> anyhow::Result<Outcome> {
    use tapplan::templates::{TEMPLATES, find};
    if a.list {
        for t in TEMPLATES {
            outln!("{:<10} {}", t.name, t.about);
        }
        return Ok(Outcome::Ok);
    }
    let Some(file) = a.file else {
        anyhow::bail!("give the scheme file to create, e.g. `tapplan new village.yaml`");
    };
    let Some(t) = find(&a.template) else {
        let names: Vec<&str> = TEMPLATES.iter().map(|t| t.name).collect();
        eprintln!(
            "error: there is no template `{}`; choose one of: {}",
            a.template,
            names.join(", ")
        );
        return Ok(Outcome::BadInput);
    };
    if !output_folder_ok(&file) {
        return Ok(Outcome::BadInput);
    }
    if file.is_dir() {
        eprintln!(
            "error: '{}' is a folder; give the path of the scheme file to create, e.g. '{}'",
            shown(&file),
            shown(&file.join("village.yaml"))
        );
        return Ok(Outcome::BadInput);
    }
    if file.exists() && !a.force {
        eprintln!(
            "error: '{}' already exists; choose another name or add --force to overwrite it",
            file.display()
        );
        return Ok(Outcome::BadInput);
    }
    emit(&file, t.text.as_bytes(), &[])?;
    outln!(
        "wrote '{}' from the `{}` template; edit it, then run `tapplan check {}`",
        file.display(),
        t.name,
        file.display()
    );
    Ok(Outcome::Ok)
}

/// The rules in force: the defaults, changed by `--rules FILE` when given (exit 2 when bad).
fn rule_set(path: &Option<std::path::PathBuf>) -> Result<tapplan::rules::RuleSet, Outcome> {
    match path {
        None => Ok(tapplan::rules::RuleSet::defaults()),
        Some(p) => tapplan::rules::RuleSet::load(p).map_err(|e| {
            eprint!("{e}");
            Outcome::BadInput
        }),
    }
}

fn cmd_check(a: cli::CheckArgs) -> anyhow::Result<Outcome> {
    use std::io::IsTerminal;
    use tapplan::rules::render;
    let rules = tryo!(rule_set(&a.rules));
    let total = a.files.len();
    let progress = total > 20 && std::io::stderr().is_terminal();
    let on_done = |n: usize| {
        if progress {
            // the carriage return is this program's own (the progress line rewrites itself)
            use std::io::Write;
            let _ = write!(std::io::stderr(), "\rchecked {n}/{total} files");
        }
    };
    let checks = tapplan::rules::check_files(&a.files, &rules, &on_done);
    if progress {
        eprintln!();
    }
    let summary = render::BatchSummary::of(&checks);
    if a.json {
        let out = render::CheckJson {
            rules_district: rules.district.as_deref(),
            rules_file: rules.file.as_deref(),
            files: &checks,
            summary,
        };
        outln!("{}", serde_json::to_string_pretty(&out)?);
        for fc in &checks {
            if let Some(t) = &fc.error_text {
                eprint!("{t}");
            }
        }
    } else {
        if let Some(d) = &rules.district {
            outln!(
                "Rules: defaults changed by {} ({d})",
                rules.file.as_deref().unwrap_or("?")
            );
        } else if let Some(f) = &rules.file {
            outln!("Rules: defaults changed by {f}");
        }
        for fc in &checks {
            if let Some(t) = &fc.error_text {
                eprint!("{t}");
                outln!("{}: invalid (see the problems above)\n", fc.file);
                continue;
            }
            outln!(
                "{}: valid — {}",
                fc.file,
                fc.scheme.as_deref().unwrap_or("")
            );
            match (&fc.design, &fc.note) {
                (Some(d), _) => outln!("  design in the file: {d}"),
                (None, Some(n)) => outln!("  {n}"),
                _ => {}
            }
            for w in &fc.warnings {
                outln!("  warning: {w}");
            }
            outln!("{}", render::outcomes_table(fc));
            out!("{}", render::outcome_notes(fc));
            outln!();
        }
        outln!("{}", render::summary_table(&checks));
        outln!("{}", summary.line());
    }
    Ok(if summary.invalid > 0 {
        Outcome::BadInput
    } else if summary.failed > 0 {
        Outcome::Failed
    } else {
        Outcome::Ok
    })
}

fn cmd_rules(a: cli::RulesArgs) -> anyhow::Result<Outcome> {
    use tapplan::rules::render;
    let rules = tryo!(rule_set(&a.rules));
    if a.json {
        outln!(
            "{}",
            serde_json::to_string_pretty(&render::RuleSetView::of(&rules))?
        );
        return Ok(Outcome::Ok);
    }
    match (&rules.file, &rules.district) {
        (Some(f), Some(d)) => outln!("Rules in force: defaults changed by {f} ({d})"),
        (Some(f), None) => outln!("Rules in force: defaults changed by {f}"),
        _ => outln!("Rules in force: the defaults"),
    }
    outln!("{}", render::rules_table(&rules));
    outln!("Sources:");
    out!("{}", render::references(&rules));
    Ok(Outcome::Ok)
}

/// Checks that the output's folder exists, so the error names the folder rather than a
/// temporary file.
fn output_folder_ok(out: &Path) -> bool {
    if tapplan::output::files::is_stdout(out) {
        return true;
    }
    let Some(p) = out.parent().filter(|p| !p.as_os_str().is_empty()) else {
        return true;
    };
    match std::fs::metadata(p) {
        Ok(m) if m.is_dir() => true,
        Ok(_) => {
            eprintln!(
                "error: cannot write '{}': '{}' is not a folder; choose another output path",
                shown(out),
                shown(p)
            );
            false
        }
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            eprintln!(
                "error: cannot write '{}': the folder '{}' does not exist; create it or choose another output path",
                shown(out),
                shown(p)
            );
            false
        }
        Err(e) => {
            eprintln!(
                "error: cannot write '{}': {}",
                shown(out),
                tapplan::input::plain_io(&e)
            );
            false
        }
    }
}

/// Why `--hourly` and `--json` cannot both be written: the same file, or both standard output.
fn output_clash(
    hourly: &Option<std::path::PathBuf>,
    json: &Option<std::path::PathBuf>,
) -> Option<String> {
    let (Some(h), Some(j)) = (hourly, json) else {
        return None;
    };
    use tapplan::output::files::is_stdout;
    if is_stdout(h) && is_stdout(j) {
        return Some(
            "--hourly - and --json - would mix CSV and JSON in one stream; send one of them to a file".into(),
        );
    }
    // the folder resolved (links and `.` followed), the name kept: files not yet there too
    let place = |p: &Path| {
        let dir = match p.parent() {
            Some(d) if !d.as_os_str().is_empty() => d,
            _ => Path::new("."),
        };
        dir.canonicalize()
            .ok()
            .zip(p.file_name().map(|n| n.to_owned()))
    };
    let same = h == j
        || matches!((h.canonicalize(), j.canonicalize()), (Ok(x), Ok(y)) if x == y)
        || matches!((place(h), place(j)), (Some(x), Some(y)) if x == y);
    same.then(|| {
        format!(
            "--hourly and --json both name '{}'; one would overwrite the other — give each its own file",
            shown(h)
        )
    })
}

fn cmd_plan(a: cli::PlanArgs) -> anyhow::Result<Outcome> {
    use tapplan::output::pdf::plan;
    if tapplan::output::files::is_stdout(&a.output)
        && std::io::IsTerminal::is_terminal(&std::io::stdout())
    {
        eprintln!(
            "error: -o - would write the PDF's bytes to the terminal; give a file name, or send standard output to a file or a program (`-o - > plan.pdf`)"
        );
        return Ok(Outcome::BadInput);
    }
    if !output_folder_ok(&a.output) {
        return Ok(Outcome::BadInput);
    }
    let loaded = tryo!(load(&a.file));
    let rules = tryo!(rule_set(&a.rules));
    let rules_bytes = match &a.rules {
        Some(p) => {
            match tapplan::input::read_limited(p, tapplan::scheme::load::MAX_FILE_BYTES as u64) {
                Ok(b) => Some(b),
                Err(e) => {
                    eprintln!("error: cannot read '{}': {e}", shown(p));
                    return Ok(Outcome::BadInput);
                }
            }
        }
        None => None,
    };
    let rules_name = a.rules.as_ref().map(|p| {
        p.file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| "rules.yaml".into())
    });
    let rules_file = match (&rules_name, &rules_bytes) {
        (Some(n), Some(b)) => Some(plan::RulesFile { name: n, bytes: b }),
        _ => None,
    };
    let bytes =
        match tapplan::input::read_limited(&a.file, tapplan::scheme::load::MAX_FILE_BYTES as u64) {
            Ok(b) => b,
            Err(e) => {
                eprintln!("error: cannot read '{}': {e}", shown(&a.file));
                return Ok(Outcome::BadInput);
            }
        };
    let given =
        !a.design.pumps.is_empty() || a.design.tank_m3.is_some() || a.design.array_kwp.is_some();
    let o = tryo!(overrides(&a.design, &loaded.scheme));
    let name = a
        .file
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "scheme.yaml".into());
    let run = {
        let _p = Progress::start(format!("planning {}", loaded.scheme.info.name));
        match plan::run_plan(
            &loaded,
            &bytes,
            &name,
            given.then_some(&o),
            &rules,
            rules_file,
        ) {
            Ok(r) => r,
            Err(e) => {
                eprint!("{}", loaded.problem(&e.to_string()));
                return Ok(Outcome::BadInput);
            }
        }
    };
    let inputs: [&Path; 1] = [&a.file];
    if let Err(e) = emit(&a.output, &run.pdf, &inputs) {
        eprintln!("error: {e}");
        return Ok(Outcome::BadInput);
    }
    let f = &run.figures;
    let line = format!(
        "{}: {}; shortfall {:.0} h in the first year, {:.0} h in the horizon year; target {}; {}",
        f.scheme,
        f.design,
        f.shortfall_hours_first_year,
        f.shortfall_hours_horizon_year,
        if run.target_met { "met" } else { "NOT met" },
        if f.failing_rules.is_empty() {
            "no failing rule".to_string()
        } else {
            format!("rules FAIL: {}", f.failing_rules.join(", "))
        }
    );
    if tapplan::output::files::is_stdout(&a.output) {
        eprintln!("{line}");
    } else {
        outln!("{line}");
        outln!("wrote '{}' ({} bytes)", a.output.display(), run.pdf.len());
    }
    Ok(if run.target_met && run.acceptable {
        Outcome::Ok
    } else {
        Outcome::Failed
    })
}

/// A folder under the system temporary folder, removed on drop.
struct TempFolder(std::path::PathBuf);

impl TempFolder {
    fn new() -> std::io::Result<TempFolder> {
        let base = std::env::temp_dir();
        for n in 0..1000u32 {
            let p = base.join(format!("tapplan-verify-{}-{n}", std::process::id()));
            match std::fs::create_dir(&p) {
                Ok(()) => return Ok(TempFolder(p)),
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => continue,
                Err(e) => return Err(e),
            }
        }
        Err(std::io::Error::other("could not create a temporary folder"))
    }
}

impl Drop for TempFolder {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

fn cmd_verify(a: cli::VerifyArgs) -> anyhow::Result<Outcome> {
    use tapplan::output::pdf::{extract_attachment, plan};
    let label = shown(&a.pdf);
    let pdf = match tapplan::input::read_limited(&a.pdf, tapplan::output::pdf::MAX_PLAN_PDF_BYTES) {
        Ok(b) => b,
        Err(tapplan::input::ReadError::TooLarge { limit }) => {
            eprintln!(
                "error: '{label}' is larger than {limit} bytes (64 MiB); a plan PDF written by `tapplan plan` is far smaller — is this the right file?"
            );
            return Ok(Outcome::BadInput);
        }
        Err(e) => {
            eprintln!("error: cannot read '{label}': {e}");
            return Ok(Outcome::BadInput);
        }
    };
    let get = |name: &str| -> Result<Option<Vec<u8>>, Outcome> {
        extract_attachment(&pdf, name).map_err(|e| {
            eprintln!("error: '{label}' cannot be read as a plan PDF: {e}");
            Outcome::BadInput
        })
    };
    let Some(scheme_bytes) = tryo!(get(plan::SCHEME_ATTACHMENT)) else {
        eprintln!(
            "error: '{label}' has no embedded scheme file ({}); only plans written by `tapplan plan` can be verified",
            plan::SCHEME_ATTACHMENT
        );
        return Ok(Outcome::BadInput);
    };
    if let Some(out) = &a.extract {
        if out.exists() && !a.force {
            eprintln!(
                "error: '{}' already exists; choose another name or add --force to overwrite it",
                out.display()
            );
            return Ok(Outcome::BadInput);
        }
        if !output_folder_ok(out) {
            return Ok(Outcome::BadInput);
        }
        let inputs: [&Path; 1] = [&a.pdf];
        if tapplan::output::files::is_stdout(out)
            && std::io::IsTerminal::is_terminal(&std::io::stdout())
        {
            // shown on a terminal: through `put`, which escapes control characters
            out!("{}", String::from_utf8_lossy(&scheme_bytes));
            return Ok(Outcome::Ok);
        }
        if let Err(e) = emit(out, &scheme_bytes, &inputs) {
            eprintln!("error: {e}");
            return Ok(Outcome::BadInput);
        }
        if !tapplan::output::files::is_stdout(out) {
            outln!(
                "wrote the embedded scheme file to '{}' ({} bytes)",
                out.display(),
                scheme_bytes.len()
            );
        }
        return Ok(Outcome::Ok);
    }
    let Some(fig_bytes) = tryo!(get(plan::FIGURES_ATTACHMENT)) else {
        eprintln!(
            "error: '{label}' has no embedded key figures ({}); it was not written by `tapplan plan`",
            plan::FIGURES_ATTACHMENT
        );
        return Ok(Outcome::BadInput);
    };
    let stored: plan::Figures = match serde_json::from_slice(&fig_bytes) {
        Ok(f) => f,
        Err(e) => {
            eprintln!(
                "error: the key figures embedded in '{label}' cannot be read ({e}); the PDF was altered or written by another version"
            );
            return Ok(Outcome::BadInput);
        }
    };
    let dir = match TempFolder::new() {
        Ok(d) => d,
        Err(e) => {
            eprintln!("error: cannot create a temporary folder: {e}");
            return Ok(Outcome::BadInput);
        }
    };
    if let Some(w) = &stored.weather_file {
        let rel = Path::new(w);
        let safe = rel.components().all(|c| {
            matches!(
                c,
                std::path::Component::Normal(_) | std::path::Component::CurDir
            )
        });
        if !safe {
            eprintln!(
                "error: the plan names the weather file '{w}' outside the scheme's folder; put the weather file beside the scheme file (or below it) and plan again to make the PDF verifiable"
            );
            return Ok(Outcome::BadInput);
        }
        let Some(bytes) = tryo!(get(&plan::weather_attachment_name(w))) else {
            eprintln!("error: '{label}' names the weather file '{w}' but does not embed it");
            return Ok(Outcome::BadInput);
        };
        let target = dir.0.join(rel);
        let written = target
            .parent()
            .map_or(Ok(()), std::fs::create_dir_all)
            .and_then(|_| std::fs::write(&target, &bytes));
        if let Err(e) = written {
            eprintln!("error: cannot write the embedded weather file to a temporary folder: {e}");
            return Ok(Outcome::BadInput);
        }
    }
    let names = match tapplan::output::pdf::list_attachments(&pdf) {
        Ok(n) => n,
        Err(e) => {
            eprintln!("error: '{label}' cannot be read as a plan PDF: {e}");
            return Ok(Outcome::BadInput);
        }
    };
    let prefix = tapplan::output::pumptest::PLAN_ATTACHMENT_PREFIX;
    for n in names.iter().filter(|n| n.starts_with(prefix)) {
        let rel = Path::new(&n[prefix.len()..]);
        let safe = rel
            .components()
            .all(|c| matches!(c, std::path::Component::Normal(_)));
        if !safe {
            eprintln!(
                "error: the plan carries the pumping-test file '{}' from outside the scheme's folder; put the test files beside the scheme file (or below it) and plan again to make the PDF verifiable",
                rel.display()
            );
            return Ok(Outcome::BadInput);
        }
        let Some(bytes) = tryo!(get(n)) else {
            continue;
        };
        let target = dir.0.join(rel);
        let written = target
            .parent()
            .map_or(Ok(()), std::fs::create_dir_all)
            .and_then(|_| std::fs::write(&target, &bytes));
        if let Err(e) = written {
            eprintln!(
                "error: cannot write the embedded pumping-test file to a temporary folder: {e}"
            );
            return Ok(Outcome::BadInput);
        }
    }
    // the district rules file the plan followed travels inside it
    let rules_bytes = match &stored.rules_file {
        Some(n) => match tryo!(get(plan::RULES_ATTACHMENT)) {
            Some(b) => Some((n.clone(), b)),
            None => {
                eprintln!("error: '{label}' names the rules file '{n}' but does not embed it");
                return Ok(Outcome::BadInput);
            }
        },
        None => None,
    };
    let rules = match &rules_bytes {
        Some((n, b)) => {
            let text = String::from_utf8_lossy(b);
            match tapplan::rules::district::from_str(&text, &format!("{label} (embedded {n})")) {
                Ok(r) => r,
                Err(e) => {
                    eprintln!("{e}");
                    return Ok(Outcome::BadInput);
                }
            }
        }
        None => tapplan::rules::RuleSet::defaults(),
    };
    let rules_file = rules_bytes
        .as_ref()
        .map(|(n, b)| plan::RulesFile { name: n, bytes: b });
    let scheme_label = format!("{label} (embedded {})", stored.scheme_file_name);
    let loaded = match tapplan::scheme::load_bytes(&scheme_bytes, &scheme_label, &dir.0) {
        Ok(l) => l,
        Err(e) => {
            eprint!("{e}");
            return Ok(Outcome::BadInput);
        }
    };
    let o = stored
        .overrides
        .as_ref()
        .map(|r| tapplan::simulate::DesignOverrides {
            tank_m3: r.tank_m3,
            pumps: r.pumps.clone(),
            array_kwp: r.array_kwp,
        });
    let run = {
        let _p = Progress::start(format!("re-planning {}", loaded.scheme.info.name));
        match plan::run_plan(
            &loaded,
            &scheme_bytes,
            &stored.scheme_file_name,
            o.as_ref(),
            &rules,
            rules_file,
        ) {
            Ok(r) => r,
            Err(e) => {
                eprintln!("{scheme_label}: {e}");
                return Ok(Outcome::BadInput);
            }
        }
    };
    let diffs = stored.differences(&run.figures);
    let same_bytes = run.pdf == pdf;
    if diffs.is_empty() {
        outln!("figures match: {}", stored.design);
    } else {
        outln!("figures DIFFER ({}):", diffs.len());
        for d in &diffs {
            outln!("  {d}");
        }
    }
    if same_bytes {
        outln!(
            "bytes match: the re-run gives this PDF exactly ({} bytes)",
            pdf.len()
        );
    } else {
        outln!(
            "bytes DIFFER: the re-run gives {} bytes, the file has {}",
            run.pdf.len(),
            pdf.len()
        );
    }
    Ok(if diffs.is_empty() && same_bytes {
        Outcome::Ok
    } else {
        Outcome::Failed
    })
}

fn cmd_pumptest(a: cli::PumptestArgs) -> anyhow::Result<Outcome> {
    use tapplan::output::pumptest as render;
    for out in [&a.json, &a.pdf, &a.block].into_iter().flatten() {
        if !output_folder_ok(out) {
            return Ok(Outcome::BadInput);
        }
    }
    let stdout_outputs = [&a.json, &a.pdf, &a.block]
        .into_iter()
        .flatten()
        .filter(|p| p.as_os_str() == "-")
        .count();
    if stdout_outputs > 1 {
        eprintln!(
            "error: only one of --json, --pdf and --block can go to standard output (`-`); write the others to files"
        );
        return Ok(Outcome::BadInput);
    }
    let test = match tapplan::pumptest::load_file(&a.file) {
        Ok(t) => t,
        Err(e) => {
            eprint!("{e}");
            return Ok(Outcome::BadInput);
        }
    };
    let report = match tapplan::pumptest::analyse(&test) {
        Ok(r) => r,
        Err(e) => {
            eprint!("{e}");
            return Ok(Outcome::BadInput);
        }
    };
    let name = a
        .file
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "pumping test".into());
    // With --for-scheme: the scheme's borehole of the same name, and the test file's path
    // relative to the scheme.
    let mut comparison: Option<Vec<Vec<String>>> = None;
    let mut rel: Option<String> = None;
    if let Some(sp) = &a.for_scheme {
        let loaded = tryo!(load(sp));
        let bname = &report.borehole.name;
        let Some(bh) = loaded.scheme.boreholes.iter().find(|b| &b.name == bname) else {
            let names: Vec<&str> = loaded
                .scheme
                .boreholes
                .iter()
                .map(|b| b.name.as_str())
                .collect();
            eprintln!(
                "error: {}: no borehole is named `{bname}` (the name in {}); its boreholes: {}; give the same name in both files",
                sp.display(),
                a.file.display(),
                if names.is_empty() {
                    "none".to_string()
                } else {
                    names.join(", ")
                }
            );
            return Ok(Outcome::BadInput);
        };
        comparison = Some(render::comparison_rows(bh, &report));
        rel = tapplan::pumptest::relative_path(&loaded.source.base_dir, &a.file);
    }
    let block = tapplan::pumptest::scheme_block(&report, &name, rel.as_deref());
    let mut inputs: Vec<std::path::PathBuf> = vec![a.file.clone()];
    let base = a.file.parent().map(Path::to_path_buf).unwrap_or_default();
    for t in &test.tests {
        inputs.push(base.join(&t.file));
    }
    let input_refs: Vec<&Path> = inputs.iter().map(|p| p.as_path()).collect();
    if stdout_outputs == 0 {
        if let (Some(rows), Some(sp)) = (&comparison, &a.for_scheme) {
            let mut t = tapplan::output::table::new_table(&[
                "figure",
                "scheme file",
                "pumping test",
                "agreement",
            ]);
            for r in rows {
                t.add_row(r.clone());
            }
            outln!("Figures of {} against the test:\n{t}\n", sp.display());
        }
        out!("{}", render::text(&report, &block));
    } else {
        for n in &report.notes {
            eprintln!("note: {n}");
        }
    }
    if let Some(p) = &a.json {
        #[derive(serde::Serialize)]
        struct Out<'a> {
            report: &'a tapplan::pumptest::Report,
            scheme_block: &'a str,
            /// With --for-scheme: rows of figure, scheme value, test value, agreement.
            #[serde(skip_serializing_if = "Option::is_none")]
            scheme_comparison: Option<&'a Vec<Vec<String>>>,
        }
        let mut text = serde_json::to_string_pretty(&Out {
            report: &report,
            scheme_block: &block,
            scheme_comparison: comparison.as_ref(),
        })?;
        text.push('\n');
        if let Err(e) = emit(p, text.as_bytes(), &input_refs) {
            eprintln!("error: {e}");
            return Ok(Outcome::BadInput);
        }
    }
    if let Some(p) = &a.block
        && let Err(e) = emit(p, block.as_bytes(), &input_refs)
    {
        eprintln!("error: {e}");
        return Ok(Outcome::BadInput);
    }
    if let Some(p) = &a.pdf {
        let bytes = match render::pdf(&report, &block, &test.files) {
            Ok(b) => b,
            Err(e) => {
                eprintln!("error: {e}");
                return Ok(Outcome::BadInput);
            }
        };
        if let Err(e) = emit(p, &bytes, &input_refs) {
            eprintln!("error: {e}");
            return Ok(Outcome::BadInput);
        }
        if p.as_os_str() != "-" && stdout_outputs == 0 {
            outln!("wrote '{}' ({} bytes)", p.display(), bytes.len());
        }
    }
    Ok(Outcome::Ok)
}
