//! The session in its context, in the workstation: the verdict pane's lower part cycles
//! between the findings, the same workout over time and the week (`w`), and the chart
//! overlays an earlier run's pace rep on rep (`c`). Pure draws with comparisons and weeks
//! built here (invented numbers: self-consistency only), the keys, and everything reachable
//! by scrolling at 80x24.

mod tui_support;

use chrono::NaiveDate;
use crossterm::event::KeyCode;
use ratatui::style::Color;
use splitdesk::analysis::earlier::{
    Change, Comparison, FitnessTrend, MatchedBy, Occurrence, PaceAtHr, PaceAtHrRun, PaceBasis,
    RepRow, CAUTION,
};
use splitdesk::analysis::kind::SessionKind;
use splitdesk::analysis::shape::{ShapeSource, WorkoutShape};
use splitdesk::analysis::week::{LastSession, PlannedDay, Week, WeekDay, WeekSession};
use splitdesk::model::Units;
use splitdesk::tui::app::{App, Focus};
use splitdesk::tui::panes::context_view::{
    comparison_lines, dotted, overlay_points, view_lines, week_lines, ContextState, Lower,
    OverlayRun,
};
use splitdesk::tui::theme::Theme;
use tui_support::*;

fn day(s: &str) -> NaiveDate {
    NaiveDate::parse_from_str(s, "%Y-%m-%d").expect("date")
}

fn text_of(lines: &[ratatui::text::Line]) -> Vec<String> {
    lines
        .iter()
        .map(|l| l.spans.iter().map(|s| s.content.as_ref()).collect())
        .collect()
}

fn shape(label: &str) -> WorkoutShape {
    WorkoutShape {
        source: ShapeSource::Plan,
        blocks: Vec::new(),
        label: label.to_string(),
    }
}

/// A run of five reps: rep k at `pace + k` s/km and `hr + k` bpm.
fn run(id: &str, d: &str, current: bool, pace: f64, hr: f64, reps: usize) -> Occurrence {
    let rows: Vec<RepRow> = (0..reps)
        .map(|k| RepRow {
            number: k + 1,
            pace_s_per_km: Some(pace + k as f64),
            avg_hr: Some(hr + k as f64),
            relative_intensity: Some(1.04 - 0.01 * k as f64),
            recovery_trough_bpm: Some(120.0 + k as f64),
        })
        .collect();
    Occurrence {
        session_id: id.to_string(),
        day: day(d),
        current,
        plan_title: Some("5 x 3 min".to_string()),
        reps: rows,
        mean_pace_s_per_km: Some(pace + 2.0),
        spread_s_per_km: Some(1.6),
        mean_hr: Some(hr + 2.0),
        mean_relative_intensity: Some(1.02),
        mean_trough_bpm: Some(122.0),
        decoupling_pct: Some(2.5),
        distance_m: Some(8200.0),
        duration_s: 2220.0,
    }
}

const CHANGE: &str = "2.1 s/km faster per rep than on 2024-02-19 at 3 bpm lower heart rate";
const PACE_AT_HR: &str = "At 170 bpm the reps went from 3:58/km to 3:52/km over four weeks: \
                          getting fitter at this workout";

/// The intervals session of the test roster beside `earlier` earlier runs (a week apart,
/// the latest a week before).
fn comparison(earlier: usize, reps: usize) -> Comparison {
    let mut runs: Vec<Occurrence> = (0..earlier)
        .map(|k| {
            let d = day("2024-03-04") - chrono::Duration::days(7 * (earlier - k) as i64);
            run(
                &format!("ines-aldana/{d}-intervals"),
                &d.to_string(),
                false,
                236.0 - k as f64,
                172.0,
                reps,
            )
        })
        .collect();
    runs.push(run(INTERVALS, "2024-03-04", true, 230.0, 169.0, reps));
    Comparison {
        schema: "splitdesk.compare/1".to_string(),
        session_id: INTERVALS.to_string(),
        day: day("2024-03-04"),
        kind: SessionKind::Intervals,
        matched_by: MatchedBy::WorkoutShape,
        shape: Some(shape("5 x 3:00 @ 5k / 2:00 jog")),
        pace_basis: PaceBasis::Raw,
        units: "km".to_string(),
        changes: vec![Change {
            session_id: "ines-aldana/2024-02-19-intervals".to_string(),
            day: day("2024-02-19"),
            pace_s_per_km: Some(-2.1),
            hr_bpm: Some(-3.0),
            text: CHANGE.to_string(),
        }],
        pace_at_hr: Some(PaceAtHr {
            hr_bpm: 170.0,
            slope_s_per_km_per_bpm: Some(-0.8),
            trend_s_per_km_per_week: Some(-1.5),
            points: 5 * (earlier + 1),
            runs: vec![PaceAtHrRun {
                session_id: INTERVALS.to_string(),
                day: day("2024-03-04"),
                pace_s_per_km: 232.0,
            }],
            trend: FitnessTrend::Fitter,
            text: PACE_AT_HR.to_string(),
        }),
        text: vec!["Faster than last time at a lower heart rate".to_string()],
        caution: CAUTION.to_string(),
        runs,
    }
}

fn week_session(id: &str, kind: SessionKind, dur: f64, dist: f64, load: f64) -> WeekSession {
    WeekSession {
        session_id: id.to_string(),
        kind,
        duration_s: dur,
        moving_s: dur,
        distance_m: Some(dist),
        load: Some(load),
        load_lower_bound: false,
        plan_title: None,
        extra: false,
        current: false,
    }
}

fn week() -> Week {
    let mut days: Vec<WeekDay> = (-7..=2)
        .map(|off| WeekDay {
            date: day("2024-03-04") + chrono::Duration::days(off),
            offset: off,
            sessions: Vec::new(),
            missed: Vec::new(),
            upcoming: Vec::new(),
            not_analysed: Vec::new(),
            load: 0.0,
        })
        .collect();
    // 2024-02-28 (Wed): a tempo; 2024-03-01 (Fri): the planned tempo missed; 2024-03-02
    // (Sat): an easy run without a plan; 2024-03-04: this session and a ride (a double day).
    let mut tempo = week_session(
        "ines-aldana/2024-02-28-tempo",
        SessionKind::Tempo,
        2700.0,
        9100.0,
        95.0,
    );
    tempo.plan_title = Some("Tempo 20 min".to_string());
    days[1].sessions.push(tempo);
    days[3].missed.push(PlannedDay {
        file: "2024-03-01-tempo.toml".to_string(),
        date: day("2024-03-01"),
        title: "Tempo 3 x 10 min".to_string(),
        kind: Some(SessionKind::Tempo),
        planned_s: 3000.0,
        activity: None,
    });
    let mut easy = week_session(EASY, SessionKind::Easy, 2400.0, 7600.0, 41.0);
    easy.extra = true;
    days[5].sessions.push(easy);
    let mut this = week_session(INTERVALS, SessionKind::Intervals, 2220.0, 8200.0, 88.0);
    this.plan_title = Some("5 x 3 min".to_string());
    this.current = true;
    days[7].sessions.push(this);
    let mut ride = week_session(
        "ines-aldana/2024-03-04-ride",
        SessionKind::NotRunning,
        3600.0,
        25000.0,
        30.0,
    );
    ride.extra = true;
    ride.load_lower_bound = true;
    days[7].sessions.push(ride);
    days[9].upcoming.push(PlannedDay {
        file: "2024-03-06-long.toml".to_string(),
        date: day("2024-03-06"),
        title: "Long run".to_string(),
        kind: Some(SessionKind::LongRun),
        planned_s: 5400.0,
        activity: None,
    });
    // 2024-02-27 (Tue): a planned run whose file cannot be read.
    days[1].not_analysed.push(PlannedDay {
        file: "2024-02-27-easy.toml".to_string(),
        date: day("2024-02-27"),
        title: "Easy 40 min".to_string(),
        kind: Some(SessionKind::Easy),
        planned_s: 2400.0,
        activity: Some("ines-aldana/2024-02-27-easy".to_string()),
    });
    Week {
        schema: "splitdesk.week/1".to_string(),
        athlete: "ines-aldana".to_string(),
        centre: day("2024-03-04"),
        session_id: Some(INTERVALS.to_string()),
        today: day("2024-03-06"),
        from: day("2024-02-26"),
        to: day("2024-03-06"),
        days,
        week_load: 254.0,
        previous_weeks_mean_load: Some(230.0),
        load_ratio: Some(254.0 / 230.0),
        last_hard: Some(LastSession {
            session_id: "ines-aldana/2024-02-28-tempo".to_string(),
            day: day("2024-02-28"),
            kind: SessionKind::Tempo,
            days_before: 5,
        }),
        last_long: None,
        week_load_lower_bound: true,
        previous_weeks_without_sessions: 1,
        missed: 1,
        extra: 2,
        text: vec!["A harder week than the four before it".to_string()],
    }
}

// ----- pure draws -----

#[test]
fn the_comparison_shows_runs_reps_means_changes_and_the_caution() {
    let t = Theme::plain();
    let c = comparison(2, 5);
    let rows = text_of(&comparison_lines(&t, &c, Units::Km, 78));
    let all = rows.join("\n");
    assert_eq!(rows[0], "Workout 5 x 3:00 @ 5k / 2:00 jog");
    assert_eq!(rows[1], "2 earlier runs · pace as run");
    assert_eq!(
        rows[2], "  2024-02-19 · 5 reps · 37:00 · 8.20 km · 5 x 3 min",
        "{all}"
    );
    assert!(rows[4].ends_with("(this session)"), "{all}");
    // Heading row: the runs' days, oldest first, this session last.
    assert_eq!(
        rows[5], "pace /km · HR      02-19      02-26      03-04",
        "{all}"
    );
    // Rep 1: 236 s/km = 3:56, 235 = 3:55, 230 = 3:50; HR 172, 172, 169.
    assert_eq!(
        rows[6], "  1             3:56 172   3:55 172   3:50 169",
        "{all}"
    );
    // Rep 5 of this session: 234 s/km, 173 bpm.
    assert!(rows[10].ends_with("3:54 173"), "{all}");
    // Mean 232 s/km at 171 bpm; spread 1.6 s/km.
    assert!(
        rows[11].starts_with("  mean") && rows[11].ends_with("3:52 171"),
        "{all}"
    );
    assert!(
        rows[12].starts_with("  spread s/km") && rows[12].ends_with("1.6"),
        "{all}"
    );
    assert_eq!(rows[13], "intensity · trough     02-19     02-26     03-04");
    assert!(rows[14].ends_with("1.04 120"), "{all}");
    assert!(rows[18].ends_with("1.00 124"), "{all}");
    assert!(rows[19].ends_with("1.02 122"), "{all}");
    assert!(
        all.contains("- Faster than last time at a lower heart rate"),
        "{all}"
    );
    assert!(all.contains(&format!("- {CHANGE}")), "{all}");
    assert!(all.contains(&format!("Pace at HR {PACE_AT_HR}")), "{all}");
    assert_eq!(rows.last().map(String::as_str), Some(CAUTION));
}

#[test]
fn paces_read_in_the_athletes_units() {
    let t = Theme::plain();
    let mut c = comparison(1, 3);
    c.units = "mi".to_string();
    let all = text_of(&comparison_lines(&t, &c, Units::Km, 78)).join("\n");
    // 236 s/km x 1.609344 = 379.8 s/mi = 6:20; 230 s/km = 370.1 s/mi = 6:10.
    assert!(all.contains("pace /mi · HR"), "{all}");
    assert!(all.contains("6:20 172"), "{all}");
    assert!(all.contains("6:10 169"), "{all}");
    assert!(all.contains("spread s/mi"), "{all}");
    assert!(!all.contains("pace /km"), "{all}");
}

#[test]
fn many_runs_on_a_narrow_pane_split_into_blocks_and_nothing_is_cut() {
    let t = Theme::plain();
    let c = comparison(5, 8);
    for w in [40, 60, 78] {
        let rows = text_of(&comparison_lines(&t, &c, Units::Km, w));
        // The tables' rows: their headings and the rows of reps, means and spreads.
        let tables: Vec<&String> = rows
            .iter()
            .filter(|r| {
                let label = r.split_whitespace().next().unwrap_or("");
                r.starts_with("pace /km")
                    || r.starts_with("intensity")
                    || r.starts_with("  ")
                        && (label.parse::<usize>().is_ok() || ["mean", "spread"].contains(&label))
            })
            .collect();
        assert!(tables.len() > 20, "{w}: {rows:?}");
        for r in &tables {
            assert!(r.chars().count() <= w, "{w}: {r}");
        }
        // Every run's day is a column heading somewhere.
        for run in &c.runs {
            let head = run.day.format("%m-%d").to_string();
            assert!(
                rows.iter()
                    .any(|r| r.starts_with("pace /km") && r.contains(&head)),
                "{w}: {head}"
            );
        }
    }
    // 6 runs do not fit in 40 columns: the pace table comes in more than one block.
    let rows = text_of(&comparison_lines(&t, &c, Units::Km, 40));
    assert!(rows.iter().filter(|r| r.starts_with("pace /km")).count() > 1);
}

#[test]
fn no_earlier_run_says_why() {
    let t = Theme::plain();
    let mut c = comparison(0, 6);
    c.shape = Some(shape("6 x 1:30 @ 5k"));
    let rows = text_of(&comparison_lines(&t, &c, Units::Km, 78));
    assert_eq!(
        rows,
        [
            "Workout 6 x 1:30 @ 5k",
            "No earlier run of this workout (6 x 1:30 @ 5k)"
        ]
    );
    // An easy run compares with easy runs; a session without a shape with nothing.
    c.matched_by = MatchedBy::Kind;
    c.kind = SessionKind::Easy;
    let rows = text_of(&comparison_lines(&t, &c, Units::Km, 78));
    assert_eq!(
        rows[1],
        "No earlier easy run to compare with in the journal"
    );
    c.matched_by = MatchedBy::Nothing;
    c.kind = SessionKind::Race;
    c.shape = None;
    let rows = text_of(&comparison_lines(&t, &c, Units::Km, 78));
    assert!(rows[1].starts_with("Nothing to compare with: a race or time trial"));
}

#[test]
fn easy_runs_compare_run_by_run() {
    let t = Theme::plain();
    let mut c = comparison(2, 0);
    c.matched_by = MatchedBy::Kind;
    c.kind = SessionKind::Easy;
    c.shape = None;
    let rows = text_of(&comparison_lines(&t, &c, Units::Km, 78));
    let all = rows.join("\n");
    assert!(
        rows[0].starts_with("Easy run beside earlier easy runs on their own terms"),
        "{all}"
    );
    assert!(all.contains("run         02-19  02-26  03-04"), "{all}");
    // Flat-ground pace 238 s/km = 3:58, 237 = 3:57, 232 = 3:52.
    assert!(all.contains("  pace /km   3:58   3:57   3:52"), "{all}");
    assert!(all.contains("  HR          174    174    171"), "{all}");
    assert!(all.contains("  drift      2.5%   2.5%   2.5%"), "{all}");
    assert!(all.contains("  km         8.20   8.20   8.20"), "{all}");
}

#[test]
fn errors_and_pending_views_are_one_dim_line() {
    let t = Theme::plain();
    let mut st = ContextState {
        lower: Lower::SameWorkout,
        ..Default::default()
    };
    st.comparison = Some(Err(
        "ines-aldana/x\u{1b}[2J: no current analysis in the journal".to_string(),
    ));
    let rows = text_of(&view_lines(&t, &st, Units::Km, 78).expect("a context view"));
    // The escape never reaches the screen raw.
    assert_eq!(
        rows,
        ["No comparison: ines-aldana/x␛[2J: no current analysis in the journal"]
    );
    st.lower = Lower::Week;
    let rows = text_of(&view_lines(&t, &st, Units::Km, 78).expect("a context view"));
    assert_eq!(rows, ["looking up the week around this session…"]);
    st.lower = Lower::Findings;
    assert!(view_lines(&t, &st, Units::Km, 78).is_none());
}

#[test]
fn untrusted_titles_are_escaped() {
    let t = Theme::plain();
    let mut c = comparison(1, 2);
    c.runs[0].plan_title = Some("evil\u{1b}]0;pwned\u{7}".to_string());
    c.shape = Some(shape("3 x 1mi\u{1b}[31m"));
    let all = text_of(&comparison_lines(&t, &c, Units::Km, 78)).join("\n");
    assert!(!all.chars().any(|c| c.is_control() && c != '\n'), "{all:?}");
    assert!(all.contains("evil␛]0;pwned␇"), "{all}");
    let mut wk = week();
    wk.days[3].missed[0].title = "bad\u{9b}title".to_string();
    let all = text_of(&week_lines(&t, &wk, Units::Km, 78)).join("\n");
    assert!(!all.chars().any(|c| c.is_control() && c != '\n'), "{all:?}");
}

#[test]
fn the_week_day_by_day() {
    let t = Theme::plain();
    let rows = text_of(&week_lines(&t, &week(), Units::Km, 78));
    let all = rows.join("\n");
    let want = [
        "2024-02-26 to 2024-03-06 · today 2024-03-06",
        "Mon 2024-02-26  rest",
        "Tue 2024-02-27  tempo · 45:00 · 9.10 km · load 95 · Tempo 20 min",
        "                run, not analysed: Easy 40 min (the file cannot be read)",
        "Wed 2024-02-28  rest",
        "Thu 2024-02-29  missed: Tempo 3 x 10 min (planned, no activity)",
        "Fri 2024-03-01  rest",
        "Sat 2024-03-02  easy run · 40:00 · 7.60 km · load 41 · extra (no plan)",
        "Sun 2024-03-03  rest",
        "Mon 2024-03-04  interval set · 37:00 · 8.20 km · load 88 · 5 x 3 min (this session)",
        "                not a run · 1:00:00 · 25.00 km · load 30 or more · extra (no plan)",
        "Tue 2024-03-05  rest",
        "Wed 2024-03-06  planned: Long run",
        "Load 254 or more in the 7 days to 2024-03-04 · mean of the 4 weeks before 230 (1 of them \
         without a session) · ratio 1.10",
        "1 missed (planned, no activity) · 2 extra (no plan)",
        "Last hard session: tempo on 2024-02-28, 5 days before",
        "Last long run: none in the 42 days before",
        "- A harder week than the four before it",
    ];
    assert_eq!(rows, want, "{all}");
}

#[test]
fn miles_in_the_week() {
    let t = Theme::plain();
    let all = text_of(&week_lines(&t, &week(), Units::Mi, 78)).join("\n");
    // 8200 m = 5.10 mi.
    assert!(all.contains("interval set · 37:00 · 5.10 mi"), "{all}");
}

#[test]
fn overlay_lays_rep_k_on_rep_k_within_the_window() {
    let run = OverlayRun {
        session_id: "a/earlier".to_string(),
        day: day("2024-02-19"),
        reps: vec![
            vec![Some(4.0), None, Some(4.25)],
            vec![Some(3.875)],
            vec![Some(5.0)], // a third rep the session does not have: left out
        ],
    };
    let reps = [(100.0, 280.0), (400.0, 580.0)];
    let p = overlay_points(&reps, &run, 0.0, 1000.0);
    assert_eq!(
        p,
        vec![
            vec![(105.0, 4.0)],
            vec![(125.0, 4.25)],
            vec![(405.0, 3.875)]
        ]
    );
    // The window cuts.
    let p = overlay_points(&reps, &run, 120.0, 410.0);
    assert_eq!(p, vec![vec![(125.0, 4.25)], vec![(405.0, 3.875)]]);
    // An earlier rep longer than the gap to this session's next rep stops there.
    let long = OverlayRun {
        reps: vec![vec![Some(4.0); 10], vec![Some(4.5)]],
        ..run.clone()
    };
    let p = overlay_points(&[(100.0, 150.0), (160.0, 200.0)], &long, 0.0, 1000.0);
    let xs: Vec<f64> = p[0].iter().map(|q| q.0).collect();
    assert_eq!(xs, [105.0, 115.0, 125.0, 135.0, 145.0, 155.0]);
    assert_eq!(p[1], vec![(165.0, 4.5)]);
    // Dots every 4 s along a piece, interpolated.
    let d = dotted(&[(0.0, 4.0), (10.0, 5.0)], 4.0);
    assert_eq!(d, vec![(0.0, 4.0), (4.0, 4.4), (8.0, 4.8)]);
    assert_eq!(dotted(&[(3.0, 4.0)], 4.0), vec![(3.0, 4.0)]);
}

// ----- the workstation -----

/// The test roster with the intervals session open, the verdict pane focused, at 80x24.
fn opened(dir: &std::path::Path) -> App {
    let mut app = app_with(dir);
    open_intervals(&mut app);
    app.size = (80, 24);
    assert_eq!(app.focus, Focus::Verdict);
    app
}

#[test]
fn every_line_of_both_views_is_reachable_at_80x24() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = opened(dir.path());
    let c = comparison(5, 8);
    let wk = week();
    {
        let o = app.open.as_mut().unwrap();
        o.context.comparison = Some(Ok(c.clone()));
        o.context.week = Some(Ok(wk.clone()));
    }
    ch(&mut app, 'w');
    assert_eq!(app.open.as_ref().unwrap().context.lower, Lower::SameWorkout);
    // The key brings the view's heading into the pane, and the title says which view is on.
    let s = screen(&mut app, 80, 24);
    assert!(s.contains("╭ Verdict · same workout "), "{s}");
    let rows = pane_rows(&s);
    assert!(rows.iter().any(|r| r == "Same workout (w → week)"), "{s}");
    let doc = whole_document(&mut app).join("\n");
    let doc_words = words(&doc);
    let t = Theme::plain();
    for line in text_of(&comparison_lines(&t, &c, Units::Km, 78)) {
        assert!(doc_words.contains(&words(&line)), "missing: {line}\n{doc}");
    }
    // The findings are not in this view.
    assert!(!doc.contains("Findings ("), "{doc}");
    ch(&mut app, 'w');
    let s = screen(&mut app, 80, 24);
    assert!(s.contains("╭ Verdict · week "), "{s}");
    assert!(
        pane_rows(&s).iter().any(|r| r == "Week (w → findings)"),
        "{s}"
    );
    let doc = words(&whole_document(&mut app).join("\n"));
    for line in text_of(&week_lines(&t, &wk, Units::Km, 78)) {
        assert!(doc.contains(&words(&line)), "missing: {line}\n{doc}");
    }
    ch(&mut app, 'w');
    let s = screen(&mut app, 80, 24);
    assert!(
        s.contains("╭ Verdict ╮") || s.contains("╭ Verdict ─"),
        "{s}"
    );
    assert!(
        pane_rows(&s)
            .iter()
            .any(|r| r == "Findings (w → same workout)"),
        "{s}"
    );
    // The blind protocol holds in every view: no note on screen.
    assert!(!doc.contains("Legs felt like lead"));
}

#[test]
fn the_view_key_cycles_and_asks_the_journal_once() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = opened(dir.path());
    let lower = |app: &App| app.open.as_ref().unwrap().context.lower;
    assert_eq!(lower(&app), Lower::Findings);
    assert!(app.open.as_ref().unwrap().context.comparison.is_none());
    ch(&mut app, 'w');
    assert_eq!(lower(&app), Lower::SameWorkout);
    // Asked of the journal on the first look (a result or an error, never nothing).
    assert!(app.open.as_ref().unwrap().context.comparison.is_some());
    assert!(app.open.as_ref().unwrap().context.week.is_none());
    ch(&mut app, 'w');
    assert_eq!(lower(&app), Lower::Week);
    assert!(app.open.as_ref().unwrap().context.week.is_some());
    // Cached: a value put in stays through the next round.
    let marker = comparison(1, 1);
    app.open.as_mut().unwrap().context.comparison = Some(Ok(marker.clone()));
    ch(&mut app, 'w');
    assert_eq!(lower(&app), Lower::Findings);
    ch(&mut app, 'w');
    assert_eq!(lower(&app), Lower::SameWorkout);
    assert_eq!(
        app.open.as_ref().unwrap().context.comparison,
        Some(Ok(marker))
    );
    // From the chart too (the key works in any pane of the open session).
    key(&mut app, KeyCode::BackTab);
    assert_eq!(app.focus, Focus::Chart);
    ch(&mut app, 'w');
    assert_eq!(lower(&app), Lower::Week);
    // The key is in the help overlay and, on a wide screen, in the footer.
    ch(&mut app, '?');
    let s = screen(&mut app, 160, 48);
    assert!(s.contains("w findings/workout/week"), "{s}");
    assert!(s.contains("c chart: earlier run"), "{s}");
    key(&mut app, KeyCode::Esc);
    let s = screen(&mut app, 160, 48);
    assert!(s.contains("c earlier run"), "{s}");
    key(&mut app, KeyCode::Tab);
    let s = screen(&mut app, 160, 48);
    assert!(s.contains("w workout/week"), "{s}");
}

fn earlier_runs() -> Vec<OverlayRun> {
    // Five reps of 3 minutes: 18 bins each at 3.9 m/s (4:16/km).
    let trace = vec![Some(3.9f32); 18];
    vec![
        OverlayRun {
            session_id: "ines-aldana/2024-02-26-intervals".to_string(),
            day: day("2024-02-26"),
            reps: vec![trace.clone(); 5],
        },
        OverlayRun {
            session_id: "ines-aldana/2024-02-19-intervals".to_string(),
            day: day("2024-02-19"),
            reps: vec![trace; 5],
        },
    ]
}

#[test]
fn the_overlay_key_steps_through_the_earlier_runs_then_off() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = opened(dir.path());
    app.open.as_mut().unwrap().context.earlier = Some(Ok(earlier_runs()));
    let overlay = |app: &App| app.open.as_ref().unwrap().context.overlay;
    ch(&mut app, 'c');
    assert_eq!(overlay(&app), Some(0));
    assert_eq!(
        message(&app),
        "chart: the earlier run of 2024-02-26 dotted, rep on rep (c: next older)"
    );
    ch(&mut app, 'c');
    assert_eq!(overlay(&app), Some(1));
    assert_eq!(
        message(&app),
        "chart: the earlier run of 2024-02-19 dotted, rep on rep (c: off)"
    );
    ch(&mut app, 'c');
    assert_eq!(overlay(&app), None);
    assert_eq!(message(&app), "chart: earlier run off");
    ch(&mut app, 'c');
    assert_eq!(overlay(&app), Some(0));
    // No earlier run: nothing to step through.
    app.open.as_mut().unwrap().context.earlier = Some(Ok(Vec::new()));
    app.open.as_mut().unwrap().context.overlay = None;
    ch(&mut app, 'c');
    assert_eq!(overlay(&app), None);
    assert_eq!(
        message(&app),
        "no earlier run of this workout to overlay on the chart"
    );
    // An error is said, not drawn.
    app.open.as_mut().unwrap().context.earlier = Some(Err("no current analysis".to_string()));
    ch(&mut app, 'c');
    assert_eq!(overlay(&app), None);
    assert_eq!(
        message(&app),
        "no earlier run to overlay: no current analysis"
    );
}

#[test]
fn another_session_starts_with_a_fresh_context() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = opened(dir.path());
    {
        let o = app.open.as_mut().unwrap();
        o.context.earlier = Some(Ok(earlier_runs()));
        o.context.comparison = Some(Ok(comparison(1, 5)));
    }
    ch(&mut app, 'c');
    ch(&mut app, 'w');
    ch(&mut app, 'w');
    let c = &app.open.as_ref().unwrap().context;
    assert_eq!((c.lower, c.overlay), (Lower::Week, Some(0)));
    let fx = app.open_session(EASY);
    run_effects(&mut app, fx);
    let o = app.open.as_ref().unwrap();
    assert_eq!(o.session_id, EASY);
    let c = &o.context;
    assert_eq!(c.lower, Lower::Findings);
    assert_eq!(c.overlay, None);
    assert!(c.comparison.is_none() && c.week.is_none() && c.earlier.is_none());
}

/// The chart pane's rows (the top `h` rows under the title bar, where the chart sits).
fn chart_cells(app: &mut App, w: u16, h: u16) -> (String, Vec<(u16, u16, Color, String)>) {
    app.size = (w, h);
    let mut term =
        ratatui::Terminal::new(ratatui::backend::TestBackend::new(w, h)).expect("terminal");
    term.draw(|f| splitdesk::tui::ui::draw(f, app))
        .expect("draw");
    let buf = term.backend().buffer().clone();
    let area = ratatui::layout::Rect::new(0, 0, w, h);
    let chart = splitdesk::tui::ui::areas(area, app).chart.expect("chart");
    let mut cells = Vec::new();
    let mut title = String::new();
    for y in chart.y..chart.y + chart.height {
        for x in chart.x..chart.x + chart.width {
            if let Some(c) = buf.cell((x, y)) {
                if y == chart.y {
                    title.push_str(c.symbol());
                }
                cells.push((x, y, c.fg, c.symbol().to_string()));
            }
        }
    }
    (title, cells)
}

#[test]
fn the_overlay_is_a_faint_dotted_line_on_the_chart_and_gone_when_off() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = opened(dir.path());
    app.theme = Theme::colour();
    app.open.as_mut().unwrap().context.earlier = Some(Ok(earlier_runs()));
    let faint = Theme::colour().overlay.fg.expect("a colour");
    for (w, h) in [(80, 24), (160, 48)] {
        let (title, off) = chart_cells(&mut app, w, h);
        assert!(!title.contains("earlier run"), "{title}");
        assert_eq!(off.iter().filter(|c| c.2 == faint).count(), 0);
        ch(&mut app, 'c');
        let (title, on) = chart_cells(&mut app, w, h);
        assert!(
            title.contains("dotted: earlier run of 2024-02-26"),
            "{title}"
        );
        let dots: Vec<_> = on.iter().filter(|c| c.2 == faint).collect();
        // Five reps of 3 minutes in a 40-odd-minute session: dots across a good part of
        // the plot, all of them Braille.
        assert!(dots.len() >= 10, "{w}x{h}: {} dots", dots.len());
        assert!(dots.iter().all(|c| c
            .3
            .chars()
            .all(|ch| ('\u{2800}'..='\u{28FF}').contains(&ch))));
        // Off again after the older run.
        ch(&mut app, 'c');
        ch(&mut app, 'c');
        let (_, again) = chart_cells(&mut app, w, h);
        assert_eq!(again.iter().filter(|c| c.2 == faint).count(), 0);
    }
    // Without colour (NO_COLOR) the dots still show: the chart differs with the overlay on.
    app.theme = Theme::plain();
    let (_, off) = chart_cells(&mut app, 80, 24);
    ch(&mut app, 'c');
    let (title, on) = chart_cells(&mut app, 80, 24);
    assert!(
        title.contains("dotted: earlier run of 2024-02-26"),
        "{title}"
    );
    let differ = off
        .iter()
        .zip(&on)
        .skip(80)
        .filter(|(a, b)| a.3 != b.3)
        .count();
    assert!(differ >= 10, "{differ} cells differ");
}

// ----- the demo roster -----

const CRUISE: &str = "ansel-marchetti/2026-11-12-cruise-miles";

fn demo_app() -> App {
    let demo = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let roster = splitdesk::roster::Roster::open(&demo).expect("demo roster");
    let journal = splitdesk::journal::Journal::open_in_memory().expect("journal");
    let mut app = scanned_app(roster, journal, None);
    let fx = app.open_session(CRUISE);
    run_effects(&mut app, fx);
    app.size = (80, 24);
    app
}

#[test]
fn the_demo_cruise_miles_toggle_through_the_views_without_a_note() {
    let mut app = demo_app();
    ch(&mut app, 'w');
    let o = app.open.as_ref().unwrap();
    // The journal holds the session's card once it is scanned: the lookup answers.
    assert!(
        matches!(o.context.comparison, Some(Ok(_))),
        "{:?}",
        o.context.comparison
    );
    let doc = whole_document(&mut app).join("\n");
    assert!(doc.contains("Same workout (w → week)"), "{doc}");
    assert!(doc.contains("Workout 3 x "), "{doc}");
    ch(&mut app, 'w');
    assert!(matches!(
        app.open.as_ref().unwrap().context.week,
        Some(Ok(_))
    ));
    let week = whole_document(&mut app).join("\n");
    assert!(week.contains("Week (w → findings)"), "{week}");
    // The notes of this session and of the earlier run stay hidden.
    for note in ["2026-10-22-cruise-miles.txt", "2026-11-12-cruise-miles.txt"] {
        let path = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR"))
            .join("demo-athletes/ansel-marchetti/notes")
            .join(note);
        let text = std::fs::read_to_string(path).expect("note");
        let first = text.lines().next().unwrap_or_default().trim();
        assert!(!first.is_empty());
        assert!(!doc.contains(first) && !week.contains(first), "{first}");
    }
}

#[test]
fn the_demo_cruise_miles_have_the_earlier_run_of_2026_10_22() {
    let mut app = demo_app();
    ch(&mut app, 'w');
    let Some(Ok(c)) = app.open.as_ref().unwrap().context.comparison.clone() else {
        panic!("no comparison");
    };
    assert!(
        c.earlier().any(|r| r.day == day("2026-10-22")),
        "{:?}",
        c.runs
    );
    assert_eq!(c.units, "mi");
    let doc = whole_document(&mut app).join("\n");
    assert!(doc.contains("2026-10-22 · 3 reps"), "{doc}");
    assert!(doc.contains("pace /mi · HR"), "{doc}");
    assert!(doc.contains("10-22"), "{doc}");
    assert!(doc.contains(CAUTION.split(':').next().unwrap()), "{doc}");
    // The week: the unplanned easy run of 2026-11-06 is an extra session, the easy run of
    // 2026-11-11 is the day before.
    ch(&mut app, 'w');
    let week = words(&whole_document(&mut app).join("\n"));
    assert!(week.contains("Fri 2026-11-06 easy run"), "{week}");
    assert!(week.contains("extra (no plan)"), "{week}");
    assert!(week.contains("Wed 2026-11-11 easy run"), "{week}");
    assert!(week.contains("(this session)"), "{week}");
    // The chart overlays the run of 2026-10-22, rep on rep.
    ch(&mut app, 'c');
    let o = app.open.as_ref().unwrap();
    let run = o.context.overlaid().expect("an earlier run overlaid");
    assert_eq!(run.day, day("2026-10-22"));
    assert_eq!(run.reps.len(), 3);
    assert!(run.has_trace());
    let s = screen(&mut app, 80, 24);
    assert!(s.contains("dotted: earlier run of 2026-10-22"), "{s}");
}

#[test]
fn a_change_the_words_already_say_is_not_repeated() {
    let t = Theme::plain();
    let mut c = comparison(2, 3);
    c.text = vec![format!("{CHANGE}."), format!("{PACE_AT_HR}.")];
    let all = text_of(&comparison_lines(&t, &c, Units::Km, 78)).join("\n");
    assert_eq!(all.matches("faster per rep than on").count(), 1, "{all}");
    assert_eq!(
        all.matches("getting fitter at this workout").count(),
        1,
        "{all}"
    );
    assert!(!all.contains("Pace at HR "), "{all}");
}

#[test]
fn what_was_looked_up_before_the_analysis_is_looked_up_again_when_it_arrives() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    // Opened: the analysis is on its way (the job has not run yet).
    let fx = app.open_session(INTERVALS);
    {
        let o = app.open.as_mut().unwrap();
        o.context.lower = Lower::SameWorkout;
        o.context.comparison = Some(Err("not analysed yet".to_string()));
        o.context.week = Some(Err("not analysed yet".to_string()));
        o.context.earlier = Some(Ok(earlier_runs()));
        o.context.overlay = Some(1);
    }
    run_effects(&mut app, fx);
    let c = &app.open.as_ref().unwrap().context;
    assert_eq!(c.lower, Lower::SameWorkout);
    // The view on screen is asked again (the test roster has no earlier run of this
    // workout: a comparison without earlier runs); the week waits for its key.
    let Some(Ok(cmp)) = &c.comparison else {
        panic!("{:?}", c.comparison);
    };
    assert_eq!(cmp.session_id, INTERVALS);
    assert_eq!(cmp.earlier().count(), 0);
    assert!(c.week.is_none());
    // The overlay's runs are looked up again: none here, so the overlay is off.
    assert_eq!(c.earlier, Some(Ok(Vec::new())));
    assert_eq!(c.overlay, None);
}
