//! A fresh PostgreSQL database per test, on the server `SPLITDESK_TEST_PG_URL` names
//! (`.ci/pg-cluster start DIR PORT` starts a throwaway one and prints the variables).
//!
//! Without `SPLITDESK_TEST_PG_URL` the PostgreSQL tests are skipped with a message, except
//! under `CI=true`, where that is a failure. The password comes from `PGPASSWORD` or the
//! password file (`PGPASSFILE`, else `~/.pgpass`), never from a URL this module writes.

#![allow(dead_code)]

use std::io::Write;
use std::path::PathBuf;
use std::str::FromStr;
use std::sync::atomic::{AtomicBool, AtomicU32, Ordering};
use std::time::{Duration, SystemTime, UNIX_EPOCH};

use postgres::config::Host;
use postgres::{Client, Config, NoTls};

/// The variable naming the test server (a `postgres://` URL, no password in it).
pub const URL_VAR: &str = "SPLITDESK_TEST_PG_URL";

/// Every database this module creates starts with this; `drop_database` drops no other.
const PREFIX: &str = "sdtest_";

static SKIP_SAID: AtomicBool = AtomicBool::new(false);
static COUNTER: AtomicU32 = AtomicU32::new(0);

/// The test server's URL, or `None` (skip, said once on stderr) when `SPLITDESK_TEST_PG_URL`
/// is unset outside CI. Panics under `CI=true` without it.
pub fn server_url() -> Option<String> {
    match std::env::var(URL_VAR) {
        Ok(url) if !url.is_empty() => Some(url),
        _ => {
            if std::env::var("CI").is_ok_and(|v| v == "true") {
                panic!("CI=true: the PostgreSQL journal tests need {URL_VAR} (see .ci/pg-cluster)");
            }
            if !SKIP_SAID.swap(true, Ordering::SeqCst) {
                // Straight to stderr: the test harness captures `eprintln!`, and a skip
                // should be seen without --nocapture.
                let _ = writeln!(
                    std::io::stderr(),
                    "skipped: PostgreSQL journal tests (set {URL_VAR}, see DEVELOPERS.md)"
                );
            }
            None
        }
    }
}

/// A new, empty database on the test server named after `tag`, as a URL without a
/// password; `None` when the PostgreSQL tests are skipped (see `server_url`). Panics when
/// the server is named but cannot be used.
pub fn fresh_database(tag: &str) -> Option<String> {
    let server = server_url()?;
    let name = database_name(tag);
    let mut admin = connect(&server).unwrap_or_else(|e| {
        panic!(
            "{URL_VAR} is set but its server cannot be used ({}): {} \
             (the password comes from PGPASSWORD or the PGPASSFILE file)",
            where_of(&server),
            describe(&e)
        )
    });
    admin
        .batch_execute(&format!("CREATE DATABASE \"{name}\""))
        .unwrap_or_else(|e| panic!("CREATE DATABASE {name} failed: {}", describe(&e)));
    Some(with_database(&server, &name))
}

/// Drop a database made by `fresh_database` (best effort: errors are ignored, and a name
/// this module did not make is left alone).
pub fn drop_database(url: &str) {
    let Ok(config) = Config::from_str(url) else {
        return;
    };
    let Some(name) = config.get_dbname() else {
        return;
    };
    if !name.starts_with(PREFIX) || !is_plain_name(name) {
        return;
    }
    let admin_url = std::env::var(URL_VAR)
        .ok()
        .filter(|u| !u.is_empty())
        .unwrap_or_else(|| with_database(url, "postgres"));
    if let Ok(mut admin) = connect(&admin_url) {
        let _ = admin.batch_execute(&format!("DROP DATABASE IF EXISTS \"{name}\" WITH (FORCE)"));
    }
}

/// A client for `url`, with the password from `PGPASSWORD` or the password file when the
/// URL carries none.
pub fn connect(url: &str) -> Result<Client, postgres::Error> {
    let mut config = Config::from_str(url)?;
    if config.get_password().is_none() {
        if let Some(password) = password_for(&config) {
            config.password(password);
        }
    }
    if config.get_connect_timeout().is_none() {
        config.connect_timeout(Duration::from_secs(10));
    }
    config.connect(NoTls)
}

/// `sdtest_<tag>_<pid>_<n>_<ms>`: lowercase letters, digits and `_`, at most 63 bytes.
pub fn database_name(tag: &str) -> String {
    let tag: String = tag
        .chars()
        .map(|c| c.to_ascii_lowercase())
        .map(|c| if c.is_ascii_alphanumeric() { c } else { '_' })
        .take(24)
        .collect();
    let n = COUNTER.fetch_add(1, Ordering::SeqCst);
    let ms = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map(|d| d.as_millis() % 1_000_000_000)
        .unwrap_or(0);
    let name = format!("{PREFIX}{tag}_{}_{n}_{ms}", std::process::id());
    assert!(name.len() <= 63 && is_plain_name(&name), "{name}");
    name
}

pub fn is_plain_name(name: &str) -> bool {
    name.bytes()
        .all(|b| b.is_ascii_lowercase() || b.is_ascii_digit() || b == b'_')
}

/// `url` naming database `name` instead (URL or key=value form).
pub fn with_database(url: &str, name: &str) -> String {
    let Some(scheme_end) = url.find("://") else {
        // key=value form: a later dbname wins.
        return format!("{url} dbname={name}");
    };
    let after = scheme_end + 3;
    let query = url
        .get(after..)
        .and_then(|s| s.find('?'))
        .map(|i| after + i);
    let end = query.unwrap_or(url.len());
    let path = url
        .get(after..end)
        .and_then(|s| s.find('/'))
        .map(|i| after + i);
    let head = &url[..path.unwrap_or(end)];
    let tail = &url[end..];
    format!("{head}/{name}{tail}")
}

/// An error with its causes ("invalid configuration: password missing").
fn describe(e: &postgres::Error) -> String {
    let mut text = e.to_string();
    let mut cause = std::error::Error::source(e);
    while let Some(c) = cause {
        text.push_str(&format!(": {c}"));
        cause = c.source();
    }
    text
}

/// host:port of a URL for messages (never the user or a password).
fn where_of(url: &str) -> String {
    match Config::from_str(url) {
        Ok(config) => format!("{}:{}", host_of(&config), port_of(&config)),
        Err(_) => "unparsable URL".to_string(),
    }
}

fn host_of(config: &Config) -> String {
    match config.get_hosts().first() {
        Some(Host::Tcp(h)) => h.clone(),
        #[cfg(unix)]
        Some(Host::Unix(p)) => p.display().to_string(),
        None => String::new(),
    }
}

fn port_of(config: &Config) -> u16 {
    config.get_ports().first().copied().unwrap_or(5432)
}

/// libpq's rules, simply: `PGPASSWORD`, else the first matching line of `PGPASSFILE` (else
/// `~/.pgpass`), `*` matching any field and `\` escaping the next character.
// Source: PostgreSQL 15 manual, section 34.16 "The Password File".
fn password_for(config: &Config) -> Option<String> {
    if let Some(p) = std::env::var("PGPASSWORD").ok().filter(|p| !p.is_empty()) {
        return Some(p);
    }
    let file = match std::env::var("PGPASSFILE").ok().filter(|f| !f.is_empty()) {
        Some(f) => PathBuf::from(f),
        None => PathBuf::from(std::env::var("HOME").ok()?).join(".pgpass"),
    };
    let text = std::fs::read_to_string(file).ok()?;
    let host = host_of(config);
    let host = if host.is_empty() {
        "localhost".into()
    } else {
        host
    };
    let port = port_of(config).to_string();
    let user = config.get_user().unwrap_or_default();
    let db = config.get_dbname().unwrap_or(user);
    let wanted = [host.as_str(), port.as_str(), db, user];
    text.lines()
        .filter(|l| !l.starts_with('#'))
        .map(split_fields)
        .find(|fields| {
            fields.len() >= 5 && wanted.iter().zip(fields).all(|(w, f)| f == "*" || f == w)
        })
        .and_then(|fields| fields.into_iter().nth(4))
        .filter(|p| !p.is_empty())
}

/// The `:`-separated fields of a password-file line, unescaped.
pub fn split_fields(line: &str) -> Vec<String> {
    let mut fields = vec![String::new()];
    let mut chars = line.trim_end_matches('\r').chars();
    while let Some(c) = chars.next() {
        match c {
            '\\' => {
                if let (Some(next), Some(field)) = (chars.next(), fields.last_mut()) {
                    field.push(next);
                }
            }
            ':' => fields.push(String::new()),
            c => {
                if let Some(field) = fields.last_mut() {
                    field.push(c);
                }
            }
        }
    }
    fields
}
