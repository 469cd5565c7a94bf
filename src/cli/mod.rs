//! Headless commands: human tables or `--json`, no terminal UI.
