//! `descry explain`: show, for given values, what every rule and case does.

use std::process::ExitCode;

use serde::Serialize;

use descry::evaluate::{Issue, Step};
use descry::render::explain_text;
use descry::report::cell_json;

use super::common::{emit, json_out, load_ruleset, Format};

pub const ABOUT: &str = "\
Show what a ruleset does to one or more values: the normalized form, and for
every rule (and every case of a label) whether it matched, the matched span
(byte offsets in the normalized value), the captured groups, and the
resulting feature value. This is how to debug a rule.

Example:
  descry explain --rules rulesets/engine.toml \"4 cyl Turbo Diesel 4.5L\" \"V8 gas\"";

#[derive(Debug, clap::Args)]
#[command(long_about = ABOUT)]
pub struct Args {
    /// The ruleset (TOML).
    #[arg(long, short = 'r')]
    pub rules: std::path::PathBuf,
    /// Values to explain.
    #[arg(required = true)]
    pub values: Vec<String>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
}

#[derive(Serialize)]
struct Explained {
    value: String,
    normalized: String,
    features: Vec<FeatureTrace>,
}

#[derive(Serialize)]
struct FeatureTrace {
    output: String,
    kind: &'static str,
    fired: bool,
    value: serde_json::Value,
    issue: Option<Issue>,
    steps: Vec<Step>,
}

pub fn run(args: Args) -> anyhow::Result<ExitCode> {
    let rules = load_ruleset(&args.rules)?;
    let mut explained = Vec::new();
    let mut text = String::new();
    for value in &args.values {
        let normalized = rules.normalizer.apply(value);
        let traces = rules.explain(&normalized);
        if args.format == Format::Text {
            if !text.is_empty() {
                text.push('\n');
            }
            text.push_str(&explain_text(&rules, value, &normalized, &traces));
            continue;
        }
        let features = rules
            .features
            .iter()
            .zip(traces)
            .map(|(f, t)| FeatureTrace {
                output: f.output.clone(),
                kind: f.rule.kind(),
                fired: t.outcome.fired,
                value: cell_json(f, t.outcome.cell),
                issue: t.outcome.issue,
                steps: t.steps,
            })
            .collect();
        explained.push(Explained {
            value: value.clone(),
            normalized,
            features,
        });
    }
    match args.format {
        Format::Text => emit(&text)?,
        Format::Json => emit(&(json_out(&explained)? + "\n"))?,
    }
    Ok(ExitCode::SUCCESS)
}
