//! `splitdesk trends` end to end through the real binary on the tiny test roster (sessions of
//! November 2026; `--weeks 520` keeps them in the window for years to come).

mod roster_support;

use assert_cmd::Command;
use roster_support::write_roster;

fn run(args: &[&str]) -> (i32, String, String) {
    let dir = tempfile::tempdir().unwrap();
    let roster = dir.path().join("roster");
    write_roster(&roster);
    let out = Command::cargo_bin("splitdesk")
        .unwrap()
        .env("SPLITDESK_CONFIG", "/nonexistent/config.toml")
        .arg("--roster")
        .arg(&roster)
        .arg("--journal")
        .arg(dir.path().join("journal.sqlite"))
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn trends_json_has_the_stable_keys() {
    let (code, out, err) = run(&["trends", "tova-renn", "--weeks", "520", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    for key in [
        "weekly",
        "daily_load",
        "acute_chronic_ratio",
        "fitness",
        "fatigue",
        "readiness",
        "efficiency_trend",
        "long_run_decoupling",
        "best_efforts",
        "critical_speed_mps",
        "d_prime_m",
        "predictions",
        "cautions",
        "notes",
    ] {
        assert!(v.get(key).is_some(), "missing {key}");
    }
    assert_eq!(v["weekly"].as_array().unwrap().len(), 520);
    assert_eq!(v["sessions"], 2);
    let be = v["best_efforts"].as_array().unwrap();
    assert!(!be.is_empty());
    for b in be {
        for key in ["duration_s", "speed_mps", "session", "date"] {
            assert!(b.get(key).is_some(), "best effort without {key}");
        }
        assert!(b["session"].as_str().unwrap().starts_with("tova-renn/"));
    }
    // The two runs carry a load from their heart rate.
    let load: f64 = v["daily_load"]
        .as_array()
        .unwrap()
        .iter()
        .map(|d| d["value"].as_f64().unwrap())
        .sum();
    assert!(load > 0.0);
}

#[test]
fn trends_text_shows_every_series() {
    let (code, out, err) = run(&["trends", "tova-renn", "--weeks", "520"]);
    assert_eq!(code, 0, "{err}");
    for heading in [
        "Weekly volume",
        "Load (daily TRIMP)",
        "Efficiency on easy runs",
        "Decoupling of long runs",
        "Best efforts",
        "Predicted race times",
        "Notes",
    ] {
        assert!(out.contains(heading), "missing {heading}:\n{out}");
    }
    assert!(out.contains("/km"), "paces in the athlete's units:\n{out}");
    // Empty weeks print a plain zero, never a negative one.
    assert!(out.contains("     0    0.00 km"), "{out}");
    assert!(!out.contains("-0.0"), "negative zero:\n{out}");
    // Best efforts under about 11 minutes: equivalent VO2max starred, with the caveat.
    assert!(
        out.contains("* equivalent VO2max of efforts under 11 minutes reads high"),
        "{out}"
    );
    let one_minute = out
        .lines()
        .find(|l| l.trim_start().starts_with("1:00 "))
        .unwrap_or_else(|| panic!("no 1:00 best effort:\n{out}"));
    assert!(one_minute.contains('*'), "{one_minute}");
}

#[test]
fn unknown_athlete_is_one_line_and_non_zero() {
    let (code, _, err) = run(&["trends", "nobody"]);
    assert_ne!(code, 0);
    assert!(err.contains("nobody"), "{err}");
    assert_eq!(err.trim().lines().count(), 1, "{err}");
}

#[test]
fn trends_syncs_only_the_athlete_it_is_about() {
    let dir = tempfile::tempdir().unwrap();
    let roster = dir.path().join("roster");
    write_roster(&roster);
    // A second athlete: the same files under another id.
    let from = roster.join("tova-renn");
    for sub in ["", "activities", "plans", "notes"] {
        std::fs::create_dir_all(roster.join("ulla-berg").join(sub)).unwrap();
        for e in std::fs::read_dir(from.join(sub)).unwrap() {
            let e = e.unwrap();
            if e.file_type().unwrap().is_file() {
                std::fs::copy(
                    e.path(),
                    roster.join("ulla-berg").join(sub).join(e.file_name()),
                )
                .unwrap();
            }
        }
    }
    let journal = dir.path().join("journal.sqlite");
    let out = Command::cargo_bin("splitdesk")
        .unwrap()
        .env("SPLITDESK_CONFIG", "/nonexistent/config.toml")
        .arg("--roster")
        .arg(&roster)
        .arg("--journal")
        .arg(&journal)
        .args(["trends", "ulla-berg", "--weeks", "520", "--json"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0), "{out:?}");
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["sessions"], 2);
    let j = splitdesk::journal::Journal::open_for_roster(&journal, &roster).unwrap();
    assert_eq!(j.sessions(Some("ulla-berg")).unwrap().len(), 2);
    assert_eq!(j.sessions(Some("tova-renn")).unwrap().len(), 0);
}
