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

/// The keys the `[feedback]` table knows, in the order `config.example.toml` lists them.
pub const KEYS: &[&str] = &[
    "coach", "greeting", "sign_off", "length", "format", "phrases",
];

/// Where the problem lines say the table is.
const TABLE: &str = "config.toml [feedback]";
const PHRASES: &str = "config.toml [feedback.phrases]";

/// The style from the `[feedback]` table of `config.toml`, with one line per problem
/// (unknown key, wrong type, unknown length or format word, unknown slot, a placeholder
/// the slot does not allow, control characters); what is right is still used, and a bad
/// wording falls back to the default one.
pub fn from_table(table: &toml::Table) -> (FeedbackStyle, Vec<String>) {
    let mut style = FeedbackStyle::default();
    let mut problems = Vec::new();
    for (key, value) in table {
        match key.as_str() {
            "coach" => {
                if let Some(name) =
                    text_value(TABLE, key, value, "signing \"Coach\"", &mut problems)
                {
                    let name = name.trim();
                    style.coach = (!name.is_empty()).then(|| name.to_string());
                }
            }
            "greeting" | "sign_off" => {
                if let Some(text) = phrase_value(TABLE, key, key, value, &mut problems) {
                    style.phrases.insert(key.clone(), text);
                }
            }
            "length" => {
                let word = text_value(TABLE, key, value, "using full", &mut problems);
                match word
                    .as_deref()
                    .map(|w| w.trim().to_ascii_lowercase())
                    .as_deref()
                {
                    Some("brief") => style.length = Length::Brief,
                    Some("full") => style.length = Length::Full,
                    Some(_) => problems.push(format!(
                        "{TABLE} {key} = {}: expected brief or full; using full",
                        shown(value)
                    )),
                    None => {}
                }
            }
            "format" => {
                let word = text_value(TABLE, key, value, "using text", &mut problems);
                match word
                    .as_deref()
                    .map(|w| w.trim().to_ascii_lowercase())
                    .as_deref()
                {
                    Some("text") => style.format = Format::Text,
                    Some("md") => style.format = Format::Markdown,
                    Some(_) => problems.push(format!(
                        "{TABLE} {key} = {}: expected text or md; using text",
                        shown(value)
                    )),
                    None => {}
                }
            }
            "phrases" => {}
            _ => problems.push(format!(
                "{TABLE} {key}: unknown key (known: {}); ignored",
                KEYS.join(", ")
            )),
        }
    }
    // The phrasebook after the shortcuts: its wording wins when both name a slot.
    match table.get("phrases") {
        None => {}
        Some(toml::Value::Table(phrases)) => {
            for (slot, value) in phrases {
                if !SLOTS.iter().any(|s| s.name == slot) {
                    problems.push(format!(
                        "{PHRASES} {}: no such slot (slots: {}); ignored",
                        crate::roster::printable(slot),
                        slot_names()
                    ));
                    continue;
                }
                if let Some(text) = phrase_value(PHRASES, slot, slot, value, &mut problems) {
                    if style.phrases.contains_key(slot) {
                        problems.push(format!(
                            "{TABLE} {slot}: also set in [feedback.phrases]; using the \
                             [feedback.phrases] wording"
                        ));
                    }
                    style.phrases.insert(slot.clone(), text);
                }
            }
        }
        Some(other) => problems.push(format!(
            "{TABLE} phrases = {}: expected a table ([feedback.phrases] with slot = \"wording\"); \
             ignored",
            shown(other)
        )),
    }
    (style, problems)
}

/// The slot names, for problem lines.
fn slot_names() -> String {
    SLOTS.iter().map(|s| s.name).collect::<Vec<_>>().join(", ")
}

/// A value as a problem line shows it: short, on one line, terminal-safe.
fn shown(value: &toml::Value) -> String {
    let text = match value {
        toml::Value::String(s) => format!("{s:?}"),
        toml::Value::Table(_) => "{...}".to_string(),
        toml::Value::Array(_) => "[...]".to_string(),
        other => other.to_string(),
    };
    let text = crate::roster::printable(&text);
    if text.chars().count() > 48 {
        let cut: String = text.chars().take(45).collect();
        format!("{cut}...")
    } else {
        text
    }
}

/// A string without control characters, else one problem line (`fallback` says what is
/// used instead) and `None`.
fn text_value(
    table: &str,
    key: &str,
    value: &toml::Value,
    fallback: &str,
    problems: &mut Vec<String>,
) -> Option<String> {
    let key = crate::roster::printable(key);
    let Some(text) = value.as_str() else {
        problems.push(format!(
            "{table} {key} = {}: expected a string; {fallback}",
            shown(value)
        ));
        return None;
    };
    if text.chars().any(crate::roster::is_unsafe) {
        problems.push(format!(
            "{table} {key} = {}: control characters are not allowed; {fallback}",
            shown(value)
        ));
        return None;
    }
    Some(text.to_string())
}

/// The wording for a slot, checked: a string, no control characters, only the
/// placeholders the slot allows. Else one problem line and `None` (the default is used).
fn phrase_value(
    table: &str,
    key: &str,
    slot: &str,
    value: &toml::Value,
    problems: &mut Vec<String>,
) -> Option<String> {
    let fallback = "using the default wording";
    let text = text_value(table, key, value, fallback, problems)?;
    let allowed = SLOTS
        .iter()
        .find(|s| s.name == slot)
        .map(|s| s.placeholders)
        .unwrap_or(&[]);
    let bad: Vec<&str> = placeholders(&text)
        .into_iter()
        .filter(|p| !allowed.contains(p))
        .collect();
    if let Some(first) = bad.first() {
        let may = if allowed.is_empty() {
            "none".to_string()
        } else {
            allowed.join(", ")
        };
        let what = if bad.len() == 1 {
            format!("{first} is not a placeholder of this slot")
        } else {
            format!("{} are not placeholders of this slot", bad.join(", "))
        };
        problems.push(format!(
            "{table} {} = {}: {what} (it may use {may}); {fallback}",
            crate::roster::printable(key),
            shown(value)
        ));
        return None;
    }
    Some(text)
}

/// The placeholders in a wording: `{` a name of letters, digits or `_`, `}`. Other braces
/// are text.
fn placeholders(text: &str) -> Vec<&str> {
    let mut out = Vec::new();
    let mut rest = text;
    while let Some(open) = rest.find('{') {
        let after = rest.get(open + 1..).unwrap_or("");
        match after.find('}') {
            Some(close) => {
                let name = after.get(..close).unwrap_or("");
                if !name.is_empty() && name.chars().all(|c| c.is_ascii_alphanumeric() || c == '_') {
                    if let Some(p) = rest.get(open..open + close + 2) {
                        out.push(p);
                    }
                    rest = after.get(close + 1..).unwrap_or("");
                } else {
                    rest = after;
                }
            }
            None => break,
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(text: &str) -> (FeedbackStyle, Vec<String>) {
        let table: toml::Table = toml::from_str(text).expect("toml");
        from_table(&table)
    }

    #[test]
    fn a_full_table_is_used() {
        let (s, p) = parse(
            "coach = \"Sam Ostrander\"\ngreeting = \"Hey {name}!\"\nsign_off = \"Talk soon,\"\n\
             length = \"brief\"\nformat = \"md\"\n\
             [phrases]\nmet = \"Nailed {title}.\"\nkeep_going = \"Same again next week.\"\n",
        );
        assert!(p.is_empty(), "{p:?}");
        assert_eq!(s.coach.as_deref(), Some("Sam Ostrander"));
        assert_eq!(s.signature(), "Sam Ostrander");
        assert_eq!(s.length, Length::Brief);
        assert_eq!(s.format, Format::Markdown);
        assert_eq!(s.phrase("greeting", &[("{name}", "Mira")]), "Hey Mira!");
        assert_eq!(s.phrase("sign_off", &[]), "Talk soon,");
        assert_eq!(
            s.phrase("met", &[("{title}", "Hill repeats")]),
            "Nailed Hill repeats."
        );
        assert_eq!(s.phrase("keep_going", &[]), "Same again next week.");
        // Slots not set keep the default wording.
        assert_eq!(s.phrase("partly", &[]), "This one partly did its job.");
    }

    #[test]
    fn an_empty_table_is_the_default_style() {
        let (s, p) = parse("");
        assert!(p.is_empty());
        assert_eq!(s, FeedbackStyle::default());
        assert_eq!(s.signature(), "Coach");
        assert_eq!(s.length, Length::Full);
        assert_eq!(s.format, Format::Text);
        let (s, p) = parse("coach = \"   \"\n");
        assert!(p.is_empty());
        assert_eq!(s.coach, None);
    }

    #[test]
    fn words_are_read_without_minding_case() {
        let (s, p) = parse("length = \" Brief \"\nformat = \"TEXT\"\n");
        assert!(p.is_empty(), "{p:?}");
        assert_eq!(s.length, Length::Brief);
        assert_eq!(s.format, Format::Text);
        let (s, _) = parse("length = \"full\"\nformat = \"md\"\n");
        assert_eq!((s.length, s.format), (Length::Full, Format::Markdown));
    }

    #[test]
    fn an_unknown_length_word_is_one_line_and_full_is_used() {
        let (s, p) = parse("coach = \"Sam\"\nlength = \"short\"\n");
        assert_eq!(
            p,
            vec![
                "config.toml [feedback] length = \"short\": expected brief or full; using full"
                    .to_string()
            ]
        );
        assert_eq!(s.length, Length::Full);
        assert_eq!(s.coach.as_deref(), Some("Sam"));
    }

    #[test]
    fn an_unknown_format_word_is_one_line_and_text_is_used() {
        let (s, p) = parse("format = \"html\"\nlength = \"brief\"\n");
        assert_eq!(
            p,
            vec![
                "config.toml [feedback] format = \"html\": expected text or md; using text"
                    .to_string()
            ]
        );
        assert_eq!(s.format, Format::Text);
        assert_eq!(s.length, Length::Brief);
    }

    #[test]
    fn an_unknown_key_is_one_line_and_the_rest_is_used() {
        let (s, p) = parse("colour = \"blue\"\ncoach = \"Sam\"\n");
        assert_eq!(
            p,
            vec![
                "config.toml [feedback] colour: unknown key (known: coach, greeting, sign_off, \
                 length, format, phrases); ignored"
                    .to_string()
            ]
        );
        assert_eq!(s.signature(), "Sam");
    }

    #[test]
    fn a_wrong_type_is_one_line_each() {
        let (s, p) = parse(
            "coach = 3\nlength = true\ngreeting = [\"Hi\"]\nformat = 1.5\nphrases = \"met\"\n",
        );
        assert_eq!(
            p,
            vec![
                "config.toml [feedback] coach = 3: expected a string; signing \"Coach\"",
                "config.toml [feedback] format = 1.5: expected a string; using text",
                "config.toml [feedback] greeting = [...]: expected a string; using the default wording",
                "config.toml [feedback] length = true: expected a string; using full",
                "config.toml [feedback] phrases = \"met\": expected a table ([feedback.phrases] \
                 with slot = \"wording\"); ignored",
            ]
        );
        assert_eq!(s, FeedbackStyle::default());
        let (s, p) = parse("[phrases]\nmet = 4\nmissed = \"Not this time.\"\n");
        assert_eq!(
            p,
            vec![
                "config.toml [feedback.phrases] met = 4: expected a string; using the default wording"
                    .to_string()
            ]
        );
        assert_eq!(
            s.phrase("met", &[]),
            "This one did exactly what it was meant to."
        );
        assert_eq!(s.phrase("missed", &[]), "Not this time.");
    }

    #[test]
    fn an_unknown_slot_is_one_line_and_the_other_slots_are_used() {
        let (s, p) = parse("[phrases]\ncheer = \"Go!\"\nmet = \"Spot on.\"\n");
        assert_eq!(
            p,
            vec![format!(
                "config.toml [feedback.phrases] cheer: no such slot (slots: {}); ignored",
                SLOTS.iter().map(|s| s.name).collect::<Vec<_>>().join(", ")
            )]
        );
        assert_eq!(s.phrase("met", &[]), "Spot on.");
        assert!(!s.phrases.contains_key("cheer"));
    }

    #[test]
    fn a_placeholder_the_slot_does_not_allow_falls_back_to_the_default() {
        let (s, p) =
            parse("greeting = \"Hi {nme},\"\n[phrases]\nkeep_going = \"Keep {title} going.\"\n");
        assert_eq!(
            p,
            vec![
                "config.toml [feedback] greeting = \"Hi {nme},\": {nme} is not a placeholder of \
                 this slot (it may use {name}); using the default wording",
                "config.toml [feedback.phrases] keep_going = \"Keep {title} going.\": {title} is \
                 not a placeholder of this slot (it may use {name}); using the default wording",
            ]
        );
        assert_eq!(s.phrase("greeting", &[("{name}", "Ada")]), "Hi Ada,");
        assert_eq!(
            s.phrase("keep_going", &[]),
            "Nothing to change: more of the same."
        );
        // Allowed placeholders and braces that are not placeholders are fine.
        let (s, p) = parse("[phrases]\nmet = \"{name}: {title} done {} { ok } {\"\n");
        assert!(p.is_empty(), "{p:?}");
        assert_eq!(
            s.phrase("met", &[("{name}", "Ada"), ("{title}", "Tempo")]),
            "Ada: Tempo done {} { ok } {"
        );
    }

    #[test]
    fn control_characters_are_refused_and_shown_escaped() {
        let (s, p) = parse(
            "coach = \"Sam\\u001b[31m\"\nsign_off = \"Bye\\u202e,\"\n[phrases]\nmet = \"Good\\nrun\"\n",
        );
        assert_eq!(p.len(), 3, "{p:?}");
        assert!(
            p[0].starts_with("config.toml [feedback] coach = ")
                && p[0].ends_with(": control characters are not allowed; signing \"Coach\""),
            "{p:?}"
        );
        assert!(
            p[1].starts_with("config.toml [feedback] sign_off = ")
                && p[1]
                    .ends_with(": control characters are not allowed; using the default wording"),
            "{p:?}"
        );
        assert!(
            p[2].starts_with("config.toml [feedback.phrases] met = "),
            "{p:?}"
        );
        for line in &p {
            assert!(!line.chars().any(crate::roster::is_unsafe), "{line:?}");
        }
        assert_eq!(s.signature(), "Coach");
        assert_eq!(s.phrase("sign_off", &[]), "Cheers,");
        assert_eq!(
            s.phrase("met", &[]),
            "This one did exactly what it was meant to."
        );
    }

    #[test]
    fn a_slot_set_twice_says_so_and_the_phrasebook_wins() {
        let (s, p) =
            parse("greeting = \"Hey {name}\"\n[phrases]\ngreeting = \"Morning {name},\"\n");
        assert_eq!(
            p,
            vec![
                "config.toml [feedback] greeting: also set in [feedback.phrases]; using the \
                 [feedback.phrases] wording"
                    .to_string()
            ]
        );
        assert_eq!(s.phrase("greeting", &[("{name}", "Ada")]), "Morning Ada,");
    }

    #[test]
    fn long_values_are_cut_in_problem_lines() {
        let long = "x".repeat(200);
        let (_, p) = parse(&format!("length = \"{long}\"\n"));
        assert_eq!(p.len(), 1);
        assert!(p[0].len() < 120, "{}", p[0]);
        assert!(
            p[0].contains("...\": expected") || p[0].contains("...: expected"),
            "{}",
            p[0]
        );
    }
}
