//! Reading the fixtures under `fixtures/`: shared by the integration tests
//! and the crate's own reference tests (which include this file by path).
//! Each includer uses a subset.
#![allow(dead_code)]

use std::fs;

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
