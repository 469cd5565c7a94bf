//! A tiny invented roster for the command and workstation tests: one athlete, an interval
//! session with a plan and a note, and an easy run. Built with our own simulator and FIT
//! writer (self-consistency data, not an outside reference).
#![allow(dead_code)]

use std::path::Path;

use chrono::{TimeZone, Utc};
use splitdesk::demo::fit_writer;
use splitdesk::demo::simulate::{simulate, Conditions, SimInput};
use splitdesk::model::{AthleteProfile, Plan, Units};

/// A word that appears only in the athlete's note, so a test can look for leaks.
pub const NOTE_MARKER: &str = "zebraflute";

pub const REPS_ID: &str = "tova-renn/2026-11-03-reps";
pub const EASY_ID: &str = "tova-renn/2026-11-01-easy";

const ATHLETE_TOML: &str = r#"name = "Tova Renn"
sex = "female"
birth_year = 1990
hr_max = 190
hr_rest = 50
threshold_pace = "4:10/km"
units = "km"
[paces]
easy = "5:15/km"
marathon = "4:35/km"
half = "4:22/km"
10k = "4:05/km"
5k = "3:52/km"
"#;

const REPS_LINE: &str = "12:00 easy; 5 x 3:00 @ 5k / 2:00 jog; 8:00 easy";

fn profile() -> AthleteProfile {
    splitdesk::roster::parse_profile(ATHLETE_TOML, "tova-renn", Units::Km).unwrap()
}

/// Write the roster into `root`.
pub fn write_roster(root: &Path) {
    let a = root.join("tova-renn");
    std::fs::create_dir_all(a.join("activities")).unwrap();
    std::fs::create_dir_all(a.join("plans")).unwrap();
    std::fs::create_dir_all(a.join("notes")).unwrap();
    std::fs::write(root.join("roster.toml"), "name = \"Test Harriers\"\n").unwrap();
    std::fs::write(a.join("athlete.toml"), ATHLETE_TOML).unwrap();
    std::fs::write(
        a.join("plans/2026-11-03-reps.toml"),
        format!(
            "title = \"5k-pace repeats\"\npurpose = \"Hold 5k pace on every repeat; keep the jogs easy.\"\nsteps = \"{REPS_LINE}\"\n"
        ),
    )
    .unwrap();
    std::fs::write(
        a.join("notes/2026-11-03-reps.txt"),
        format!("Felt awful, legs like lead. {NOTE_MARKER} weather.\n"),
    )
    .unwrap();

    let plan = Plan {
        title: "5k-pace repeats".into(),
        purpose: String::new(),
        date: None,
        steps: splitdesk::plan::parse_line(REPS_LINE).unwrap(),
    };
    let mut input = SimInput::new(profile(), plan, 11);
    input.start = Utc.with_ymd_and_hms(2026, 11, 3, 7, 0, 0).unwrap();
    let out = simulate(&input);
    std::fs::write(
        a.join("activities/2026-11-03-reps.fit"),
        fit_writer::write(&out.session),
    )
    .unwrap();

    let easy = Plan {
        title: "Easy".into(),
        purpose: String::new(),
        date: None,
        steps: splitdesk::plan::parse_line("40:00 easy").unwrap(),
    };
    let mut input = SimInput::new(profile(), easy, 12);
    input.start = Utc.with_ymd_and_hms(2026, 11, 1, 8, 0, 0).unwrap();
    input.conditions = Conditions::default();
    let out = simulate(&input);
    std::fs::write(
        a.join("activities/2026-11-01-easy.fit"),
        fit_writer::write(&out.session),
    )
    .unwrap();
}
