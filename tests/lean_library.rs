//! A crate that depends on nidus without the command line
//! (`default-features = false`, the crate in `tests/downstream/`) must not
//! compile the command line's crates, and its whole dependency tree stays
//! small. Checked with `cargo tree`, offline, on a copy of the downstream
//! crate that uses this project's `Cargo.lock` (every crate in it is in the
//! local registry once the project itself has been built).

use std::path::Path;
use std::process::Command;

/// Crates only the command line needs.
const CLI_ONLY: &[&str] = &["clap", "indicatif", "csv", "serde_json", "serde"];

/// The limit the issue sets for the downstream tree ("at most about 35").
const MAX_CRATES: usize = 35;

#[test]
fn library_without_cli_stays_lean() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("downstream");
    std::fs::create_dir_all(dir.join("src")).unwrap();
    let manifest = std::fs::read_to_string(root.join("tests/downstream/Cargo.toml")).unwrap();
    let manifest = manifest.replace(
        "path = \"../..\"",
        &format!("path = {:?}", root.display().to_string()),
    );
    assert!(manifest.contains("default-features = false"), "{manifest}");
    std::fs::write(dir.join("Cargo.toml"), manifest).unwrap();
    std::fs::copy(
        root.join("tests/downstream/src/main.rs"),
        dir.join("src/main.rs"),
    )
    .unwrap();
    std::fs::copy(root.join("Cargo.lock"), dir.join("Cargo.lock")).unwrap();
    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".into());
    let out = Command::new(cargo)
        .args(["tree", "-e", "normal", "--offline", "--prefix", "none"])
        .current_dir(&dir)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "cargo tree failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    let mut crates: Vec<&str> = text
        .lines()
        .filter_map(|l| l.split_whitespace().next())
        .filter(|name| *name != "nidus-downstream-check")
        .collect();
    crates.sort_unstable();
    crates.dedup();
    assert!(
        crates.contains(&"nidus") && crates.contains(&"ndarray"),
        "{crates:?}"
    );
    for c in CLI_ONLY {
        assert!(
            !crates.contains(c),
            "{c} is compiled for a library user: {crates:?}"
        );
    }
    // Counted with nidus itself; 22 when this test was written.
    assert!(
        crates.len() <= MAX_CRATES,
        "{} crates: {crates:?}",
        crates.len()
    );
}
