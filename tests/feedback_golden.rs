//! Golden drafts: one per kind and verdict across the demo roster, read as a coach would
//! before they were accepted (each is a message one could send unedited or with one small
//! change). Review a changed snapshot by reading it, then accept it with
//! `INSTA_UPDATE=always cargo test --test feedback_golden`.

mod feedback_support;

use feedback_support::*;
use splitdesk::export::feedback::{draft, FeedbackStyle, Length};
use splitdesk::journal::PurposeVerdict::{self, Met, Missed, Partly};

fn golden(id: &str, verdict: PurposeVerdict, scores: &[u8], length: Length) -> String {
    let s = session(id);
    let n = s.review.work().count();
    assert_eq!(scores.len(), n, "{id}: {n} work intervals");
    let g = grades(&s.review, verdict, |k| scores[(k - 1) as usize]);
    let style = FeedbackStyle {
        coach: Some("Sam Adeyemi".into()),
        length,
        ..Default::default()
    };
    draft(&input(s, g, true), &style)
}

macro_rules! golden {
    ($name:ident, $id:expr, $verdict:expr, $scores:expr) => {
        golden!($name, $id, $verdict, $scores, Length::Full);
    };
    ($name:ident, $id:expr, $verdict:expr, $scores:expr, $len:expr) => {
        #[test]
        fn $name() {
            insta::assert_snapshot!(golden($id, $verdict, &$scores, $len));
        }
    };
}

golden!(
    intervals_met,
    "mira-castellan/2026-10-27-intervals",
    Met,
    [4, 5, 4, 4, 5, 4]
);
golden!(
    intervals_fading_partly,
    "mira-castellan/2026-11-17-intervals",
    Partly,
    [5, 4, 4, 3, 2, 2]
);
golden!(
    short_reps_missed_brief,
    "mira-castellan/2026-11-03-short-reps",
    Missed,
    [4, 3, 3, 3, 3, 2, 3, 3, 2, 3, 2, 2],
    Length::Brief
);
golden!(
    hills_met,
    "mira-castellan/2026-11-10-hill-repeats",
    Met,
    [4, 4, 4, 4, 4, 4]
);
golden!(
    hills_partly_brief,
    "dagny-holloway/2026-10-28-hill-repeats",
    Partly,
    [4, 4, 3, 3, 2],
    Length::Brief
);
golden!(
    progression_met,
    "mira-castellan/2026-10-31-progression-repeats",
    Met,
    [4, 4, 4, 5]
);
golden!(
    progression_treadmill_partly,
    "tobias-wrenfield/2026-11-05-progression-repeats",
    Partly,
    [4, 3, 3, 2, 2]
);
golden!(tempo_met, "oren-falkner/2026-11-04-tempo", Met, [5]);
golden!(tempo_missed, "dagny-holloway/2026-11-11-tempo", Missed, [2]);
golden!(race_met, "tobias-wrenfield/2026-11-29-race", Met, [5]);
golden!(
    time_trial_miles_partly,
    "dagny-holloway/2026-11-28-time-trial",
    Partly,
    [3]
);
golden!(
    time_trial_surged_missed,
    "mira-castellan/2026-10-24-time-trial",
    Missed,
    [2]
);
golden!(long_run_met, "keziah-brandt/2026-11-29-long-run", Met, []);
golden!(
    long_run_heavy_legs_partly,
    "dagny-holloway/2026-10-31-long-run",
    Partly,
    []
);
golden!(
    easy_heart_rate_caution_met,
    "dagny-holloway/2026-11-02-easy-run",
    Met,
    []
);
golden!(
    easy_brief_met,
    "ansel-marchetti/2026-11-09-easy-run",
    Met,
    [],
    Length::Brief
);
