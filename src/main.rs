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

fn cmd_check(a: cli::CheckArgs) -> anyhow::Result<Outcome> {
    let mut worst = Outcome::Ok;
    for f in &a.files {
        match tapplan::scheme::load_file(f) {
            Ok(loaded) => {
                println!("{}: valid", f.display());
                println!("{}", tapplan::output::table::scheme_summary(&loaded.scheme));
                for w in &loaded.scheme.warnings {
                    println!("  warning: {w}");
                }
            }
            Err(e) => {
                eprint!("{e}");
                worst = Outcome::BadInput;
            }
        }
    }
    Ok(worst)
}

#[allow(dead_code)]
fn label(p: &Path) -> String {
    p.display().to_string()
}
