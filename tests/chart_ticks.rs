//! The exported chart's axis ticks sit at round values: pace on 10 or 15 s steps (half or
//! whole minutes over wide ranges), heart rate on 5 or 10 bpm steps; the SVG labels them.

use std::path::Path;

use splitdesk::export::chart::{
    hr_ticks, model, pace_ticks, round_ticks, svg, HR_STEPS, MAX_TICKS, PACE_STEPS,
};
use splitdesk::model::units::format_clock;
use splitdesk::roster::Roster;

/// The step between consecutive ticks, checked to be constant.
fn step_of(ticks: &[f64]) -> f64 {
    assert!(ticks.len() >= 2, "at least two ticks: {ticks:?}");
    let step = ticks[1] - ticks[0];
    for w in ticks.windows(2) {
        assert!(((w[1] - w[0]) - step).abs() < 1e-9, "even steps: {ticks:?}");
    }
    step
}

#[test]
fn narrow_pace_range_ticks_every_10_or_15_seconds() {
    // An easy run's axis: 4:52 to 5:38 per km.
    let t = round_ticks(292.0, 338.0, &PACE_STEPS);
    assert_eq!(t, vec![300.0, 310.0, 320.0, 330.0]);
    // 4:40 to 5:55: 10 s steps would be 8 ticks, so 15 s.
    let t = round_ticks(280.0, 355.0, &PACE_STEPS);
    assert_eq!(t, vec![285.0, 300.0, 315.0, 330.0, 345.0]);
    assert_eq!(
        t.iter().map(|&p| format_clock(p)).collect::<Vec<_>>(),
        ["4:45", "5:00", "5:15", "5:30", "5:45"]
    );
}

#[test]
fn wide_pace_range_ticks_on_half_or_whole_minutes() {
    // A session with fast repeats and slow recoveries: 3:15 to 7:00 per km.
    let t = round_ticks(195.0, 420.0, &PACE_STEPS);
    assert_eq!(t, vec![240.0, 300.0, 360.0, 420.0]);
    let t = round_ticks(200.0, 330.0, &PACE_STEPS);
    assert_eq!(t, vec![210.0, 240.0, 270.0, 300.0, 330.0]);
}

#[test]
fn hr_ticks_every_5_or_10_bpm() {
    assert_eq!(
        round_ticks(131.0, 158.0, &HR_STEPS),
        vec![135.0, 140.0, 145.0, 150.0, 155.0]
    );
    assert_eq!(
        round_ticks(96.0, 181.0, &HR_STEPS),
        vec![100.0, 120.0, 140.0, 160.0, 180.0]
    );
    assert_eq!(
        round_ticks(118.0, 176.0, &HR_STEPS),
        vec![120.0, 130.0, 140.0, 150.0, 160.0, 170.0]
    );
    // The order of the bounds does not matter; an empty range gives at most one tick.
    assert_eq!(
        round_ticks(158.0, 131.0, &HR_STEPS),
        round_ticks(131.0, 158.0, &HR_STEPS)
    );
    assert!(round_ticks(f64::NAN, 150.0, &HR_STEPS).is_empty());
}

#[test]
fn demo_sessions_export_round_ticks() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let roster = Roster::open(&root).expect("demo roster");
    let ids = [
        "ansel-marchetti/2026-10-19-easy-run",
        "ansel-marchetti/2026-10-24-long-run",
        "ansel-marchetti/2026-10-29-hill-repeats",
    ];
    for id in ids {
        let (athlete, act) = roster.find_session(id).expect(id);
        let a = splitdesk::workspace::analyse_activity(athlete, act).expect("analyse");
        let m = model(&a.session, &a.review, &[], athlete.profile.units);
        let pace = pace_ticks(&m);
        let hr = hr_ticks(&m);
        let ps = step_of(&pace);
        let hs = step_of(&hr);
        assert!(PACE_STEPS.contains(&ps), "{id}: pace step {ps}");
        assert!(HR_STEPS.contains(&hs), "{id}: HR step {hs}");
        assert!(pace.len() <= MAX_TICKS && hr.len() <= MAX_TICKS);
        for p in &pace {
            assert_eq!(p % ps, 0.0, "{id}: pace tick {p} on a multiple of {ps}");
            assert!(
                *p >= m.pace_range.1 && *p <= m.pace_range.0,
                "{id}: {p} on the axis"
            );
        }
        for h in &hr {
            assert_eq!(h % hs, 0.0, "{id}: HR tick {h}");
            assert!(*h >= m.hr_range.0 && *h <= m.hr_range.1);
        }
        // The SVG labels exactly these values.
        let doc = svg(&m, 1200, 520);
        for p in &pace {
            let label = format!(">{}</text>", format_clock(*p));
            assert!(doc.contains(&label), "{id}: {label} in the SVG");
        }
        for h in &hr {
            let label = format!(">{h:.0}</text>");
            assert!(doc.contains(&label), "{id}: {label} in the SVG");
        }
        // An easy run's pace axis is narrow: 10 or 15 s steps.
        if id.ends_with("easy-run") {
            assert!(ps <= 15.0, "{id}: easy run pace step {ps}");
        }
    }
}
