//! A simulated run shared by the XML tests.
#![allow(dead_code)]

use chrono::{DateTime, Duration, TimeZone, Utc};
use splitdesk::model::{Channel, DeviceLap, FileFormat, Pause, Session, Sport};

/// Sample indices where heart rate is missing in the simulated run.
pub const HR_GAPS: [usize; 3] = [100, 101, 700];

pub fn start() -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2024, 5, 4, 7, 30, 0).unwrap()
}

/// 1 Hz, 20 minutes, along a straight line, altitude wave, HR with gaps, cadence, speed,
/// distance, two laps and a note. With `pause`, samples between 600 s and 640 s are missing
/// and a timer pause covers 599..640 s; laps then split at 800 s.
pub fn simulated(pause: bool) -> Session {
    let mut s = Session::empty(FileFormat::Fit, start());
    s.sport = Sport::Running;
    let secs: Vec<f64> = (0..1200)
        .map(|i| i as f64)
        .filter(|&t| !(pause && (600.0..640.0).contains(&t)))
        .collect();
    let n = secs.len();
    let mut dist = 0.0;
    let (mut d, mut v, mut hr, mut cad, mut alt, mut lat, mut lon) =
        (vec![], vec![], vec![], vec![], vec![], vec![], vec![]);
    for (k, &t) in secs.iter().enumerate() {
        let speed = 3.2 + 0.25 * (t / 60.0).sin();
        if k > 0 {
            dist += speed * (t - secs[k - 1]).min(1.0);
        }
        d.push(Some(dist));
        v.push(Some(speed));
        let h = 118.0 + 42.0 * (1.0 - (-t / 150.0).exp()) + 2.0 * (t / 40.0).sin();
        hr.push((!HR_GAPS.contains(&k)).then_some(h));
        cad.push(Some(170.0 + 5.0 * (t / 45.0).sin()));
        alt.push(Some(
            12.0 + 6.0 * (2.0 * std::f64::consts::PI * t / 300.0).sin(),
        ));
        lat.push(Some(52.370_216_5 + t * 2.1e-5));
        lon.push(Some(4.895_167_9 - t * 1.3e-5));
    }
    s.t = secs.clone();
    s.time = secs
        .iter()
        .map(|&t| start() + Duration::milliseconds((t * 1000.0) as i64))
        .collect();
    s.distance = Some(Channel::new(d));
    s.speed = Some(Channel::new(v));
    s.hr = Some(Channel::new(hr));
    s.cadence = Some(Channel::new(cad));
    s.altitude = Some(Channel::new(alt));
    s.lat = Some(Channel::new(lat));
    s.lon = Some(Channel::new(lon));
    let split = if pause { 800.0 } else { 600.0 };
    s.laps = vec![
        DeviceLap {
            start_s: 0.0,
            end_s: split,
            trigger: Some("manual".into()),
        },
        DeviceLap {
            start_s: split,
            end_s: secs[n - 1],
            trigger: Some("distance".into()),
        },
    ];
    if pause {
        s.pauses = vec![Pause {
            from_s: 599.0,
            to_s: 640.0,
        }];
    }
    s.note = Some("Easy 20' & strides <felt good>".into());
    s
}

/// Assert two channels agree within `tol`, with missing samples in the same places.
pub fn assert_channel(name: &str, got: &Option<Channel>, want: &Option<Channel>, tol: f64) {
    let (g, w) = match (got, want) {
        (Some(g), Some(w)) => (g, w),
        (None, None) => return,
        _ => panic!(
            "{name}: presence differs: got {:?}, want {:?}",
            got.is_some(),
            want.is_some()
        ),
    };
    assert_eq!(g.len(), w.len(), "{name}: length");
    for (i, (a, b)) in g.values.iter().zip(&w.values).enumerate() {
        match (a, b) {
            (Some(a), Some(b)) => assert!(
                (a - b).abs() <= tol,
                "{name}[{i}]: got {a}, want {b} (tolerance {tol})"
            ),
            (None, None) => {}
            _ => panic!("{name}[{i}]: got {a:?}, want {b:?}"),
        }
    }
}
