//! Command-line arguments (clap derive). Declarations only: `main.rs` does the work.

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};

/// The caution every help text carries.
macro_rules! caution {
    () => {
        "CAUTION: tapplan plans; it does not certify. Water supply can hurt people. Test water quality
before use and protect the source from contamination; have elevated tanks designed by a
structural engineer; have PV and generator electrics installed by qualified people. Local codes,
water-quality testing and licensed practice take precedence over anything this tool prints."
    };
}

/// An example block followed by the caution.
macro_rules! help_with_caution {
    ($ex:expr) => {
        concat!($ex, "\n\n", caution!())
    };
}

pub const CAUTION: &str = caution!();

#[derive(Debug, Parser)]
#[command(
    name = "tapplan",
    version,
    propagate_version = true,
    about = "Plans a village water supply: tank size, pump count and hours a year the taps run dry",
    long_about = "Plans a village water supply from one YAML scheme file: simulates the storage tank \
hour by hour over a year and the design horizon, finds the least-cost tank size and pump count \
that meets the reliability target, and prints the plan.",
    after_help = CAUTION,
    after_long_help = help_with_caution!("Example:\n  tapplan new village.yaml --template solar\n  tapplan check village.yaml\n  tapplan plan village.yaml -o village-plan.pdf")
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Write a starter scheme file from a template
    #[command(
        after_help = help_with_caution!("Example:\n  tapplan new kijiji.yaml --template solar\n  tapplan new --list")
    )]
    New(NewArgs),
    /// Validate scheme files and check each proposal against the rules
    #[command(
        after_help = help_with_caution!("Exit status: 0 all rules pass (warnings allowed), 1 a rule fails, 2 a file is invalid.\n\nExample:\n  tapplan check samples/*.yaml\n  tapplan check samples/*.yaml --rules samples/rules/district-example.yaml --json")
    )]
    Check(CheckArgs),
    /// List the rules in force with their limits, severities and sources
    #[command(
        after_help = help_with_caution!("Example:\n  tapplan rules\n  tapplan rules --rules samples/rules/district-example.yaml")
    )]
    Rules(RulesArgs),
    /// Simulate a design hour by hour over a year and the design horizon
    #[command(
        after_help = help_with_caution!("Example:\n  tapplan run samples/kessa-ridge-solar.yaml\n  tapplan run samples/kessa-ridge-solar.yaml --tank-m3 80 --pumps SolarSub-9=2 --hourly hours.csv")
    )]
    Run(RunArgs),
    /// Search the least-cost tank, pump count and array that meet the target
    #[command(
        after_help = help_with_caution!("Exit codes: 0 a design meets the target and fails no rule, 1 none does (the best found is shown with what it misses), 2 bad input.\n\nExample:\n  tapplan size samples/kessa-ridge-solar.yaml\n  tapplan size samples/kessa-ridge-solar.yaml --json plan.json\n  tapplan size samples/wendi-hamlet-ram.yaml --rules samples/rules/district-example.yaml")
    )]
    Size(SizeArgs),
    /// Size the scheme (or evaluate a given design) and write the plan as an A4 PDF
    #[command(
        after_help = help_with_caution!("Exit codes: 0 the target is met and no rule fails, 1 the design shown misses the target or fails a rule (the PDF is still written and says so), 2 bad input.\n\nExample:\n  tapplan plan samples/kessa-ridge-solar.yaml -o kessa-plan.pdf\n  tapplan plan samples/kessa-ridge-solar.yaml -o fixed.pdf --tank-m3 120 --pumps SolarSub-9=2 --array-kwp 12")
    )]
    Plan(PlanArgs),
    /// Re-run a plan PDF from the scheme file embedded in it and compare figures and bytes
    #[command(
        after_help = help_with_caution!("Exit codes: 0 figures and bytes match, 1 they differ, 2 the PDF has no embedded scheme or cannot be read.\n\nExample:\n  tapplan verify kessa-plan.pdf\n  tapplan verify kessa-plan.pdf --extract kessa.yaml")
    )]
    Verify(VerifyArgs),
    /// Analyse a borehole's pumping-test records: transmissivity, well losses, safe yield
    #[command(
        after_help = help_with_caution!("Exit status: 0 analysed, 2 a record or option is invalid.\n\nExample:\n  tapplan pumptest samples/pumptests/kessa-bh1.yaml\n  tapplan pumptest samples/pumptests/kessa-bh1.yaml --pdf kessa-test.pdf --block kessa-borehole.yaml\n  tapplan pumptest samples/pumptests/kessa-bh1.yaml --for-scheme samples/kessa-ridge-solar.yaml")
    )]
    Pumptest(PumptestArgs),
}

#[derive(Debug, Args)]
pub struct PumptestArgs {
    /// Pumping-test file: YAML for the borehole naming one CSV record per test
    pub file: PathBuf,
    /// Write the results as JSON to this file (`-` for standard output)
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// Write the pages with the plots as a PDF (`-` for standard output)
    #[arg(long, value_name = "PDF")]
    pub pdf: Option<PathBuf>,
    /// Write the scheme's borehole block to this file (`-` for standard output)
    #[arg(long, value_name = "FILE")]
    pub block: Option<PathBuf>,
    /// Scheme file the borehole belongs to: compare its figures with the test's, and name
    /// the test file in the block relative to it
    #[arg(long, value_name = "SCHEME")]
    pub for_scheme: Option<PathBuf>,
}

#[derive(Debug, Args)]
pub struct PlanArgs {
    /// Scheme file
    pub file: PathBuf,
    /// PDF file to write (`-` for standard output)
    #[arg(long, short = 'o', value_name = "PDF")]
    pub output: PathBuf,
    #[command(flatten)]
    pub design: DesignArgs,
    /// District rules file: the search and the plan's verdict follow it, and the PDF carries
    /// it so `verify` can repeat the plan
    #[arg(long, value_name = "DISTRICT.yaml")]
    pub rules: Option<PathBuf>,
}

#[derive(Debug, Args)]
pub struct VerifyArgs {
    /// Plan PDF written by `tapplan plan`
    pub pdf: PathBuf,
    /// Write the embedded scheme file to this path instead of verifying
    #[arg(long, value_name = "FILE")]
    pub extract: Option<PathBuf>,
    /// With --extract: overwrite the file if it exists
    #[arg(long)]
    pub force: bool,
}

#[derive(Debug, Args)]
pub struct SizeArgs {
    /// Scheme file
    pub file: PathBuf,
    /// Write the whole plan as JSON to this file (`-` for standard output)
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// District rules file: the search looks only among designs that pass its rules of
    /// severity fail, honours its storage-days rule as a least tank, and judges by it
    #[arg(long, value_name = "DISTRICT.yaml")]
    pub rules: Option<PathBuf>,
}

/// Options that replace parts of the file's design.
#[derive(Debug, Args, Clone)]
pub struct DesignArgs {
    /// Tank capacity to use instead of the file's (m³)
    #[arg(long, value_name = "M3", allow_negative_numbers = true)]
    pub tank_m3: Option<f64>,
    /// Installed units of a pump type, NAME=N (repeat for several types)
    #[arg(long, value_name = "NAME=N")]
    pub pumps: Vec<String>,
    /// PV array size to use instead of the file's (kWp)
    #[arg(long, value_name = "KWP", allow_negative_numbers = true)]
    pub array_kwp: Option<f64>,
}

#[derive(Debug, Args)]
pub struct RunArgs {
    /// Scheme file
    pub file: PathBuf,
    #[command(flatten)]
    pub design: DesignArgs,
    /// Write the hourly series of the base year to this CSV file (`-` for standard output)
    #[arg(long, value_name = "FILE")]
    pub hourly: Option<PathBuf>,
    /// Write all results as JSON to this file (`-` for standard output)
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// Print only the summary line
    #[arg(long, short)]
    pub quiet: bool,
    /// District rules file for the verdict on the design (the one `check` gives)
    #[arg(long, value_name = "DISTRICT.yaml")]
    pub rules: Option<PathBuf>,
}

#[derive(Debug, Args)]
pub struct NewArgs {
    /// Scheme file to create
    #[arg(required_unless_present = "list")]
    pub file: Option<PathBuf>,
    /// Template to start from (see --list)
    #[arg(long, short, default_value = "solar")]
    pub template: String,
    /// List the templates and exit
    #[arg(long)]
    pub list: bool,
    /// Overwrite the file if it exists
    #[arg(long)]
    pub force: bool,
}

#[derive(Debug, Args)]
pub struct CheckArgs {
    /// Scheme files to check
    #[arg(required = true)]
    pub files: Vec<PathBuf>,
    /// District rules file that changes or adds to the default rules
    #[arg(long, value_name = "FILE")]
    pub rules: Option<PathBuf>,
    /// Print the results as JSON on standard output instead of tables
    #[arg(long)]
    pub json: bool,
}

#[derive(Debug, Args)]
pub struct RulesArgs {
    /// District rules file that changes or adds to the default rules
    #[arg(long, value_name = "FILE")]
    pub rules: Option<PathBuf>,
    /// Print the rules as JSON
    #[arg(long)]
    pub json: bool,
}
