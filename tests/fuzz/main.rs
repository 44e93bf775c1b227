//! descry's fuzzer: structured generators run in-process on stable Rust.
//!
//! ```text
//! cargo run --release --example fuzz -- TARGET --minutes N [--seed S]
//! cargo run --release --example fuzz -- TARGET --replay FILE
//! ```
//!
//! TARGET is `rulesets`, `csv`, `ndjson` or `numbers`. Inputs come from
//! grammars of each format and from mutations of real seeds; each goes
//! through the checks in `checks.rs`, which `tests/fuzz_found.rs` runs
//! too. A seed gives the same sequence of inputs. Before each input is
//! checked it is written to `target/fuzz/last-TARGET`, so that a crash no
//! handler can catch (a stack overflow, an abort) leaves it behind. The
//! run prints the inputs tried, the distinct outcomes and every failure
//! (saved under `target/fuzz/failures/`), and exits 1 if there was one.

mod checks;
mod generate;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::time::{Duration, Instant};

use rand::{Rng, SeedableRng};

use checks::TableKind;
use generate::Rng8;

struct Args {
    target: String,
    minutes: f64,
    seed: u64,
    replay: Option<PathBuf>,
}

fn parse_args() -> Result<Args, String> {
    let mut args = std::env::args().skip(1);
    let target = args
        .next()
        .ok_or("usage: fuzz TARGET --minutes N [--seed S] | TARGET --replay FILE")?;
    if !checks::TARGETS.contains(&target.as_str()) {
        return Err(format!(
            "unknown target {target:?}; the targets are {}",
            checks::TARGETS.join(", ")
        ));
    }
    let mut parsed = Args {
        target,
        minutes: 1.0,
        seed: 1,
        replay: None,
    };
    while let Some(flag) = args.next() {
        let value = args.next().ok_or_else(|| format!("{flag} needs a value"))?;
        match flag.as_str() {
            "--minutes" => {
                parsed.minutes = value.parse().map_err(|_| format!("--minutes {value:?}"))?
            }
            "--seed" => parsed.seed = value.parse().map_err(|_| format!("--seed {value:?}"))?,
            "--replay" => parsed.replay = Some(PathBuf::from(value)),
            _ => return Err(format!("unknown option {flag}")),
        }
    }
    Ok(parsed)
}

/// One target: how it makes an input and how it checks one.
struct Target {
    name: String,
    seeds: Vec<String>,
    dir: tempfile::TempDir,
}

impl Target {
    fn new(name: &str) -> Target {
        Target {
            name: name.to_owned(),
            seeds: if name == "rulesets" {
                ruleset_seeds()
            } else {
                Vec::new()
            },
            dir: tempfile::tempdir().expect("a temporary folder"),
        }
    }

    fn generate(&self, rng: &mut Rng8) -> Vec<u8> {
        match self.name.as_str() {
            "rulesets" if rng.gen_bool(0.35) => {
                generate::mutated_seed(rng, &self.seeds).into_bytes()
            }
            "rulesets" => {
                let mut text = generate::ruleset_text(rng);
                if rng.gen_bool(0.2) {
                    let rounds = rng.gen_range(1..4);
                    generate::mutate_text(rng, &mut text, rounds);
                }
                text.into_bytes()
            }
            "csv" => generate::csv_table(rng),
            "ndjson" => generate::ndjson_table(rng),
            _ => generate::number_input(rng).into_bytes(),
        }
    }

    /// Check one input; rulesets are evaluated on values drawn from `rng`.
    fn check(&self, input: &[u8], rng: &mut Rng8) -> Result<String, String> {
        match self.name.as_str() {
            "rulesets" => {
                let text = String::from_utf8_lossy(input);
                let values = generate::values_for(rng, &text);
                checks::guarded(|| checks::check_ruleset(&text, &values))
            }
            "csv" => {
                checks::guarded(|| checks::check_table(input, TableKind::Csv, self.dir.path()))
            }
            "ndjson" => {
                checks::guarded(|| checks::check_table(input, TableKind::NdJson, self.dir.path()))
            }
            _ => {
                let text = String::from_utf8_lossy(input);
                checks::guarded(|| checks::check_number(&text))
            }
        }
    }
}

/// The shipped rulesets and the reference's complete example.
fn ruleset_seeds() -> Vec<String> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("rulesets");
    let mut seeds = Vec::new();
    for entry in std::fs::read_dir(&root).expect("rulesets/") {
        let path = entry.expect("a folder entry").path();
        if path.extension().is_some_and(|e| e == "toml") {
            seeds.push(std::fs::read_to_string(&path).expect("a ruleset"));
        }
    }
    let reference = Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/rulesets.md");
    let readme = std::fs::read_to_string(reference).expect("docs/rulesets.md");
    for block in readme.split("```toml\n").skip(1) {
        seeds.push(block.split("```").next().unwrap_or_default().to_owned());
    }
    seeds
}

fn shown(input: &[u8]) -> String {
    let text = String::from_utf8_lossy(input);
    let mut out: String = text
        .chars()
        .take(300)
        .collect::<String>()
        .escape_debug()
        .to_string();
    if text.chars().count() > 300 {
        out.push_str(&format!("... ({} bytes)", input.len()));
    }
    out
}

fn main() -> ExitCode {
    let args = match parse_args() {
        Ok(a) => a,
        Err(e) => {
            eprintln!("fuzz: {e}");
            return ExitCode::from(2);
        }
    };
    let target = Target::new(&args.target);
    let mut rng = Rng8::seed_from_u64(args.seed);
    if let Some(file) = &args.replay {
        let input = std::fs::read(file).expect("the input to replay");
        return match target.check(&input, &mut rng) {
            Ok(kind) => {
                println!("ok: {kind}");
                ExitCode::SUCCESS
            }
            Err(failure) => {
                println!("FAILURE: {failure}");
                ExitCode::from(1)
            }
        };
    }
    let out_dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("target/fuzz");
    std::fs::create_dir_all(out_dir.join("failures")).expect("target/fuzz");
    let last = out_dir.join(format!("last-{}", args.target));
    let started = Instant::now();
    let budget = Duration::from_secs_f64(args.minutes * 60.0);
    let mut outcomes: BTreeMap<String, u64> = BTreeMap::new();
    let mut failures: BTreeMap<String, (u64, Vec<u8>)> = BTreeMap::new();
    let mut tried: u64 = 0;
    let mut next_report = Duration::from_secs(60);
    println!(
        "fuzz {}: seed {}, {} minutes",
        args.target, args.seed, args.minutes
    );
    while started.elapsed() < budget {
        let input = target.generate(&mut rng);
        std::fs::write(&last, &input).expect("target/fuzz/last-TARGET");
        tried += 1;
        match target.check(&input, &mut rng) {
            Ok(kind) => *outcomes.entry(kind).or_default() += 1,
            Err(failure) => {
                *outcomes.entry("FAILURE".to_owned()).or_default() += 1;
                let key = checks::error_kind(&failure);
                let entry = failures.entry(key).or_insert_with(|| (0, input.clone()));
                entry.0 += 1;
                if entry.0 == 1 {
                    let saved = out_dir
                        .join("failures")
                        .join(format!("{}-{tried}", args.target));
                    std::fs::write(&saved, &input).expect("target/fuzz/failures");
                    println!(
                        "FAILURE on input {tried} (saved as {}):\n  {failure}\n  input: {}",
                        saved.display(),
                        shown(&input)
                    );
                }
            }
        }
        if started.elapsed() >= next_report {
            println!(
                "  {:.0} s: {tried} inputs, {} outcomes, {} failure kinds",
                started.elapsed().as_secs_f64(),
                outcomes.len(),
                failures.len()
            );
            next_report += Duration::from_secs(60);
        }
    }
    println!(
        "fuzz {}: {tried} inputs in {:.1} minutes, {} distinct outcomes, {} failure kinds",
        args.target,
        started.elapsed().as_secs_f64() / 60.0,
        outcomes.len(),
        failures.len()
    );
    for (kind, count) in &outcomes {
        println!("  {count:>9}  {kind}");
    }
    for (kind, (count, input)) in &failures {
        println!("FAILURE x{count}: {kind}\n  first input: {}", shown(input));
    }
    if failures.is_empty() {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    }
}
