//! The workstation's chrome at every size: the footer keeps `q quit` and `? help`, the title
//! keeps its state tag whole and cuts no word, status messages wrap at word boundaries,
//! roster titles never cut a distance into another number, the chart gives each trace
//! enough rows at 80x24, pace and HR look different without colour, and the ASCII mode's
//! key hints and empty verdict read right.

mod tui_support;

use std::path::Path;

use crossterm::event::KeyCode;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use splitdesk::journal::Journal;
use splitdesk::roster::Roster;
use splitdesk::tui::app::{App, Focus, Message, Tone};
use splitdesk::tui::panes::chart::MIN_ROWS_PER_TRACE;
use splitdesk::tui::panes::roster::row_title;
use splitdesk::tui::theme::{asciify, Theme};
use splitdesk::tui::ui;
use tui_support::*;

const SIZES: [(u16, u16); 3] = [(80, 24), (100, 30), (160, 48)];

fn footer(text: &str) -> &str {
    text.lines().last().unwrap_or("")
}

fn title(text: &str) -> &str {
    text.lines().next().unwrap_or("")
}

/// Every state a coach meets on a morning's review, each drawn at every size.
fn each_state(mut check: impl FnMut(&str, &mut App)) {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    check("roster", &mut app);
    ch(&mut app, '/');
    check("filter", &mut app);
    key(&mut app, KeyCode::Esc);
    open_intervals(&mut app);
    check("verdict blind", &mut app);
    while app.focus != Focus::Chart {
        key(&mut app, KeyCode::Tab);
    }
    check("chart", &mut app);
    while app.focus != Focus::Verdict {
        key(&mut app, KeyCode::Tab);
    }
    for c in ['3', '3', '4', '4', '2', 'v', 'o'] {
        ch(&mut app, c);
    }
    key(&mut app, KeyCode::Esc);
    check("verdict revealed", &mut app);
}

#[test]
fn footer_keeps_quit_and_help_at_every_size() {
    each_state(|state, app| {
        for (w, h) in SIZES.into_iter().chain([(60, 20), (72, 24), (120, 36)]) {
            let text = screen(app, w, h);
            let f = footer(&text);
            if state == "filter" {
                // Typing a filter: every key is text; Enter and Esc are the only hints.
                assert!(f.contains("Esc clear"), "{state} {w}x{h}: {f}");
                continue;
            }
            assert!(f.contains("q quit"), "{state} {w}x{h}: {f}");
            assert!(f.contains("? help"), "{state} {w}x{h}: {f}");
            // Hints are whole: every hint shown is one of the context's hints.
            let all = ui::hints(app);
            for (k, what) in ui::footer_hints(app, w as usize) {
                assert!(all.contains(&(k.clone(), what)));
                assert!(f.contains(&format!("{k} {what}")), "{state} {w}x{h}: {f}");
            }
        }
    });
}

#[test]
fn title_keeps_its_state_tag_whole_and_cuts_no_word() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    let full = ui::title_text(&app, 1000);
    assert_eq!(
        full,
        " splitdesk · Test club · Ines Aldana · 5 x 3 min · [blind]"
    );
    let words: Vec<&str> = full.split_whitespace().collect();
    for w in 20..=160usize {
        let t = ui::title_text(&app, w);
        assert!(t.chars().count() <= w, "{w}: {t:?}");
        assert!(t.ends_with("[blind]"), "{w}: {t:?}");
        // Every word shown is a whole word of the full title (a cut is marked `…` after
        // a whole word; an abbreviated name keeps its initial with a full stop).
        for word in t.split_whitespace() {
            let word = word.trim_end_matches('…');
            assert!(
                words.contains(&word) || word == "A.",
                "{w}: {word:?} cut in {t:?}"
            );
        }
    }
    // On screen at every size, and after the reveal.
    for (w, h) in SIZES {
        let text = screen(&mut app, w, h);
        assert!(title(&text).contains("[blind]"), "{w}x{h}");
    }
    grade_and_reveal_open(&mut app);
    for (w, h) in SIZES.into_iter().chain([(40, 20), (60, 20)]) {
        let text = screen(&mut app, w, h);
        assert!(
            title(&text).trim_end().ends_with("[notes revealed]"),
            "{w}x{h}: {}",
            title(&text)
        );
    }
    // 80 wide: the club goes first.
    assert_eq!(
        ui::title_text(&app, 56),
        " splitdesk · Ines Aldana · 5 x 3 min · [notes revealed]"
    );
    assert_eq!(
        ui::title_text(&app, 52),
        " splitdesk · Ines A. · 5 x 3 min · [notes revealed]"
    );
}

fn grade_and_reveal_open(app: &mut App) {
    while app.focus != Focus::Verdict {
        key(app, KeyCode::Tab);
    }
    for c in ['3', '3', '4', '4', '2', 'v', 'o'] {
        ch(app, c);
    }
    key(app, KeyCode::Esc);
    assert!(app.open.as_ref().unwrap().revealed());
}

#[test]
fn long_status_messages_wrap_at_word_boundaries() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    let text = "notes stay hidden until grading is complete: scores missing for work \
                intervals 1, 2, 3, 4, 5; purpose verdict not set";
    app.message = Some(Message {
        text: text.to_string(),
        tone: Tone::Warn,
    });
    let words: Vec<&str> = text.split_whitespace().collect();
    for w in [60u16, 80, 100, 160] {
        let lines = ui::status_lines(&app, w);
        assert!(!lines.is_empty() && lines.len() <= 2, "{w}: {lines:?}");
        let shown: Vec<&str> = lines.iter().flat_map(|l| l.split_whitespace()).collect();
        let bare = |s: &str| s.trim_end_matches(['…', ',', ';', ':']).to_string();
        let whole: Vec<String> = words.iter().map(|s| bare(s)).collect();
        for word in &shown {
            assert!(whole.contains(&bare(word)), "{w}: {word:?} cut");
        }
        if !lines.iter().any(|l| l.ends_with('…')) {
            assert_eq!(shown, words, "{w}: nothing lost when nothing is marked cut");
        }
    }
    // At 80 wide it wraps onto two lines with nothing lost; the screen shows both.
    assert_eq!(ui::status_lines(&app, 80).len(), 2);
    let screen80 = screen(&mut app, 80, 24);
    let rows: Vec<&str> = screen80.lines().collect();
    assert!(rows[21].contains("scores missing for"), "{}", rows[21]);
    assert!(rows[22].contains("purpose verdict not set"), "{}", rows[22]);
    assert!(footer(&screen80).contains("q quit"));
    // A short message keeps one line.
    app.message = Some(Message {
        text: "ruler kept".into(),
        tone: Tone::Info,
    });
    assert_eq!(ui::status_lines(&app, 80), vec![" ruler kept".to_string()]);
}

#[test]
fn chart_gives_each_trace_three_rows_at_80x24() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    let text = screen(&mut app, 80, 24);
    // The scale labels: the top and bottom rows of each trace.
    let rows: Vec<&str> = text.lines().collect();
    let pace_top = rows.iter().position(|r| r.contains("/km ")).unwrap();
    let hr_top = rows.iter().position(|r| r.contains(" bpm ")).unwrap();
    let hr_bottom = rows.iter().rposition(|r| r.contains(" bpm ")).unwrap();
    let pace_rows = hr_top - pace_top;
    let hr_rows = hr_bottom - hr_top + 1;
    assert!(
        pace_rows >= MIN_ROWS_PER_TRACE as usize && hr_rows >= MIN_ROWS_PER_TRACE as usize,
        "pace {pace_rows} rows, HR {hr_rows} rows:\n{text}"
    );
    // The readout went onto the top border, with the raw pace at the cursor.
    assert!(rows[1].starts_with("╭ Chart · 0:00 · pace"), "{}", rows[1]);
    // The work/flag strip went onto the bottom border with the work-interval numbers.
    let bottom = rows
        .iter()
        .find(|r| r.starts_with("╰─work"))
        .expect("strip on the border");
    for n in 1..=5 {
        assert!(bottom.contains(&format!("{n}━")), "{bottom}");
    }
    // At 160x48 nothing folds: the readout and the strip keep their lines, and the
    // legend names the smoothing window.
    let text = screen(&mut app, 160, 48);
    assert!(text.contains("│work/flag"));
    assert!(text.contains("pace (15 s mean)"), "legend");
}

#[test]
fn without_colour_pace_and_hr_have_different_marks() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    assert!(app.theme.plain, "the test app draws without colour");
    open_intervals(&mut app);
    for (w, h) in SIZES {
        let text = screen(&mut app, w, h);
        let rows: Vec<&str> = text.lines().collect();
        let pace_top = rows.iter().position(|r| r.contains("/km ")).unwrap();
        let hr_top = rows.iter().position(|r| r.contains(" bpm ")).unwrap();
        let hr_bottom = rows.iter().rposition(|r| r.contains(" bpm ")).unwrap();
        let braille = |r: &str| r.chars().any(|c| ('\u{2801}'..='\u{28FF}').contains(&c));
        let chart_cols = |r: &str| -> String {
            // The chart pane is the right part of the row when the roster shows beside it.
            let r: Vec<char> = r.chars().collect();
            let from = r
                .len()
                .saturating_sub(w as usize - if w >= 120 { 40 } else { 0 });
            r[from..].iter().collect()
        };
        let pace: Vec<String> = rows[pace_top..hr_top]
            .iter()
            .map(|r| chart_cols(r))
            .collect();
        let hr: Vec<String> = rows[hr_top..=hr_bottom]
            .iter()
            .map(|r| chart_cols(r))
            .collect();
        assert!(pace.iter().any(|r| braille(r)), "{w}x{h}: pace in Braille");
        assert!(
            pace.iter().all(|r| !r.contains('•')),
            "{w}x{h}: no dot in pace"
        );
        assert!(hr.iter().any(|r| r.contains('•')), "{w}x{h}: HR in dots");
        assert!(hr.iter().all(|r| !braille(r)), "{w}x{h}: no Braille in HR");
    }
    // The legend carries the marks (where it has room).
    let text = screen(&mut app, 160, 48);
    assert!(text.contains("⠒ pace (15 s mean)  • HR"), "{text}");
    // In colour both traces are Braille lines told apart by colour.
    app.theme = Theme::colour();
    let text = screen(&mut app, 160, 48);
    assert!(!text.lines().skip(2).take(20).any(|r| r.contains("•••")));
}

#[test]
fn ascii_footer_has_no_key_clash_and_empty_verdict_is_a_dash() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    app.theme.ascii = true;
    open_intervals(&mut app);
    for (w, h) in SIZES {
        let text = screen(&mut app, w, h);
        let f = footer(&text);
        assert!(f.contains("v verdict"), "{w}x{h}: {f}");
        assert!(!f.contains("v interval"), "{w}x{h}: {f}");
        assert!(f.is_ascii(), "{w}x{h}: {f}");
        assert!(f.contains("q quit") && f.contains("? help"), "{w}x{h}: {f}");
        if w >= 100 {
            assert!(f.contains("Down interval"), "{w}x{h}: {f}");
        }
        // No verdict yet: a dash, not a `#`. (The grading line may sit below the table:
        // the verdict pane scrolls to it.)
        let scrolled;
        let grading_text = if text.contains("purpose verdict") {
            &text
        } else {
            key(&mut app, crossterm::event::KeyCode::End);
            scrolled = screen(&mut app, w, h);
            key(&mut app, crossterm::event::KeyCode::Home);
            &scrolled
        };
        let grading = grading_text
            .lines()
            .find(|l| l.contains("purpose verdict"))
            .unwrap_or_else(|| panic!("grading line at {w}x{h}:\n{grading_text}"));
        assert!(grading.contains("purpose verdict - (v)"), "{grading}");
        assert!(text.is_ascii(), "{w}x{h}: every cell ASCII");
        // The work intervals on the chart's strip stand apart from the border line.
        let strip = text
            .lines()
            .find(|l| l.contains("work"))
            .expect("work/flag strip");
        for n in 1..=5 {
            assert!(strip.contains(&format!("{n}==")), "{w}x{h}: {strip}");
        }
    }
    // The ASCII pass maps dashes to `-` and arrows to plain marks.
    let mut buf = Buffer::empty(Rect::new(0, 0, 5, 1));
    buf.set_string(0, 0, "—–▸▾━", ratatui::style::Style::new());
    asciify(&mut buf);
    let got: String = (0..5)
        .map(|x| buf.cell((x, 0)).unwrap().symbol().to_string())
        .collect();
    assert_eq!(got, "-->v=");
}

/// Every number in `shown` is `true_value` rounded to as many decimals as it shows.
fn is_rounding(shown: &str, true_value: f64) -> bool {
    let decimals = shown.split_once('.').map_or(0, |(_, d)| d.len());
    let Ok(v) = shown.parse::<f64>() else {
        return false;
    };
    format!("{true_value:.decimals$}") == format!("{v:.decimals$}")
}

#[test]
fn roster_distances_are_never_cut_into_another_number() {
    // Source: the demo roster (generated; `tests/demo_regenerate.rs` keeps it current).
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let mut app = scanned_app(
        Roster::open(&root).unwrap(),
        Journal::open_in_memory().unwrap(),
        None,
    );
    let ids: Vec<String> = app.reviews.keys().cloned().collect();
    assert!(ids.len() > 100, "the demo roster is analysed");
    let mut unplanned = 0;
    for id in &ids {
        let r = &app.reviews[id];
        let full = app.session_title(id);
        let full_words: Vec<&str> = full.split_whitespace().collect();
        let units = app
            .roster
            .find_session(id)
            .map(|(a, _)| a.profile.units)
            .unwrap_or_default();
        let distance = r
            .session
            .distance_m
            .filter(|_| r.plan.is_none())
            .map(|d| d / units.metres());
        unplanned += usize::from(distance.is_some());
        for w in 3..=40usize {
            let t = row_title(&app, id, w);
            assert!(t.chars().count() <= w, "{id} at {w}: {t:?}");
            for word in t.split_whitespace() {
                let bare = word.trim_end_matches('…');
                if bare.is_empty() {
                    continue;
                }
                if bare.chars().next().is_some_and(|c| c.is_ascii_digit()) {
                    match distance {
                        Some(d) => assert!(
                            is_rounding(bare, d),
                            "{id} at {w}: {t:?} shows {bare}, the distance is {d}"
                        ),
                        None => assert!(
                            full_words.contains(&bare),
                            "{id} at {w}: {t:?} cut a number of {full:?}"
                        ),
                    }
                    assert!(
                        !(word.ends_with('…') && bare.ends_with(|c: char| c.is_ascii_digit())),
                        "{id} at {w}: {t:?} reads as a cut number"
                    );
                }
            }
        }
    }
    assert!(unplanned > 0, "the demo roster has sessions without a plan");
    // On screen: no digit is followed by the cut mark at any size.
    key(&mut app, KeyCode::Down);
    for (w, h) in SIZES {
        let text = screen(&mut app, w, h);
        let chars: Vec<char> = text.chars().collect();
        for pair in chars.windows(2) {
            assert!(
                !((pair[0].is_ascii_digit() || pair[0] == '.') && pair[1] == '…'),
                "{w}x{h}: a cut number on screen:\n{text}"
            );
        }
    }
    // The test roster's unplanned run keeps its full distance at 160 wide.
    let dir = tempfile::tempdir().unwrap();
    let mut small = app_with(dir.path());
    key(&mut small, KeyCode::Down);
    let text = screen(&mut small, 160, 48);
    let easy = small.reviews[EASY].session.distance_m.unwrap() / 1000.0;
    assert!(text.contains(&format!("running {easy:.2} km")), "{text}");
}
