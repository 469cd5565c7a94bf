//! Finding texts on odd sessions (invented data, self-consistency only).

use chrono::{TimeZone, Utc};
use splitdesk::analysis::analyze;
use splitdesk::model::{AthleteProfile, Channel, FileFormat, Session, Sport};

#[test]
fn a_session_without_speed_or_distance_says_so_in_plain_words() {
    // Found by the property tests: the no-plan finding used to read "read from the speed
    // and heart rate as no speed or distance: the intervals could not be found."
    let start = Utc.with_ymd_and_hms(2026, 3, 1, 7, 0, 0).unwrap();
    let mut s = Session::empty(FileFormat::Fit, start);
    s.sport = Sport::Running;
    s.t = (0..600).map(f64::from).collect();
    s.time =
        s.t.iter()
            .map(|&x| start + chrono::Duration::seconds(x as i64))
            .collect();
    s.hr = Some(Channel::from_values(
        (0..600).map(|i| 120.0 + f64::from(i) / 20.0),
    ));
    let r = analyze(&s, None, &AthleteProfile::bare("a"));
    let text = r
        .findings
        .iter()
        .find(|f| f.code == "inferred")
        .map(|f| f.text.clone())
        .unwrap();
    assert_eq!(
        text,
        "No plan for this session, and no speed or distance in the file: the session is \
         shown as one piece."
    );
}
