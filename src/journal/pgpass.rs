// TEMPORARY stand-in until the helper's module lands (not committed).
use std::path::Path;
pub fn password_for(
    _host: &str,
    _port: u16,
    _dbname: &str,
    _user: &str,
    env: &dyn Fn(&str) -> Option<String>,
    _read_file: &dyn Fn(&Path) -> Option<String>,
) -> Option<String> {
    env("PGPASSWORD")
}
