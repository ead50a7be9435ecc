//! Writing report files: never overwriting a report the user did not ask to replace.

use anyhow::{Context, Result, bail};
use std::fs;
use std::io::Write;
use std::path::Path;
use telltale::report::{Renderer, Report};

/// Writes every renderer's file into `dir`, refusing to replace existing ones unless `force`.
pub fn write_report_dir(
    dir: &Path,
    report: &Report,
    renderers: &[&dyn Renderer],
    force: bool,
) -> Result<()> {
    let documents: Vec<(&str, String)> = renderers
        .iter()
        .map(|r| (r.file_name(), r.render(report)))
        .collect();
    write_documents(dir, &documents, force)
}

/// Writes `(file name, text)` documents into `dir`, refusing to replace
/// existing ones unless `force`: nothing is written when one is already there.
pub fn write_documents(dir: &Path, documents: &[(&str, String)], force: bool) -> Result<()> {
    let existing: Vec<String> = documents
        .iter()
        .map(|(name, _)| dir.join(name))
        .filter(|p| p.exists())
        .map(|p| p.display().to_string())
        .collect();
    if !existing.is_empty() && !force {
        bail!(
            "{}: a report is already there ({}); choose another folder or pass --force to replace it",
            dir.display(),
            existing.join(", ")
        );
    }
    fs::create_dir_all(dir).with_context(|| format!("{}: cannot create folder", dir.display()))?;
    for (name, text) in documents {
        let path = dir.join(name);
        fs::write(&path, text).with_context(|| format!("{}: cannot write", path.display()))?;
    }
    Ok(())
}

/// Writes one rendered document to `target`: `-` is standard output; an existing file needs `force`.
pub fn write_one(target: &Path, text: &str, force: bool) -> Result<()> {
    if target == Path::new("-") {
        let mut out = std::io::stdout().lock();
        out.write_all(text.as_bytes())
            .context("cannot write to standard output")?;
        return Ok(());
    }
    if target.exists() && !force {
        bail!(
            "{}: file exists; pass --force to replace it",
            target.display()
        );
    }
    fs::write(target, text).with_context(|| format!("{}: cannot write", target.display()))
}
