//! Which keys do what: defaults, patched by the config file's `[keys]` table. The help
//! overlay and the footer hints are generated from the one `KeyMap`, so they never drift
//! from the keys that really work.

use std::fmt;

use crossterm::event::{KeyCode, KeyEvent, KeyModifiers};

use super::action::Action;

/// One key with its modifiers (Shift is folded into the character for printable keys).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct Key {
    /// The key.
    pub code: KeyCode,
    /// Ctrl and Alt (Shift only for non-character keys).
    pub mods: KeyModifiers,
}

impl Key {
    /// A key without modifiers.
    pub const fn plain(code: KeyCode) -> Key {
        Key {
            code,
            mods: KeyModifiers::NONE,
        }
    }

    /// A character key.
    pub const fn ch(c: char) -> Key {
        Key::plain(KeyCode::Char(c))
    }

    /// A key with Ctrl.
    pub const fn ctrl(c: char) -> Key {
        Key {
            code: KeyCode::Char(c),
            mods: KeyModifiers::CONTROL,
        }
    }

    /// The normalised key of a terminal key event.
    pub fn from_event(ev: &KeyEvent) -> Key {
        let mut mods = ev.modifiers & (KeyModifiers::CONTROL | KeyModifiers::ALT);
        let code = match ev.code {
            KeyCode::BackTab => KeyCode::BackTab,
            KeyCode::Char(c) => {
                if mods.contains(KeyModifiers::CONTROL) {
                    KeyCode::Char(c.to_ascii_lowercase())
                } else {
                    KeyCode::Char(c)
                }
            }
            other => {
                if ev.modifiers.contains(KeyModifiers::SHIFT) {
                    mods |= KeyModifiers::SHIFT;
                }
                other
            }
        };
        Key { code, mods }
    }

    /// Parse a key name: a single character (`n`, `]`, `?`), `ctrl-s`, `alt-x`, `shift-tab`,
    /// or a named key: `enter`, `esc`, `tab`, `backtab`, `space`, `backspace`, `up`, `down`,
    /// `left`, `right`, `home`, `end`, `pageup`, `pagedown`, `delete`, `f1`..`f12`.
    pub fn parse(text: &str) -> Option<Key> {
        let t = text.trim();
        if t.chars().count() == 1 {
            return t.chars().next().map(Key::ch);
        }
        let lower = t.to_ascii_lowercase();
        let mut mods = KeyModifiers::NONE;
        let mut rest = lower.as_str();
        loop {
            if let Some(r) = rest
                .strip_prefix("ctrl-")
                .or_else(|| rest.strip_prefix("c-"))
            {
                mods |= KeyModifiers::CONTROL;
                rest = r;
            } else if let Some(r) = rest
                .strip_prefix("alt-")
                .or_else(|| rest.strip_prefix("m-"))
            {
                mods |= KeyModifiers::ALT;
                rest = r;
            } else if let Some(r) = rest.strip_prefix("shift-") {
                mods |= KeyModifiers::SHIFT;
                rest = r;
            } else {
                break;
            }
        }
        let code = match rest {
            "enter" | "return" => KeyCode::Enter,
            "esc" | "escape" => KeyCode::Esc,
            "tab" if mods.contains(KeyModifiers::SHIFT) => {
                mods.remove(KeyModifiers::SHIFT);
                KeyCode::BackTab
            }
            "tab" => KeyCode::Tab,
            "backtab" => KeyCode::BackTab,
            "space" => KeyCode::Char(' '),
            "backspace" => KeyCode::Backspace,
            "delete" | "del" => KeyCode::Delete,
            "up" => KeyCode::Up,
            "down" => KeyCode::Down,
            "left" => KeyCode::Left,
            "right" => KeyCode::Right,
            "home" => KeyCode::Home,
            "end" => KeyCode::End,
            "pageup" => KeyCode::PageUp,
            "pagedown" => KeyCode::PageDown,
            "minus" => KeyCode::Char('-'),
            "plus" => KeyCode::Char('+'),
            f if f.starts_with('f') && f.len() > 1 => {
                let n: u8 = f.get(1..)?.parse().ok()?;
                if !(1..=12).contains(&n) {
                    return None;
                }
                KeyCode::F(n)
            }
            _ => {
                // A single character after modifiers, keeping its case from the original text.
                let orig = t.get(t.len().saturating_sub(rest.len())..)?;
                let mut chars = orig.chars();
                let c = chars.next()?;
                if chars.next().is_some() {
                    return None;
                }
                if mods.contains(KeyModifiers::SHIFT) {
                    mods.remove(KeyModifiers::SHIFT);
                    KeyCode::Char(c.to_ascii_uppercase())
                } else if mods.contains(KeyModifiers::CONTROL) {
                    KeyCode::Char(c.to_ascii_lowercase())
                } else {
                    KeyCode::Char(c)
                }
            }
        };
        Some(Key { code, mods })
    }
}

impl fmt::Display for Key {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.mods.contains(KeyModifiers::CONTROL) {
            f.write_str("C-")?;
        }
        if self.mods.contains(KeyModifiers::ALT) {
            f.write_str("M-")?;
        }
        if self.mods.contains(KeyModifiers::SHIFT) {
            f.write_str("S-")?;
        }
        match self.code {
            KeyCode::Char(' ') => f.write_str("Space"),
            KeyCode::Char(c) => write!(f, "{c}"),
            KeyCode::Enter => f.write_str("Enter"),
            KeyCode::Esc => f.write_str("Esc"),
            KeyCode::Tab => f.write_str("Tab"),
            KeyCode::BackTab => f.write_str("S-Tab"),
            KeyCode::Backspace => f.write_str("Bksp"),
            KeyCode::Delete => f.write_str("Del"),
            KeyCode::Up => f.write_str("↑"),
            KeyCode::Down => f.write_str("↓"),
            KeyCode::Left => f.write_str("←"),
            KeyCode::Right => f.write_str("→"),
            KeyCode::Home => f.write_str("Home"),
            KeyCode::End => f.write_str("End"),
            KeyCode::PageUp => f.write_str("PgUp"),
            KeyCode::PageDown => f.write_str("PgDn"),
            KeyCode::F(n) => write!(f, "F{n}"),
            _ => f.write_str("?"),
        }
    }
}

/// A bad `[keys]` entry in the config file.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum KeyMapError {
    /// The action name is unknown.
    #[error("[keys] {0}: no such action (see the help overlay, `?`, for the names)")]
    UnknownAction(String),
    /// The key text cannot be read.
    #[error("[keys] {action} = {key:?}: not a key name (e.g. \"n\", \"ctrl-s\", \"f2\", \"tab\")")]
    BadKey {
        /// The action.
        action: String,
        /// The text given.
        key: String,
    },
    /// The value is neither a string nor an array of strings.
    #[error("[keys] {0}: expected a key name or a list of key names")]
    BadValue(String),
}

/// The binding of keys to actions.
#[derive(Debug, Clone, PartialEq)]
pub struct KeyMap {
    bindings: Vec<(Action, Vec<Key>)>,
}

impl Default for KeyMap {
    fn default() -> KeyMap {
        use KeyCode as K;
        let b = |a: Action, keys: &[Key]| (a, keys.to_vec());
        KeyMap {
            bindings: vec![
                b(Action::Help, &[Key::ch('?'), Key::plain(K::F(1))]),
                b(Action::Quit, &[Key::ch('q'), Key::ctrl('c')]),
                b(Action::Cancel, &[Key::plain(K::Esc)]),
                b(Action::FocusNext, &[Key::plain(K::Tab)]),
                b(Action::FocusPrev, &[Key::plain(K::BackTab)]),
                b(Action::Up, &[Key::plain(K::Up), Key::ch('k')]),
                b(Action::Down, &[Key::plain(K::Down), Key::ch('j')]),
                b(Action::Left, &[Key::plain(K::Left), Key::ch('h')]),
                b(Action::Right, &[Key::plain(K::Right), Key::ch('l')]),
                b(Action::Open, &[Key::plain(K::Enter)]),
                b(Action::PageUp, &[Key::plain(K::PageUp)]),
                b(Action::PageDown, &[Key::plain(K::PageDown)]),
                b(Action::ScrollTop, &[Key::plain(K::Home), Key::ch('g')]),
                b(Action::ScrollEnd, &[Key::plain(K::End), Key::ch('G')]),
                b(Action::Filter, &[Key::ch('/')]),
                b(Action::ToggleUnreviewed, &[Key::ch('u')]),
                b(Action::NextUnreviewed, &[Key::ch(']')]),
                b(Action::PrevUnreviewed, &[Key::ch('[')]),
                b(Action::ToggleRoster, &[Key::ch('a')]),
                b(Action::Score1, &[Key::ch('1')]),
                b(Action::Score2, &[Key::ch('2')]),
                b(Action::Score3, &[Key::ch('3')]),
                b(Action::Score4, &[Key::ch('4')]),
                b(Action::Score5, &[Key::ch('5')]),
                b(Action::CycleVerdict, &[Key::ch('v')]),
                b(Action::RevealNotes, &[Key::ch('o')]),
                b(Action::ToggleSeen, &[Key::ch('m')]),
                b(Action::ToggleElevation, &[Key::ch('e')]),
                b(Action::Ruler, &[Key::ch('r')]),
                b(Action::ClearRulers, &[Key::ch('R')]),
                b(Action::ZoomIn, &[Key::ch('+'), Key::ch('=')]),
                b(Action::ZoomOut, &[Key::ch('-')]),
                b(Action::PanLeft, &[Key::ch('<'), Key::ch(',')]),
                b(Action::PanRight, &[Key::ch('>'), Key::ch('.')]),
                b(Action::EditFeedback, &[Key::ch('f')]),
                b(Action::ExternalEditor, &[Key::ch('E')]),
                b(Action::SaveFeedback, &[Key::ctrl('s')]),
                b(Action::CopyFeedback, &[Key::ch('y')]),
                b(Action::ExportFeedback, &[Key::ch('s')]),
                b(Action::ExportDay, &[Key::ch('D')]),
                b(Action::History, &[Key::ch('t')]),
                b(Action::ContextView, &[Key::ch('w')]),
                b(Action::EarlierOverlay, &[Key::ch('c')]),
            ],
        }
    }
}

impl KeyMap {
    /// The defaults patched by a `[keys]` table: each entry replaces the keys of one action,
    /// e.g. `next_unreviewed = "n"` or `quit = ["q", "ctrl-c"]`.
    pub fn with_overrides(table: &toml::Table) -> Result<KeyMap, KeyMapError> {
        let mut map = KeyMap::default();
        for (name, value) in table {
            let action =
                Action::from_name(name).ok_or_else(|| KeyMapError::UnknownAction(name.clone()))?;
            let texts: Vec<&str> = match value {
                toml::Value::String(s) => vec![s.as_str()],
                toml::Value::Array(items) => items
                    .iter()
                    .map(|v| {
                        v.as_str()
                            .ok_or_else(|| KeyMapError::BadValue(name.clone()))
                    })
                    .collect::<Result<_, _>>()?,
                _ => return Err(KeyMapError::BadValue(name.clone())),
            };
            let keys = texts
                .iter()
                .map(|t| {
                    Key::parse(t).ok_or_else(|| KeyMapError::BadKey {
                        action: name.clone(),
                        key: (*t).to_string(),
                    })
                })
                .collect::<Result<Vec<_>, _>>()?;
            map.set(action, keys);
        }
        Ok(map)
    }

    /// Bind `keys` to `action`, removing them from any other action.
    pub fn set(&mut self, action: Action, keys: Vec<Key>) {
        for (_, ks) in self.bindings.iter_mut() {
            ks.retain(|k| !keys.contains(k));
        }
        match self.bindings.iter_mut().find(|(a, _)| *a == action) {
            Some((_, ks)) => *ks = keys,
            None => self.bindings.push((action, keys)),
        }
    }

    /// The action a key triggers, if any.
    pub fn action(&self, key: Key) -> Option<Action> {
        self.bindings
            .iter()
            .find(|(_, ks)| ks.contains(&key))
            .map(|(a, _)| *a)
    }

    /// The keys bound to an action.
    pub fn keys(&self, action: Action) -> &[Key] {
        self.bindings
            .iter()
            .find(|(a, _)| *a == action)
            .map(|(_, ks)| ks.as_slice())
            .unwrap_or(&[])
    }

    /// The keys of an action as shown in hints, e.g. `↑/k`; `-` when unbound.
    pub fn label(&self, action: Action) -> String {
        let ks = self.keys(action);
        if ks.is_empty() {
            return "-".to_string();
        }
        ks.iter().map(Key::to_string).collect::<Vec<_>>().join("/")
    }

    /// The first key of an action, for compact footer hints.
    pub fn first(&self, action: Action) -> String {
        self.keys(action)
            .first()
            .map(Key::to_string)
            .unwrap_or_else(|| "-".to_string())
    }

    /// Every action with its keys, in help order.
    pub fn entries(&self) -> Vec<(Action, String)> {
        Action::ALL.iter().map(|&a| (a, self.label(a))).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parse_names() {
        assert_eq!(Key::parse("n"), Some(Key::ch('n')));
        assert_eq!(Key::parse("R"), Some(Key::ch('R')));
        assert_eq!(Key::parse("ctrl-s"), Some(Key::ctrl('s')));
        assert_eq!(Key::parse("shift-tab"), Some(Key::plain(KeyCode::BackTab)));
        assert_eq!(Key::parse("f2"), Some(Key::plain(KeyCode::F(2))));
        assert_eq!(Key::parse("nonsense"), None);
    }

    #[test]
    fn overrides_replace_and_unbind() {
        let table: toml::Table =
            toml::from_str("next_unreviewed = \"n\"\nquit = [\"x\", \"ctrl-q\"]\n").expect("toml");
        let m = KeyMap::with_overrides(&table).expect("keys");
        assert_eq!(m.action(Key::ch('n')), Some(Action::NextUnreviewed));
        assert_eq!(m.action(Key::ch(']')), None);
        assert_eq!(m.action(Key::ch('x')), Some(Action::Quit));
        assert_eq!(m.action(Key::ch('q')), None);
        let bad: toml::Table = toml::from_str("fly = \"z\"").expect("toml");
        assert!(KeyMap::with_overrides(&bad).is_err());
    }
}
