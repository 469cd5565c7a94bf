//! The workstation on a journal shared by a coaching staff: "reviewing now" marks between
//! two coaches' workstations, and a feedback edit that meets a newer version saved
//! elsewhere (keep mine / take theirs / show both). Two `Journal` handles on one SQLite
//! file stand for two workstations; keys drive the apps.

mod tui_support;

use chrono::{Duration, Utc};
use crossterm::event::{Event, KeyCode, KeyEvent, KeyModifiers};
use splitdesk::journal::{FeedbackEventKind, Journal};
use splitdesk::roster::Roster;
use splitdesk::tui::app::{
    App, Effect, Modal, BOTH_END, BOTH_MINE, BOTH_THEIRS, CONFLICT_TITLE, REVIEWING_RENEW,
};
use splitdesk::tui::event::AppEvent;
use splitdesk::tui::panes::roster::REVIEWING_MARK;
use tui_support::*;

/// A journal file with a staff of two (Ana, Ben); a handle on it as `coach`.
fn handle(path: &std::path::Path, coach: &str) -> Journal {
    let mut j = Journal::open(path).unwrap();
    j.set_coach(coach).unwrap();
    j
}

/// The roster and a journal file with the staff Ana and Ben.
fn staff_roster(dir: &std::path::Path) -> std::path::PathBuf {
    build_roster(dir);
    let path = dir.join("journal.sqlite");
    let mut j = Journal::open(&path).unwrap();
    j.staff_add("Ana", Utc::now()).unwrap();
    j.staff_add("Ben", Utc::now()).unwrap();
    path
}

fn app_as(dir: &std::path::Path, path: &std::path::Path, coach: &str) -> App {
    scanned_app(Roster::open(dir).unwrap(), handle(path, coach), None)
}

fn ctrl(app: &mut App, c: char) -> Vec<Effect> {
    let e = app.handle(AppEvent::Input(Event::Key(KeyEvent::new(
        KeyCode::Char(c),
        KeyModifiers::CONTROL,
    ))));
    run_effects(app, e)
}

fn editor_text(app: &App) -> String {
    app.open.as_ref().unwrap().feedback.as_ref().unwrap().text()
}

fn base(app: &App) -> Option<i64> {
    app.open.as_ref().unwrap().feedback_base
}

/// Move Ben's roster cursor onto the interval session's row (Ines is expanded first).
fn cursor_to_intervals(app: &mut App) {
    for _ in 0..4 {
        if app.cursor.session.as_deref() == Some(INTERVALS) {
            return;
        }
        ch(app, 'j');
    }
    assert_eq!(app.cursor.session.as_deref(), Some(INTERVALS));
}

// ----- "reviewing now" -----

#[test]
fn a_colleague_sees_the_session_marked_while_it_is_open_renewed_and_gone_after_quit() {
    let dir = tempfile::tempdir().unwrap();
    let path = staff_roster(dir.path());
    let mut ana = app_as(dir.path(), &path, "Ana");
    let mut ben = app_as(dir.path(), &path, "Ben");
    assert!(ben.reviewing.is_empty());

    open_intervals(&mut ana);
    // Marked when it opened, at most now.
    let t0 = Utc::now();
    assert!(
        ben.poll_journal_at(t0),
        "Ana's mark reaches Ben's workstation"
    );
    assert_eq!(ben.reviewing.get(INTERVALS), Some(&vec!["Ana".to_string()]));
    // Ana's own workstation does not mark her own session as someone else's.
    ana.poll_journal_at(t0);
    assert!(ana.reviewing.is_empty(), "{:?}", ana.reviewing);

    // Shown in Ben's roster: the mark and the name, at both sizes; the legend says what
    // the mark means, and who it is with the cursor on the session.
    let before = screen(&mut ben, 80, 24);
    assert!(before.contains("◆ 03-04 5 x 3 min · Ana"), "{before}");
    assert!(before.contains("◆ another coach reviewing now"), "{before}");
    cursor_to_intervals(&mut ben);
    let wide = screen(&mut ben, 160, 48);
    assert!(wide.contains(REVIEWING_MARK), "{wide}");
    assert!(wide.contains("5 x 3 min · Ana"), "{wide}");
    assert!(wide.contains("Ana reviewing this now"), "{wide}");
    let small = screen(&mut ben, 80, 24);
    assert!(small.contains(REVIEWING_MARK), "{small}");
    assert!(small.contains("Ana reviewing this now"), "{small}");
    // Who Ben is, on his status line.
    assert!(wide.contains("coach Ben"), "{wide}");
    assert!(small.contains("coach Ben"), "{small}");

    // Renewed while the session stays open: a minute on, Ana's workstation marks it again,
    // so it is still marked after the first mark would have expired.
    let t1 = t0 + REVIEWING_RENEW;
    ana.poll_journal_at(t1);
    let after_first = t0 + splitdesk::journal::REVIEWING_FOR + Duration::seconds(30);
    ben.poll_journal_at(after_first);
    assert!(ben.reviewing.contains_key(INTERVALS));
    // Not renewed on every poll: nothing written between renewals (Ben sees no change).
    ana.poll_journal_at(t1 + Duration::seconds(10));
    assert!(!ben.poll_journal_at(after_first + Duration::seconds(1)));
    // Expired once nobody renews it: gone at Ben's next re-read (at most a renewal
    // period after it expired, with nothing written meanwhile).
    let expired = t1 + splitdesk::journal::REVIEWING_FOR + Duration::seconds(1);
    assert!(ben.poll_journal_at(expired.max(after_first + REVIEWING_RENEW + Duration::seconds(1))));
    assert!(ben.reviewing.is_empty());
    let plain = screen(&mut ben, 80, 24);
    assert!(!plain.contains("reviewing"), "{plain}");

    // Marked again, then Ana quits: the loop ends and the mark goes with it.
    ana.poll_journal_at(Utc::now() + Duration::minutes(10));
    ben.poll_journal_at(Utc::now() + Duration::minutes(10) + Duration::seconds(1));
    assert!(ben.reviewing.contains_key(INTERVALS));
    let mut terminal = ratatui::Terminal::new(ratatui::backend::TestBackend::new(80, 24)).unwrap();
    let worker = splitdesk::worker::Worker::for_machine();
    let stop = std::sync::atomic::AtomicBool::new(true);
    splitdesk::tui::event_loop(&mut terminal, &mut ana, &worker, &mut Quiet, &stop).unwrap();
    assert!(ben.poll_journal_at(Utc::now() + Duration::minutes(10) + Duration::seconds(2)));
    assert!(ben.reviewing.is_empty(), "{:?}", ben.reviewing);
}

#[test]
fn opening_another_session_moves_the_mark() {
    let dir = tempfile::tempdir().unwrap();
    let path = staff_roster(dir.path());
    let mut ana = app_as(dir.path(), &path, "Ana");
    let mut ben = app_as(dir.path(), &path, "Ben");
    open_intervals(&mut ana);
    ben.poll_journal();
    assert!(ben.reviewing.contains_key(INTERVALS));
    let fx = ana.open_session(LONG);
    run_effects(&mut ana, fx);
    assert!(ben.poll_journal());
    assert_eq!(
        ben.reviewing.keys().collect::<Vec<_>>(),
        vec![&LONG.to_string()]
    );
}

#[test]
fn a_single_coach_journal_marks_nothing_and_says_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    open_intervals(&mut app);
    app.poll_journal_at(Utc::now() + REVIEWING_RENEW);
    assert!(app.reviewing.is_empty());
    assert_eq!(message(&app), "");
    assert_eq!(app.coach_name(), None);
    let s = screen(&mut app, 80, 24);
    assert!(!s.contains("coach "), "{s}");
    assert!(!s.contains(REVIEWING_MARK), "{s}");
}

#[test]
fn coach_names_are_drawn_printable() {
    let dir = tempfile::tempdir().unwrap();
    let path = staff_roster(dir.path());
    let mut ben = app_as(dir.path(), &path, "Ben");
    // A name from the journal with a bidirectional override in it (the staff commands
    // refuse it; another tool could still have written it).
    ben.reviewing
        .insert(INTERVALS.to_string(), vec!["Ana\u{202e}evil".to_string()]);
    cursor_to_intervals(&mut ben);
    let s = screen(&mut ben, 160, 48);
    assert!(!s.contains('\u{202e}'), "{s}");
    assert!(s.contains("Ana"), "{s}");
}

struct Quiet;

impl splitdesk::tui::Host for Quiet {
    fn next_event(&mut self, _timeout: std::time::Duration) -> std::io::Result<Option<Event>> {
        Ok(None)
    }
    fn copy(&mut self, _text: &str) -> String {
        "copied".into()
    }
    fn edit(&mut self, text: &str) -> Result<String, String> {
        Ok(text.to_string())
    }
}

// ----- feedback conflicts -----

/// Ana's workstation with the notes revealed and an inline edit ending in " Mine." (still
/// editing, unsaved), and a second handle as Ana (her other machine) that saved "Theirs."
/// meanwhile. Returns the app, the other handle and the id of their version.
fn conflict_setup(dir: &std::path::Path) -> (App, Journal, i64) {
    let path = staff_roster(dir);
    let mut app = app_as(dir, &path, "Ana");
    grade_and_reveal(&mut app);
    assert_eq!(base(&app), None, "nothing saved yet");
    ch(&mut app, 'f');
    key(&mut app, KeyCode::End);
    for c in " Mine.".chars() {
        ch(&mut app, c);
    }
    let mut other = handle(&path, "Ana");
    let theirs = other
        .save_feedback_over(INTERVALS, "Theirs.\n", None, Utc::now())
        .unwrap();
    (app, other, theirs)
}

/// Save with C-s and check the conflict prompt came up with nothing saved.
fn save_into_conflict(app: &mut App, theirs: i64) -> String {
    let mine = editor_text(app);
    ctrl(app, 's');
    match &app.modal {
        Some(Modal::Conflict(c)) => {
            assert_eq!(c.theirs.id, theirs);
            assert_eq!(c.theirs.body, "Theirs.\n");
            assert_eq!(c.then, None);
        }
        other => panic!("no conflict prompt: {other:?}"),
    }
    assert_eq!(editor_text(app), mine, "the editor keeps my text");
    let latest = app.journal.feedback(INTERVALS).unwrap().unwrap();
    assert_eq!((latest.id, latest.body.as_str()), (theirs, "Theirs.\n"));
    assert!(message(app).contains("nothing saved"), "{}", message(app));
    mine
}

#[test]
fn keep_mine_saves_mine_over_theirs() {
    let dir = tempfile::tempdir().unwrap();
    let (mut app, other, theirs) = conflict_setup(dir.path());
    let mine = save_into_conflict(&mut app, theirs);
    assert!(mine.contains("Mine."));
    ch(&mut app, 'k');
    assert!(app.modal.is_none());
    let latest = app.journal.feedback(INTERVALS).unwrap().unwrap();
    assert_eq!(latest.body, mine);
    assert!(latest.id > theirs);
    assert_eq!(base(&app), Some(latest.id));
    assert!(!app.unsaved());
    // Theirs stays in the history; the other machine reads mine now.
    let history: Vec<String> = other
        .feedback_history(INTERVALS)
        .unwrap()
        .into_iter()
        .map(|f| f.body)
        .collect();
    assert_eq!(history, vec!["Theirs.\n".to_string(), mine.clone()]);
    assert!(
        message(&app).contains("yours saved over"),
        "{}",
        message(&app)
    );
    // The next save goes on from mine without a conflict.
    ch(&mut app, 'f');
    ch(&mut app, '!');
    ctrl(&mut app, 's');
    assert!(app.modal.is_none());
    assert_eq!(app.journal.feedback_history(INTERVALS).unwrap().len(), 3);
}

#[test]
fn take_theirs_replaces_my_text_and_saves_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let (mut app, _other, theirs) = conflict_setup(dir.path());
    save_into_conflict(&mut app, theirs);
    ch(&mut app, 't');
    assert!(app.modal.is_none());
    assert_eq!(editor_text(&app), "Theirs.\n");
    assert_eq!(base(&app), Some(theirs));
    assert!(!app.unsaved());
    let history = app.journal.feedback_history(INTERVALS).unwrap();
    assert_eq!(history.len(), 1);
    assert_eq!(history[0].id, theirs);
    // Editing theirs and saving goes on from their version.
    ch(&mut app, 'f');
    key(&mut app, KeyCode::End);
    ch(&mut app, '!');
    ctrl(&mut app, 's');
    assert!(app.modal.is_none());
    let latest = app.journal.feedback(INTERVALS).unwrap().unwrap();
    assert_eq!(latest.body, "Theirs.!\n");
}

#[test]
fn show_both_puts_both_texts_in_the_editor_for_a_merge_by_hand() {
    let dir = tempfile::tempdir().unwrap();
    let (mut app, _other, theirs) = conflict_setup(dir.path());
    let mine = save_into_conflict(&mut app, theirs);
    ch(&mut app, 'b');
    assert!(app.modal.is_none());
    let both = editor_text(&app);
    let lines: Vec<&str> = both.lines().collect();
    assert_eq!(lines.first(), Some(&BOTH_MINE));
    assert_eq!(lines.last(), Some(&BOTH_END));
    let theirs_at = lines
        .iter()
        .position(|l| l.starts_with(BOTH_THEIRS))
        .expect("their marker");
    assert_eq!(lines[1..theirs_at].join("\n") + "\n", mine);
    assert_eq!(lines[theirs_at + 1..lines.len() - 1], ["Theirs."]);
    assert_eq!(base(&app), Some(theirs));
    let ed = app.open.as_ref().unwrap().feedback.as_ref().unwrap();
    assert!(ed.dirty && ed.editing);
    // Nothing saved yet; the coach merges, then saves without a conflict.
    assert_eq!(app.journal.feedback_history(INTERVALS).unwrap().len(), 1);
    ctrl(&mut app, 's');
    assert!(app.modal.is_none());
    let latest = app.journal.feedback(INTERVALS).unwrap().unwrap();
    assert_eq!(latest.body, both);
    assert_eq!(base(&app), Some(latest.id));
}

#[test]
fn esc_goes_back_to_editing_with_nothing_lost_and_the_next_save_asks_again() {
    let dir = tempfile::tempdir().unwrap();
    let (mut app, _other, theirs) = conflict_setup(dir.path());
    let mine = save_into_conflict(&mut app, theirs);
    // Keys other than the four wait.
    ch(&mut app, 'x');
    assert!(matches!(app.modal, Some(Modal::Conflict(_))));
    key(&mut app, KeyCode::Esc);
    assert!(app.modal.is_none());
    let ed = app.open.as_ref().unwrap().feedback.as_ref().unwrap();
    assert!(ed.editing && ed.dirty);
    assert_eq!(editor_text(&app), mine);
    assert_eq!(app.journal.feedback_history(INTERVALS).unwrap().len(), 1);
    save_into_conflict(&mut app, theirs);
}

#[test]
fn a_copy_over_a_newer_version_asks_first_and_keep_mine_copies_mine() {
    let dir = tempfile::tempdir().unwrap();
    let (mut app, _other, theirs) = conflict_setup(dir.path());
    key(&mut app, KeyCode::Esc);
    let mine = editor_text(&app);
    let fx = ch(&mut app, 'y');
    assert!(fx.is_empty(), "nothing copied: {fx:?}");
    match &app.modal {
        Some(Modal::Conflict(c)) => assert_eq!(c.then, Some(FeedbackEventKind::Copied)),
        other => panic!("no conflict prompt: {other:?}"),
    }
    assert!(app.journal.feedback_events(INTERVALS).unwrap().is_empty());
    let fx = ch(&mut app, 'k');
    assert!(
        fx.iter()
            .any(|e| matches!(e, Effect::Copy(t) if *t == mine)),
        "{fx:?}"
    );
    let events = app.journal.feedback_events(INTERVALS).unwrap();
    assert_eq!(events.len(), 1);
    let latest = app.journal.feedback(INTERVALS).unwrap().unwrap();
    assert_eq!(latest.body, mine);
    assert!(latest.id > theirs);
}

#[test]
fn ending_the_workstation_during_a_conflict_saves_both_texts() {
    let dir = tempfile::tempdir().unwrap();
    let (mut app, _other, theirs) = conflict_setup(dir.path());
    let mine = save_into_conflict(&mut app, theirs);
    app.save_before_exit();
    let latest = app.journal.feedback(INTERVALS).unwrap().unwrap();
    assert!(latest.id > theirs);
    assert!(latest.body.starts_with(BOTH_MINE), "{}", latest.body);
    assert!(latest.body.contains(mine.trim_end()), "{}", latest.body);
    assert!(latest.body.contains("Theirs."), "{}", latest.body);
}

#[test]
fn the_conflict_prompt_and_its_keys_fit_at_both_sizes_and_are_in_the_help() {
    let dir = tempfile::tempdir().unwrap();
    let (mut app, _other, theirs) = conflict_setup(dir.path());
    save_into_conflict(&mut app, theirs);
    for (w, h) in [(160, 48), (80, 24)] {
        let s = screen(&mut app, w, h);
        for want in [
            CONFLICT_TITLE,
            "The feedback was saved elsewhere while you edited it.",
            "Nothing was saved; your text is still in the editor.",
            " UTC) begins: Theirs.",
            "k  keep mine (save my text over theirs)",
            "t  take theirs (my text is dropped)",
            "b  show both (in the editor, to merge by hand)",
            "Esc  back to editing (nothing saved)",
        ] {
            assert!(s.contains(want), "{w}x{h}: {want:?} missing\n{s}");
        }
        // The footer says the keys too.
        let footer = s.lines().last().unwrap().to_string();
        for want in ["k keep mine", "t take theirs", "b show both", "Esc back"] {
            assert!(footer.contains(want), "{w}x{h}: {footer}");
        }
    }
    // The help says them as well (Esc first closes the prompt).
    key(&mut app, KeyCode::Esc);
    key(&mut app, KeyCode::Esc);
    ch(&mut app, '?');
    assert!(matches!(app.modal, Some(Modal::Help)));
    for (w, h) in [(160, 48), (80, 24)] {
        let s = screen(&mut app, w, h);
        assert!(
            s.contains("feedback changed elsewhere: k keep mine · t take theirs · b show both"),
            "{w}x{h}\n{s}"
        );
    }
}

#[test]
fn opening_a_session_a_colleague_has_open_says_so() {
    let dir = tempfile::tempdir().unwrap();
    let path = staff_roster(dir.path());
    let mut ana = app_as(dir.path(), &path, "Ana");
    let mut ben = app_as(dir.path(), &path, "Ben");
    open_intervals(&mut ana);
    ben.poll_journal();
    open_intervals(&mut ben);
    assert_eq!(message(&ben), "Ana is reviewing this session now too");
    // And Ana sees Ben on hers.
    assert!(ana.poll_journal());
    assert_eq!(ana.reviewing.get(INTERVALS), Some(&vec!["Ben".to_string()]));
}

#[test]
fn the_day_export_waits_for_a_conflict_to_be_settled() {
    let dir = tempfile::tempdir().unwrap();
    let (mut app, _other, theirs) = conflict_setup(dir.path());
    key(&mut app, KeyCode::Esc);
    let day_key = app.keymap.first(splitdesk::tui::action::Action::ExportDay);
    let c = day_key.chars().next().unwrap();
    assert_eq!(day_key.chars().count(), 1, "{day_key}");
    let fx = ch(&mut app, c);
    assert!(fx.is_empty(), "{fx:?}");
    assert!(matches!(app.modal, Some(Modal::Conflict(_))));
    assert_eq!(app.journal.feedback(INTERVALS).unwrap().unwrap().id, theirs);
}

#[test]
fn roster_with_a_colleague_reviewing_snapshots() {
    let dir = tempfile::tempdir().unwrap();
    let path = staff_roster(dir.path());
    let mut ana = app_as(dir.path(), &path, "Ana");
    let mut ben = app_as(dir.path(), &path, "Ben");
    open_intervals(&mut ana);
    ben.poll_journal();
    cursor_to_intervals(&mut ben);
    for (w, h) in [(160, 48), (80, 24)] {
        let text = screen(&mut ben, w, h);
        insta::assert_snapshot!(format!("staff_reviewing_{w}x{h}"), text);
    }
}

// ----- the queue -----

/// A coach of a staff works through their own athletes' sessions first (then the others',
/// each oldest first), in the workstation as in `splitdesk queue`.
#[test]
fn the_workstation_queue_puts_the_coach_s_own_athletes_first() {
    let dir = tempfile::tempdir().unwrap();
    let path = staff_roster(dir.path());
    let ana = app_as(dir.path(), &path, "Ana");
    let athletes =
        |app: &App| -> Vec<String> { app.queue.iter().map(|e| e.athlete.clone()).collect() };
    let before = athletes(&ana);
    assert!(before.len() >= 2, "{before:?}");
    // An athlete whose sessions are not first in the plain (oldest first) queue.
    let last = before
        .iter()
        .find(|a| Some(*a) != before.first())
        .expect("two athletes in the queue")
        .clone();
    let mut j = handle(&path, "Ana");
    j.assign(&last, Some("Ben"), Utc::now()).unwrap();
    let ben = app_as(dir.path(), &path, "Ben");
    let got = athletes(&ben);
    let own = got.iter().take_while(|a| **a == last).count();
    assert_eq!(
        own,
        before.iter().filter(|a| **a == last).count(),
        "{got:?}"
    );
    assert_eq!(got.len(), before.len(), "the same sessions: {got:?}");
    // Ana, who has no athletes assigned, keeps the plain order.
    let ana = app_as(dir.path(), &path, "Ana");
    assert_eq!(athletes(&ana), before);
}
