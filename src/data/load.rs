//! Reading CSV and Parquet files with polars, lazily and projected to the
//! columns the scan needs.
//!
//! A CSV file is first checked in one streaming pass of our own (which also
//! computes its SHA-256): UTF-8, a header, at least one data row and the same
//! number of fields on every row. This lets every error name the line; polars
//! then reads only the requested columns, every field as text, so that the
//! kind of each column is decided by one documented rule (`super::kinds`).

use crate::error::InputError;
use polars::prelude::*;
use sha2::{Digest, Sha256};
use std::fs::File;
use std::io::{BufReader, Read};
use std::path::{Path, PathBuf};

/// File formats telltale reads.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FileFormat {
    Csv,
    Parquet,
}

impl FileFormat {
    /// The format implied by the file extension (`.parquet`/`.pq` → Parquet, else CSV).
    #[must_use]
    pub fn from_extension(path: &Path) -> Self {
        match path
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase)
        {
            Some(ext) if ext == "parquet" || ext == "pq" => Self::Parquet,
            _ => Self::Csv,
        }
    }
}

/// How to read a file.
#[derive(Debug, Clone, Copy)]
pub struct LoadOptions {
    /// Forced format; `None` chooses by extension.
    pub format: Option<FileFormat>,
    /// CSV field separator.
    pub delimiter: u8,
}

impl Default for LoadOptions {
    fn default() -> Self {
        Self {
            format: None,
            delimiter: b',',
        }
    }
}

/// What is known about a data file before its columns are read.
#[derive(Debug, Clone)]
pub struct FileSummary {
    pub path: PathBuf,
    pub format: FileFormat,
    pub columns: Vec<String>,
    pub rows: usize,
    pub sha256: String,
}

/// Checks the file and returns its header, row count and hash.
pub fn inspect(path: &Path, options: LoadOptions) -> Result<FileSummary, InputError> {
    let format = options
        .format
        .unwrap_or_else(|| FileFormat::from_extension(path));
    match format {
        FileFormat::Csv => inspect_csv(path, options.delimiter),
        FileFormat::Parquet => inspect_parquet(path),
    }
}

/// Reads the named columns (all as text for CSV; native types for Parquet).
pub fn read_columns(
    summary: &FileSummary,
    columns: &[String],
    options: LoadOptions,
) -> Result<DataFrame, InputError> {
    let plan = scan_plan(summary, options).map_err(|e| polars_error(&summary.path, &e))?;
    plan.select([by_name(columns.iter().map(String::as_str), true, false).as_expr()])
        .collect()
        .map_err(|e| polars_error(&summary.path, &e))
}

/// A checked file whose columns are read on demand, a few at a time.
pub struct FileColumns<'a> {
    pub summary: &'a FileSummary,
    pub options: LoadOptions,
}

impl crate::data::prepare::ColumnSource for FileColumns<'_> {
    fn read(&self, columns: &[String]) -> Result<DataFrame, InputError> {
        read_columns(self.summary, columns, self.options)
    }
}

fn scan_plan(summary: &FileSummary, options: LoadOptions) -> PolarsResult<LazyFrame> {
    let path = PlRefPath::try_from_path(&summary.path)?;
    match summary.format {
        FileFormat::Csv => LazyCsvReader::new(path)
            .with_has_header(true)
            .with_separator(options.delimiter)
            .with_infer_schema_length(Some(0))
            .with_missing_is_null(true)
            .finish(),
        FileFormat::Parquet => LazyFrame::scan_parquet(path, ScanArgsParquet::default()),
    }
}

fn polars_error(path: &Path, error: &PolarsError) -> InputError {
    let text = error.to_string();
    InputError::Format {
        path: path.to_path_buf(),
        reason: text.lines().next().unwrap_or("unreadable data").to_string(),
    }
}

fn unreadable(path: &Path, error: &std::io::Error) -> InputError {
    InputError::Unreadable {
        path: path.to_path_buf(),
        reason: error.to_string(),
    }
}

fn inspect_parquet(path: &Path) -> Result<FileSummary, InputError> {
    let sha256 = hash_file(path)?;
    let summary = FileSummary {
        path: path.to_path_buf(),
        format: FileFormat::Parquet,
        columns: Vec::new(),
        rows: 0,
        sha256,
    };
    let mut plan =
        scan_plan(&summary, LoadOptions::default()).map_err(|e| polars_error(path, &e))?;
    let schema = plan.collect_schema().map_err(|e| polars_error(path, &e))?;
    let columns: Vec<String> = schema.iter_names().map(|n| n.to_string()).collect();
    if columns.is_empty() {
        return Err(InputError::Empty {
            path: path.to_path_buf(),
        });
    }
    let rows = plan
        .select([len()])
        .collect()
        .ok()
        .and_then(|df| df.column("len").ok()?.u32().ok()?.get(0))
        .unwrap_or(0) as usize;
    if rows == 0 {
        return Err(InputError::HeaderOnly {
            path: path.to_path_buf(),
        });
    }
    Ok(FileSummary {
        columns,
        rows,
        ..summary
    })
}

fn hash_file(path: &Path) -> Result<String, InputError> {
    let mut file = File::open(path).map_err(|e| unreadable(path, &e))?;
    let mut hasher = Sha256::new();
    let mut buffer = vec![0u8; 1 << 20];
    loop {
        let n = file.read(&mut buffer).map_err(|e| unreadable(path, &e))?;
        if n == 0 {
            break;
        }
        hasher.update(&buffer[..n]);
    }
    Ok(hex(&hasher.finalize()))
}

/// Lower-case hexadecimal of a digest.
pub(crate) fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// Streaming CSV shape check: quote-aware record splitting (RFC 4180 quoting,
/// `""` inside quotes), UTF-8 per record, equal field counts, SHA-256 of the bytes.
struct CsvChecker {
    delimiter: u8,
    in_quotes: bool,
    /// The last byte closed a quoted field: only a delimiter, a line end or
    /// a second quote (an escaped one) may follow.
    after_quote: bool,
    record: Vec<u8>,
    fields: usize,
    line: usize,
    record_start_line: usize,
    header: Option<Vec<String>>,
    rows: usize,
}

impl CsvChecker {
    fn new(delimiter: u8) -> Self {
        Self {
            delimiter,
            in_quotes: false,
            after_quote: false,
            record: Vec::new(),
            fields: 1,
            line: 1,
            record_start_line: 1,
            header: None,
            rows: 0,
        }
    }

    fn feed(&mut self, path: &Path, bytes: &[u8]) -> Result<(), InputError> {
        for &byte in bytes {
            if self.after_quote && !matches!(byte, b'"' | b'\n' | b'\r') && byte != self.delimiter {
                return Err(InputError::Malformed {
                    path: path.to_path_buf(),
                    line: self.line,
                    reason: "text after a closing quote (a quote inside a quoted field must be \
                             doubled: \"\")"
                        .to_string(),
                });
            }
            self.after_quote = byte == b'"' && self.in_quotes;
            match byte {
                b'"' => self.in_quotes = !self.in_quotes,
                b'\n' => {
                    self.line += 1;
                    if !self.in_quotes {
                        self.end_record(path)?;
                        continue;
                    }
                }
                b if b == self.delimiter && !self.in_quotes => self.fields += 1,
                _ => {}
            }
            self.record.push(byte);
        }
        Ok(())
    }

    fn end_record(&mut self, path: &Path) -> Result<(), InputError> {
        if self.record.last() == Some(&b'\r') {
            self.record.pop();
        }
        let line = self.record_start_line;
        self.record_start_line = self.line;
        let fields = std::mem::replace(&mut self.fields, 1);
        if self.record.is_empty() {
            return Ok(());
        }
        let text = std::str::from_utf8(&self.record).map_err(|_| InputError::NotUtf8 {
            path: path.to_path_buf(),
            line,
        })?;
        match &self.header {
            None => self.header = Some(split_header(text, self.delimiter)),
            Some(header) if header.len() != fields => {
                return Err(InputError::Malformed {
                    path: path.to_path_buf(),
                    line,
                    reason: format!(
                        "row has {fields} fields but the header has {} (ragged row)",
                        header.len()
                    ),
                });
            }
            Some(_) => self.rows += 1,
        }
        self.record.clear();
        Ok(())
    }
}

fn inspect_csv(path: &Path, delimiter: u8) -> Result<FileSummary, InputError> {
    let file = File::open(path).map_err(|e| unreadable(path, &e))?;
    if file.metadata().map(|m| m.is_dir()).unwrap_or(false) {
        return Err(InputError::Unreadable {
            path: path.to_path_buf(),
            reason: "is a directory".to_string(),
        });
    }
    let mut reader = BufReader::with_capacity(1 << 20, file);
    let mut checker = CsvChecker::new(delimiter);
    let mut hasher = Sha256::new();
    let mut buffer = vec![0u8; 1 << 20];
    let mut first = true;
    loop {
        let n = reader.read(&mut buffer).map_err(|e| unreadable(path, &e))?;
        if n == 0 {
            break;
        }
        hasher.update(&buffer[..n]);
        let mut chunk = &buffer[..n];
        if first {
            chunk = chunk.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(chunk);
            first = false;
        }
        checker.feed(path, chunk)?;
    }
    if checker.in_quotes {
        return Err(InputError::Malformed {
            path: path.to_path_buf(),
            line: checker.record_start_line,
            reason: "a quoted field is never closed".to_string(),
        });
    }
    checker.end_record(path)?;
    let columns = checker.header.ok_or_else(|| InputError::Empty {
        path: path.to_path_buf(),
    })?;
    if checker.rows == 0 {
        return Err(InputError::HeaderOnly {
            path: path.to_path_buf(),
        });
    }
    check_unique(path, &columns)?;
    Ok(FileSummary {
        path: path.to_path_buf(),
        format: FileFormat::Csv,
        columns,
        rows: checker.rows,
        sha256: hex(&hasher.finalize()),
    })
}

/// Splits one header record into names, removing RFC 4180 quotes.
fn split_header(text: &str, delimiter: u8) -> Vec<String> {
    let delimiter = char::from(delimiter);
    let mut names = Vec::new();
    let mut current = String::new();
    let mut in_quotes = false;
    let mut chars = text.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '"' if in_quotes && chars.peek() == Some(&'"') => {
                current.push('"');
                chars.next();
            }
            '"' => in_quotes = !in_quotes,
            c if c == delimiter && !in_quotes => names.push(std::mem::take(&mut current)),
            c => current.push(c),
        }
    }
    names.push(current);
    names
}

fn check_unique(path: &Path, columns: &[String]) -> Result<(), InputError> {
    let mut seen = std::collections::HashSet::new();
    for (i, name) in columns.iter().enumerate() {
        if name.trim().is_empty() {
            return Err(InputError::Malformed {
                path: path.to_path_buf(),
                line: 1,
                reason: format!("column {} has no name in the header", i + 1),
            });
        }
        if !seen.insert(name.as_str()) {
            return Err(InputError::DuplicateColumn {
                path: path.to_path_buf(),
                column: name.clone(),
            });
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_quotes_and_delimiters() {
        assert_eq!(
            split_header("a,\"b, c\",\"say \"\"hi\"\"\",é", b','),
            vec!["a", "b, c", "say \"hi\"", "é"]
        );
        assert_eq!(split_header("x;y", b';'), vec!["x", "y"]);
    }

    #[test]
    fn text_after_a_closing_quote_names_its_line() {
        let check = |text: &str| {
            let mut checker = CsvChecker::new(b',');
            checker.feed(Path::new("d.csv"), text.as_bytes())
        };
        // RFC 4180 fields: empty, escaped quotes, CRLF, a quoted line break.
        assert!(check("a,b\n\"\",\"say \"\"hi\"\"\"\r\n\"x\ny\",2\n").is_ok());
        let error = check("a,b\n1,2\n\"ok\"junk,3\n").unwrap_err();
        assert!(
            matches!(error, InputError::Malformed { line: 3, .. }),
            "{error}"
        );
    }
}
