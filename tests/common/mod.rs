//! Helpers shared by the integration tests: running the binary, scratch
//! files and reading the reference CSV fixtures. Each test binary uses a
//! subset, so unused helpers are expected in any one of them.
#![allow(dead_code)]

mod fixtures;

#[allow(unused_imports)]
pub use fixtures::{Csv, fixture};
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// Runs the `telltale` binary built for these tests.
pub fn telltale(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_telltale"))
        .args(args)
        .output()
        .expect("run telltale")
}

/// A fresh scratch folder for one test.
pub fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("telltale-test-{}-{name}", std::process::id()));
    let _ = fs::remove_dir_all(&dir);
    fs::create_dir_all(&dir).expect("scratch dir");
    dir
}

/// Writes `bytes` to `dir/name` and returns the path as text.
pub fn write(dir: &Path, name: &str, bytes: &[u8]) -> String {
    let path = dir.join(name);
    fs::write(&path, bytes).expect("write fixture");
    path.display().to_string()
}

/// Standard error as text.
pub fn stderr(output: &Output) -> String {
    String::from_utf8_lossy(&output.stderr).to_string()
}

/// Standard output as text.
pub fn stdout(output: &Output) -> String {
    String::from_utf8_lossy(&output.stdout).to_string()
}
