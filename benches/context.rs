//! A session in its context, for an athlete with 1,000 sessions in the journal: the lookup of
//! the earlier runs of the same workout (card index, shape matching, the cards of the runs
//! found, the comparison) and the week strip, from the journal's session cards alone.
//!
//! The 1,000 sessions are the demo roster's six weeks of one athlete (analysed once, as the
//! journal would hold them) repeated 39 times, six weeks apart, under new ids.

use std::hint::black_box;
use std::path::Path;

use chrono::{Duration, Utc};
use criterion::{criterion_group, criterion_main, Criterion};
use splitdesk::analysis::card::SessionCard;
use splitdesk::journal::{CardCache, Journal, SessionRecord, SummaryCache};
use splitdesk::roster::Roster;

const ATHLETE: &str = "ansel-marchetti";
const COPIES: i64 = 39;

struct Fixture {
    _dir: tempfile::TempDir,
    roster: Roster,
    journal: Journal,
    /// The latest session with a workout shape, and the latest easy run.
    structured: String,
    easy: String,
}

fn fixture() -> Fixture {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let demo_roster = Roster::open(&demo).expect("the demo roster opens");
    let demo_athlete = demo_roster.athlete(ATHLETE).expect("demo athlete");
    let base: Vec<SessionCard> = demo_athlete
        .activities
        .iter()
        .filter_map(|act| splitdesk::workspace::analyse_activity(demo_athlete, act).ok())
        .filter_map(|a| SessionCard::build(&a.session_id, &a.review, Some(&a.session)))
        .collect();
    assert!(base.len() >= 20, "demo athlete has its sessions");

    // A roster with the athlete's profile and no files: the lookup reads none.
    let dir = tempfile::tempdir().expect("temp dir");
    let athlete_dir = dir.path().join(ATHLETE);
    std::fs::create_dir_all(athlete_dir.join("activities")).expect("folders");
    std::fs::copy(
        demo.join(ATHLETE).join("athlete.toml"),
        athlete_dir.join("athlete.toml"),
    )
    .expect("profile");
    std::fs::copy(demo.join("roster.toml"), dir.path().join("roster.toml")).expect("roster");
    let roster = Roster::open(dir.path()).expect("bench roster opens");
    let digest = roster
        .athlete(ATHLETE)
        .expect("bench athlete")
        .inputs_digest
        .clone();

    let mut journal = Journal::open_in_memory().expect("journal");
    let (mut structured, mut easy) = (String::new(), String::new());
    for copy in 0..COPIES {
        for card in &base {
            let mut c = card.clone();
            let shift = Duration::weeks(6 * (copy - COPIES + 1));
            c.start += shift;
            c.day += shift;
            let stem = c.session_id.rsplit('/').next().unwrap_or("run").to_string();
            c.session_id = format!(
                "{ATHLETE}/{}-copy{copy}-{}",
                c.day,
                &stem[10.min(stem.len())..]
            );
            if c.shape.is_some() {
                structured = c.session_id.clone();
            } else if c.kind == splitdesk::analysis::kind::SessionKind::Easy {
                easy = c.session_id.clone();
            }
            let record = SessionRecord {
                session_id: c.session_id.clone(),
                athlete_id: ATHLETE.to_string(),
                file_path: athlete_dir.join("activities").join(format!("{stem}.fit")),
                content_hash: format!("hash-{}", c.session_id),
                start: c.start,
                summary: Some(SummaryCache {
                    json: "{}".into(),
                    analysis_version: splitdesk::analysis::review::ANALYSIS_VERSION,
                    work_intervals: c.reps.len() as u32,
                    card: Some(CardCache {
                        json: serde_json::to_string(&c).expect("card json"),
                        shape_json: c
                            .shape
                            .as_ref()
                            .map(|s| serde_json::to_string(s).expect("shape json")),
                        kind: c.kind.as_str().to_string(),
                        day: c.day.to_string(),
                        inputs_digest: digest.clone(),
                    }),
                }),
            };
            journal
                .upsert_session(&record, Utc::now())
                .expect("session recorded");
        }
    }
    Fixture {
        _dir: dir,
        roster,
        journal,
        structured,
        easy,
    }
}

fn bench_context(c: &mut Criterion) {
    let f = fixture();
    let athlete = f.roster.athlete(ATHLETE).expect("bench athlete");
    let n = f
        .journal
        .card_index(
            ATHLETE,
            &athlete.inputs_digest,
            splitdesk::analysis::review::ANALYSIS_VERSION,
        )
        .expect("index")
        .len();
    assert!(n >= 1000, "{n} sessions");
    // The lookups find what they are for: five earlier runs each.
    for id in [&f.structured, &f.easy] {
        let c = splitdesk::context::comparison(&f.journal, athlete, id).expect("comparison");
        assert_eq!(c.earlier().count(), 5, "{id}");
    }
    let mut g = c.benchmark_group("context_1000_sessions");
    g.bench_function("earlier_runs_structured", |b| {
        b.iter(|| {
            black_box(
                splitdesk::context::comparison(&f.journal, athlete, &f.structured)
                    .expect("comparison"),
            )
        })
    });
    g.bench_function("earlier_runs_easy", |b| {
        b.iter(|| {
            black_box(
                splitdesk::context::comparison(&f.journal, athlete, &f.easy).expect("comparison"),
            )
        })
    });
    g.bench_function("week_strip", |b| {
        let today = Utc::now().date_naive();
        b.iter(|| {
            black_box(
                splitdesk::context::week_of_session(&f.journal, athlete, &f.structured, today)
                    .expect("week"),
            )
        })
    });
    g.finish();
}

criterion_group!(benches, bench_context);
criterion_main!(benches);
