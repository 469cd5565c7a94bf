//! The password for a PostgreSQL journal, by libpq's rules: `PGPASSWORD`, else the password
//! file (`PGPASSFILE`, else `$HOME/.pgpass`). The `postgres` client crate reads neither, so
//! the journal does it here. Pure: the environment and the file come in as functions, so the
//! caller decides how a file is read (and may refuse one that group or others can read, as
//! libpq does).
//!
//! The password never goes into a message: nothing here formats or logs it.

use std::path::{Path, PathBuf};

/// The host name a password-file line is matched against when no host was given.
const LOCALHOST: &str = "localhost";

/// Socket directories libpq builds in as its default (upstream `/tmp`; Debian and others
/// `/var/run/postgresql`, which is `/run/postgresql`). A connection through a socket in one
/// of them is matched as `localhost`.
const DEFAULT_SOCKET_DIRS: [&str; 3] = ["/tmp", "/var/run/postgresql", "/run/postgresql"];

/// The password for a connection to `dbname` as `user` on `host`:`port`, or `None` when
/// neither `PGPASSWORD` nor a line of the password file gives one.
///
/// `host` is a host name or address, or a Unix-socket directory (starting with `/`), or
/// empty when none was given. `env` reads an environment variable; `read_file` reads a whole
/// file (`None` when it cannot be read).
pub fn password_for(
    host: &str,
    port: u16,
    dbname: &str,
    user: &str,
    env: &dyn Fn(&str) -> Option<String>,
    read_file: &dyn Fn(&Path) -> Option<String>,
) -> Option<String> {
    if let Some(password) = env("PGPASSWORD").filter(|p| !p.is_empty()) {
        return Some(password);
    }
    let file = password_file(env)?;
    let text = read_file(&file)?;
    let port = port.to_string();
    let hosts = host_names(host);
    let field = text.lines().find_map(|line| {
        hosts
            .iter()
            .find_map(|host| password_field(line, host, &port, dbname, user))
    })?;
    let password = unescape_last(field);
    // The first matching line wins even when its password is empty; an empty password is
    // no password (the server would refuse it anyway).
    (!password.is_empty()).then_some(password)
}

/// `PGPASSFILE` when set and not empty, else `$HOME/.pgpass`.
fn password_file(env: &dyn Fn(&str) -> Option<String>) -> Option<PathBuf> {
    if let Some(file) = env("PGPASSFILE").filter(|f| !f.is_empty()) {
        return Some(PathBuf::from(file));
    }
    let home = env("HOME").filter(|h| !h.is_empty())?;
    Some(Path::new(&home).join(".pgpass"))
}

/// The names the host field of a line may carry for this connection: `localhost` when no
/// host was given; for a socket directory, the directory itself and, when it is a default
/// one, `localhost`; else the host as given.
fn host_names(host: &str) -> Vec<&str> {
    if host.is_empty() {
        vec![LOCALHOST]
    } else if is_socket_dir(host) {
        let trimmed = host.trim_end_matches('/');
        if DEFAULT_SOCKET_DIRS.contains(&trimmed) {
            vec![LOCALHOST, host]
        } else {
            vec![host]
        }
    } else {
        vec![host]
    }
}

fn is_socket_dir(host: &str) -> bool {
    host.starts_with('/')
}

/// The password field (still escaped) of one line when its first four fields match, else
/// `None`. Comment lines (`#` first), blank lines and lines with fewer than five fields match
/// nothing.
fn password_field<'a>(
    line: &'a str,
    host: &str,
    port: &str,
    dbname: &str,
    user: &str,
) -> Option<&'a str> {
    let line = line.strip_suffix('\r').unwrap_or(line);
    if line.is_empty() || line.starts_with('#') {
        return None;
    }
    let rest = field_matches(line, host)?;
    let rest = field_matches(rest, port)?;
    let rest = field_matches(rest, dbname)?;
    field_matches(rest, user)
}

/// When the first field of `fields` matches `value` (a lone `*` matches anything; `\`
/// makes the next character literal), the text after that field's `:`.
fn field_matches<'a>(fields: &'a str, value: &str) -> Option<&'a str> {
    if let Some(rest) = fields.strip_prefix("*:") {
        return Some(rest);
    }
    let mut wanted = value.chars();
    let mut chars = fields.char_indices();
    while let Some((at, c)) = chars.next() {
        let literal = if c == '\\' {
            match chars.next() {
                Some((_, escaped)) => escaped,
                // A lone backslash at the end of the line: the field never ends.
                None => return None,
            }
        } else if c == ':' {
            // The field ends: it matched only when all of `value` was used.
            return match wanted.next() {
                None => fields.get(at + 1..),
                Some(_) => None,
            };
        } else {
            c
        };
        if wanted.next() != Some(literal) {
            return None;
        }
    }
    None
}

/// The password field: up to the first unescaped `:` (any further fields are ignored), with
/// `\` escapes removed.
fn unescape_last(field: &str) -> String {
    let mut out = String::with_capacity(field.len());
    let mut chars = field.chars();
    while let Some(c) = chars.next() {
        match c {
            '\\' => match chars.next() {
                Some(escaped) => out.push(escaped),
                None => out.push('\\'),
            },
            ':' => break,
            c => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    // Source: PostgreSQL 15 manual, section 34.16 "The Password File" (lines
    // `hostname:port:database:username:password`; `*` matches anything in the first four
    // fields; `\` escapes `:` and `\`; `#` lines are comments; the first matching line
    // wins; `localhost` is used when no host is given and for a Unix-socket connection
    // through libpq's default socket directory; `PGPASSFILE` names the file, else
    // `~/.pgpass`) and section 34.15 "Environment Variables" (`PGPASSWORD`).
    use super::*;
    use std::collections::HashMap;

    fn env_of(pairs: &[(&str, &str)]) -> impl Fn(&str) -> Option<String> {
        let map: HashMap<String, String> = pairs
            .iter()
            .map(|(k, v)| (k.to_string(), v.to_string()))
            .collect();
        move |name: &str| map.get(name).cloned()
    }

    /// A file reader that knows one file.
    fn file_at(path: &str, text: &str) -> impl Fn(&Path) -> Option<String> {
        let path = PathBuf::from(path);
        let text = text.to_string();
        move |p: &Path| (p == path).then(|| text.clone())
    }

    fn lookup(text: &str, host: &str, port: u16, db: &str, user: &str) -> Option<String> {
        let env = env_of(&[("PGPASSFILE", "/p/pgpass")]);
        let read = file_at("/p/pgpass", text);
        password_for(host, port, db, user, &env, &read)
    }

    #[test]
    fn pgpassword_comes_first() {
        let env = env_of(&[("PGPASSWORD", "fromenv"), ("PGPASSFILE", "/p/pgpass")]);
        let read = file_at("/p/pgpass", "*:*:*:*:fromfile\n");
        assert_eq!(
            password_for("db.club", 5432, "j", "ann", &env, &read).as_deref(),
            Some("fromenv")
        );
    }

    #[test]
    fn empty_pgpassword_falls_through_to_the_file() {
        let env = env_of(&[("PGPASSWORD", ""), ("PGPASSFILE", "/p/pgpass")]);
        let read = file_at("/p/pgpass", "*:*:*:*:fromfile\n");
        assert_eq!(
            password_for("db.club", 5432, "j", "ann", &env, &read).as_deref(),
            Some("fromfile")
        );
    }

    #[test]
    fn pgpassfile_names_the_file_before_home() {
        let env = env_of(&[("PGPASSFILE", "/p/pgpass"), ("HOME", "/home/ann")]);
        let read = |p: &Path| -> Option<String> {
            if p == Path::new("/p/pgpass") {
                Some("*:*:*:*:named\n".into())
            } else if p == Path::new("/home/ann/.pgpass") {
                Some("*:*:*:*:home\n".into())
            } else {
                None
            }
        };
        assert_eq!(
            password_for("h", 5432, "d", "u", &env, &read).as_deref(),
            Some("named")
        );
    }

    #[test]
    fn home_pgpass_without_pgpassfile() {
        let env = env_of(&[("HOME", "/home/ann")]);
        let read = file_at("/home/ann/.pgpass", "h:5432:d:u:home\n");
        assert_eq!(
            password_for("h", 5432, "d", "u", &env, &read).as_deref(),
            Some("home")
        );
        let empty_passfile = env_of(&[("PGPASSFILE", ""), ("HOME", "/home/ann")]);
        assert_eq!(
            password_for("h", 5432, "d", "u", &empty_passfile, &read).as_deref(),
            Some("home")
        );
    }

    #[test]
    fn nothing_without_variable_or_file() {
        let env = env_of(&[]);
        let read = file_at("/home/ann/.pgpass", "*:*:*:*:x\n");
        assert_eq!(password_for("h", 5432, "d", "u", &env, &read), None);
        // The named file cannot be read: no password (no fall-back to ~/.pgpass).
        let env = env_of(&[("PGPASSFILE", "/missing"), ("HOME", "/home/ann")]);
        assert_eq!(password_for("h", 5432, "d", "u", &env, &read), None);
    }

    #[test]
    fn all_four_fields_must_match() {
        let text = "db.club:5432:journal:ann:secret\n";
        assert_eq!(
            lookup(text, "db.club", 5432, "journal", "ann").as_deref(),
            Some("secret")
        );
        assert_eq!(lookup(text, "db.club2", 5432, "journal", "ann"), None);
        assert_eq!(lookup(text, "db.clu", 5432, "journal", "ann"), None);
        assert_eq!(lookup(text, "db.club", 5433, "journal", "ann"), None);
        assert_eq!(lookup(text, "db.club", 5432, "journals", "ann"), None);
        assert_eq!(lookup(text, "db.club", 5432, "journal", "bob"), None);
    }

    #[test]
    fn star_matches_anything_but_only_as_a_whole_field() {
        let text = "*:*:*:ann:any\n";
        assert_eq!(
            lookup(text, "10.0.0.9", 6543, "x", "ann").as_deref(),
            Some("any")
        );
        // `db*` is a literal name, not a pattern.
        let text = "db*:5432:*:*:pattern\n";
        assert_eq!(lookup(text, "db1", 5432, "x", "ann"), None);
        assert_eq!(
            lookup(text, "db*", 5432, "x", "ann").as_deref(),
            Some("pattern")
        );
    }

    #[test]
    fn first_matching_line_wins() {
        let text = "db:5432:journal:ann:specific\n*:*:*:*:general\n";
        assert_eq!(
            lookup(text, "db", 5432, "journal", "ann").as_deref(),
            Some("specific")
        );
        assert_eq!(
            lookup(text, "db", 5432, "other", "ann").as_deref(),
            Some("general")
        );
        let text = "*:*:*:*:general\ndb:5432:journal:ann:specific\n";
        assert_eq!(
            lookup(text, "db", 5432, "journal", "ann").as_deref(),
            Some("general")
        );
    }

    #[test]
    fn comments_and_blank_lines_are_skipped() {
        let text = "# hostname:port:database:username:password\n\n*:*:*:*:pw\n";
        assert_eq!(lookup(text, "h", 1, "d", "u").as_deref(), Some("pw"));
        // A comment is a line that starts with `#`; a `#` elsewhere is text.
        let text = "h:1:d:u:pa#ss\n";
        assert_eq!(lookup(text, "h", 1, "d", "u").as_deref(), Some("pa#ss"));
    }

    #[test]
    fn escapes_in_fields_and_password() {
        // A user name with a colon and a database name with a backslash.
        let text = "h:5432:a\\\\b:we\\:ird:p\\:w\\\\d\n";
        assert_eq!(
            lookup(text, "h", 5432, "a\\b", "we:ird").as_deref(),
            Some("p:w\\d")
        );
        // Unescaped, the colon ends the user field at `we`: no match for `we:ird`.
        let text = "h:5432:d:we:ird:pw\n";
        assert_eq!(lookup(text, "h", 5432, "d", "we:ird"), None);
    }

    #[test]
    fn password_ends_at_an_unescaped_colon() {
        let text = "h:1:d:u:pw:extra\n";
        assert_eq!(lookup(text, "h", 1, "d", "u").as_deref(), Some("pw"));
    }

    #[test]
    fn short_lines_and_empty_passwords_give_nothing() {
        assert_eq!(lookup("h:1:d:u\n", "h", 1, "d", "u"), None);
        // From memory: libpq (fe-connect.c, passwordFromFile) stops at the first matching
        // line, whatever its password; an empty one is then no password.
        assert_eq!(lookup("h:1:d:u:\n*:*:*:*:next\n", "h", 1, "d", "u"), None);
        // A backslash at the very end leaves the user field unterminated.
        assert_eq!(lookup("h:1:d:u\\", "h", 1, "d", "u"), None);
    }

    #[test]
    fn crlf_line_ends() {
        let text = "h:1:d:u:pw\r\n";
        assert_eq!(lookup(text, "h", 1, "d", "u").as_deref(), Some("pw"));
    }

    #[test]
    fn localhost_for_no_host_and_the_default_socket_directory() {
        let text = "localhost:5432:*:*:local\n";
        assert_eq!(lookup(text, "", 5432, "d", "u").as_deref(), Some("local"));
        assert_eq!(
            lookup(text, "/var/run/postgresql", 5432, "d", "u").as_deref(),
            Some("local")
        );
        assert_eq!(
            lookup(text, "/tmp", 5432, "d", "u").as_deref(),
            Some("local")
        );
        // A socket somewhere else is matched by its own path only.
        assert_eq!(lookup(text, "/srv/pg", 5432, "d", "u"), None);
        let text = "/srv/pg:5432:*:*:socket\n";
        assert_eq!(
            lookup(text, "/srv/pg", 5432, "d", "u").as_deref(),
            Some("socket")
        );
        // `localhost` is a name: 127.0.0.1 over TCP does not match it.
        let text = "localhost:5432:*:*:local\n";
        assert_eq!(lookup(text, "127.0.0.1", 5432, "d", "u"), None);
    }

    #[test]
    fn non_ascii_values() {
        let text = "h:1:jöurnal:zoë:pässwörd\n";
        assert_eq!(
            lookup(text, "h", 1, "jöurnal", "zoë").as_deref(),
            Some("pässwörd")
        );
        assert_eq!(lookup(text, "h", 1, "journal", "zoë"), None);
    }
}
