//! `descry explain`: show, for given values, what every rule and case does.

use std::process::ExitCode;

use anyhow::{bail, Context};
use descry::render::explain_text;
use descry::report::explain::explain;

use super::common::{emit, json_out, load_ruleset, Format};

pub const ABOUT: &str = "\
Show what a ruleset does to one or more values: the normalized form, and for
every rule (and every case of a label) whether it matched, the matched span
(byte offsets in the normalized value), the captured groups, any `unless`
exception, and the resulting feature value. A blank value or a placeholder
gets null features; explain says so. This is how to debug a rule.

Values come from the command line, or one per line from a file with
--values FILE (- for standard input). --fired shows only the rules that
fired, which keeps long rulesets readable.

Examples:
  descry explain --rules rulesets/engine.toml \"4 cyl Turbo Diesel 4.5L\" \"V8 gas\"
  descry explain -r rulesets/engine.toml --values unmatched.txt --fired
  printf '6 spd auto\\nhydro\\n' | descry explain -r rulesets/transmission.toml --values -";

#[derive(Debug, clap::Args)]
#[command(long_about = ABOUT)]
pub struct Args {
    /// The ruleset (TOML).
    #[arg(long, short = 'r')]
    pub rules: std::path::PathBuf,
    /// Values to explain.
    #[arg(required_unless_present = "values_from")]
    pub values: Vec<String>,
    /// Read the values from this file, one per line (- for standard input).
    #[arg(long = "values", value_name = "FILE", conflicts_with = "values")]
    pub values_from: Option<std::path::PathBuf>,
    /// Show only the rules that fired on each value.
    #[arg(long)]
    pub fired: bool,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
}

/// Longest values file read: values are one per line, so anything larger
/// is not what --values is for.
const MAX_VALUES_BYTES: u64 = 256 << 20;

/// The values of a --values file, one per line (a final line break is not
/// an empty value; `\r\n` line ends are read as line ends).
fn values_from(path: &std::path::Path) -> anyhow::Result<Vec<String>> {
    use std::io::Read;
    let mut bytes = Vec::new();
    let what = if path.as_os_str() == "-" {
        "standard input".to_owned()
    } else {
        path.display().to_string()
    };
    let read = if path.as_os_str() == "-" {
        use std::io::IsTerminal;
        if std::io::stdin().is_terminal() {
            bail!("--values -: standard input is a terminal; pipe the values in, one per line");
        }
        std::io::stdin()
            .take(MAX_VALUES_BYTES + 1)
            .read_to_end(&mut bytes)
    } else {
        std::fs::File::open(path).and_then(|f| f.take(MAX_VALUES_BYTES + 1).read_to_end(&mut bytes))
    };
    read.with_context(|| format!("cannot read the values from {what}"))?;
    if bytes.len() as u64 > MAX_VALUES_BYTES {
        bail!(
            "{what}: more than {} MiB of values; explain is for looking at values one by one",
            MAX_VALUES_BYTES >> 20
        );
    }
    let text = String::from_utf8(bytes).map_err(|e| {
        anyhow::anyhow!(
            "{what}: invalid UTF-8 at byte {}; the values must be UTF-8 text",
            e.utf8_error().valid_up_to()
        )
    })?;
    Ok(text
        .lines()
        .map(|l| l.strip_suffix('\r').unwrap_or(l).to_owned())
        .collect())
}

pub fn run(args: Args) -> anyhow::Result<ExitCode> {
    let rules = load_ruleset(&args.rules)?;
    for w in &rules.warnings {
        eprintln!("descry: warning: {w}");
    }
    let values = match &args.values_from {
        Some(path) => values_from(path)?,
        None => args.values.clone(),
    };
    let mut explained = Vec::new();
    let mut text = String::new();
    for value in &values {
        if args.format == Format::Text {
            let normalized = rules.normalizer.apply(value);
            let traces = rules.explain(&normalized);
            if !text.is_empty() {
                text.push('\n');
            }
            text.push_str(&explain_text(
                &rules,
                value,
                &normalized,
                &traces,
                args.fired,
            ));
        } else {
            explained.push(explain(&rules, value, args.fired));
        }
    }
    match args.format {
        Format::Text => emit(&text)?,
        Format::Json => emit(&(json_out(&explained)? + "\n"))?,
    }
    Ok(ExitCode::SUCCESS)
}
