//! The week around a session on a roster built for the test: planned days without
//! activities (missed), activities without plans (extra), a double day whose two runs both
//! took the day's one plan, and a plan for today (upcoming). Run through the real path
//! (sessions analysed and recorded in a journal, then `context::week_around`) and through
//! the binary (`splitdesk week ... --json` and text). Activities are made with our own
//! simulator and FIT writer: self-consistency data, not an outside reference.

mod cli_support;

use std::collections::BTreeMap;
use std::path::Path;

use chrono::{Duration, NaiveDate, TimeZone, Utc};
use splitdesk::demo::fit_writer;
use splitdesk::demo::simulate::{simulate, SimInput};
use splitdesk::model::{AthleteProfile, Plan, Units};
use splitdesk::workspace::Workspace;

const ID: &str = "ada-lund";

const ATHLETE_TOML: &str = r#"name = "Ada Lund"
sex = "female"
birth_year = 1992
hr_max = 188
hr_rest = 48
threshold_pace = "4:20/km"
units = "km"
[paces]
easy = "5:30/km"
marathon = "4:50/km"
half = "4:35/km"
10k = "4:15/km"
5k = "4:05/km"
"#;

const TEMPO: &str = "15:00 easy; 20:00 @ threshold; 10:00 easy";
const REPS: &str = "15:00 easy; 5 x 3:00 @ 5k / 2:00 jog; 10:00 easy";

fn profile() -> AthleteProfile {
    splitdesk::roster::parse_profile(ATHLETE_TOML, ID, Units::Km).unwrap()
}

fn d(s: &str) -> NaiveDate {
    NaiveDate::parse_from_str(s, "%Y-%m-%d").unwrap()
}

fn plan_file(dir: &Path, name: &str, title: &str, date: &str, steps: &str) {
    std::fs::write(
        dir.join("plans").join(format!("{name}.toml")),
        format!("title = \"{title}\"\ndate = {date}\nsteps = \"{steps}\"\n"),
    )
    .unwrap();
}

fn activity(dir: &Path, stem: &str, hour: u32, steps: &str, seed: u64) {
    let day = d(&stem[..10]);
    let plan = Plan {
        title: String::new(),
        purpose: String::new(),
        date: None,
        steps: splitdesk::plan::parse_line(steps).unwrap(),
    };
    let mut input = SimInput::new(profile(), plan, seed);
    input.start = Utc.from_utc_datetime(&day.and_hms_opt(hour, 0, 0).unwrap());
    let out = simulate(&input);
    std::fs::write(
        dir.join("activities").join(format!("{stem}.fit")),
        fit_writer::write(&out.session),
    )
    .unwrap();
}

/// The test roster. The strip is centred on 2026-11-18 (a Wednesday):
/// - the four weeks before: an easy run (10-20, planned), a long run (10-27, planned), an
///   unplanned easy run (11-03) and a tempo (11-09, planned);
/// - the strip: long run 11-13 (planned); 11-14 easy planned, not run (missed); 11-16 a
///   double day, reps in the morning and a shake-out in the evening, one plan dated that
///   day and paired with neither by name; 11-17 an unplanned jog (extra); 11-18 the tempo
///   (the centre); 11-19 easy planned, not run (missed); 11-20 an unplanned run (extra);
///   11-25 hills planned and not run.
fn write_roster(root: &Path) {
    let a = root.join(ID);
    std::fs::create_dir_all(a.join("activities")).unwrap();
    std::fs::create_dir_all(a.join("plans")).unwrap();
    std::fs::write(root.join("roster.toml"), "name = \"Week Testers\"\n").unwrap();
    std::fs::write(a.join("athlete.toml"), ATHLETE_TOML).unwrap();

    plan_file(
        &a,
        "2026-10-20-easy",
        "Easy run",
        "2026-10-20",
        "30:00 easy",
    );
    activity(&a, "2026-10-20-easy", 7, "30:00 easy", 1);
    plan_file(
        &a,
        "2026-10-27-long",
        "Long run",
        "2026-10-27",
        "1:20:00 easy",
    );
    activity(&a, "2026-10-27-long", 7, "1:20:00 easy", 2);
    activity(&a, "2026-11-03-easy", 7, "30:00 easy", 3);
    plan_file(&a, "2026-11-09-tempo", "Tempo", "2026-11-09", TEMPO);
    activity(&a, "2026-11-09-tempo", 7, TEMPO, 4);

    plan_file(
        &a,
        "2026-11-13-long",
        "Long run",
        "2026-11-13",
        "1:20:00 easy",
    );
    activity(&a, "2026-11-13-long", 7, "1:20:00 easy", 5);
    plan_file(
        &a,
        "2026-11-14-easy",
        "Easy run",
        "2026-11-14",
        "35:00 easy",
    );
    plan_file(
        &a,
        "2026-11-16-sharpen",
        "Sharpening reps",
        "2026-11-16",
        REPS,
    );
    activity(&a, "2026-11-16-reps", 7, REPS, 6);
    activity(&a, "2026-11-16-shakeout", 18, "20:00 easy", 7);
    activity(&a, "2026-11-17-jog", 7, "25:00 easy", 8);
    plan_file(&a, "2026-11-18-tempo", "Tempo", "2026-11-18", TEMPO);
    activity(&a, "2026-11-18-tempo", 7, TEMPO, 9);
    plan_file(
        &a,
        "2026-11-19-easy",
        "Easy run",
        "2026-11-19",
        "30:00 easy",
    );
    activity(&a, "2026-11-20-run", 7, "30:00 easy", 10);
    plan_file(
        &a,
        "2026-11-25-hills",
        "Hill repeats",
        "2026-11-25",
        "15:00 easy; 6 x 1:00 @ 5k / 2:00 jog; 10:00 easy",
    );
}

/// Each session's load (TRIMP) and plan file from its own review, analysed afresh from the
/// file: independent of the cards the week is built from.
fn reviews(root: &Path) -> BTreeMap<String, (NaiveDate, f64, Option<String>)> {
    let roster = splitdesk::roster::Roster::open(root).unwrap();
    let athlete = roster.athlete(ID).unwrap();
    athlete
        .activities
        .iter()
        .map(|act| {
            let a = splitdesk::workspace::analyse_activity(athlete, act).unwrap();
            (
                act.stem.clone(),
                (
                    d(&act.stem[..10]),
                    a.review.trimp.unwrap(),
                    a.review.plan_file.clone(),
                ),
            )
        })
        .collect()
}

fn find<'a>(
    w: &'a splitdesk::analysis::week::Week,
    date: &str,
) -> &'a splitdesk::analysis::week::WeekDay {
    w.days.iter().find(|x| x.date == d(date)).unwrap()
}

#[test]
fn the_week_through_the_journal() {
    let dir = tempfile::tempdir().unwrap();
    let root = dir.path().join("roster");
    write_roster(&root);
    let journal = dir.path().join("coach/journal.sqlite");
    let mut ws = Workspace::open(&root, Some(&journal)).unwrap();
    let report = ws.sync(Utc::now(), |_, _| {}).unwrap();
    assert_eq!(
        (report.sessions, report.problems.len()),
        (10, 0),
        "{report:?}"
    );
    let athlete = ws.roster.athlete(ID).unwrap().clone();
    let centre = d("2026-11-18");
    let today = d("2026-11-25");
    let w = splitdesk::context::week_around(
        &ws.journal,
        &athlete,
        centre,
        Some("ada-lund/2026-11-18-tempo"),
        today,
    )
    .unwrap();
    assert_eq!((w.from, w.to), (d("2026-11-11"), today));

    // The double day: both runs were analysed against the one plan of the day (neither is
    // paired with it by name); the strip counts the reps as planned, the shake-out as extra.
    let rev = reviews(&root);
    assert_eq!(
        rev["2026-11-16-reps"].2.as_deref(),
        Some("2026-11-16-sharpen.toml")
    );
    assert_eq!(
        rev["2026-11-16-shakeout"].2.as_deref(),
        Some("2026-11-16-sharpen.toml")
    );
    let dd = find(&w, "2026-11-16");
    let flags: Vec<(&str, bool)> = dd
        .sessions
        .iter()
        .map(|s| (s.session_id.as_str(), s.extra))
        .collect();
    assert_eq!(
        flags,
        [
            ("ada-lund/2026-11-16-reps", false),
            ("ada-lund/2026-11-16-shakeout", true)
        ]
    );
    assert!(dd.missed.is_empty());

    // Missed: the planned days with no run before today; upcoming: today's plan.
    let missed: Vec<(NaiveDate, &str)> = w
        .days
        .iter()
        .flat_map(|x| x.missed.iter().map(|p| (p.date, p.file.as_str())))
        .collect();
    assert_eq!(
        missed,
        [
            (d("2026-11-14"), "2026-11-14-easy.toml"),
            (d("2026-11-19"), "2026-11-19-easy.toml")
        ]
    );
    assert_eq!(w.missed, 2);
    assert_eq!(find(&w, "2026-11-25").upcoming[0].title, "Hill repeats");
    // Extra: the shake-out, the jog and the run of the 20th.
    let extra: Vec<&str> = w
        .days
        .iter()
        .flat_map(|x| x.sessions.iter().filter(|s| s.extra))
        .map(|s| s.session_id.as_str())
        .collect();
    assert_eq!(
        extra,
        [
            "ada-lund/2026-11-16-shakeout",
            "ada-lund/2026-11-17-jog",
            "ada-lund/2026-11-20-run"
        ]
    );
    assert_eq!(w.extra, 3);

    // Loads: each day's load is its sessions' TRIMP, from their own reviews.
    for day in &w.days {
        let want: f64 = rev
            .values()
            .filter(|(date, _, _)| *date == day.date)
            .map(|(_, l, _)| l)
            .sum();
        assert!(
            (day.load - want).abs() < 1e-9,
            "{}: {} vs {want}",
            day.date,
            day.load
        );
    }
    // The week (11-12 .. 11-18) against the four 7-day blocks before (10-15 .. 11-11),
    // as the rolling averages of methods.md §9: A = mean(L[t-6..t]) over daily loads, and
    // here a chronic mean over the 28 days before the acute week (the uncoupled form,
    // with a 28-day window); the ratio A/C is the week's load over the mean week.
    let daily = |t: NaiveDate| -> f64 {
        rev.values()
            .filter(|(date, _, _)| *date == t)
            .map(|(_, l, _)| l)
            .sum()
    };
    let acute: f64 = (0..7)
        .map(|k| daily(centre - Duration::days(k)))
        .sum::<f64>()
        / 7.0;
    let chronic: f64 = (7..35)
        .map(|k| daily(centre - Duration::days(k)))
        .sum::<f64>()
        / 28.0;
    let week: f64 = [
        "2026-11-13-long",
        "2026-11-16-reps",
        "2026-11-16-shakeout",
        "2026-11-17-jog",
        "2026-11-18-tempo",
    ]
    .iter()
    .map(|s| rev[*s].1)
    .sum();
    let before: f64 = [
        "2026-10-20-easy",
        "2026-10-27-long",
        "2026-11-03-easy",
        "2026-11-09-tempo",
    ]
    .iter()
    .map(|s| rev[*s].1)
    .sum();
    assert!((w.week_load - week).abs() < 1e-9);
    assert!((w.week_load - 7.0 * acute).abs() < 1e-9);
    assert!((w.previous_weeks_mean_load.unwrap() - before / 4.0).abs() < 1e-9);
    assert!((w.load_ratio.unwrap() - acute / chronic).abs() < 1e-12);
    assert_eq!(w.previous_weeks_without_sessions, 0);
    assert!(!w.week_load_lower_bound);

    // The last hard session before the tempo: the double day, 2 days before; the last long
    // run: 11-13, 5 days before.
    let h = w.last_hard.as_ref().unwrap();
    assert_eq!((h.day, h.days_before), (d("2026-11-16"), 2));
    let l = w.last_long.as_ref().unwrap();
    assert_eq!(
        (l.session_id.as_str(), l.days_before),
        ("ada-lund/2026-11-13-long", 5)
    );
    assert_eq!(
        w.text[0],
        "4 sessions in the 7 days before, 1 missed (Easy run on Sat 2026-11-14), 2 without a plan"
    );
    assert_eq!(
        w.text[1],
        "1 session in the 7 days after, 1 missed (Easy run on Thu 2026-11-19), 1 without a \
         plan, 1 planned and not run yet (Hill repeats on Wed 2026-11-25)"
    );
    assert_eq!(
        w.text[2],
        format!(
            "Load {:.0} this week, {:.1} x the last four weeks' mean ({:.0})",
            week,
            acute / chronic,
            before / 4.0
        )
    );
    assert!(
        w.text[3].starts_with("Last hard session 2 days before ("),
        "{}",
        w.text[3]
    );
    assert!(
        w.text[3].ends_with(", last long run 5 days before"),
        "{}",
        w.text[3]
    );
}

#[test]
fn the_week_through_the_binary() {
    let r = cli_support::TempRoster::new(write_roster);
    // A plan for today: upcoming in an athlete's week centred on today.
    let today = Utc::now().date_naive();
    let a = r.roster.join(ID);
    plan_file(
        &a,
        &format!("{today}-tempo"),
        "Tempo",
        &today.to_string(),
        TEMPO,
    );

    let (code, out, err) = r.run(&["week", "ada-lund/2026-11-18-tempo", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["schema"], "splitdesk.week/1");
    for key in [
        "athlete",
        "centre",
        "session_id",
        "today",
        "from",
        "to",
        "days",
        "week_load",
        "previous_weeks_mean_load",
        "load_ratio",
        "last_hard",
        "last_long",
        "week_load_lower_bound",
        "previous_weeks_without_sessions",
        "missed",
        "extra",
        "text",
    ] {
        assert!(v.get(key).is_some(), "missing {key}");
    }
    assert_eq!(v["centre"], "2026-11-18");
    // Today is after 11-25: the strip runs its full 7 days after, and the hills are missed.
    assert_eq!(v["to"], "2026-11-25");
    assert_eq!(v["missed"], 3);
    assert_eq!(v["extra"], 3);
    let days = v["days"].as_array().unwrap();
    assert_eq!(days.len(), 15);
    let missed: Vec<&str> = days
        .iter()
        .flat_map(|x| x["missed"].as_array().unwrap())
        .map(|p| p["file"].as_str().unwrap())
        .collect();
    assert_eq!(
        missed,
        [
            "2026-11-14-easy.toml",
            "2026-11-19-easy.toml",
            "2026-11-25-hills.toml"
        ]
    );
    let rev = reviews(&r.roster);
    let centre_day = days.iter().find(|x| x["date"] == "2026-11-18").unwrap();
    let s = &centre_day["sessions"][0];
    assert_eq!(s["current"], true);
    assert_eq!(s["kind"], "tempo");
    assert_eq!(s["plan_title"], "Tempo");
    assert!((s["load"].as_f64().unwrap() - rev["2026-11-18-tempo"].1).abs() < 1e-9);
    let week: f64 = [
        "2026-11-13-long",
        "2026-11-16-reps",
        "2026-11-16-shakeout",
        "2026-11-17-jog",
        "2026-11-18-tempo",
    ]
    .iter()
    .map(|s| rev[*s].1)
    .sum();
    assert!((v["week_load"].as_f64().unwrap() - week).abs() < 1e-9);

    // Text: a line per session, missed plan or rest day, then the plain words.
    let (code, out, err) = r.run(&["week", "ada-lund/2026-11-18-tempo"]);
    assert_eq!(code, 0, "{err}");
    assert!(out.starts_with(
        "Week around ada-lund/2026-11-18-tempo (Ada Lund), Wed 2026-11-11 to Wed 2026-11-25\n"
    ));
    assert!(out.contains("\n  Sat 2026-11-14  missed "), "{out}");
    assert!(out.contains("\n  Wed 2026-11-11  rest\n"), "{out}");
    assert!(out.contains("\n> Wed 2026-11-18  tempo "), "{out}");
    assert!(out.contains(" km "), "{out}");
    assert!(out.contains("no plan (extra)"), "{out}");
    assert!(
        out.contains(
            "\n\n4 sessions in the 7 days before, 1 missed (Easy run on Sat 2026-11-14), 2 \
             without a plan\n"
        ),
        "{out}"
    );

    // An athlete's week centred on today: today's plan is upcoming, not missed.
    let (code, out, err) = r.run(&["week", "ada-lund", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["centre"], today.to_string());
    assert_eq!(v["session_id"], serde_json::Value::Null);
    let last = v["days"].as_array().unwrap().last().unwrap().clone();
    assert_eq!(last["date"], today.to_string());
    assert_eq!(last["upcoming"][0]["title"], "Tempo");
    assert_eq!(last["missed"].as_array().unwrap().len(), 0);

    // --date centres an athlete's week on a day.
    let (code, out, err) = r.run(&["week", "ada-lund", "--date", "2026-11-15", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(
        (v["from"].as_str(), v["to"].as_str()),
        (Some("2026-11-08"), Some("2026-11-22"))
    );
    assert_eq!(v["missed"], 2);
}

#[test]
fn week_errors_are_one_line() {
    let r = cli_support::TempRoster::new(write_roster);
    for (args, want) in [
        (
            &["week", "nobody"][..],
            "error: no athlete \"nobody\" in the roster",
        ),
        (
            &["week", "ada-lund/2026-01-01-none"][..],
            "error: no session",
        ),
        (
            &["week", "ada-lund", "--date", "18.11.2026"][..],
            "error: --date \"18.11.2026\": expected a date like 2026-11-03",
        ),
        (
            &["week", "ada-lund/2026-11-18-tempo", "--date", "2026-11-18"][..],
            "error: --date goes with an athlete",
        ),
    ] {
        let (code, out, err) = r.run(args);
        assert_eq!(code, 2, "{args:?}: {out}{err}");
        assert_eq!(err.lines().count(), 1, "{args:?}: {err}");
        assert!(err.starts_with(want), "{args:?}: {err}");
    }
}
