//! The tapplan binary: parses arguments, calls the library, maps outcomes to exit codes
//! (0 ok, 1 a check or target failed, 2 bad input or usage).

mod cli;

use std::path::Path;
use std::process::ExitCode;

use clap::Parser;

use cli::{Cli, Command};
use tapplan::output::files::write_output;

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
    }
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
