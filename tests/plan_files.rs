//! Every example plan in assets/plans parses, and the two file forms agree.

use std::path::PathBuf;

use chrono::NaiveDate;
use splitdesk::model::{Amount, RecoveryMode, SegmentKind, Step, Target};
use splitdesk::plan::{self, describe_line, parse_line, parse_toml, PlanFileError};

fn plans_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("assets/plans")
}

#[test]
fn every_example_plan_parses_and_round_trips() {
    let mut n = 0;
    for entry in std::fs::read_dir(plans_dir()).expect("assets/plans exists") {
        let path = entry.expect("dir entry").path();
        if path.extension().and_then(|e| e.to_str()) != Some("toml") {
            continue;
        }
        let plan = plan::load(&path).unwrap_or_else(|e| panic!("{e}"));
        n += 1;
        assert!(!plan.title.is_empty(), "{}", path.display());
        assert!(!plan.purpose.is_empty(), "{}", path.display());
        assert!(plan.date.is_some(), "{} has a date", path.display());
        assert!(!plan.expand().is_empty());
        let line = describe_line(&plan.steps);
        assert_eq!(
            parse_line(&line).as_ref(),
            Ok(&plan.steps),
            "{}: {line}",
            path.display()
        );
    }
    assert!(n >= 6, "only {n} example plans");
}

#[test]
fn the_base_example_file() {
    let plan = plan::load(plans_dir().join("2026-10-14-half-marathon-rhythm.toml"))
        .unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(plan.title, "Half-marathon rhythm");
    assert_eq!(plan.date, NaiveDate::from_ymd_opt(2026, 10, 14));
    assert_eq!(plan.work_count(), 10);
    assert_eq!(plan.expand().len(), 1 + 5 * 2 + 4 + 1);
}

#[test]
fn structured_and_shorthand_forms_agree() {
    let structured = r#"
title = "Half-marathon rhythm"
purpose = "p"

[[step]]
duration = "12:00"
pace = "easy"

[[step]]
repeat = 5
recovery = { duration = "2:00", mode = "jog" }

[[step.work]]
duration = "3:00"
pace = "half"

[[step.work]]
duration = "1:00"
pace = "5k"

[[step]]
duration = "8:00"
pace = "easy"
"#;
    let shorthand = r#"
title = "Half-marathon rhythm"
purpose = "p"
steps = "12:00 easy; 5 x (3:00 @ half, 1:00 @ 5k) / 2:00 jog; 8:00 easy"
"#;
    let a = parse_toml(structured, None).unwrap_or_else(|e| panic!("{e}"));
    let b = parse_toml(shorthand, None).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(a, b);
    assert!(matches!(&a.steps[0], Step::Single(s) if s.kind == SegmentKind::Warmup));
    assert!(matches!(&a.steps[2], Step::Single(s) if s.kind == SegmentKind::Cooldown));
}

#[test]
fn single_segment_repeat_and_tolerances_in_tables() {
    let text = r#"
title = "t"
date = "2026-10-22"

[[step]]
repeat = 12
distance = "200m"
pace = "4:00/km"
tolerance = 2

[step.recovery]
distance = "200m"
mode = "walk"
"#;
    let plan = parse_toml(text, None).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(plan.date, NaiveDate::from_ymd_opt(2026, 10, 22));
    let Step::Repeat {
        count,
        work,
        recovery,
    } = &plan.steps[0]
    else {
        panic!("not a repeat: {:?}", plan.steps)
    };
    assert_eq!(*count, 12);
    assert_eq!(work.len(), 1);
    assert_eq!(work[0].amount, Amount::Distance(200.0));
    assert_eq!(
        work[0].target,
        Target::PaceRange {
            slow_mps: 1000.0 / 242.0,
            fast_mps: 1000.0 / 238.0
        }
    );
    let rec = recovery.as_ref().expect("recovery");
    assert_eq!(rec.kind, SegmentKind::Recovery);
    assert_eq!(rec.mode, Some(RecoveryMode::Walk));
}

#[test]
fn date_and_title_come_from_the_file_name() {
    let plan = parse_toml(
        "steps = \"30:00 easy\"\n",
        Some("plans/2026-11-02-easy-jog.toml"),
    )
    .unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(plan.date, NaiveDate::from_ymd_opt(2026, 11, 2));
    assert_eq!(plan.title, "Easy jog");
    assert_eq!(plan.purpose, "");
}

#[test]
fn load_errors_carry_the_path() {
    let dir = tempfile::tempdir().expect("tempdir");
    let missing = dir.path().join("nope.toml");
    let err = plan::load(&missing).expect_err("missing file");
    assert!(matches!(err, PlanFileError::Io { .. }));
    assert!(err.to_string().starts_with(&missing.display().to_string()));

    let bad = dir.path().join("2026-10-14-bad.toml");
    std::fs::write(&bad, "title = \"t\"\nsteps = \"3:00 @ 4:05\"\n").expect("write");
    let err = plan::load(&bad).expect_err("bad file");
    assert_eq!(
        err.to_string(),
        format!(
            "{}: 2:21: expected \"/km\" or \"/mi\" after the pace \"4:05\", found end of input",
            bad.display()
        )
    );
}
