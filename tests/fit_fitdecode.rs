//! Cross-check our FIT writer and decoder against fitdecode (PyPI), an independent FIT decoder.
//!
//! Runs `$SPLITDESK_PYTHON tests/fitdecode_check.py FILE`. Without `SPLITDESK_PYTHON` the
//! test is skipped with a message, except under `CI=true`, where it fails.
//! Set up: `python3 -m venv /work/venv-fit && /work/venv-fit/bin/pip install fitdecode`.

mod fit_common;
mod fitdecode_support;

use fitdecode_support::{at, fitdecode_bytes as fitdecode, python, same};
use splitdesk::demo::fit_writer;
use splitdesk::ingest::fit;
use splitdesk::model::{Channel, Session, Sport};

fn cross_check(python: &str, session: &Session) {
    let bytes = fit_writer::write(session);
    let ours = fit::decode(&bytes).unwrap();
    let theirs = fitdecode(python, &bytes);
    let t0 = ours.start.timestamp();

    // Source: fitdecode (PyPI), an independent FIT decoder: record values.
    let recs = theirs["records"].as_array().unwrap();
    assert_eq!(recs.len(), ours.len());
    for (i, r) in recs.iter().enumerate() {
        assert_eq!(
            r["timestamp"].as_i64(),
            Some(ours.time[i].timestamp()),
            "timestamp {i}"
        );
        same("lat", at(&ours.lat, i), &r["lat"], 1e-12);
        same("lon", at(&ours.lon, i), &r["lon"], 1e-12);
        same("distance", at(&ours.distance, i), &r["distance"], 1e-9);
        same("speed", at(&ours.speed, i), &r["enhanced_speed"], 1e-9);
        same("heart_rate", at(&ours.hr, i), &r["heart_rate"], 0.0);
        // FIT cadence is strides/min; ours is steps/min.
        same(
            "cadence",
            at(&ours.cadence, i).map(|c| c / 2.0),
            &r["cadence"],
            1e-9,
        );
        same(
            "altitude",
            at(&ours.altitude, i),
            &r["enhanced_altitude"],
            1e-9,
        );
    }

    // Source: fitdecode (PyPI), an independent FIT decoder: laps.
    let laps = theirs["laps"].as_array().unwrap();
    assert_eq!(laps.len(), ours.laps.len());
    for (lap, mine) in laps.iter().zip(&ours.laps) {
        let start = lap["start_time"].as_i64().unwrap() - t0;
        assert_eq!(start as f64, mine.start_s);
        same(
            "lap end",
            Some(mine.end_s - mine.start_s),
            &lap["total_elapsed_time"],
            1e-9,
        );
        assert_eq!(lap["lap_trigger"].as_str(), mine.trigger.as_deref());
    }

    // Source: fitdecode (PyPI), an independent FIT decoder: timer events -> pauses.
    let mut pauses = Vec::new();
    let mut stopped = None;
    for e in theirs["events"].as_array().unwrap() {
        assert_eq!(e["event"], "timer");
        let ts = e["timestamp"].as_i64().unwrap() - t0;
        match e["event_type"].as_str().unwrap() {
            "stop" | "stop_all" => stopped = Some(ts),
            "start" => {
                if let Some(from) = stopped.take() {
                    pauses.push((from as f64, ts as f64));
                }
            }
            other => panic!("unexpected event type {other}"),
        }
    }
    let mine: Vec<(f64, f64)> = ours.pauses.iter().map(|p| (p.from_s, p.to_s)).collect();
    assert_eq!(pauses, mine);

    // Source: fitdecode (PyPI), an independent FIT decoder: session sport.
    assert_eq!(
        Sport::from_name(theirs["sport"].as_str().unwrap()),
        ours.sport
    );
}

#[test]
fn fitdecode_reads_what_we_read() {
    let Some(python) = python() else { return };
    cross_check(&python, &fit_common::session(1800, false));
    cross_check(&python, &fit_common::session(700, true));

    let mut edge = fit_common::session(90, true);
    edge.laps.clear();
    edge.pauses.clear();
    let n = edge.len();
    edge.lon = Some(Channel::from_values(
        (0..n).map(|i| 179.999_99 - i as f64 * 0.000_001),
    ));
    edge.lat = Some(Channel::from_values(
        (0..n).map(|i| -33.9 - i as f64 * 1e-5),
    ));
    edge.altitude = Some(Channel::from_values((0..n).map(|i| -20.0 + i as f64 * 0.2)));
    edge.sport = Sport::Walking;
    cross_check(&python, &edge);
}
