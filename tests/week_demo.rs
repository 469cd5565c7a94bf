//! The week strip on the bundled demo roster: the planted missed sessions (a plan file, no
//! activity) are reported as missed and nothing else is; the runs without a plan (ansel's
//! GPX easy runs among them) are extra and nothing else is. Skipped (with a message) when
//! the roster is not in the tree.

use std::collections::BTreeSet;
use std::path::PathBuf;

use chrono::{NaiveDate, Utc};
use splitdesk::demo::scenario::{PlantedKind, Scenario};
use splitdesk::workspace::Workspace;

fn demo_roster() -> Option<PathBuf> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    dir.join("roster.toml").exists().then_some(dir)
}

fn d(s: &str) -> NaiveDate {
    NaiveDate::parse_from_str(s, "%Y-%m-%d").unwrap()
}

#[test]
fn planted_missed_sessions_are_missed_and_unplanned_runs_extra() {
    let Some(root) = demo_roster() else {
        eprintln!("skipped: no demo-athletes/ roster in the tree");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let mut ws = Workspace::open(&root, Some(&dir.path().join("journal.sqlite"))).unwrap();
    ws.sync(Utc::now(), |_, _| {}).unwrap();
    let scenario = Scenario::default_demo();
    // Four days after the scenario's last day: every plan of the six weeks is in the past.
    let today = d("2026-12-03");

    let mut missed = BTreeSet::new();
    let mut extra = BTreeSet::new();
    let mut unread = BTreeSet::new();
    for spec in &scenario.athletes {
        let athlete = ws.roster.athlete(&spec.id).unwrap();
        // Three strips cover the six weeks (10-19 .. 11-30).
        for centre in ["2026-10-26", "2026-11-09", "2026-11-23"] {
            let w = splitdesk::context::week_around(&ws.journal, athlete, d(centre), None, today)
                .unwrap();
            for day in &w.days {
                for p in &day.missed {
                    missed.insert(format!("{}/{}", spec.id, p.file));
                }
                for p in &day.not_analysed {
                    unread.insert(p.activity.clone().unwrap());
                }
                for s in day.sessions.iter().filter(|s| s.extra) {
                    extra.insert(s.session_id.clone());
                }
            }
        }
    }
    let planted: BTreeSet<String> = scenario
        .planted()
        .into_iter()
        .filter(|p| p.kind == PlantedKind::MissedSession)
        .map(|p| format!("{}/{}.toml", p.athlete, p.stem.unwrap()))
        .collect();
    assert_eq!(planted.len(), 3);
    assert_eq!(missed, planted);
    // The damaged file was run as planned: its plan is not missed, the day says it cannot
    // be read.
    let damaged = scenario.find_planted(PlantedKind::Truncated).unwrap();
    assert_eq!(
        unread,
        BTreeSet::from([format!("{}/{}", damaged.athlete, damaged.stem.unwrap())])
    );
    // Extra: exactly the scenario's runs written without a plan file (the damaged file has
    // no analysis, so no card, and is not among them: it has a plan).
    let unplanned: BTreeSet<String> = scenario
        .athletes
        .iter()
        .flat_map(|a| {
            a.sessions
                .iter()
                .filter(|s| !s.plan_file)
                .map(move |s| format!("{}/{}", a.id, s.stem()))
        })
        .collect();
    assert_eq!(extra, unplanned);
    for id in [
        "ansel-marchetti/2026-11-06-easy-run",
        "ansel-marchetti/2026-11-20-easy-run",
    ] {
        assert!(extra.contains(id), "{id}");
    }

    // The week around oren's unplanned easy run names the tempo he skipped the day before.
    let oren = ws.roster.athlete("oren-falkner").unwrap();
    let w = splitdesk::context::week_of_session(
        &ws.journal,
        oren,
        "oren-falkner/2026-11-25-easy-run",
        today,
    )
    .unwrap();
    assert_eq!(
        w.text[0],
        "5 sessions in the 7 days before, 1 missed (Tempo on Tue 2026-11-24)"
    );
    let day = w.days.iter().find(|x| x.date == d("2026-11-24")).unwrap();
    assert_eq!(day.missed[0].file, "2026-11-24-tempo.toml");
    assert!(w
        .days
        .iter()
        .any(|x| x.sessions.iter().any(|s| s.current && s.extra)));
}
