//! A gauge's inputs as read: the TOML text (validated once, when it is read, because it names
//! the other files) and each data file's bytes, each with the name its errors use.
//! [`GaugeSources::read`] fills them from a TOML file and the files it names (the only place
//! the model opens files); the service fills them from its store. [`super::prepare`] parses
//! each data file exactly once.

use std::path::{Path, PathBuf};

use crate::gauge::{GaugeConfig, GaugeError};

/// A text input (the gauge TOML) and the name its errors use.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TextSource {
    /// The file name or label, e.g. `port-tamsin.toml`.
    pub name: String,
    /// The text.
    pub text: String,
}

/// A data input (a CSV or JSON body, plain or gzip) and the name its errors use.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ByteSource {
    /// The file name or label, e.g. `demo-data/drivers/enso-monthly.csv`.
    pub name: String,
    /// The bytes as stored.
    pub bytes: Vec<u8>,
}

/// A gauge TOML and its validated description, parsed once when it is made.
#[derive(Debug, Clone, PartialEq)]
pub struct GaugeToml {
    source: TextSource,
    config: GaugeConfig,
}

impl GaugeToml {
    /// Validates `source`; data paths in it resolve against `base_dir` (empty for a stored
    /// TOML, whose data come from the store).
    pub fn parse(source: TextSource, base_dir: &Path) -> Result<Self, GaugeError> {
        let config = GaugeConfig::from_toml_str(&source.text, &source.name, base_dir)?;
        Ok(Self { source, config })
    }

    /// The TOML as written, with its name.
    pub fn source(&self) -> &TextSource {
        &self.source
    }

    /// The validated description.
    pub fn config(&self) -> &GaugeConfig {
        &self.config
    }
}

/// Everything a gauge's preparation reads: its TOML and the bytes of the files it uses.
#[derive(Debug, Clone, PartialEq)]
pub struct GaugeSources {
    /// The gauge TOML, validated.
    pub toml: GaugeToml,
    /// The water-level file.
    pub levels: ByteSource,
    /// Monthly ENSO index CSV.
    pub enso: Option<ByteSource>,
    /// Daily RMM index CSV.
    pub rmm: Option<ByteSource>,
    /// The gauge's wind CSV.
    pub wind: Option<ByteSource>,
    /// The ENSO forecast JSON for a target season.
    pub enso_forecast: Option<ByteSource>,
}

/// Which of a gauge's files [`GaugeSources::read`] reads.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FilesNeeded {
    /// The level file only (the season table and the tide need no drivers).
    Levels,
    /// The level file and every driver and forecast file the TOML names.
    All,
}

/// A gauge's file that could not be read.
#[derive(Debug, thiserror::Error)]
pub enum SourceError {
    /// A file could not be opened or read. The cause is in the message once (it is not also
    /// a `source`, which error reports would print a second time).
    #[error(
        "{}{}: cannot open: {error}",
        path.display(),
        key.map(|k| format!(" (TOML key {k})")).unwrap_or_default()
    )]
    Io {
        /// The file.
        path: PathBuf,
        /// The gauge TOML key that names it (`None` for the TOML itself).
        key: Option<&'static str>,
        /// The I/O error.
        error: std::io::Error,
    },
    /// The TOML does not validate (it names the files to read).
    #[error(transparent)]
    Gauge(#[from] GaugeError),
}

fn read_bytes(path: &Path, key: &'static str) -> Result<ByteSource, SourceError> {
    let bytes = std::fs::read(path).map_err(|error| SourceError::Io {
        path: path.to_owned(),
        key: Some(key),
        error,
    })?;
    Ok(ByteSource {
        name: path.display().to_string(),
        bytes,
    })
}

impl GaugeSources {
    /// Reads a gauge TOML file and the files it names (relative to the TOML's folder).
    pub fn read(toml_path: &Path, needed: FilesNeeded) -> Result<Self, SourceError> {
        let text = std::fs::read_to_string(toml_path).map_err(|error| SourceError::Io {
            path: toml_path.to_owned(),
            key: None,
            error,
        })?;
        let name = toml_path.file_name().map_or_else(
            || toml_path.display().to_string(),
            |n| n.to_string_lossy().into_owned(),
        );
        let base_dir = toml_path.parent().unwrap_or(Path::new(""));
        let toml = GaugeToml::parse(TextSource { name, text }, base_dir)?;
        let files = toml.config();
        let read = |path: &Option<PathBuf>, key: &'static str| match (needed, path) {
            (FilesNeeded::All, Some(p)) => read_bytes(p, key).map(Some),
            _ => Ok(None),
        };
        Ok(Self {
            levels: read_bytes(&files.levels.file, "levels.file")?,
            enso: read(&files.drivers.enso, "drivers.enso")?,
            rmm: read(&files.drivers.rmm, "drivers.rmm")?,
            wind: read(&files.drivers.wind, "drivers.wind")?,
            enso_forecast: read(&files.drivers.enso_forecast, "drivers.enso_forecast")?,
            toml,
        })
    }

    /// The validated gauge description.
    pub fn config(&self) -> &GaugeConfig {
        self.toml.config()
    }
}
