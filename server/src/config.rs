//! Service configuration: raw settings from flags, environment and a TOML file, merged in one
//! place into a validated [`ServeConfig`].
//!
//! Precedence, highest first: command-line flags, environment variables (`TIDETALLY_ADDR`,
//! `TIDETALLY_DB`, `TIDETALLY_DATA`, `TIDETALLY_TOKEN`, `TIDETALLY_CORS_ORIGINS`,
//! `TIDETALLY_LOG_FORMAT`, `TIDETALLY_HEADER_READ_TIMEOUT_SECS`, `TIDETALLY_IDLE_TIMEOUT_SECS`,
//! `TIDETALLY_MAX_CONNECTIONS`, `TIDETALLY_TODAY`), the config file (`--config FILE`), then the defaults.

use std::net::SocketAddr;
use std::path::{Path, PathBuf};
use std::time::Duration;

use serde::Deserialize;

use crate::auth::Token;
use crate::connections::ConnLimits;

/// Default listening address.
pub const DEFAULT_ADDR: &str = "127.0.0.1:8080";
/// Default store file, relative to the working directory.
pub const DEFAULT_DB: &str = "tidetally.db";
/// Default data folder: the demo coastline.
pub const DEFAULT_DATA: &str = "demo-data/gauges";

/// Errors in the service configuration.
#[derive(Debug, thiserror::Error)]
pub enum ConfigError {
    /// The config file could not be read.
    #[error("config file {path}: {source}")]
    ReadFile {
        /// The file.
        path: PathBuf,
        /// The I/O error.
        source: std::io::Error,
    },
    /// The config file is not valid TOML of the expected shape.
    #[error("config file {path}: {message}")]
    ParseFile {
        /// The file.
        path: PathBuf,
        /// The parser's message (with line and column).
        message: String,
    },
    /// The listening address does not parse.
    #[error(
        "{source_name}: address {value:?} is not HOST:PORT with a numeric host, e.g. 127.0.0.1:8080"
    )]
    BadAddr {
        /// Where the value came from (flag, variable or file key).
        source_name: &'static str,
        /// The value.
        value: String,
    },
    /// A CORS origin that is not `*` nor an `http(s)://host[:port]` origin.
    #[error("cors origin {0:?} must be * or an origin such as https://example.org")]
    BadOrigin(String),
    /// A token that is too short to be a secret.
    #[error("the write token must be at least 16 characters (got {0})")]
    ShortToken(usize),
    /// A log format other than text or json.
    #[error("log format {0:?} must be \"text\" or \"json\"")]
    BadLogFormat(String),
    /// A zero or absurd timeout.
    #[error("request timeout {0} s must be 1 to 3600 seconds")]
    BadTimeout(u64),
    /// A zero or absurd connection timeout.
    #[error("{0} = {1} must be 1 to 3600 seconds")]
    BadConnTimeout(&'static str, u64),
    /// A connection cap of zero or not below the file limit.
    #[error(
        "max_connections = {value} must be at least 1 and at most 64 below the process's open-file limit ({file_limit:?})"
    )]
    BadMaxConnections {
        /// The value.
        value: usize,
        /// The soft limit on open files, where known.
        file_limit: Option<u64>,
    },
    /// A fixed date that is not `YYYY-MM-DD`.
    #[error("today: {0}")]
    BadToday(#[from] crate::clock::BadToday),
}

/// Settings as given, before validation. Every field is optional; later sources override
/// earlier ones field by field.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawServeConfig {
    /// `HOST:PORT` to listen on.
    pub addr: Option<String>,
    /// SQLite store file.
    pub db: Option<PathBuf>,
    /// Folder of gauge TOML files loaded when the store is empty.
    pub data: Option<PathBuf>,
    /// Bearer token for writes.
    pub token: Option<String>,
    /// Allowed CORS origins.
    pub cors_origins: Option<Vec<String>>,
    /// `text` or `json` logs.
    pub log_format: Option<String>,
    /// Per-request timeout in seconds.
    pub request_timeout_secs: Option<u64>,
    /// `max-age` of read responses in seconds.
    pub cache_max_age_secs: Option<u64>,
    /// Longest wait for a request's headers, seconds.
    pub header_read_timeout_secs: Option<u64>,
    /// Idle connections are closed after this many seconds.
    pub idle_timeout_secs: Option<u64>,
    /// Most connections open at once.
    pub max_connections: Option<usize>,
    /// A fixed date, `YYYY-MM-DD`, for the service's clock (default: the real date).
    pub today: Option<String>,
}

impl RawServeConfig {
    /// Reads a TOML config file.
    pub fn from_file(path: &Path) -> Result<Self, ConfigError> {
        let text = std::fs::read_to_string(path).map_err(|source| ConfigError::ReadFile {
            path: path.to_owned(),
            source,
        })?;
        Self::from_toml(path, &text)
    }

    /// Parses TOML config text; `path` only names the file in errors.
    pub fn from_toml(path: &Path, text: &str) -> Result<Self, ConfigError> {
        toml::from_str(text).map_err(|err| ConfigError::ParseFile {
            path: path.to_owned(),
            message: err.to_string().trim_end().replace('\n', " "),
        })
    }

    /// Reads the `TIDETALLY_*` variables through `lookup` (e.g. `|k| std::env::var(k).ok()`).
    pub fn from_env(lookup: impl Fn(&str) -> Option<String>) -> Self {
        let get = |key: &str| lookup(key).filter(|v| !v.trim().is_empty());
        Self {
            addr: get("TIDETALLY_ADDR"),
            db: get("TIDETALLY_DB").map(PathBuf::from),
            data: get("TIDETALLY_DATA").map(PathBuf::from),
            token: get("TIDETALLY_TOKEN"),
            cors_origins: get("TIDETALLY_CORS_ORIGINS").map(|v| {
                v.split(',')
                    .map(|s| s.trim().to_owned())
                    .filter(|s| !s.is_empty())
                    .collect()
            }),
            log_format: get("TIDETALLY_LOG_FORMAT"),
            request_timeout_secs: None,
            cache_max_age_secs: None,
            header_read_timeout_secs: get("TIDETALLY_HEADER_READ_TIMEOUT_SECS")
                .and_then(|v| v.trim().parse().ok()),
            idle_timeout_secs: get("TIDETALLY_IDLE_TIMEOUT_SECS")
                .and_then(|v| v.trim().parse().ok()),
            max_connections: get("TIDETALLY_MAX_CONNECTIONS").and_then(|v| v.trim().parse().ok()),
            today: get("TIDETALLY_TODAY"),
        }
    }

    /// `self` with every field that `over` sets replaced by `over`'s value.
    pub fn overridden_by(self, over: RawServeConfig) -> Self {
        Self {
            addr: over.addr.or(self.addr),
            db: over.db.or(self.db),
            data: over.data.or(self.data),
            token: over.token.or(self.token),
            cors_origins: over.cors_origins.or(self.cors_origins),
            log_format: over.log_format.or(self.log_format),
            request_timeout_secs: over.request_timeout_secs.or(self.request_timeout_secs),
            cache_max_age_secs: over.cache_max_age_secs.or(self.cache_max_age_secs),
            header_read_timeout_secs: over
                .header_read_timeout_secs
                .or(self.header_read_timeout_secs),
            idle_timeout_secs: over.idle_timeout_secs.or(self.idle_timeout_secs),
            max_connections: over.max_connections.or(self.max_connections),
            today: over.today.or(self.today),
        }
    }

    /// Checks every value and fills the defaults.
    pub fn validate(self) -> Result<ServeConfig, ConfigError> {
        let addr_text = self.addr.unwrap_or_else(|| DEFAULT_ADDR.to_owned());
        let addr = addr_text
            .trim()
            .parse::<SocketAddr>()
            .map_err(|_| ConfigError::BadAddr {
                source_name: "addr",
                value: addr_text.clone(),
            })?;
        let token = match self.token {
            Some(t) if t.chars().count() < 16 => return Err(ConfigError::ShortToken(t.len())),
            Some(t) => Some(Token::new(t)),
            None => None,
        };
        let cors_origins = self
            .cors_origins
            .unwrap_or_default()
            .into_iter()
            .map(|o| validate_origin(&o).map(|()| o))
            .collect::<Result<Vec<_>, _>>()?;
        let json_logs = match self.log_format.as_deref().map(str::trim) {
            None | Some("text") => false,
            Some("json") => true,
            Some(other) => return Err(ConfigError::BadLogFormat(other.to_owned())),
        };
        let timeout = self.request_timeout_secs.unwrap_or(60);
        if !(1..=3600).contains(&timeout) {
            return Err(ConfigError::BadTimeout(timeout));
        }
        let defaults = ConnLimits::default();
        let seconds = |value: Option<u64>, default: Duration, name: &'static str| match value {
            None => Ok(default),
            Some(s) if (1..=3600).contains(&s) => Ok(Duration::from_secs(s)),
            Some(s) => Err(ConfigError::BadConnTimeout(name, s)),
        };
        let header_read_timeout = seconds(
            self.header_read_timeout_secs,
            defaults.header_read_timeout,
            "header_read_timeout_secs",
        )?;
        let idle_timeout = seconds(
            self.idle_timeout_secs,
            defaults.idle_timeout,
            "idle_timeout_secs",
        )?;
        let max_connections = self.max_connections.unwrap_or(defaults.max_connections);
        let file_limit = crate::connections::open_file_limit();
        // Room for the store, the log and the listener besides the connections.
        let room = file_limit.map(|l| l.saturating_sub(64));
        if max_connections == 0 || room.is_some_and(|r| max_connections as u64 > r) {
            return Err(ConfigError::BadMaxConnections {
                value: max_connections,
                file_limit,
            });
        }
        let today = self
            .today
            .as_deref()
            .map(crate::clock::parse_today)
            .transpose()?;
        let data_explicit = self.data.is_some();
        Ok(ServeConfig {
            addr,
            db: self.db.unwrap_or_else(|| PathBuf::from(DEFAULT_DB)),
            data: self.data.unwrap_or_else(|| PathBuf::from(DEFAULT_DATA)),
            data_explicit,
            token,
            cors_origins,
            json_logs,
            request_timeout: Duration::from_secs(timeout),
            cache_max_age: Duration::from_secs(self.cache_max_age_secs.unwrap_or(300)),
            connections: ConnLimits {
                header_read_timeout,
                idle_timeout,
                max_connections,
            },
            today,
        })
    }
}

fn validate_origin(origin: &str) -> Result<(), ConfigError> {
    if origin == "*" {
        return Ok(());
    }
    let rest = origin
        .strip_prefix("https://")
        .or_else(|| origin.strip_prefix("http://"));
    let ok = rest.is_some_and(|host| {
        !host.is_empty()
            && !host.contains('/')
            && host
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || matches!(c, '.' | '-' | ':' | '[' | ']'))
    });
    if ok {
        Ok(())
    } else {
        Err(ConfigError::BadOrigin(origin.to_owned()))
    }
}

/// The validated service configuration.
#[derive(Debug, Clone)]
pub struct ServeConfig {
    /// Address to listen on.
    pub addr: SocketAddr,
    /// SQLite store file.
    pub db: PathBuf,
    /// Folder of gauge TOML files loaded when the store is empty.
    pub data: PathBuf,
    /// Whether `data` was asked for (a missing folder is then an error, not a warning).
    pub data_explicit: bool,
    /// The write token; `None` disables writes.
    pub token: Option<Token>,
    /// Allowed CORS origins (`*` for any); empty disables CORS headers.
    pub cors_origins: Vec<String>,
    /// JSON logs instead of text.
    pub json_logs: bool,
    /// Per-request timeout.
    pub request_timeout: Duration,
    /// `max-age` of read responses.
    pub cache_max_age: Duration,
    /// Header-read and idle timeouts and the cap on open connections.
    pub connections: ConnLimits,
    /// The fixed date of the service's clock; `None` follows the real date.
    pub today: Option<chrono::NaiveDate>,
}

impl ServeConfig {
    /// A configuration for tests and embedding: defaults everywhere, store and data as given.
    pub fn for_paths(db: PathBuf, data: PathBuf) -> Self {
        let mut config = RawServeConfig::default()
            .validate()
            .expect("the defaults are valid");
        config.db = db;
        config.data = data;
        config
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn defaults_match_the_documented_command_line() {
        let c = RawServeConfig::default().validate().unwrap();
        assert_eq!(c.addr.to_string(), "127.0.0.1:8080");
        assert_eq!(c.db, PathBuf::from("tidetally.db"));
        assert_eq!(c.data, PathBuf::from("demo-data/gauges"));
        assert!(c.token.is_none());
        assert!(!c.data_explicit);
        assert!(
            c.today.is_none(),
            "the clock follows the real date by default"
        );
        let fixed =
            RawServeConfig::from_env(|k| (k == "TIDETALLY_TODAY").then(|| "2026-12-01".into()))
                .validate()
                .unwrap();
        assert_eq!(fixed.today, chrono::NaiveDate::from_ymd_opt(2026, 12, 1));
        let file = RawServeConfig::from_toml(Path::new("c.toml"), "today = \"2027-03-01\"\n")
            .unwrap()
            .validate()
            .unwrap();
        assert_eq!(file.today, chrono::NaiveDate::from_ymd_opt(2027, 3, 1));
    }

    #[test]
    fn flags_beat_env_beat_file() {
        let file = RawServeConfig::from_toml(
            Path::new("c.toml"),
            "addr = \"0.0.0.0:9000\"\ndb = \"file.db\"\ndata = \"file-data\"\n",
        )
        .unwrap();
        let env = RawServeConfig::from_env(|k| match k {
            "TIDETALLY_DB" => Some("env.db".into()),
            "TIDETALLY_DATA" => Some("env-data".into()),
            "TIDETALLY_CORS_ORIGINS" => Some("https://a.example, http://b.example:8000".into()),
            _ => None,
        });
        let flags = RawServeConfig {
            data: Some("flag-data".into()),
            ..Default::default()
        };
        let c = file
            .overridden_by(env)
            .overridden_by(flags)
            .validate()
            .unwrap();
        assert_eq!(c.addr.to_string(), "0.0.0.0:9000");
        assert_eq!(c.db, PathBuf::from("env.db"));
        assert_eq!(c.data, PathBuf::from("flag-data"));
        assert_eq!(
            c.cors_origins,
            vec!["https://a.example", "http://b.example:8000"]
        );
    }

    #[test]
    fn bad_values_are_named() {
        let bad_addr = RawServeConfig {
            addr: Some("localhost".into()),
            ..Default::default()
        };
        assert!(
            bad_addr
                .validate()
                .unwrap_err()
                .to_string()
                .contains("localhost")
        );
        let short = RawServeConfig {
            token: Some("abc".into()),
            ..Default::default()
        };
        assert!(matches!(short.validate(), Err(ConfigError::ShortToken(3))));
        let origin = RawServeConfig {
            cors_origins: Some(vec!["example.org".into()]),
            ..Default::default()
        };
        assert!(matches!(origin.validate(), Err(ConfigError::BadOrigin(_))));
        let today =
            RawServeConfig::from_env(|k| (k == "TIDETALLY_TODAY").then(|| "2026-02-30".into()));
        let err = today.validate().unwrap_err();
        assert!(err.to_string().contains("2026-02-30"), "{err}");
        let err = RawServeConfig::from_toml(Path::new("c.toml"), "adr = 1").unwrap_err();
        assert!(err.to_string().contains("c.toml"), "{err}");
    }
}
