//! Ingest benchmarks: a 3-hour 1 Hz run (10,800 records, every channel) as FIT bytes,
//! decoded by fitparser alone and by our full ingest path.

mod support;

use std::hint::black_box;

use criterion::{criterion_group, criterion_main, Criterion};
use splitdesk::demo::fit_writer;
use splitdesk::ingest::ingest_bytes;
use splitdesk::model::{Channel, DeviceLap, FileFormat, Session};

fn three_hour_run() -> Session {
    let mut s = support::three_hour_run();
    s.hr = Some(Channel::from_values(
        s.t.iter().map(|t| 130.0 + (t / 300.0).sin() * 20.0),
    ));
    s.cadence = Some(Channel::from_values(
        s.t.iter().map(|t| 172.0 + (t / 53.0).sin() * 8.0),
    ));
    s.altitude = Some(Channel::from_values(
        s.t.iter().map(|t| 40.0 + (t / 900.0).cos() * 30.0),
    ));
    s.lat = Some(Channel::from_values(
        s.t.iter().map(|t| 52.37 + 0.02 * (t / 800.0).sin()),
    ));
    s.lon = Some(Channel::from_values(
        s.t.iter().map(|t| 4.89 + 0.03 * (t / 800.0).cos()),
    ));
    s.laps = (0..18)
        .map(|k| DeviceLap {
            start_s: k as f64 * 600.0,
            end_s: ((k + 1) as f64 * 600.0).min((support::SAMPLES - 1) as f64),
            trigger: Some("time".into()),
        })
        .collect();
    s
}

fn bench(c: &mut Criterion) {
    let bytes = fit_writer::write(&three_hour_run());
    // The same file for the Python comparison (`benches/fitdecode_ratio.py`).
    let out = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("target/bench-fit_3h_1hz.fit");
    if let Err(e) = std::fs::write(&out, &bytes) {
        eprintln!("could not write {}: {e}", out.display());
    }
    let mut group = c.benchmark_group("fit_3h_1hz");
    group.bench_function("fitparser_from_bytes", |b| {
        b.iter(|| fitparser::from_bytes(black_box(&bytes)).map(|r| r.len()))
    });
    group.bench_function("splitdesk_ingest_bytes", |b| {
        b.iter(|| ingest_bytes(black_box(&bytes), FileFormat::Fit, None).map(|s| s.len()))
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
