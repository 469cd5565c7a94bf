//! Cross-check a sample of the demo roster's FIT files against fitdecode (PyPI), an
//! independent FIT decoder: record counts, timestamps and a few values per record, laps.
//!
//! Runs `$SPLITDESK_PYTHON tests/fitdecode_check.py FILE`. Without `SPLITDESK_PYTHON` the
//! test is skipped with a message, except under `CI=true`, where it fails.

mod fitdecode_support;

use fitdecode_support::{at, fitdecode_file as fitdecode, python, same};
use std::path::{Path, PathBuf};

use splitdesk::demo::scenario::{PlantedKind, Scenario};
use splitdesk::ingest::fit;

/// Five FIT files: smart-sampled, treadmill, the tired intervals, the downhill run, the
/// hot long run.
fn sample() -> Vec<PathBuf> {
    let scenario = Scenario::default_demo();
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let path = |athlete: &str, stem: &str| {
        root.join(athlete)
            .join("activities")
            .join(format!("{stem}.fit"))
    };
    let smart = scenario
        .find_planted(PlantedKind::SmartSampling)
        .unwrap()
        .athlete;
    let smart_stem = scenario
        .athlete(&smart)
        .unwrap()
        .sessions
        .iter()
        .find(|s| s.format == splitdesk::model::FileFormat::Fit && s.is_structured())
        .unwrap()
        .stem();
    let mut out = vec![path(&smart, &smart_stem)];
    for kind in [
        PlantedKind::Treadmill,
        PlantedKind::FatiguedIntervals,
        PlantedKind::DownhillRun,
        PlantedKind::HotLongRun,
    ] {
        let p = scenario.find_planted(kind).unwrap();
        out.push(path(&p.athlete, &p.stem.unwrap()));
    }
    out
}

#[test]
fn fitdecode_reads_the_demo_fit_files_as_we_do() {
    let Some(python) = python() else { return };
    let files = sample();
    assert_eq!(files.len(), 5);
    for path in files {
        let bytes = std::fs::read(&path).unwrap();
        let ours = fit::decode(&bytes).unwrap();
        let theirs = fitdecode(&python, &path);
        let name = path.display().to_string();

        // Source: fitdecode (PyPI), an independent FIT decoder: record values.
        let recs = theirs["records"].as_array().unwrap();
        assert_eq!(recs.len(), ours.len(), "{name}: record count");
        for (i, r) in recs.iter().enumerate() {
            assert_eq!(
                r["timestamp"].as_i64(),
                Some(ours.time[i].timestamp()),
                "{name}: timestamp {i}"
            );
            same("heart_rate", at(&ours.hr, i), &r["heart_rate"], 0.0);
            same("distance", at(&ours.distance, i), &r["distance"], 1e-9);
            same("speed", at(&ours.speed, i), &r["enhanced_speed"], 1e-9);
            same("lat", at(&ours.lat, i), &r["lat"], 1e-12);
            same(
                "altitude",
                at(&ours.altitude, i),
                &r["enhanced_altitude"],
                1e-9,
            );
        }

        // Source: fitdecode (PyPI), an independent FIT decoder: laps.
        let laps = theirs["laps"].as_array().unwrap();
        assert_eq!(laps.len(), ours.laps.len(), "{name}: laps");
        let t0 = ours.start.timestamp();
        for (lap, mine) in laps.iter().zip(&ours.laps) {
            assert_eq!(
                (lap["start_time"].as_i64().unwrap() - t0) as f64,
                mine.start_s,
                "{name}: lap start"
            );
        }
    }
}

#[test]
fn the_smart_sampled_file_really_is_irregular() {
    let path = sample().remove(0);
    let s = fit::decode(&std::fs::read(&path).unwrap()).unwrap();
    let gaps: Vec<f64> = s.t.windows(2).map(|w| w[1] - w[0]).collect();
    let max = gaps.iter().copied().fold(0.0, f64::max);
    let ones = gaps.iter().filter(|g| **g == 1.0).count();
    assert!(
        (5.0..=7.0).contains(&max),
        "{}: max gap {max}",
        path.display()
    );
    assert!(
        ones < gaps.len() / 2,
        "{}: {ones} of {} gaps are 1 s",
        path.display(),
        gaps.len()
    );
}
