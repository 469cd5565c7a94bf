//! The roster pane: athletes with their unreviewed counts, the selected athlete's sessions.

use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Paragraph, Widget};

use super::{fit, pad};
use crate::roster::printable;
use crate::tui::app::{App, Focus, RosterRow};
use crate::tui::ui::{pane_block, shorten_words};

/// Draw the roster pane.
pub fn render(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let mut title = format!(" Roster · {} ", printable(&app.roster.name));
    if app.only_unreviewed {
        title.push_str("· unreviewed ");
    }
    let block = pane_block(app, title, app.focus == Focus::Roster);
    let inner = block.inner(area);
    block.render(area, buf);
    if inner.height == 0 || inner.width < 4 {
        return;
    }
    let w = inner.width as usize;
    let mut lines: Vec<Line> = Vec::new();
    let header_rows = if app.filter_editing || !app.filter.is_empty() {
        let caret = if app.filter_editing { "_" } else { "" };
        lines.push(Line::styled(
            fit(&format!("filter: {}{caret}", app.filter), w),
            if app.filter_editing { t.warn } else { t.dim },
        ));
        1
    } else {
        0
    };
    let rows = app.roster_rows();
    if rows.is_empty() {
        lines.push(Line::styled(
            if app.roster.athletes.is_empty() {
                "no athletes in this roster"
            } else {
                "nothing matches"
            },
            t.dim,
        ));
    }
    // The profile and plan problems of the athlete under the cursor, at the foot of the pane.
    let mut footer = reviewing_legend(app, &rows, w);
    footer.extend(problem_lines(app, w, inner.height as usize));
    let visible = (inner.height as usize)
        .saturating_sub(header_rows + footer.len())
        .max(1);
    let cur = app.cursor_index(&rows).unwrap_or(0);
    let first = cur.saturating_sub(visible.saturating_sub(1).min(visible / 2 + visible / 4));
    let first = first.min(rows.len().saturating_sub(visible));
    let open_id = app.open.as_ref().map(|o| o.session_id.as_str());
    // The stage column is as wide as the longest stage shown, so the title keeps the rest.
    let stage_w = rows
        .iter()
        .filter_map(|r| match r {
            RosterRow::Session(s) => Some(stage_label(s).chars().count()),
            RosterRow::Athlete(_) => None,
        })
        .max()
        .unwrap_or(0)
        .min(w / 3);
    // Dates with the year only when every title still fits beside them: the title gets
    // the room there is.
    let longest = rows
        .iter()
        .filter_map(|r| match r {
            RosterRow::Session(s) => {
                Some(printable(&app.session_title(&s.session_id)).chars().count())
            }
            RosterRow::Athlete(_) => None,
        })
        .max()
        .unwrap_or(0);
    let long_dates = w.saturating_sub(2 + 10 + 1 + stage_w + 1) >= longest;
    let date_w = if long_dates { 10 } else { 5 };
    for (i, row) in rows.iter().enumerate().skip(first).take(visible) {
        let selected = i == cur;
        let line = match row {
            RosterRow::Athlete(idx) => {
                let Some(a) = app.athlete(*idx) else { continue };
                let n = app.counts.get(&a.id).copied().unwrap_or(0);
                let count = if n > 0 {
                    format!("{n:>3}")
                } else {
                    "  ·".to_string()
                };
                let expanded = app.cursor.athlete.as_deref() == Some(a.id.as_str());
                let mark = if expanded { "▾ " } else { "▸ " };
                let flag = if a.has_problems() { " !" } else { "" };
                // The whole count, however many digits: the name gives way.
                let name_w = w.saturating_sub(2 + 1 + count.chars().count() + flag.len());
                let style = if selected { t.selected } else { t.heading };
                Line::from(vec![
                    Span::styled(mark, style),
                    Span::styled(pad(&printable(&a.profile.name), name_w), style),
                    Span::styled(flag, if selected { t.selected } else { t.warn }),
                    Span::styled(
                        format!(" {count}"),
                        if selected {
                            t.selected
                        } else if n > 0 {
                            t.warn
                        } else {
                            t.dim
                        },
                    ),
                ])
            }
            RosterRow::Session(s) => {
                let day = s
                    .start
                    .map(|d| crate::model::session::session_day(&s.session_id, d));
                let date = match day {
                    Some(d) if long_dates => d.format("%Y-%m-%d").to_string(),
                    Some(d) => d.format("%m-%d").to_string(),
                    None => format!("{:^date_w$}", "…"),
                };
                let stage = stage_label(s);
                let open_mark = if open_id == Some(s.session_id.as_str()) {
                    "•"
                } else {
                    " "
                };
                let title_w = w.saturating_sub(2 + date.chars().count() + 1 + stage_w + 1);
                let title = row_title(app, &s.session_id, title_w);
                let others = app.reviewing.get(&s.session_id);
                let other_mark = if others.is_some() {
                    REVIEWING_MARK
                } else {
                    " "
                };
                // The colleague's name after the title when both fit whole ("reviewing"
                // too when there is room; the legend at the foot says it anyway).
                let tag = others
                    .and_then(|names| {
                        let names = coach_names(names);
                        [format!(" · {names} reviewing"), format!(" · {names}")]
                            .into_iter()
                            .find(|tag| title.chars().count() + tag.chars().count() <= title_w)
                    })
                    .unwrap_or_default();
                let title = if tag.is_empty() {
                    pad(&title, title_w)
                } else {
                    title
                };
                let gap =
                    " ".repeat(title_w.saturating_sub(title.chars().count() + tag.chars().count()));
                let base = if selected { t.selected } else { t.text };
                let stage_style = if selected {
                    t.selected
                } else {
                    match s.stage {
                        Some(st) if st.is_unreviewed() => t.warn,
                        Some(_) => t.good,
                        None => t.dim,
                    }
                };
                Line::from(vec![
                    Span::styled(other_mark, if selected { base } else { t.warn }),
                    Span::styled(open_mark, base),
                    Span::styled(format!("{date} "), if selected { base } else { t.dim }),
                    Span::styled(title, base),
                    Span::styled(tag, if selected { base } else { t.warn }),
                    Span::styled(gap, base),
                    Span::styled(format!(" {:>stage_w$}", fit(&stage, stage_w)), stage_style),
                ])
            }
        };
        lines.push(line);
    }
    Paragraph::new(lines).render(inner, buf);
    if !footer.is_empty() {
        let h = footer.len() as u16;
        let area = Rect::new(inner.x, inner.y + inner.height - h, inner.width, h);
        Paragraph::new(footer).render(area, buf);
    }
}

/// The mark before a session another coach is reviewing now (see [`reviewing_legend`]).
pub const REVIEWING_MARK: &str = "◆";

/// Coach names for the screen: printable, joined.
fn coach_names(names: &[String]) -> String {
    names
        .iter()
        .map(|n| printable(n))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The legend of [`REVIEWING_MARK`] at the foot of the pane, when a listed session has it:
/// who is reviewing the session under the cursor, or what the mark means.
fn reviewing_legend(app: &App, rows: &[RosterRow], w: usize) -> Vec<Line<'static>> {
    let marked = rows.iter().any(|r| match r {
        RosterRow::Session(s) => app.reviewing.contains_key(&s.session_id),
        RosterRow::Athlete(_) => false,
    });
    if !marked {
        return Vec::new();
    }
    let text = match app
        .cursor
        .session
        .as_ref()
        .and_then(|id| app.reviewing.get(id))
    {
        Some(names) => format!("{REVIEWING_MARK} {} reviewing this now", coach_names(names)),
        None => format!("{REVIEWING_MARK} another coach reviewing now"),
    };
    vec![Line::styled(shorten_words(&text, w), app.theme.warn)]
}

/// A session row's stage word.
fn stage_label(s: &crate::tui::app::SessionRow) -> String {
    // A damaged file the coach closed with the verdict shows its stage like any other.
    let closed = s.stage.is_some_and(|st| st.is_revealed());
    if s.failed && !closed {
        "unreadable".to_string()
    } else {
        match s.stage {
            Some(st) => st.label().to_string(),
            None => "analysing".to_string(),
        }
    }
}

/// A session's title for a roster row of `w` characters: the plan's title cut at a word
/// boundary; for a session without a plan, its sport and distance with the distance
/// rounded to what fits (`running 2.66 km`, `running 2.7 km`, `running 3 km`, `2.7 km`),
/// never cut into a different number.
pub fn row_title(app: &App, session_id: &str, w: usize) -> String {
    let mut full = printable(&app.session_title(session_id));
    // A session with no title of its own shows its file name: the date is in the row
    // already, so the rest of the name is the title (`2026-11-06-easy-run` -> `easy run`).
    let dated = full.get(..11).is_some_and(|p| {
        p.chars().enumerate().all(|(i, c)| {
            if matches!(i, 4 | 7 | 10) {
                c == '-'
            } else {
                c.is_ascii_digit()
            }
        })
    });
    if dated && !full.contains(' ') && full.chars().count() > w {
        full = full.get(11..).unwrap_or_default().replace(['-', '_'], " ");
    }
    if full.chars().count() <= w {
        return full;
    }
    let unplanned = app
        .reviews
        .get(session_id)
        .filter(|r| r.plan.is_none())
        .and_then(|r| {
            r.session
                .distance_m
                .map(|d| (printable(&r.session.sport), d))
        });
    if let Some((sport, d)) = unplanned {
        let units = app
            .roster
            .find_session(session_id)
            .map(|(a, _)| a.profile.units)
            .unwrap_or_default();
        let x = d / units.metres();
        let u = units.label();
        let tries = [
            format!("{sport} {x:.1} {u}"),
            format!("{sport} {x:.0} {u}"),
            format!("{x:.2} {u}"),
            format!("{x:.1} {u}"),
            format!("{x:.0} {u}"),
        ];
        if let Some(t) = tries.into_iter().find(|t| t.chars().count() <= w) {
            return t;
        }
        return shorten_words(&sport, w);
    }
    // Cut at a word boundary; a cut right after a number would read as a cut number
    // (`10…`), so that word goes too.
    let mut room = w;
    loop {
        let cut = shorten_words(&full, room);
        let kept = cut.trim_end_matches('…');
        let whole = kept == full || full.starts_with(&format!("{kept} "));
        let after_number = kept.ends_with(|c: char| c.is_ascii_digit()) && kept != full;
        let number_cut = !whole && kept.contains(|c: char| c.is_ascii_digit());
        if !after_number && !number_cut {
            return cut;
        }
        if room <= 1 {
            return if w > 0 {
                "…".to_string()
            } else {
                String::new()
            };
        }
        room = kept.chars().count().min(room - 1);
    }
}

/// The athlete under the roster cursor.
fn cursor_athlete(app: &App) -> Option<&crate::roster::Athlete> {
    app.cursor
        .athlete
        .as_deref()
        .and_then(|id| app.roster.athlete(id))
}

/// The foot of the roster pane when the athlete under the cursor has profile or plan
/// problems: a heading and the first problems, one line each (file name, not the full path).
fn problem_lines(app: &App, w: usize, height: usize) -> Vec<Line<'static>> {
    let t = &app.theme;
    let Some(a) = cursor_athlete(app) else {
        return Vec::new();
    };
    let problems = a.problems();
    // Leave the roster itself at least half the pane.
    let room = (height / 2).min(4);
    if problems.is_empty() || room < 2 {
        return Vec::new();
    }
    let mut out = vec![Line::styled(
        shorten_words(
            &format!(
                "! {} file problem{}:",
                problems.len(),
                if problems.len() == 1 { "" } else { "s" },
            ),
            w,
        ),
        t.warn,
    )];
    let shown = if problems.len() < room {
        problems.len()
    } else {
        room - 2
    };
    for p in problems.iter().take(shown) {
        let file = p
            .path
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default();
        out.push(Line::styled(
            shorten_words(&printable(&format!("{file}: {}", p.message)), w),
            t.text,
        ));
    }
    if shown < problems.len() {
        out.push(Line::styled(
            shorten_words(
                &format!(
                    "… {} more: splitdesk check lists them all",
                    problems.len() - shown
                ),
                w,
            ),
            t.dim,
        ));
    }
    out
}

/// The profile and plan problems of the athlete under the roster cursor in full, for the
/// pane beside the roster while no session is open (wrapped there): a heading and one line
/// per problem. Empty when the athlete has none.
pub fn athlete_problems(app: &App) -> Vec<Line<'static>> {
    let t = &app.theme;
    let Some(a) = cursor_athlete(app) else {
        return Vec::new();
    };
    let problems = a.problems();
    if problems.is_empty() {
        return Vec::new();
    }
    let mut out = vec![
        Line::raw(""),
        Line::styled(
            format!(
                "! Problems in {}'s files (keys and plans that cannot be read are not used):",
                printable(&a.profile.name)
            ),
            t.warn,
        ),
    ];
    for p in problems {
        let file = p
            .path
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default();
        out.push(Line::styled(
            printable(&format!("{file}: {}", p.message)),
            t.text,
        ));
    }
    out
}

/// The roster's own problems (entries that are not used: a folder that is no athlete
/// folder, a link that leads outside the roster or nowhere, a folder named like an activity
/// file, a name that is not UTF-8, a folder listed once though reached twice), for the pane
/// beside the roster while no session is open: a heading and one line per problem, the
/// path relative to the roster. Empty when there are none.
pub fn roster_problems(app: &App) -> Vec<Line<'static>> {
    let t = &app.theme;
    let of_athletes: Vec<crate::roster::Problem> = app
        .roster
        .athletes
        .iter()
        .flat_map(|a| a.problems())
        .collect();
    let own: Vec<&crate::roster::Problem> = app
        .roster
        .problems()
        .iter()
        .filter(|p| !of_athletes.contains(p))
        .collect();
    if own.is_empty() {
        return Vec::new();
    }
    let mut out = vec![
        Line::raw(""),
        Line::styled(
            format!(
                "! {} roster entr{} not used (splitdesk check lists them):",
                own.len(),
                if own.len() == 1 { "y" } else { "ies" }
            ),
            t.warn,
        ),
    ];
    for p in own {
        let path = p.path.strip_prefix(&app.roster.root).unwrap_or(&p.path);
        out.push(Line::styled(
            printable(&format!("{}: {}", path.display(), p.message)),
            t.text,
        ));
    }
    out
}
