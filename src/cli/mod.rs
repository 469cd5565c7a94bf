//! Headless commands: human tables or `--json`, no terminal UI.
pub mod plan_cmd;
