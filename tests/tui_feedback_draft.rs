//! The workstation's draft after the reveal: built from the coach's scores and the note,
//! shown whole (wrapped, never cut at the pane's edge), also while editing.

mod tui_support;

use crossterm::event::KeyCode;
use tui_support::*;

#[test]
fn the_draft_uses_the_scores_and_reads_whole_in_the_pane() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = app_with(dir.path());
    // Scores 3 3 4 4 2 and the verdict (v: met), then the reveal.
    grade_and_reveal(&mut app);
    let o = app.open.as_ref().expect("open");
    let draft = o.feedback.as_ref().expect("draft").text();
    // The coach's best reps are praised by number; the low one is where the advice goes.
    assert!(
        draft.contains("Reps 3 and 4 were the pick of the set."),
        "{draft}"
    );
    assert!(draft.contains("Rep 5 is the one to look at"), "{draft}");
    assert!(draft.contains("Next time,"), "{draft}");
    // The longest paragraph is wider than the pane: its last word still shows.
    let longest = draft.lines().max_by_key(|l| l.chars().count()).unwrap();
    assert!(longest.chars().count() > 100, "{longest}");
    let last_word = longest.split_whitespace().last().unwrap();
    // (A tall terminal: at 48 rows the pane shows the draft's first lines and scrolls
    // while editing.)
    let s = screen(&mut app, 160, 90);
    assert!(s.contains(last_word), "{last_word:?} not on screen:\n{s}");
    // The note ("legs felt like lead") is answered, not quoted.
    assert!(draft.contains("You said your legs felt heavy"), "{draft}");
    // Editing: the cursor at the end of the longest line is on screen, on a wrapped row.
    ch(&mut app, 'f');
    let row = draft.lines().position(|l| l == longest).unwrap();
    for _ in 0..row {
        key(&mut app, KeyCode::Down);
    }
    key(&mut app, KeyCode::End);
    let s = screen(&mut app, 160, 48);
    assert!(
        s.contains(last_word),
        "{last_word:?} not on screen while editing:\n{s}"
    );
}
