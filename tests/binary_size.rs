//! The binary a user keeps: `cargo install` builds with the release profile,
//! and that profile must give a binary of at most 120 MiB (the profile keeps
//! no debug info; `--profile profiling` is the one with line tables).

#[test]
fn release_binary_is_at_most_120_mib() {
    if cfg!(debug_assertions) {
        // A debug build says nothing about what `cargo install` produces.
        return;
    }
    let path = env!("CARGO_BIN_EXE_descry");
    let bytes = std::fs::metadata(path)
        .unwrap_or_else(|e| panic!("cannot read {path}: {e}"))
        .len();
    let limit = 120 * 1024 * 1024;
    assert!(
        bytes <= limit,
        "{path} is {:.1} MiB, over the 120 MiB limit",
        bytes as f64 / (1024.0 * 1024.0)
    );
}
