//! `check --format html`: the page opened in a real browser. Headless
//! Chromium (the distribution's `chromium` package; `.ci/run` installs it)
//! loads each report from disk and prints the DOM after the page's script
//! ran; the tests read that DOM. Without Chromium the tests are skipped
//! with a message, except under CI (the variable `CI` set), where they fail.

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;

use common::*;
use tempfile::TempDir;

/// Values a seller could type that are markup: they must show as text.
const HOSTILE: [&str; 2] = ["<script>alert(1)</script>", "<img src=x onerror=alert(2)>"];

/// The browser, or None (with a message) where it may be missing.
fn chromium() -> Option<PathBuf> {
    let found = std::env::var_os("PATH").and_then(|paths| {
        std::env::split_paths(&paths)
            .map(|p| p.join("chromium"))
            .find(|p| p.is_file())
    });
    if found.is_none() {
        assert!(
            std::env::var_os("CI").is_none(),
            "chromium is not installed; .ci/run installs it with apt-get install chromium"
        );
        eprintln!("skipped: chromium is not installed (apt-get install chromium)");
    }
    found
}

/// The DOM of `page` after its script ran, as Chromium serializes it.
fn dom(browser: &Path, page: &Path) -> String {
    let out = Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--dump-dom",
            &format!("file://{}", page.display()),
        ])
        .output()
        .expect("chromium runs");
    assert!(
        out.status.success(),
        "chromium failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).expect("the DOM is UTF-8")
}

/// The demo listings with a few rows whose engine is markup: unmatched
/// values, and new ones against a baseline of the plain listings.
fn hostile_drop(dir: &Path) -> PathBuf {
    let mut text = std::fs::read_to_string(sample_csv()).unwrap();
    for (i, value) in HOSTILE.iter().enumerate() {
        for j in 0..3 + 2 * i {
            text.push_str(&format!("H{i}{j:06},,\"{value}\",,1000\n"));
        }
    }
    write(dir, "drop.csv", &text)
}

/// Run `check` and return the exit code; the report goes to `-o`.
fn check(dir: &Path, args: &[&str]) -> i32 {
    let out = run(&[&["check"], args].concat(), Some(dir));
    assert!(
        matches!(out.status.code(), Some(0 | 1)),
        "check failed: {}",
        stderr(&out)
    );
    out.status.code().unwrap()
}

/// The element `<table ... id="ID">` through its end, from a DOM.
fn table<'a>(dom: &'a str, id: &str) -> &'a str {
    let start = dom
        .find(&format!("id=\"{id}\""))
        .unwrap_or_else(|| panic!("no table {id}"));
    let end = start + dom[start..].find("</table>").unwrap();
    &dom[start..end]
}

fn json(path: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

/// Charts: one `<svg>` each (coverage, rule bars, one per label with a
/// baseline); one table row per unmatched value; markup in values as text;
/// the script ran (the filter box shown, with its count).
fn assert_page(dom: &str, report: &serde_json::Value) {
    let labels = report["drift"]["labels"].as_array().map_or(0, Vec::len);
    assert_eq!(dom.matches("<svg").count(), 2 + labels, "charts");
    let unmatched = report["unmatched"].as_array().unwrap();
    let rows = table(dom, "values-1").matches("<tr").count() - 1; // the header row
    assert_eq!(rows, unmatched.len().min(1000), "unmatched rows");
    for value in HOSTILE {
        let escaped = value.replace('<', "&lt;").replace('>', "&gt;");
        assert!(dom.contains(&escaped), "{value} is not shown as text");
        assert!(!dom.contains(value), "{value} became markup");
    }
    // The page's own script is the only script; no image was made.
    assert_eq!(dom.matches("<script").count(), 1);
    assert_eq!(dom.matches("<img").count(), 0);
    assert!(
        dom.contains(&format!(
            "{} of {} shown",
            unmatched.len().min(1000),
            unmatched.len().min(1000)
        )),
        "the script did not run"
    );
}

/// The unmatched table in use: two clicks on the value column's head sort
/// it A to Z; typing in the filter box keeps the rows whose value holds
/// the text. A copy of the page gets a script that does both and writes
/// what the table then shows into the DOM.
fn sorted_and_filtered(browser: &Path, page: &Path, report: &serde_json::Value) {
    let clicks = r#"<script>
var t = document.getElementById('values-1'), head = t.tHead.rows[0].cells[2];
head.click(); head.click();
document.body.setAttribute('data-first', t.tBodies[0].rows[0].cells[2].textContent);
var box = document.querySelector('.tools[data-for="values-1"] input');
box.value = 'SCRIPT'; box.dispatchEvent(new Event('input'));
</script></body>"#;
    let html = std::fs::read_to_string(page).unwrap();
    let used = page.with_extension("used.html");
    std::fs::write(&used, html.replace("</body>", clicks)).unwrap();
    let dom = dom(browser, &used);
    let mut values: Vec<String> = report["unmatched"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v["value"].as_str().unwrap().to_lowercase())
        .collect();
    values.sort();
    // Browsers differ on escaping `<` and `>` in an attribute's value.
    let first = &values[0];
    let escaped = first.replace('<', "&lt;").replace('>', "&gt;");
    assert!(
        [first, &escaped]
            .iter()
            .any(|f| dom.contains(&format!("data-first=\"{f}\""))),
        "not sorted A to Z"
    );
    let with_script = values.iter().filter(|v| v.contains("script")).count();
    assert!(
        dom.contains(&format!("{with_script} of {} shown", values.len())),
        "not filtered"
    );
}

#[test]
fn the_page_in_a_browser_without_and_with_a_baseline() {
    let Some(browser) = chromium() else {
        return;
    };
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let engine = ruleset("engine.toml");
    let drop = hostile_drop(d);
    let (engine, drop) = (s(&engine), s(&drop));

    check(
        d,
        &[drop, "-r", engine, "--format", "html", "-o", "plain.html"],
    );
    check(
        d,
        &[drop, "-r", engine, "--format", "json", "-o", "plain.json"],
    );
    let page = std::fs::read_to_string(d.join("plain.html")).unwrap();
    // Self-contained: nothing is fetched (no address at all in the file).
    assert!(!page.contains("http://") && !page.contains("https://"));
    assert!(!page.contains("src=\"") && !page.contains("<link"));
    let plain = dom(&browser, &d.join("plain.html"));
    assert_page(&plain, &json(&d.join("plain.json")));
    assert!(!plain.contains("class=\"new\""), "no baseline, nothing new");
    sorted_and_filtered(
        &browser,
        &d.join("plain.html"),
        &json(&d.join("plain.json")),
    );

    check(
        d,
        &[
            s(&sample_csv()),
            "-r",
            engine,
            "--save-baseline",
            "base.parquet",
        ],
    );
    let args = [drop, "-r", engine, "--baseline", "base.parquet"];
    check(
        d,
        &[&args[..], &["--format", "html", "-o", "drift.html"]].concat(),
    );
    check(
        d,
        &[&args[..], &["--format", "json", "-o", "drift.json"]].concat(),
    );
    let report = json(&d.join("drift.json"));
    let drifted = dom(&browser, &d.join("drift.html"));
    assert_page(&drifted, &report);
    // The new values: highlighted in the unmatched table and listed apart.
    let new = report["drift"]["new_values"].as_array().unwrap();
    assert_eq!(new.len(), HOSTILE.len());
    assert_eq!(
        table(&drifted, "values-1")
            .matches("<tr class=\"new\"")
            .count(),
        HOSTILE.len()
    );
    assert_eq!(
        table(&drifted, "values-2")
            .matches("<tr class=\"new\"")
            .count(),
        new.len()
    );
    assert!(drifted.contains("Drift since the baseline"));
}

#[test]
fn several_rulesets_make_one_page_with_a_section_each() {
    let Some(browser) = chromium() else {
        return;
    };
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let (engine, transmission, listings) = (
        ruleset("engine.toml"),
        ruleset("transmission.toml"),
        sample_csv(),
    );
    let args = [s(&listings), "-r", s(&engine), "-r", s(&transmission)];
    check(d, &[&args[..], &["--save-baseline", "base"]].concat());
    check(
        d,
        &[
            &args[..],
            &["--baseline", "base", "--format", "html", "-o", "r.html"],
        ]
        .concat(),
    );
    check(
        d,
        &[
            &args[..],
            &["--baseline", "base", "--format", "json", "-o", "r.json"],
        ]
        .concat(),
    );
    let page = dom(&browser, &d.join("r.html"));
    let reports = json(&d.join("r.json"));
    let reports = reports["reports"].as_array().unwrap();
    let charts: usize = reports
        .iter()
        .map(|r| 2 + r["drift"]["labels"].as_array().unwrap().len())
        .sum();
    assert_eq!(page.matches("<svg").count(), charts);
    assert!(page.contains("id=\"report-1\"") && page.contains("id=\"report-2\""));
}

/// `-o` for every format: the report goes to the file, atomically, and
/// never over an input or the baseline.
#[test]
fn the_report_file_never_replaces_an_input_or_the_baseline() {
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let table = write(d, "in.csv", &std::fs::read_to_string(sample_csv()).unwrap());
    let engine = ruleset("engine.toml");
    let out = run(
        &["check", s(&table), "-r", s(&engine), "-o", "report.txt"],
        Some(d),
    );
    assert!(out.status.success(), "{}", stderr(&out));
    assert!(stdout(&out).is_empty());
    let text = std::fs::read_to_string(d.join("report.txt")).unwrap();
    assert!(text.starts_with("ruleset "), "{text}");

    let before = std::fs::read(&table).unwrap();
    for target in [s(&table), s(&engine)] {
        let out = run(
            &[
                "check",
                s(&table),
                "-r",
                s(&engine),
                "--format",
                "html",
                "-o",
                target,
            ],
            Some(d),
        );
        assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
        assert!(stderr(&out).contains("never overwrites its input"));
    }
    assert_eq!(std::fs::read(&table).unwrap(), before);

    run(
        &[
            "check",
            s(&table),
            "-r",
            s(&engine),
            "--save-baseline",
            "b.parquet",
        ],
        Some(d),
    );
    let out = run(
        &[
            "check",
            s(&table),
            "-r",
            s(&engine),
            "--baseline",
            "b.parquet",
            "-o",
            "b.parquet",
        ],
        Some(d),
    );
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    let out = run(
        &[
            "check",
            s(&table),
            "-r",
            s(&engine),
            "--save-baseline",
            "c.parquet",
            "-o",
            "c.parquet",
        ],
        Some(d),
    );
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert!(stderr(&out).contains("--save-baseline"), "{}", stderr(&out));
}
