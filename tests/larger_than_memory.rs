//! `apply` on a file three times larger than the memory its process may use
//! (a memory cgroup caps it) completes, and writes the same table as the
//! in-memory path; the in-memory path under the same cap is killed, which
//! shows the cap binds.

mod common;

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::Command;

use common::*;
use polars::prelude::*;
use tempfile::TempDir;

const ROWS: u64 = 9_000_000;

/// A memory cgroup (v1 or v2) limited to `bytes`; removed on drop.
struct MemoryCap {
    dir: PathBuf,
    procs: PathBuf,
}

impl MemoryCap {
    fn new(bytes: u64) -> MemoryCap {
        let name = format!("descry-test-{}", std::process::id());
        let v1 = Path::new("/sys/fs/cgroup/memory");
        let (dir, limit_file) = if v1.is_dir() {
            (v1.join(&name), "memory.limit_in_bytes")
        } else {
            (Path::new("/sys/fs/cgroup").join(&name), "memory.max")
        };
        std::fs::create_dir_all(&dir).unwrap_or_else(|e| {
            panic!("cannot create the memory cgroup {} ({e}); this test needs root and a cgroup memory controller", dir.display())
        });
        std::fs::write(dir.join(limit_file), bytes.to_string()).expect("set the memory limit");
        if dir.join("memory.swap.max").exists() {
            let _ = std::fs::write(dir.join("memory.swap.max"), "0");
        }
        MemoryCap {
            procs: dir.join("cgroup.procs"),
            dir,
        }
    }

    /// Run descry inside the cgroup.
    fn run(&self, args: &[&str]) -> std::process::Output {
        let bin = assert_cmd::cargo::cargo_bin("descry");
        let quoted: Vec<String> = args.iter().map(|a| format!("'{a}'")).collect();
        let script = format!(
            "echo $$ > {} && exec {} {}",
            self.procs.display(),
            bin.display(),
            quoted.join(" ")
        );
        Command::new("sh")
            .args(["-c", &script])
            .env("RUST_BACKTRACE", "1")
            .output()
            .unwrap()
    }
}

impl Drop for MemoryCap {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir(&self.dir);
    }
}

/// About 880 MB: 9 million rows, a descriptor with 2,200 spellings and a
/// wide text column carried along.
fn big_csv(dir: &Path) -> PathBuf {
    let path = dir.join("big.csv");
    let mut w = std::io::BufWriter::new(std::fs::File::create(&path).unwrap());
    writeln!(w, "id,transmission,note").unwrap();
    let kinds = ["auto", "manual", "powershift", "cvt"];
    for i in 0..ROWS {
        let x = i.wrapping_mul(2_654_435_761) % 2_200;
        let spelling = format!(
            "{} spd {} {}",
            3 + x % 22,
            kinds[(x / 22 % 4) as usize],
            x / 88
        );
        writeln!(
            w,
            "{i},{spelling},lorem ipsum dolor sit amet consectetur lorem ipsum dolor sit amet {i}"
        )
        .unwrap();
    }
    w.flush().unwrap();
    // Clean pages only: the test's own unwritten data must not press on the
    // capped process's memory.
    w.get_ref().sync_all().unwrap();
    path
}

fn read_parquet(path: &Path) -> DataFrame {
    ParquetReader::new(std::fs::File::open(path).unwrap())
        .finish()
        .unwrap()
}

#[test]
fn apply_streams_a_file_three_times_larger_than_its_memory_cap() {
    let dir = TempDir::new().unwrap();
    let input = big_csv(dir.path());
    let rules = write(
        dir.path(),
        "r.toml",
        "column = \"transmission\"\n[[count]]\nname = \"gears\"\npattern = '({int})\\s*spd'\nrange = [1, 30]\n\
         [[flag]]\nname = \"auto\"\nany = [\"auto\"]\n[[label]]\nname = \"kind\"\ndefault = \"other\"\n\
         [[label.case]]\nlabel = \"manual\"\nany = [\"manual\"]\n",
    );
    let size = std::fs::metadata(&input).unwrap().len();
    let cap = MemoryCap::new(size / 3);
    println!("input {size} bytes, memory cap {} bytes", size / 3);

    let streamed = dir.path().join("streamed.parquet");
    let out = cap.run(&[
        "apply",
        s(&input),
        "-r",
        s(&rules),
        "-o",
        s(&streamed),
        "--batch-rows",
        "32768",
        "--quiet",
    ]);
    assert_no_panic(&out);
    assert!(
        out.status.success(),
        "streaming apply under the cap failed: {:?}\n{}",
        out.status,
        stderr(&out)
    );

    let squeezed = dir.path().join("squeezed.parquet");
    let out = cap.run(&[
        "apply",
        s(&input),
        "-r",
        s(&rules),
        "-o",
        s(&squeezed),
        "--in-memory",
        "--quiet",
    ]);
    assert!(
        !out.status.success(),
        "the in-memory path fit under the cap: the cap proves nothing"
    );
    assert!(!squeezed.exists(), "a killed run leaves no output");

    let whole = dir.path().join("whole.parquet");
    let out = run(
        &[
            "apply",
            s(&input),
            "-r",
            s(&rules),
            "-o",
            s(&whole),
            "--in-memory",
            "--quiet",
        ],
        None,
    );
    assert!(out.status.success(), "{}", stderr(&out));
    let (a, b) = (read_parquet(&streamed), read_parquet(&whole));
    assert_eq!(a.height() as u64, ROWS);
    assert!(
        a.equals_missing(&b),
        "the streamed output differs from the in-memory output"
    );
}
