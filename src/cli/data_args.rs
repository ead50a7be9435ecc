//! Flags shared by commands that read a data file: where it is, how to read
//! it, and which column plays which role.

use super::scan::ScanSettingsArgs;
use anyhow::{Context, Result, bail};
use clap::{Args, ValueEnum};
use std::collections::BTreeMap;
use std::path::PathBuf;
use telltale::data::load::{FileFormat, LoadOptions};
use telltale::data::missing::MissingTokens;
use telltale::data::prepare::{EncodeOptions, Roles};
use telltale::pipeline::ScreenOptions;
use telltale::review::policy::Policy;

#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum FormatArg {
    Csv,
    Parquet,
}

#[derive(Debug, Args)]
pub struct DataArgs {
    /// The data file (CSV with a header row, or Parquet).
    pub data: PathBuf,
    /// Protected attribute column (repeat for several).
    #[arg(long = "protected", short = 'p', value_name = "COL", required = true)]
    pub protected: Vec<String>,
    /// Outcome column: never used as a feature.
    #[arg(long, value_name = "COL")]
    pub outcome: Option<String>,
    /// Column to leave out (repeatable), e.g. a customer number.
    #[arg(long, value_name = "COL")]
    pub exclude: Vec<String>,
    /// Only these feature columns (comma-separated).
    #[arg(long, value_name = "COL,...", value_delimiter = ',')]
    pub features: Option<Vec<String>>,
    /// Read this column as categories even if it looks numeric (repeatable).
    #[arg(long, value_name = "COL")]
    pub categorical: Vec<String>,
    /// Read this column as numbers (repeatable); fields that are not numbers become missing.
    #[arg(long, value_name = "COL")]
    pub numeric: Vec<String>,
    /// Field texts read as missing, replacing the default set (comma-separated;
    /// the README lists the default).
    #[arg(
        long,
        value_name = "TOKEN,...",
        value_delimiter = ',',
        num_args = 0..,
        conflicts_with = "no_na_values"
    )]
    pub na_values: Option<Vec<String>>,
    /// Read no text as missing: only empty fields are missing values.
    #[arg(long)]
    pub no_na_values: bool,
    /// Band a numeric protected attribute, e.g. `age=18,25,35,50,65`.
    #[arg(long, value_name = "COL=EDGES")]
    pub band: Vec<String>,
    /// Also scan the combination of all protected attributes as one attribute.
    #[arg(long)]
    pub intersect: bool,
    /// File format; chosen by extension when absent.
    #[arg(long, value_enum)]
    pub format: Option<FormatArg>,
    /// CSV field separator (one character; `\t` for tab).
    #[arg(long, default_value = ",")]
    pub delimiter: String,
    /// Scan a stratified random sample of this many rows.
    #[arg(long, value_name = "N")]
    pub sample: Option<usize>,
    /// Quantile bins for numeric features.
    #[arg(long, default_value_t = 32)]
    pub bins: usize,
    /// Cross-validation folds.
    #[arg(long, default_value_t = 5)]
    pub folds: usize,
    /// Seed for folds, sampling and models.
    #[arg(long, default_value_t = 0)]
    pub seed: u64,
    /// Most classes a protected attribute may have.
    #[arg(long, default_value_t = 50)]
    pub max_classes: usize,
    /// Suppress report cells with fewer rows than this.
    #[arg(long, default_value_t = 10)]
    pub min_cell: u64,
    /// No progress bars.
    #[arg(long, short = 'q')]
    pub quiet: bool,
    /// Print each stage's wall time to standard error (for benchmarks).
    #[arg(long)]
    pub timings: bool,
}

impl DataArgs {
    pub fn load_options(&self) -> Result<LoadOptions> {
        let delimiter = match self.delimiter.as_str() {
            "\\t" | "tab" => b'\t',
            d if d.len() == 1 => d.as_bytes()[0],
            d => bail!("--delimiter must be one character, got `{d}`"),
        };
        Ok(LoadOptions {
            format: self.format.map(|f| match f {
                FormatArg::Csv => FileFormat::Csv,
                FormatArg::Parquet => FileFormat::Parquet,
            }),
            delimiter,
        })
    }

    pub fn roles(&self) -> Result<Roles> {
        let mut bands = BTreeMap::new();
        for spec in &self.band {
            let (column, edges) = spec
                .split_once('=')
                .with_context(|| format!("--band `{spec}`: expected COL=EDGE,EDGE,..."))?;
            let edges: Vec<f64> = edges
                .split(',')
                .map(|e| e.trim().parse::<f64>().ok().filter(|v| v.is_finite()))
                .collect::<Option<_>>()
                .with_context(|| format!("--band `{spec}`: edges must be numbers"))?;
            if edges.is_empty() || edges.windows(2).any(|w| w[0] >= w[1]) {
                bail!("--band `{spec}`: edges must be increasing");
            }
            bands.insert(column.to_string(), edges);
        }
        Ok(Roles {
            protected: self.protected.clone(),
            outcome: self.outcome.clone(),
            exclude: self.exclude.clone(),
            features: self.features.clone(),
            categorical: self.categorical.clone(),
            numeric: self.numeric.clone(),
            bands,
            intersect: self.intersect,
            features_optional: false,
        })
    }

    pub fn encode_options(&self) -> EncodeOptions {
        EncodeOptions {
            bins: self.bins,
            max_classes: self.max_classes,
            sample: self.sample,
            missing: self.missing_tokens(),
            ..EncodeOptions::default()
        }
    }

    /// The field texts read as missing: the default set, `--na-values`, or none.
    fn missing_tokens(&self) -> MissingTokens {
        match (&self.na_values, self.no_na_values) {
            (_, true) => MissingTokens::none(),
            (Some(tokens), false) => MissingTokens::new(tokens.iter().cloned()),
            (None, false) => MissingTokens::default(),
        }
    }

    /// The screen's options from these flags and the scan settings, validated once.
    pub fn screen_options(
        &self,
        settings: &ScanSettingsArgs,
        policy: Option<Policy>,
    ) -> Result<ScreenOptions> {
        Ok(ScreenOptions {
            load: self.load_options()?,
            roles: self.roles()?,
            encode: self.encode_options(),
            scan: settings.options(self.folds, self.seed, self.min_cell),
            policy,
            command: command_line(),
        }
        .validated()?)
    }
}

/// The command line as typed, for the report's settings.
pub fn command_line() -> String {
    std::env::args()
        .skip(1)
        .map(|a| if a.contains(' ') { format!("'{a}'") } else { a })
        .collect::<Vec<_>>()
        .join(" ")
}
