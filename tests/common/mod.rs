//! Helpers shared by the integration tests.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Output;

use assert_cmd::Command;

/// The repository root.
pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

pub fn sample_csv() -> PathBuf {
    root().join("samples/listings.csv")
}

pub fn ruleset(name: &str) -> PathBuf {
    root().join("rulesets").join(name)
}

/// The descry binary, with backtraces on so that a panic would be visible.
pub fn descry() -> Command {
    let mut cmd = Command::cargo_bin("descry").expect("binary built");
    cmd.env("RUST_BACKTRACE", "1").env_remove("RUST_LOG");
    cmd
}

/// Run and return the output; fail the test if descry panicked.
pub fn run(args: &[&str], cwd: Option<&Path>) -> Output {
    let mut cmd = descry();
    if let Some(dir) = cwd {
        cmd.current_dir(dir);
    }
    let out = cmd.args(args).output().expect("descry runs");
    assert_no_panic(&out);
    out
}

pub fn assert_no_panic(out: &Output) {
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        !stderr.contains("panicked")
            && !stderr.contains("RUST_BACKTRACE")
            && !stderr.contains("stack backtrace"),
        "descry panicked:\n{stderr}"
    );
}

pub fn stdout(out: &Output) -> String {
    String::from_utf8_lossy(&out.stdout).into_owned()
}

pub fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

pub fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

pub fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

/// The Python interpreter of the reference environment (pandas, pyarrow,
/// rapidfuzz at the versions pinned in tests/python/requirements.txt).
///
/// `DESCRY_PYTHON` names one; otherwise a virtual environment is created
/// under target/ref-venv and filled from the package registry. If that
/// cannot be done, the calling test fails with the reason: reference checks
/// are never skipped silently.
pub fn python() -> PathBuf {
    static PYTHON: std::sync::OnceLock<Result<PathBuf, String>> = std::sync::OnceLock::new();
    let found = PYTHON.get_or_init(|| {
        if let Ok(p) = std::env::var("DESCRY_PYTHON") {
            return Ok(PathBuf::from(p));
        }
        let venv = root().join("target/ref-venv");
        let py = venv.join("bin/python");
        let requirements = root().join("tests/python/requirements.txt");
        let stamp = venv.join("requirements.txt");
        let current = std::fs::read(&requirements).ok() == std::fs::read(&stamp).ok();
        if py.exists() && current {
            return Ok(py);
        }
        let step = |cmd: &mut std::process::Command, what: &str| -> Result<(), String> {
            let out = cmd.output().map_err(|e| format!("{what}: {e}"))?;
            if out.status.success() {
                Ok(())
            } else {
                Err(format!(
                    "{what} failed:\n{}",
                    String::from_utf8_lossy(&out.stderr)
                ))
            }
        };
        step(
            std::process::Command::new("python3")
                .args(["-m", "venv"])
                .arg(&venv),
            "python3 -m venv",
        )?;
        step(
            std::process::Command::new(&py)
                .args(["-m", "pip", "install", "--quiet", "-r"])
                .arg(&requirements),
            "pip install -r tests/python/requirements.txt",
        )?;
        std::fs::copy(&requirements, &stamp).map_err(|e| e.to_string())?;
        Ok(py)
    });
    match found {
        Ok(p) => p.clone(),
        Err(e) => panic!(
            "the Python reference environment is not available: {e}\n\
             The reference tests need python3 (with venv) and the package registry; \
             set DESCRY_PYTHON to an interpreter that has the packages of tests/python/requirements.txt."
        ),
    }
}

/// Run a script from tests/python with the reference interpreter; panics
/// with its output when it fails.
pub fn run_python(script: &str, args: &[&str]) -> String {
    let out = std::process::Command::new(python())
        .arg(root().join("tests/python").join(script))
        .args(args)
        .output()
        .expect("python runs");
    let text = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        out.status.success(),
        "{script} reports disagreement:\n{text}"
    );
    text
}

/// Run tests/real_data/score.py `--only PART` (`cluster` or `propose`) on
/// the real-data columns with the reference interpreter and this build of
/// descry; prints its table and returns its JSON scores.
pub fn real_data_scores(part: &str) -> serde_json::Value {
    let dir = tempfile::TempDir::new().unwrap();
    let json = dir.path().join("scores.json");
    let descry = assert_cmd::cargo::cargo_bin("descry");
    let out = std::process::Command::new(python())
        .arg(root().join("tests/real_data/score.py"))
        .arg(&descry)
        .arg(dir.path().join("columns"))
        .args(["--only", part, "--json"])
        .arg(&json)
        .output()
        .expect("python runs");
    let printed = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    println!("{printed}");
    assert!(out.status.success(), "score.py failed:\n{printed}");
    serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap()
}
