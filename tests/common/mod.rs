//! Helpers shared by the integration tests: running the binary, scratch
//! files and reading the reference CSV fixtures. Each test binary uses a
//! subset, so unused helpers are expected in any one of them.
#![allow(dead_code)]

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

/// A file under `fixtures/`.
pub fn fixture(path: &str) -> String {
    format!("{}/fixtures/{path}", env!("CARGO_MANIFEST_DIR"))
}

/// A fixture CSV read into columns of field text. The fixtures read this way
/// have a header, no quoted fields and no empty lines inside, so splitting
/// each line on commas is exact for them.
pub struct Csv {
    /// Column names in file order.
    pub header: Vec<String>,
    /// One vector of field texts per column, in header order.
    pub columns: Vec<Vec<String>>,
}

impl Csv {
    /// Reads `path`, failing the test on a ragged line.
    pub fn read(path: &str) -> Self {
        let text = fs::read_to_string(path).unwrap_or_else(|e| panic!("{path}: {e}"));
        let mut lines = text.lines().filter(|l| !l.is_empty());
        let header: Vec<String> = lines
            .next()
            .expect("header line")
            .split(',')
            .map(str::to_string)
            .collect();
        let mut columns = vec![Vec::new(); header.len()];
        for line in lines {
            let fields: Vec<&str> = line.split(',').collect();
            assert_eq!(fields.len(), header.len(), "{path}: ragged line {line}");
            for (column, field) in columns.iter_mut().zip(fields) {
                column.push(field.to_string());
            }
        }
        Self { header, columns }
    }

    /// The fields of column `name`.
    pub fn column(&self, name: &str) -> &[String] {
        let index = self
            .header
            .iter()
            .position(|h| h == name)
            .unwrap_or_else(|| panic!("no column {name}"));
        &self.columns[index]
    }
}
