//! Nothing lost: killing `apply` with SIGKILL at any moment leaves the
//! previous output intact (or the complete new one), never a truncated file.

mod common;

use std::io::Write;
use std::time::{Duration, Instant};

use common::*;
use tempfile::TempDir;

const ROWS: usize = 2_000_000;

fn big_input(dir: &std::path::Path) -> std::path::PathBuf {
    let path = dir.join("big.csv");
    let mut w = std::io::BufWriter::new(std::fs::File::create(&path).unwrap());
    writeln!(w, "id,transmission").unwrap();
    let spellings = [
        "6 spd auto",
        "12-speed manual",
        "hydrostatic",
        "16x16 powershift",
        "4 SPD",
    ];
    for i in 0..ROWS {
        writeln!(w, "{i},{} {}", spellings[i % spellings.len()], i % 97).unwrap();
    }
    path
}

/// The output is the previous content, or a complete new table.
fn intact(output: &std::path::Path) -> bool {
    let text = std::fs::read_to_string(output).unwrap();
    text == "previous output\n" || (text.ends_with('\n') && text.lines().count() == ROWS + 1)
}

#[test]
fn sigkill_never_leaves_a_truncated_output() {
    let dir = TempDir::new().unwrap();
    let input = big_input(dir.path());
    let rules = write(dir.path(), "r.toml", "column = \"transmission\"\n[[count]]\nname = \"gears\"\npattern = '({int})\\s*-?\\s*(spd|speed)'\n[[flag]]\nname = \"auto\"\nany = [\"auto\"]\n");
    let output = dir.path().join("out.csv");
    let args = [
        "apply",
        s(&input),
        "-r",
        s(&rules),
        "-o",
        s(&output),
        "--quiet",
    ];

    // How long a full run takes here, to spread the kills over it.
    std::fs::write(&output, "previous output\n").unwrap();
    let start = Instant::now();
    let full = run(&args, None);
    assert_eq!(full.status.code(), Some(0), "{}", stderr(&full));
    let whole = start.elapsed();
    assert!(intact(&output));

    for tenth in 1..=9 {
        std::fs::write(&output, "previous output\n").unwrap();
        let mut child = std::process::Command::new(assert_cmd::cargo::cargo_bin("descry"))
            .args(args)
            .spawn()
            .unwrap();
        std::thread::sleep(whole.mul_f64(tenth as f64 / 10.0));
        let _ = child.kill(); // SIGKILL on Unix
        let _ = child.wait();
        assert!(
            intact(&output),
            "after a kill at {tenth}0% of the run the output is truncated"
        );
    }
    std::thread::sleep(Duration::from_millis(10));
}
