//! The workstation's look: a palette of our own, a plain variant for `NO_COLOR`, and an ASCII
//! fallback for terminals without box drawing or Braille.

use ratatui::buffer::Buffer;
use ratatui::style::{Color, Modifier, Style};
use ratatui::symbols::border;

/// Colours and borders for every pane. Built once at start-up; the draw code only reads it.
#[derive(Debug, Clone, PartialEq)]
pub struct Theme {
    /// No colours at all (`NO_COLOR`): only bold, reversed and underline are used.
    pub plain: bool,
    /// ASCII only: borders and chart marks are mapped to plain characters after drawing.
    pub ascii: bool,
    /// Ordinary text.
    pub text: Style,
    /// Secondary text: labels, units, hints.
    pub dim: Style,
    /// Pane border when the pane has no focus.
    pub border: Style,
    /// Pane border when focused.
    pub border_focus: Style,
    /// Title bar and footer.
    pub bar: Style,
    /// The selected row of a list or table.
    pub selected: Style,
    /// Headings inside panes.
    pub heading: Style,
    /// The pace trace and its scale.
    pub pace: Style,
    /// An earlier run's pace laid over the chart (a faint dotted line).
    pub overlay: Style,
    /// The heart-rate trace and its scale.
    pub hr: Style,
    /// The elevation trace.
    pub elevation: Style,
    /// Work-interval marks on the chart strip.
    pub work: Style,
    /// Flagged-data marks.
    pub flagged: Style,
    /// The chart cursor.
    pub cursor: Style,
    /// Ruler lines.
    pub ruler: Style,
    /// Good news (target hit, grading complete).
    pub good: Style,
    /// Warnings and refusals.
    pub warn: Style,
    /// Health cautions.
    pub caution: Style,
    /// A revised grade.
    pub revision: Style,
}

impl Theme {
    /// The splitdesk palette: slate background tones, a sea-green pace and an amber heart rate.
    pub fn colour() -> Theme {
        let fg = Color::Rgb(214, 218, 206);
        Theme {
            plain: false,
            ascii: false,
            text: Style::new().fg(fg),
            dim: Style::new().fg(Color::Rgb(132, 140, 128)),
            border: Style::new().fg(Color::Rgb(88, 98, 92)),
            border_focus: Style::new().fg(Color::Rgb(196, 170, 92)),
            bar: Style::new()
                .fg(Color::Rgb(236, 232, 214))
                .bg(Color::Rgb(46, 58, 54)),
            selected: Style::new()
                .fg(Color::Rgb(20, 24, 22))
                .bg(Color::Rgb(170, 190, 150))
                .add_modifier(Modifier::BOLD),
            heading: Style::new()
                .fg(Color::Rgb(196, 170, 92))
                .add_modifier(Modifier::BOLD),
            pace: Style::new().fg(Color::Rgb(92, 190, 160)),
            overlay: Style::new().fg(Color::Rgb(112, 128, 122)),
            hr: Style::new().fg(Color::Rgb(222, 140, 84)),
            elevation: Style::new().fg(Color::Rgb(150, 140, 118)),
            work: Style::new().fg(Color::Rgb(160, 176, 224)),
            flagged: Style::new().fg(Color::Rgb(230, 96, 120)),
            cursor: Style::new().fg(Color::Rgb(240, 236, 190)),
            ruler: Style::new().fg(Color::Rgb(210, 120, 210)),
            good: Style::new().fg(Color::Rgb(132, 196, 112)),
            warn: Style::new()
                .fg(Color::Rgb(236, 186, 84))
                .add_modifier(Modifier::BOLD),
            caution: Style::new()
                .fg(Color::Rgb(236, 110, 96))
                .add_modifier(Modifier::BOLD),
            revision: Style::new()
                .fg(Color::Rgb(196, 150, 236))
                .add_modifier(Modifier::BOLD),
        }
    }

    /// No colours: emphasis by bold, reverse and underline only.
    pub fn plain() -> Theme {
        let n = Style::new();
        let b = Style::new().add_modifier(Modifier::BOLD);
        Theme {
            plain: true,
            ascii: false,
            text: n,
            dim: n,
            border: n,
            border_focus: b,
            bar: Style::new().add_modifier(Modifier::REVERSED),
            selected: Style::new().add_modifier(Modifier::REVERSED),
            heading: b,
            pace: n,
            overlay: n,
            hr: n,
            elevation: n,
            work: b,
            flagged: b,
            cursor: b,
            ruler: b,
            good: n,
            warn: b,
            caution: b.add_modifier(Modifier::UNDERLINED),
            revision: b,
        }
    }

    /// The theme the environment asks for: `NO_COLOR` (any value) removes colour,
    /// `SPLITDESK_ASCII=1` (or `ascii`) switches to ASCII.
    pub fn from_env() -> Theme {
        let no_colour = std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty());
        let ascii = std::env::var("SPLITDESK_ASCII")
            .map(|v| matches!(v.trim(), "1" | "true" | "yes"))
            .unwrap_or(false);
        let mut t = if no_colour {
            Theme::plain()
        } else {
            Theme::colour()
        };
        t.ascii = ascii;
        t
    }

    /// The border set for panes.
    pub fn border_set(&self) -> border::Set<'static> {
        if self.ascii {
            ASCII_BORDER
        } else {
            border::ROUNDED
        }
    }
}

/// Box borders made of `+`, `-` and `|`.
pub const ASCII_BORDER: border::Set<'static> = border::Set {
    top_left: "+",
    top_right: "+",
    bottom_left: "+",
    bottom_right: "+",
    vertical_left: "|",
    vertical_right: "|",
    horizontal_top: "-",
    horizontal_bottom: "-",
};

/// Replace every non-ASCII symbol in the buffer by an ASCII stand-in (the ASCII mode's
/// last drawing step): Braille and block marks become `*`, line drawing `-`/`|`/`+`, the
/// chart's work-interval marks `=`.
pub fn asciify(buf: &mut Buffer) {
    for cell in buf.content.iter_mut() {
        let sym = cell.symbol();
        if sym.is_ascii() {
            continue;
        }
        let c = sym.chars().next().unwrap_or(' ');
        let rep = match c {
            '\u{2800}' => " ",
            '\u{2801}'..='\u{28FF}' => "*",
            '─' | '╌' | '┄' | '▔' | '▁' | '—' | '–' => "-",
            // Work-interval marks: apart from a border line even without colour.
            '━' => "=",
            '│' | '┃' | '╎' | '┆' | '▏' | '▕' => "|",
            '┌' | '┐' | '└' | '┘' | '├' | '┤' | '┬' | '┴' | '┼' | '╭' | '╮' | '╰' | '╯' => {
                "+"
            }
            '→' => ">",
            '←' => "<",
            '↑' => "^",
            '↓' => "v",
            '·' | '•' => ".",
            '…' => "~",
            '▲' => "^",
            '▸' | '▶' => ">",
            '▾' => "v",
            '▼' => "v",
            '×' => "x",
            _ if c.is_alphanumeric() => continue,
            _ => "#",
        };
        cell.set_symbol(rep);
    }
}
