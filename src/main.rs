//! The tapplan binary: parses arguments, calls the library, maps outcomes to exit codes
//! (0 ok, 1 a check or target failed, 2 bad input or usage).

mod cli;

use std::path::Path;
use std::process::ExitCode;

use clap::Parser;

use cli::{Cli, Command};
use tapplan::output::files::write_output;

/// Returns the outcome from a command when a step has already reported its failure.
macro_rules! tryo {
    ($e:expr) => {
        match $e {
            Ok(v) => v,
            Err(o) => return Ok(o),
        }
    };
}

/// How a command ended.
#[allow(dead_code)] // `Failed` is used once checks and targets land
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

fn run(cli: Cli) -> anyhow::Result<Outcome> {
    match cli.command {
        Command::New(a) => cmd_new(a),
        Command::Check(a) => cmd_check(a),
        Command::Rules(a) => cmd_rules(a),
        Command::Run(a) => cmd_run(a),
        Command::Size(a) => cmd_size(a),
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
    let m = tryo!(model(&a.file, s));
    let sets = tapplan::sizing::pump_sets(s).map(|v| v.len()).unwrap_or(0);
    let n_designs = sets
        * tapplan::sizing::array_candidates(s).len()
        * tapplan::sizing::tank_candidates(s).len();
    let plan = {
        let _p = Progress::start(format!(
            "sizing {}: searching {n_designs} designs in the ranges over {} weather year(s)",
            s.info.name,
            m.weather_years()
        ));
        match tapplan::sizing::size_with_model(&m) {
            Ok(p) => p,
            Err(e) => {
                eprintln!("{}: {e}", a.file.display());
                return Ok(Outcome::BadInput);
            }
        }
    };
    let cur = &s.info.currency;
    let json_stdout = a.json.as_ref().is_some_and(|p| p.as_os_str() == "-");
    if !json_stdout {
        println!("{}", s.info.name);
        print!("{}", table::plan_summary(&plan, cur));
        if !plan.alternatives.is_empty() {
            println!("{}", table::alternatives_table(&plan, cur));
        }
        if !plan.front.is_empty() {
            println!("{}", table::front_table(&plan, cur));
        }
        if !plan.staging.is_empty() {
            println!("{}", table::staging_table(&plan, cur));
        }
        if !plan.sensitivity.is_empty() {
            println!("{}", table::sensitivity_table(&plan, cur));
        }
        println!(
            "Search: {} pump sets × {} array sizes × {} tank sizes = {} designs in the ranges; {} ensemble checks, {} year-simulations.",
            plan.stats.pump_sets,
            plan.stats.array_sizes,
            plan.stats.tank_sizes,
            plan.stats.designs_in_ranges,
            plan.stats.designs_evaluated,
            plan.stats.year_simulations
        );
        for n in &plan.notes {
            println!("note: {n}");
        }
    }
    if let Some(p) = &a.json {
        let mut text = serde_json::to_string_pretty(&plan)?;
        text.push('\n');
        let inputs: [&Path; 1] = [&a.file];
        write_output(p, text.as_bytes(), &inputs)
            .map_err(|e| anyhow::anyhow!("could not write the JSON: {e}"))?;
    }
    Ok(if plan.chosen.is_some() {
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
fn model(path: &Path, s: &tapplan::scheme::Scheme) -> Result<tapplan::simulate::Model, Outcome> {
    tapplan::simulate::Model::new(s).map_err(|e| {
        eprintln!("{}: {e}", path.display());
        Outcome::BadInput
    })
}

fn overrides(a: &cli::DesignArgs) -> Result<tapplan::simulate::DesignOverrides, Outcome> {
    let mut pumps = Vec::new();
    for p in &a.pumps {
        match tapplan::simulate::parse_pump_override(p) {
            Ok(x) => pumps.push(x),
            Err(e) => {
                eprintln!("error: --pumps {e}");
                return Err(Outcome::BadInput);
            }
        }
    }
    Ok(tapplan::simulate::DesignOverrides {
        tank_m3: a.tank_m3,
        pumps,
        array_kwp: a.array_kwp,
    })
}

fn cmd_run(a: cli::RunArgs) -> anyhow::Result<Outcome> {
    use tapplan::output::table;
    let loaded = tryo!(load(&a.file));
    let s = &loaded.scheme;
    let o = tryo!(overrides(&a.design));
    let design = match tapplan::simulate::resolve_design(s, &o) {
        Ok(d) => d,
        Err(e) => {
            eprintln!("{}: {e}", a.file.display());
            return Ok(Outcome::BadInput);
        }
    };
    let m = tryo!(model(&a.file, s));
    let r = tapplan::simulate::run_report(&m, &design);
    let to_stdout =
        |p: &Option<std::path::PathBuf>| p.as_ref().is_some_and(|p| p.as_os_str() == "-");
    let quiet_tables = a.quiet || to_stdout(&a.hourly) || to_stdout(&a.json);
    if !quiet_tables {
        println!("{}", s.info.name);
        println!(
            "{}",
            table::annual_table(&r.year, r.storage_days_of_average_demand)
        );
        println!("{}", table::monthly_table(&r.year));
        if r.first_year.years_run > 1 {
            println!("{}", table::ensemble_table(&r.first_year, &r.horizon_year));
        }
        println!("{}", table::horizon_table(&r));
        println!("Operating rules of this run:");
        for rule in &r.rules {
            println!("  - {rule}");
        }
        for w in &r.warnings {
            println!("  warning: {w}");
        }
    }
    let inputs: [&Path; 1] = [&a.file];
    if let Some(p) = &a.hourly {
        let hourly = r.year.hourly.as_ref().expect("hourly kept");
        let text = tapplan::output::csv::hourly_csv(r.year.year, hourly);
        write_output(p, text.as_bytes(), &inputs)
            .map_err(|e| anyhow::anyhow!("could not write the hourly CSV: {e}"))?;
    }
    if let Some(p) = &a.json {
        let mut text = serde_json::to_string_pretty(&r)?;
        text.push('\n');
        write_output(p, text.as_bytes(), &inputs)
            .map_err(|e| anyhow::anyhow!("could not write the JSON: {e}"))?;
    }
    if !(to_stdout(&a.hourly) || to_stdout(&a.json)) {
        println!("{}", table::run_summary_line(&r));
    } else {
        eprintln!("{}", table::run_summary_line(&r));
    }
    Ok(Outcome::Ok)
}

fn cmd_new(a: cli::NewArgs) -> anyhow::Result<Outcome> {
    use tapplan::templates::{TEMPLATES, find};
    if a.list {
        for t in TEMPLATES {
            println!("{:<10} {}", t.name, t.about);
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
    if file.exists() && !a.force {
        eprintln!(
            "error: '{}' already exists; choose another name or add --force to overwrite it",
            file.display()
        );
        return Ok(Outcome::BadInput);
    }
    write_output(&file, t.text.as_bytes(), &[])?;
    println!(
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
            eprint!("\rchecked {n}/{total} files");
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
        println!("{}", serde_json::to_string_pretty(&out)?);
        for fc in &checks {
            if let Some(t) = &fc.error_text {
                eprint!("{t}");
            }
        }
    } else {
        if let Some(d) = &rules.district {
            println!(
                "Rules: defaults changed by {} ({d})",
                rules.file.as_deref().unwrap_or("?")
            );
        } else if let Some(f) = &rules.file {
            println!("Rules: defaults changed by {f}");
        }
        for fc in &checks {
            if let Some(t) = &fc.error_text {
                eprint!("{t}");
                println!("{}: invalid (see the problems above)\n", fc.file);
                continue;
            }
            println!(
                "{}: valid — {}",
                fc.file,
                fc.scheme.as_deref().unwrap_or("")
            );
            match (&fc.design, &fc.note) {
                (Some(d), _) => println!("  design in the file: {d}"),
                (None, Some(n)) => println!("  {n}"),
                _ => {}
            }
            for w in &fc.warnings {
                println!("  warning: {w}");
            }
            println!("{}", render::outcomes_table(fc));
            print!("{}", render::outcome_notes(fc));
            println!();
        }
        println!("{}", render::summary_table(&checks));
        println!("{}", summary.line());
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
        println!(
            "{}",
            serde_json::to_string_pretty(&render::RuleSetView::of(&rules))?
        );
        return Ok(Outcome::Ok);
    }
    match (&rules.file, &rules.district) {
        (Some(f), Some(d)) => println!("Rules in force: defaults changed by {f} ({d})"),
        (Some(f), None) => println!("Rules in force: defaults changed by {f}"),
        _ => println!("Rules in force: the defaults"),
    }
    println!("{}", render::rules_table(&rules));
    println!("Sources:");
    print!("{}", render::references(&rules));
    Ok(Outcome::Ok)
}

#[allow(dead_code)]
fn label(p: &Path) -> String {
    p.display().to_string()
}
