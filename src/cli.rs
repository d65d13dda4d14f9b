//! Command-line arguments (clap derive). Declarations only: `main.rs` does the work.

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};

pub const CAUTION: &str = "\
CAUTION: tapplan plans; it does not certify. Water supply can hurt people. Test water quality
before use and protect the source from contamination; have elevated tanks designed by a
structural engineer; have PV and generator electrics installed by qualified people. Local codes,
water-quality testing and licensed practice take precedence over anything this tool prints.";

#[derive(Debug, Parser)]
#[command(
    name = "tapplan",
    version,
    about = "Plans a village water supply: tank size, pump count and hours a year the taps run dry",
    long_about = "Plans a village water supply from one YAML scheme file: simulates the storage tank \
hour by hour over a year and the design horizon, finds the least-cost tank size and pump count \
that meets the reliability target, and prints the plan.",
    after_help = CAUTION,
    after_long_help = concat!("Example:\n  tapplan new village.yaml --template solar\n  tapplan check village.yaml\n\n", "CAUTION: tapplan plans; it does not certify. Water supply can hurt people. Test water quality\nbefore use and protect the source from contamination; have elevated tanks designed by a\nstructural engineer; have PV and generator electrics installed by qualified people. Local codes,\nwater-quality testing and licensed practice take precedence over anything this tool prints.")
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Write a starter scheme file from a template
    #[command(
        after_help = "Example:\n  tapplan new kijiji.yaml --template solar\n  tapplan new --list"
    )]
    New(NewArgs),
    /// Validate scheme files and print a short table per file
    #[command(after_help = "Example:\n  tapplan check samples/*.yaml")]
    Check(CheckArgs),
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
}
