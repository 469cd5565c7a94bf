//! The history view of one athlete (a placeholder until the long-term view arrives).

use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::text::Line;
use ratatui::widgets::{Paragraph, Widget, Wrap};

use crate::model::units::format_distance;
use crate::tui::app::App;
use crate::tui::ui::pane_block;

/// Sessions, sessions with a cached review, and their total distance in metres.
pub fn totals(app: &App, athlete_id: &str) -> (usize, usize, f64) {
    let rows = app.rows.get(athlete_id).map(Vec::as_slice).unwrap_or(&[]);
    let mut analysed = 0;
    let mut dist = 0.0;
    for r in rows {
        if let Some(rv) = app.reviews.get(&r.session_id) {
            analysed += 1;
            dist += rv.session.distance_m.unwrap_or(0.0);
        }
    }
    (rows.len(), analysed, dist)
}

/// Draw the history view for the athlete under the roster cursor.
pub fn render(app: &App, area: Rect, buf: &mut Buffer) {
    let t = &app.theme;
    let block = pane_block(app, " History ", false);
    let inner = block.inner(area);
    block.render(area, buf);
    let Some(a) = app
        .cursor
        .athlete
        .as_deref()
        .and_then(|id| app.roster.athlete(id))
    else {
        Paragraph::new("no athlete selected").render(inner, buf);
        return;
    };
    let (n, analysed, dist) = totals(app, &a.id);
    let lines = vec![
        Line::styled(a.profile.name.clone(), t.heading),
        Line::raw(""),
        Line::styled("History arrives in a later version.", t.text),
        Line::raw(""),
        Line::styled(format!("{n} session(s) in the roster"), t.text),
        Line::styled(
            format!(
                "{} in total over {analysed} analysed session(s)",
                format_distance(dist, a.profile.units)
            ),
            t.text,
        ),
        Line::raw(""),
        Line::styled(
            format!(
                "{} returns to the review",
                app.keymap.first(crate::tui::action::Action::History)
            ),
            t.dim,
        ),
    ];
    Paragraph::new(lines)
        .wrap(Wrap { trim: false })
        .render(inner, buf);
}
