//! Impossible time axes: refused when there is no usable time, isolated impossible
//! timestamps dropped with a warning, FIT system time (seconds from power-on) converted with
//! the file's own offset or refused.

mod fit_common;

use chrono::{Duration, TimeZone, Utc};
use splitdesk::demo::fit_writer::{self, FitOptions};
use splitdesk::demo::{gpx_writer, tcx_writer};
use splitdesk::ingest::{self, ParseError};
use splitdesk::model::{FileFormat, Session};

fn run() -> Session {
    fit_common::session(900, true)
}

fn ingest(bytes: &[u8], format: FileFormat) -> Result<Session, ParseError> {
    ingest::ingest_bytes(bytes, format, None)
}

/// Every sample at the session's start time (a placeholder timestamp).
fn frozen(mut s: Session) -> Session {
    let t0 = s.start;
    for t in &mut s.time {
        *t = t0;
    }
    for t in &mut s.t {
        *t = 0.0;
    }
    s.pauses.clear();
    s.laps.clear();
    s
}

#[test]
fn a_gpx_whose_points_share_one_timestamp_is_refused() {
    let s = frozen(run());
    let n = s.len();
    let err = ingest(&gpx_writer::write(&s), FileFormat::Gpx).unwrap_err();
    // Before: a 0-second session of the whole distance.
    assert_eq!(
        err.to_string(),
        format!(
            "no usable time axis: all {n} points share one timestamp (2024-05-04 06:30:00 UTC)"
        )
    );
}

#[test]
fn a_tcx_and_a_fit_whose_points_share_one_timestamp_are_refused() {
    let s = frozen(run());
    let n = s.len();
    let want = format!(
        "no usable time axis: all {n} points share one timestamp (2024-05-04 06:30:00 UTC)"
    );
    let err = ingest(&tcx_writer::write(&s), FileFormat::Tcx).unwrap_err();
    assert_eq!(err.to_string(), want);
    // FIT merges records sharing a second; the count is of the records in the file.
    let err = ingest(&fit_writer::write(&s), FileFormat::Fit).unwrap_err();
    assert_eq!(err.to_string(), want);
}

#[test]
fn an_isolated_far_future_fit_timestamp_is_dropped_and_flagged() {
    let mut s = run();
    let n = s.len();
    let last = s.time.len() - 1;
    // A saturated clock: 2125.
    s.time[last] = Utc.with_ymd_and_hms(2125, 6, 1, 0, 0, 0).unwrap();
    s.t[last] = (s.time[last] - s.start).num_seconds() as f64;
    let got = ingest(&fit_writer::write(&s), FileFormat::Fit).unwrap();
    // Before: a 101-year session.
    assert_eq!(got.len(), n - 1);
    assert_eq!(got.start, fit_common::start());
    assert!(got.duration_s() < 1000.0, "{}", got.duration_s());
    assert_eq!(got.warnings.len(), 1, "{:?}", got.warnings);
    assert!(
        got.warnings[0].starts_with(
            "1 sample with an impossible timestamp was dropped (e.g. 2125-06-01 00:00:00 UTC, "
        ),
        "{}",
        got.warnings[0]
    );
    got.check_invariants().unwrap();
}

#[test]
fn an_isolated_gpx_point_at_the_unix_epoch_is_dropped_and_flagged() {
    let mut s = run();
    s.time[0] = Utc.with_ymd_and_hms(1970, 1, 1, 0, 0, 0).unwrap();
    let got = ingest(&gpx_writer::write(&s), FileFormat::Gpx).unwrap();
    assert_eq!(got.len(), s.len() - 1);
    assert_eq!(got.start, fit_common::start() + Duration::seconds(1));
    assert_eq!(got.t[0], 0.0);
    assert!(
        got.warnings[0]
            .starts_with("1 sample with an impossible timestamp was dropped (e.g. 1970-01-01"),
        "{:?}",
        got.warnings
    );
}

#[test]
fn a_gpx_entirely_before_2000_is_refused() {
    let mut s = run();
    let back = Utc.with_ymd_and_hms(2024, 5, 4, 6, 30, 0).unwrap()
        - Utc.with_ymd_and_hms(1990, 1, 1, 0, 0, 0).unwrap();
    s.start -= back;
    for t in &mut s.time {
        *t -= back;
    }
    let n = s.len();
    let err = ingest(&gpx_writer::write(&s), FileFormat::Gpx).unwrap_err();
    assert_eq!(
        err.to_string(),
        format!(
            "no usable time axis: all {n} timestamps are outside 2000-01-01 to 2100-01-01 \
             (first 1990-01-01 00:00:00 UTC)"
        )
    );
}

/// A FIT file whose timestamps count from power-on: 1000 s before the first sample.
fn system_time_file(correlation: bool) -> (Session, Vec<u8>) {
    let s = run();
    let fit_start = (s.start.timestamp() - splitdesk::ingest::fit::FIT_EPOCH_UNIX_S) as u32;
    let opts = FitOptions {
        system_time_offset: Some(fit_start - 1000),
        correlation,
        ..FitOptions::default()
    };
    let bytes = fit_writer::write_with(&s, opts);
    (s, bytes)
}

#[test]
fn fit_system_time_is_converted_with_the_timestamp_correlation_message() {
    let (s, bytes) = system_time_file(true);
    let plain = ingest(&fit_writer::write(&s), FileFormat::Fit).unwrap();
    let mut got = ingest(&bytes, FileFormat::Fit).unwrap();
    // Before: the session started on 1989-12-31 at 00:16:40.
    assert_eq!(got.start, fit_common::start());
    assert_eq!(
        got.warnings,
        vec![
            "timestamps counted from device power-on were converted to UTC with the file's \
             time offset"
                .to_string()
        ]
    );
    got.warnings.clear();
    got.content_hash.clone_from(&plain.content_hash);
    assert_eq!(got, plain);
}

#[test]
fn fit_system_time_without_an_offset_is_refused() {
    let (_, bytes) = system_time_file(false);
    let err = ingest(&bytes, FileFormat::Fit).unwrap_err();
    assert_eq!(
        err.to_string(),
        "no usable time axis: the FIT timestamps count from device power-on (system time) \
         and the file gives no offset to UTC"
    );
}

#[test]
fn a_fit_record_stamped_near_the_fit_epoch_is_dropped_and_flagged() {
    let mut s = run();
    // 1989-12-31 00:00:05: the "136-year session dated 1989".
    s.time[0] = Utc.with_ymd_and_hms(1989, 12, 31, 0, 0, 5).unwrap();
    let got = ingest(&fit_writer::write(&s), FileFormat::Fit).unwrap();
    assert_eq!(got.len(), s.len() - 1);
    assert_eq!(got.start, fit_common::start() + Duration::seconds(1));
    assert!(got.duration_s() < 1000.0, "{}", got.duration_s());
    assert_eq!(got.warnings.len(), 1, "{:?}", got.warnings);
    assert!(
        got.warnings[0].starts_with(
            "1 sample with an impossible timestamp was dropped (e.g. 1989-12-31 00:00:05 UTC, "
        ),
        "{}",
        got.warnings[0]
    );
}
