//! The coach's configuration file and where things live.
//!
//! `config.toml` sits in the platform config directory (or at `$SPLITDESK_CONFIG`);
//! `config.example.toml` at the repo root documents every key. Command-line flags
//! override the file; with neither, the bundled demo roster opens.

use std::path::{Path, PathBuf};

use serde::Deserialize;

/// Settings read from `config.toml`. Every key is optional.
#[derive(Debug, Clone, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Config {
    /// The roster folder to open.
    pub roster: Option<PathBuf>,
    /// The journal: a file path (`journal = "…"`), or a table `[journal]` with `url` (a
    /// PostgreSQL server shared by a staff) or `path`. By default one SQLite file per roster
    /// in the platform data directory.
    pub journal: Option<JournalSetting>,
    /// Who the coach is, on a journal shared by a staff (`[coach] name = "…"`).
    #[serde(default)]
    pub coach: CoachConfig,
    /// Key overrides for the workstation (action name = key).
    #[serde(default)]
    pub keys: toml::Table,
    /// Bounds on reading activity files.
    #[serde(default)]
    pub ingest: IngestConfig,
    /// The coach's voice in feedback drafts (`[feedback]`). Read leniently: a mistake in
    /// it is reported by [`Config::feedback_style`] and the rest is used.
    #[serde(default)]
    pub feedback: toml::Table,
}

/// The journal setting: a bare path, or a `[journal]` table.
#[derive(Debug, Clone, Deserialize, PartialEq)]
#[serde(untagged)]
pub enum JournalSetting {
    /// `journal = "/path/to/journal.sqlite"` (or a `postgres://` address).
    Location(PathBuf),
    /// `[journal]` with `url = "postgres://…"` or `path = "…"`.
    Table(JournalTable),
}

/// The `[journal]` table.
#[derive(Debug, Clone, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct JournalTable {
    /// A PostgreSQL journal: `postgres://user@host:port/database` (the password from
    /// `PGPASSWORD` or the password file, never here).
    pub url: Option<String>,
    /// A SQLite journal file.
    pub path: Option<PathBuf>,
}

/// The `[coach]` table.
#[derive(Debug, Clone, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct CoachConfig {
    /// This coach's name on the journal's staff.
    pub name: Option<String>,
}

/// The `[ingest]` table.
#[derive(Debug, Clone, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct IngestConfig {
    /// Activity files larger than this many MiB are refused without being read (default
    /// [`crate::ingest::DEFAULT_MAX_FILE_MB`]; at least 1).
    pub max_file_mb: Option<u64>,
}

impl Config {
    /// The ingest limits this configuration asks for.
    pub fn ingest_limits(&self) -> crate::ingest::Limits {
        crate::ingest::Limits::from_mb(
            self.ingest
                .max_file_mb
                .unwrap_or(crate::ingest::DEFAULT_MAX_FILE_MB),
        )
    }
}

impl Config {
    /// Where the configuration puts the journal (a file path, or a server address as a
    /// path), if it says.
    pub fn journal_location(&self) -> Option<PathBuf> {
        match &self.journal {
            Some(JournalSetting::Location(p)) => Some(p.clone()),
            Some(JournalSetting::Table(t)) => {
                t.url.as_ref().map(PathBuf::from).or_else(|| t.path.clone())
            }
            None => None,
        }
    }
}

/// The journal to use: the `--journal` flag, else `$SPLITDESK_JOURNAL`, else the
/// configuration; `None` for the per-roster default.
pub fn resolve_journal(flag: Option<&Path>, config: &Config) -> Option<PathBuf> {
    flag.map(Path::to_path_buf)
        .or_else(|| {
            std::env::var_os("SPLITDESK_JOURNAL")
                .filter(|v| !v.is_empty())
                .map(PathBuf::from)
        })
        .or_else(|| config.journal_location())
}

/// The coach to act as: the `--as` flag, else `$SPLITDESK_COACH`, else `[coach] name`.
pub fn resolve_coach(flag: Option<&str>, config: &Config) -> Option<String> {
    flag.map(str::to_string)
        .or_else(|| {
            std::env::var("SPLITDESK_COACH")
                .ok()
                .filter(|v| !v.is_empty())
        })
        .or_else(|| config.coach.name.clone())
}

impl Config {
    /// The coach's voice for drafts, with one line per problem in the `[feedback]` table
    /// (the rest of the table is used).
    pub fn feedback_style(&self) -> (crate::export::feedback::FeedbackStyle, Vec<String>) {
        crate::export::feedback::style::from_table(&self.feedback)
    }
}

/// The configuration file could not be used.
#[derive(Debug, thiserror::Error)]
pub enum ConfigError {
    #[error("{path}: {source}")]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error("{path}: {message}")]
    Parse { path: PathBuf, message: String },
}

/// Where `config.toml` is looked for: `$SPLITDESK_CONFIG`, else the platform config dir.
pub fn config_path() -> Option<PathBuf> {
    if let Some(p) = std::env::var_os("SPLITDESK_CONFIG") {
        return Some(PathBuf::from(p));
    }
    directories::ProjectDirs::from("", "", "splitdesk").map(|d| d.config_dir().join("config.toml"))
}

/// Load the configuration; a missing file is the empty configuration.
pub fn load() -> Result<Config, ConfigError> {
    match config_path() {
        Some(p) => load_from(&p),
        None => Ok(Config::default()),
    }
}

/// Load a configuration file; a missing file is the empty configuration.
pub fn load_from(path: &Path) -> Result<Config, ConfigError> {
    let text = match crate::ingest::read_text_file(path) {
        Ok(t) => t,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(Config::default()),
        Err(source) => {
            return Err(ConfigError::Io {
                path: path.to_path_buf(),
                source,
            })
        }
    };
    parse(&text).map_err(|message| ConfigError::Parse {
        path: path.to_path_buf(),
        message,
    })
}

/// Parse configuration text; errors are one line with the position.
pub fn parse(text: &str) -> Result<Config, String> {
    toml::from_str(text).map_err(|e| crate::roster::toml_error_line(text, &e))
}

/// The bundled demo roster: next to the sources when run from a checkout, else
/// `demo-athletes/` in the current folder.
pub fn demo_roster() -> PathBuf {
    let bundled = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    if bundled.is_dir() {
        bundled
    } else {
        PathBuf::from("demo-athletes")
    }
}

/// The roster to open: the flag, else the config file, else the demo roster.
pub fn resolve_roster(flag: Option<&Path>, config: &Config) -> PathBuf {
    flag.map(Path::to_path_buf)
        .or_else(|| config.roster.clone())
        .unwrap_or_else(demo_roster)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ingest::Limits;

    #[test]
    fn flag_beats_config_beats_demo() {
        let cfg = parse("roster = \"/srv/club\"\n").unwrap();
        assert_eq!(
            resolve_roster(Some(Path::new("/tmp/x")), &cfg),
            PathBuf::from("/tmp/x")
        );
        assert_eq!(resolve_roster(None, &cfg), PathBuf::from("/srv/club"));
        assert_eq!(resolve_roster(None, &Config::default()), demo_roster());
        let err = parse("rooster = 1").unwrap_err();
        assert!(err.starts_with("line 1, column 1:"), "{err}");
    }

    #[test]
    fn ingest_size_cap_is_configurable() {
        assert_eq!(
            Config::default().ingest_limits().max_file_bytes,
            64 * 1024 * 1024
        );
        let cfg = parse("[ingest]\nmax_file_mb = 8\n").unwrap();
        assert_eq!(cfg.ingest_limits().max_file_bytes, 8 * 1024 * 1024);
        let cfg = parse("[ingest]\nmax_file_mb = 0\n").unwrap();
        assert_eq!(cfg.ingest_limits().max_file_bytes, 1024 * 1024);
        assert!(parse("[ingest]\nmax_mb = 8\n").is_err());
        // The documented example parses, and its commented key is the default.
        let example = include_str!("../config.example.toml");
        assert_eq!(parse(example).unwrap().ingest_limits(), Limits::default());
        let uncommented = example.replace("# max_file_mb = 64", "max_file_mb = 64");
        assert_eq!(parse(&uncommented).unwrap().ingest.max_file_mb, Some(64));
    }

    #[test]
    fn the_example_documents_every_feedback_key_and_slot_with_its_default() {
        use crate::export::feedback::style::{Format, Length, KEYS, SLOTS};
        let example = include_str!("../config.example.toml");
        let cfg = parse(example).unwrap();
        let (style, problems) = cfg.feedback_style();
        assert!(problems.is_empty(), "{problems:?}");
        assert_eq!(style, Default::default());
        let (head, rest) = example
            .split_once("[feedback]\n")
            .expect("[feedback] table");
        let (top, rest) = rest
            .split_once("[feedback.phrases]\n")
            .expect("[feedback.phrases] table");
        let (phrases, _) = rest.split_once("\n[keys]").expect("[keys] after it");
        assert!(!head.contains("[feedback"));
        for key in KEYS.iter().filter(|k| **k != "phrases") {
            assert!(
                top.lines().any(|l| l.starts_with(&format!("# {key} = "))),
                "[feedback] {key} is not documented"
            );
        }
        for slot in SLOTS {
            let line = format!("# {} = {:?}", slot.name, slot.default);
            assert!(
                phrases.lines().any(|l| l == line),
                "[feedback.phrases] {} is not documented with its default: {line}",
                slot.name
            );
        }
        // Uncommented, the phrasebook and the other keys read without a problem, and the
        // phrasebook gives the default wordings.
        let mut text = String::new();
        text.push_str(head);
        text.push_str("[feedback]\n");
        for l in top.lines() {
            let keep = ["coach", "length", "format"]
                .iter()
                .any(|k| l.starts_with(&format!("# {k} = ")));
            text.push_str(if keep { l.trim_start_matches("# ") } else { l });
            text.push('\n');
        }
        text.push_str("[feedback.phrases]\n");
        for l in phrases.lines() {
            let keep = SLOTS
                .iter()
                .any(|s| l.starts_with(&format!("# {} = ", s.name)));
            text.push_str(if keep { l.trim_start_matches("# ") } else { l });
            text.push('\n');
        }
        let (style, problems) = parse(&text).unwrap().feedback_style();
        assert!(problems.is_empty(), "{problems:?}");
        assert_eq!(style.signature(), "Sam Ostrander");
        assert_eq!((style.length, style.format), (Length::Full, Format::Text));
        assert_eq!(style.phrases.len(), SLOTS.len());
        for slot in SLOTS {
            assert_eq!(style.phrase(slot.name, &[]), slot.default, "{}", slot.name);
        }
    }
}
