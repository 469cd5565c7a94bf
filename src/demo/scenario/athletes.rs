//! The six invented athletes of the Orrendale Striders and their six weeks.
//!
//! Days are `(week, dow)` with week 1-6 and dow 0 = Monday .. 6 = Sunday.

use super::{AthleteSpec, Builder, Defaults, PlantedKind as P};
use crate::demo::simulate::{Pacing, Route, Sampling, Terrain};
use crate::model::{FileFormat, Sex, Units};

/// Club base: the riverside car park every route starts from (invented coordinates).
const BASE: (f64, f64) = (46.8123, 7.3456);

fn origin(d_north_m: f64, d_east_m: f64) -> (f64, f64) {
    let lat = BASE.0 + d_north_m / 111_195.0;
    let lon = BASE.1 + d_east_m / (111_195.0 * BASE.0.to_radians().cos());
    (lat, lon)
}

fn paces(list: [&str; 5]) -> Vec<(String, String)> {
    ["easy", "marathon", "half", "10k", "5k"]
        .iter()
        .zip(list)
        .map(|(n, p)| (n.to_string(), p.to_string()))
        .collect()
}

/// All six athletes (unsorted).
pub(super) fn all() -> Vec<AthleteSpec> {
    vec![tobias(), mira(), keziah(), ansel(), oren(), dagny()]
}

/// Fast young man, km, the club's quickest: good and poor tempo, a treadmill session.
fn tobias() -> AthleteSpec {
    let mut b = Builder::new(Defaults {
        origin: origin(0.0, 0.0),
        route: Route::Loop { length_m: 4200.0 },
        start_hm: (6, 15),
        sampling: Sampling::EverySecond,
        fitness_per_week: 0.0,
    });
    for w in 1..=6 {
        // Tuesday quality.
        match w {
            1 | 4 => {
                b.hills(w, 1, 8, 60, 120, 0.06);
            }
            2 | 5 => {
                b.short_reps(w, 1, 10, "200m", "2:55/km");
            }
            3 => {
                b.intervals(w, 1, 5, 180, 90);
            }
            _ => {
                b.short_reps(w, 1, 8, "200m", "2:55/km");
            }
        }
        let wed = b.easy(w, 2, if w == 3 { 30 } else { 40 });
        if w == 3 {
            // One TCX file, from a borrowed watch.
            wed.format(FileFormat::Tcx);
        }
        // Thursday quality.
        match w {
            2 => {
                b.tempo(w, 3, 20)
                    .temp(8.0)
                    .plant(
                        P::GoodExecution,
                        "good execution of the 20-minute tempo: even pace on target, cool day",
                    )
                    .plant(
                        P::NoteUnderstates,
                        "misleading note: a strong session the athlete calls awful",
                    )
                    .note(
                        "Awful. Legs were dead from the first step and I had to force every \
                         kilometre. Felt like I was running through sand. Not sure what is \
                         going on.",
                    );
            }
            3 => {
                b.progression(w, 3, 5, "1km")
                    .treadmill()
                    .plant(
                        P::Treadmill,
                        "treadmill session (no positions, no altitude)",
                    )
                    .note(
                        "Treadmill at the gym, storm outside. Belt set by feel, went up a \
                         notch each rep. Hot in there.",
                    );
            }
            4 => {
                b.tempo(w, 3, 20)
                    .temp(17.0)
                    .fatigue(0.5)
                    .pacing(Pacing::Fading)
                    .plant(
                        P::PoorExecution,
                        "poor execution of the same tempo: too fast early, fades (fatigue 0.5, 17 C)",
                    )
                    .note(
                        "Went through the first kilometres too hard and paid for it. Last \
                         eight minutes were a grind, pace slipping. Legs still heavy from \
                         Tuesday.",
                    );
            }
            6 => {
                b.easy(w, 3, 30).no_plan();
            }
            _ => {
                b.progression(w, 3, 5, "1km");
            }
        }
        if w == 6 {
            b.easy(w, 5, 20)
                .no_plan()
                .note("Shakeout with strides. Ready.");
            b.time_trial(w, 6, "10km", true).temp(7.0).note(
                "Race. Held back to 5k, then wound it up. Even splits, strong last two \
                 kilometres. Happy with that.",
            );
        } else {
            b.easy(w, 5, 35);
            b.long(w, 6, 75 + 5 * w).at(7, 30);
        }
    }
    AthleteSpec {
        id: "tobias-wrenfield".into(),
        name: "Tobias Wrenfield".into(),
        sex: Sex::Male,
        birth_year: 2001,
        hr_max: 196,
        hr_rest: 44,
        threshold_pace: "3:20/km".into(),
        units: Units::Km,
        paces: paces(["4:20/km", "3:42/km", "3:27/km", "3:15/km", "3:07/km"]),
        sessions: b.finish(),
        missed: Vec::new(),
        planted: Vec::new(),
    }
}

/// Teenager, km: the badly and well paced time trials, fresh and fatigued intervals.
fn mira() -> AthleteSpec {
    let mut b = Builder::new(Defaults {
        origin: origin(-350.0, 420.0),
        route: Route::Loop { length_m: 3100.0 },
        start_hm: (16, 30),
        sampling: Sampling::EverySecond,
        fitness_per_week: 0.0,
    });
    for w in 1..=6 {
        let mon = b.easy(w, 0, if w == 1 || w == 4 { 30 } else { 35 });
        if w == 1 || w == 4 {
            mon.format(FileFormat::Tcx);
        }
        if w == 1 {
            mon.note_in_file();
        }
        match w {
            1 | 4 => {
                b.hills(w, 1, 6, 90, 150, 0.05);
            }
            2 => {
                b.intervals(w, 1, 6, 180, 90)
                    .temp(9.0)
                    .plant(
                        P::GoodExecution,
                        "good execution of 6 x 3:00 at 5k pace: fresh, recoveries drop well",
                    )
                    .note("6 x 3 min done!! felt smooth, could have done another one tbh");
            }
            3 | 6 => {
                b.short_reps(w, 1, 12, "200m", "3:25/km");
            }
            _ => {
                b.intervals(w, 1, 6, 180, 90)
                    .fatigue(0.9)
                    .stretch_hr_lag(0.7)
                    .plant(
                        P::FatiguedIntervals,
                        "poor execution of the same intervals, fatigue 0.9: recovery troughs \
                         climb rep to rep, HR lag after each rep lengthens (to about 20 s \
                         by the last reps)",
                    )
                    .plant(
                        P::NoteOverstates,
                        "misleading note: a weak session the athlete calls great",
                    )
                    .note(
                        "best session in ages!!! felt SO strong, legs flying. exams are done \
                         so maybe that's it",
                    );
            }
        }
        if w == 6 {
            b.easy(w, 2, 35);
            b.miss_last("missed planned session: the easy run is planned and not run");
        }
        b.easy(w, 3, 40);
        match w {
            1 => {
                b.time_trial(w, 5, "5km", false)
                    .pacing(Pacing::SurgeAndFade)
                    .fatigue(1.0)
                    .plant(
                        P::BadlyPacedTimeTrial,
                        "badly paced 5 km time trial: surging, then a fade (fatigue 1.0)",
                    )
                    .note(
                        "ok so i went out with the boys and tried to hang on. kept surging \
                         past people then dying. last k was horrible. lesson learned??",
                    );
            }
            6 => {
                b.time_trial(w, 5, "5km", false)
                    .temp(8.0)
                    .plant(
                        P::WellPacedTimeTrial,
                        "well-paced 5 km time trial (even pacing)",
                    )
                    .note("5k tt!! paced it properly this time, even the whole way. so happy");
            }
            2 | 4 => {
                b.progression(w, 5, 4, "1km");
            }
            _ => {
                b.tempo(w, 5, 20);
            }
        }
        b.long(w, 6, if w == 6 { 60 } else { 70 }).at(8, 0);
    }
    let (sessions, missed) = b.finish_with_missed();
    AthleteSpec {
        id: "mira-castellan".into(),
        name: "Mira Castellan".into(),
        sex: Sex::Female,
        birth_year: 2007,
        hr_max: 203,
        hr_rest: 52,
        threshold_pace: "3:55/km".into(),
        units: Units::Km,
        paces: paces(["5:05/km", "4:22/km", "4:03/km", "3:48/km", "3:40/km"]),
        sessions,
        missed,
        planted: Vec::new(),
    }
}

/// Nurse, km: the downhill run, GPS jumps, the hot-day long run.
fn keziah() -> AthleteSpec {
    let mut b = Builder::new(Defaults {
        origin: origin(600.0, -800.0),
        route: Route::OutAndBack { length_m: 3500.0 },
        start_hm: (9, 10),
        sampling: Sampling::EverySecond,
        fitness_per_week: 0.0,
    });
    for w in 1..=6 {
        let tue = b.easy(w, 1, 40);
        if w == 3 {
            tue.gps_jumps(4)
                .plant(P::GpsJumps, "GPS jumps (4)")
                .note("Easy 40 after a night shift. Watch kept losing signal under the bridge.");
        }
        if w == 6 {
            tue.format(FileFormat::Gpx);
        }
        match w {
            1 => {
                b.hills(w, 2, 6, 75, 120, 0.07);
            }
            2 => {
                b.tempo(w, 2, 20);
            }
            3 => {
                b.short_reps(w, 2, 10, "200m", "4:10/km");
            }
            4 => {
                b.progression(w, 2, 4, "1km");
            }
            5 => {
                b.intervals(w, 2, 5, 180, 120);
            }
            _ => {}
        }
        if w == 6 {
            b.easy(w, 3, 30);
        }
        if w == 5 {
            b.easy(w, 3, 35);
            b.miss_last(
                "missed planned session: the easy run is planned (a plan file) and not run \
                 (no activity)",
            );
        }
        let fri = b.easy(w, 4, if w == 1 || w == 5 { 30 } else { 35 });
        if w == 1 || w == 5 {
            fri.format(FileFormat::Tcx);
        }
        if w == 1 {
            fri.note_in_file();
        }
        match w {
            2 => {
                b.long(w, 6, 70)
                    .title_purpose(
                        "Long run down the valley road",
                        "Point to point from the top car park: 4 km on the flat, then the long \
                         gentle drop to the river. Easy effort; let the hill carry you.",
                    )
                    .terrain(Terrain::Downhill {
                        grade: 0.025,
                        flat_m: 4000.0,
                    })
                    .route(Route::OutAndBack { length_m: 20_000.0 })
                    .temp(9.0)
                    .plant(
                        P::DownhillRun,
                        "long gentle downhill after a 4 km flat start (2.5 % down): negative \
                         decoupling",
                    )
                    .note(
                        "Valley road point to point, got a lift to the top. Felt easier and \
                         easier, heart rate kept dropping. Must be getting fitter!",
                    );
            }
            4 => {
                b.long(w, 6, 110)
                    .at(10, 30)
                    .temp(30.0)
                    .origin((38.2914, -0.7871))
                    .plant(
                        P::HotLongRun,
                        "hot-day long run: 30 C, 1:50:00 easy, decoupling well over 5 %",
                    )
                    .note(
                        "Long run while visiting my sister down south. 30 degrees by the end. \
                         Kept the pace easy but heart rate crept up and up. Drank everything \
                         I had.",
                    );
            }
            6 => {
                b.time_trial(w, 5, "10km", true).at(9, 0);
                b.long(w, 6, 60);
            }
            _ => {
                b.long(w, 6, 80 + 5 * (w % 3));
            }
        }
    }
    let (sessions, missed) = b.finish_with_missed();
    AthleteSpec {
        id: "keziah-brandt".into(),
        name: "Keziah Brandt".into(),
        sex: Sex::Female,
        birth_year: 1990,
        hr_max: 186,
        hr_rest: 50,
        threshold_pace: "4:45/km".into(),
        units: Units::Km,
        paces: paces(["6:05/km", "5:18/km", "4:55/km", "4:38/km", "4:26/km"]),
        sessions,
        missed,
        planted: Vec::new(),
    }
}

/// Returning runner, miles: easy-run efficiency improves every week.
fn ansel() -> AthleteSpec {
    let mut b = Builder::new(Defaults {
        origin: origin(-900.0, -250.0),
        route: Route::Loop { length_m: 3000.0 },
        start_hm: (12, 10),
        sampling: Sampling::EverySecond,
        fitness_per_week: 0.025,
    });
    for w in 1..=6 {
        // The two weekly easy runs: same length, same loop, same weather.
        b.easy(w, 0, 40).temp(11.0).at(12, 10);
        b.easy(w, 2, 40).temp(11.0).at(12, 10);
        match w {
            1 | 4 => {
                b.base(
                    w,
                    3,
                    super::SessionKind::Tempo,
                    "cruise-miles",
                    "Cruise miles",
                    "Three miles at threshold in one-mile pieces, short jogs. Even, controlled.",
                    "15:00 easy; 3 x 1mi @ threshold ±4 / 1:30 jog; 10:00 easy".into(),
                );
            }
            2 | 5 => {
                b.hills(w, 3, 6, 90, 150, 0.05);
            }
            3 => {
                b.progression(w, 3, 4, "1mi");
            }
            _ => {
                b.short_reps(w, 3, 8, "200m", "6:00/mi");
            }
        }
        if w == 3 || w == 5 {
            b.easy(w, 4, 30)
                .no_plan()
                .format(FileFormat::Gpx)
                .route(Route::OutAndBack { length_m: 2500.0 })
                .temp(12.0);
        }
        if w == 6 {
            b.time_trial(w, 6, "5mi", true).temp(9.0).note(
                "Five mile race. First race in four years. Ran the first mile scared and \
                 the last one less so. Knee fine.",
            );
        } else {
            b.long(w, 5, 70 + 4 * w).at(8, 40);
        }
    }
    let sessions = b.finish();
    AthleteSpec {
        id: "ansel-marchetti".into(),
        name: "Ansel Marchetti".into(),
        sex: Sex::Male,
        birth_year: 1979,
        hr_max: 178,
        hr_rest: 54,
        threshold_pace: "7:15/mi".into(),
        units: Units::Mi,
        paces: paces(["9:15/mi", "8:05/mi", "7:30/mi", "7:02/mi", "6:48/mi"]),
        sessions,
        missed: Vec::new(),
        planted: vec![(
            P::ImprovingEfficiency,
            "weeks 1-6".into(),
            "easy-run efficiency improves week by week (simulated threshold +2.5 %/week; \
             athlete.toml unchanged)"
                .into(),
        )],
    }
}

/// Terse, miles: the truncated file and the week-5 load jump.
fn oren() -> AthleteSpec {
    let mut b = Builder::new(Defaults {
        origin: origin(1200.0, 900.0),
        route: Route::Loop { length_m: 2600.0 },
        start_hm: (18, 5),
        sampling: Sampling::EverySecond,
        fitness_per_week: 0.0,
    });
    for w in 1..=6 {
        if w == 5 {
            // The jump: six sessions, longer and harder.
            b.easy(w, 0, 50);
            b.intervals(w, 1, 6, 180, 90).fatigue(0.3);
            b.easy(w, 2, 50).fatigue(0.3);
            b.tempo(w, 3, 30)
                .fatigue(0.7)
                .pacing(Pacing::Fading)
                .plant(
                    P::NoteOverstates,
                    "misleading note: a faded, weak tempo the athlete calls great",
                )
                .note("Great. Strong all the way.");
            b.easy(w, 5, 45).fatigue(0.5);
            b.long(w, 6, 100).fatigue(0.5).at(8, 0);
            continue;
        }
        let mon = b.easy(w, 0, 35);
        if w == 6 {
            mon.fatigue(0.4).note("Tired. Short one.");
            b.tempo(w, 1, 20);
            b.miss_last(
                "missed planned session: the tempo after the load jump is planned and not run",
            );
        }
        match w {
            1 | 3 => {
                b.tempo(w, 2, 15);
            }
            2 => {
                b.hills(w, 2, 5, 60, 120, 0.06);
            }
            4 => {
                b.progression(w, 2, 3, "1km");
            }
            _ => {
                b.easy(w, 2, 30).no_plan();
            }
        }
        let fri = b.easy(w, 4, 35);
        if w == 3 {
            fri.truncate(0.6)
                .plant(
                    P::Truncated,
                    "truncated FIT file (cut at 60 % of its bytes): the roster must report it, \
                     not crash",
                )
                .note("Watch died. Charged now.");
        }
        b.long(w, 6, if w == 6 { 50 } else { 60 + 2 * w }).at(8, 0);
    }
    let (sessions, missed) = b.finish_with_missed();
    AthleteSpec {
        id: "oren-falkner".into(),
        name: "Oren Falkner".into(),
        sex: Sex::Male,
        birth_year: 1984,
        hr_max: 181,
        hr_rest: 56,
        threshold_pace: "8:51/mi".into(),
        units: Units::Mi,
        paces: paces(["11:15/mi", "9:50/mi", "9:08/mi", "8:36/mi", "8:15/mi"]),
        sessions,
        missed,
        planted: vec![(
            P::LoadJump,
            "week 5".into(),
            "training load jumps: six longer and harder sessions after four short ones a week"
                .into(),
        )],
    }
}

/// Oldest member, miles, an older watch that records "smart": cadence lock, walk breaks.
fn dagny() -> AthleteSpec {
    let mut b = Builder::new(Defaults {
        origin: origin(-150.0, 1500.0),
        route: Route::Loop { length_m: 2200.0 },
        start_hm: (8, 20),
        sampling: Sampling::Smart { min_s: 1, max_s: 7 },
        fitness_per_week: 0.0,
    });
    for w in 1..=6 {
        let mon = b.easy(w, 0, 40);
        match w {
            1 | 4 => {
                mon.format(FileFormat::Gpx);
            }
            3 => {
                mon.cadence_lock(900.0, 1200.0)
                    .plant(
                        P::CadenceLock,
                        "optical HR locks onto cadence for 20 minutes",
                    )
                    .note(
                        "A grey, drizzly one. My heart rate seemed very high in the middle - \
                         the watch said 160-something while I was just pottering along. I \
                         didn't feel it at all, so I carried on.",
                    );
            }
            _ => {}
        }
        if w == 4 {
            mon.note_in_file();
        }
        match w {
            1 | 3 | 5 => {
                b.short_reps(w, 2, 8, "200m", "9:30/mi");
            }
            2 => {
                b.hills(w, 2, 5, 60, 120, 0.04);
            }
            4 => {
                b.tempo(w, 2, 15);
            }
            _ => {
                b.easy(w, 2, 30).no_plan().format(FileFormat::Tcx);
            }
        }
        let thu = b.easy(w, 3, 35);
        if w == 2 {
            thu.format(FileFormat::Gpx);
        }
        if w == 6 {
            b.time_trial(w, 5, "5km", false).temp(8.0);
        } else {
            b.long(w, 5, 55 + 3 * w).at(8, 0);
        }
    }
    AthleteSpec {
        id: "dagny-holloway".into(),
        name: "Dagny Holloway".into(),
        sex: Sex::Female,
        birth_year: 1968,
        hr_max: 163,
        hr_rest: 58,
        threshold_pace: "10:28/mi".into(),
        units: Units::Mi,
        paces: paces(["13:15/mi", "11:40/mi", "10:48/mi", "10:10/mi", "9:45/mi"]),
        sessions: b.finish(),
        missed: Vec::new(),
        planted: vec![(
            P::SmartSampling,
            "weeks 1-6".into(),
            "smart recording: a sample every 1-7 s instead of every second".into(),
        )],
    }
}
