//! The everyday-run test set: simulated runs of the kinds a coach sees most often, each with
//! the simulator's ground truth, written to file bytes by the demo writers and read back
//! through splitdesk's ingest, then analysed.
//!
//! The data is our own invention (self-consistency: the simulator is ours). The truth
//! definitions (moving time, distance, steady part, true decoupling) are documented on
//! [`splitdesk::demo::simulate::SteadyPart`] and [`splitdesk::demo::simulate::Truth`];
//! the harness is `tests/everyday_runs.rs`.
//!
//! What counts as a work interval to find:
//! - sets (track reps, fartlek): the simulator's true work intervals
//!   (`Truth.intervals` with kind `Work`);
//! - steady, progression and non-running sessions: none;
//! - races and time trials: one effort. The analysis may show the race as one work
//!   interval or as none; more than one is invented.
#![allow(dead_code)]

use std::collections::BTreeMap;

use splitdesk::analysis::review::Review;
use splitdesk::demo::simulate::{
    simulate, Faults, GpsNoise, Pacing, Route, Sampling, SimInput, SimOutput, Stop, Terrain,
};
use splitdesk::demo::{fit_writer, gpx_writer, tcx_writer};
use splitdesk::model::{AthleteProfile, DeviceLap, FileFormat, Plan, Session, Sport, Units};
use splitdesk::plan::parse_line;

/// What the session is, for the coach.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum Kind {
    /// One even effort (easy run, long run), possibly with standing or walking at the ends.
    Steady,
    /// Work intervals with recoveries (track reps, fartlek).
    Set,
    /// Faster every few minutes, no plan.
    Progression,
    /// A race or time trial: one hard effort, usually between a warm-up and a cool-down.
    Race,
    /// Not a run (a ride).
    NonRunning,
}

impl Kind {
    pub fn label(self) -> &'static str {
        match self {
            Kind::Steady => "steady",
            Kind::Set => "set",
            Kind::Progression => "progression",
            Kind::Race => "race",
            Kind::NonRunning => "non-running",
        }
    }
}

/// Device laps written into the file.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Laps {
    /// No laps (one lap over everything in TCX).
    None,
    /// Automatic laps every `metres` of recorded distance (a watch's auto-lap).
    Auto { metres: f64 },
}

/// One everyday run.
#[derive(Debug, Clone)]
pub struct Case {
    pub name: String,
    pub kind: Kind,
    /// What was run (the simulator follows `input.plan`, which may hold standing and
    /// walking segments the athlete never planned) and how it is recorded.
    pub input: SimInput,
    /// The plan the analysis is given: `None` for most everyday runs.
    pub analysis_plan: Option<Plan>,
    /// Leave the speed channel out of the file (many GPX files have none: the reader then
    /// derives speed from the positions).
    pub strip_speed: bool,
    pub laps: Laps,
}

impl Case {
    fn fmt(mut self, f: FileFormat) -> Case {
        self.input.format = f;
        self
    }
    fn terrain(mut self, t: Terrain) -> Case {
        self.input.conditions.terrain = t;
        self
    }
    /// Hills run at an even effort (flat heart rate, even hill-adjusted pace).
    fn even_hills(mut self, t: Terrain) -> Case {
        self.input.conditions.terrain = t;
        self.input.conditions.even_hill_effort = true;
        self
    }
    fn temp(mut self, c: f64) -> Case {
        self.input.conditions.temperature_c = c;
        self
    }
    fn pacing(mut self, p: Pacing) -> Case {
        self.input.conditions.pacing = p;
        self
    }
    fn smart(mut self) -> Case {
        self.input.conditions.sampling = Sampling::Smart { min_s: 1, max_s: 7 };
        self
    }
    fn mile(mut self) -> Case {
        self.input.profile = mile_profile();
        self
    }
    fn planned(mut self) -> Case {
        self.analysis_plan = Some(self.input.plan.clone());
        self
    }
    fn no_speed(mut self) -> Case {
        self.strip_speed = true;
        self
    }
    fn jitter(mut self, sd_m: f64) -> Case {
        self.input.conditions.standing_jitter = Some(GpsNoise {
            sd_m,
            corr_s: 20.0,
            smooth_s: 2.0,
        });
        self
    }
    fn gps(mut self, sd_m: f64, smooth_s: f64) -> Case {
        self.input.conditions.gps_noise = Some(GpsNoise {
            sd_m,
            corr_s: 30.0,
            smooth_s,
        });
        self
    }
    fn stops(mut self, at: &[(f64, f64)]) -> Case {
        self.input.conditions.stops = at
            .iter()
            .map(|&(at_s, dur_s)| Stop { at_s, dur_s })
            .collect();
        self
    }
    fn gaps(mut self, at: &[(f64, f64)]) -> Case {
        self.input.conditions.gaps = at
            .iter()
            .map(|&(at_s, dur_s)| Stop { at_s, dur_s })
            .collect();
        self
    }
    fn treadmill(mut self) -> Case {
        self.input.conditions.treadmill = true;
        self
    }
    fn dropouts(mut self, n: u32) -> Case {
        self.input.faults = Faults {
            hr_dropouts: n,
            ..Faults::default()
        };
        self
    }
    fn ride(mut self) -> Case {
        self.input.conditions.sport = Sport::Cycling;
        self.input.conditions.route = Route::Loop { length_m: 9000.0 };
        self
    }
    fn auto_laps(mut self, metres: f64) -> Case {
        self.laps = Laps::Auto { metres };
        self
    }
    fn out_and_back(mut self, m: f64) -> Case {
        self.input.conditions.route = Route::OutAndBack { length_m: m };
        self
    }
}

/// An invented km athlete: rest 50, max 190, threshold 4.0 m/s (4:10/km).
pub fn km_profile() -> AthleteProfile {
    let mut p = AthleteProfile::bare("everyday-km");
    p.hr_rest = Some(50.0);
    p.hr_max = Some(190.0);
    p.threshold_speed_mps = Some(4.0);
    p.units = Units::Km;
    p.paces = BTreeMap::from([
        ("easy".to_string(), 3.2),
        ("marathon".to_string(), 3.65),
        ("half".to_string(), 3.85),
        ("10k".to_string(), 4.15),
        ("5k".to_string(), 4.35),
        ("3k".to_string(), 4.6),
    ]);
    p
}

/// An invented mile athlete: rest 56, max 182, threshold 3.6 m/s (about 7:27/mi).
pub fn mile_profile() -> AthleteProfile {
    let mut p = AthleteProfile::bare("everyday-mi");
    p.hr_rest = Some(56.0);
    p.hr_max = Some(182.0);
    p.threshold_speed_mps = Some(3.6);
    p.units = Units::Mi;
    p.paces = BTreeMap::from([
        ("easy".to_string(), 2.85),
        ("marathon".to_string(), 3.25),
        ("half".to_string(), 3.45),
        ("10k".to_string(), 3.7),
        ("5k".to_string(), 3.9),
        ("3k".to_string(), 4.1),
    ]);
    p
}

fn plan(line: &str) -> Plan {
    Plan {
        title: "Everyday".into(),
        purpose: "Everyday run".into(),
        date: None,
        steps: parse_line(line).unwrap_or_else(|e| panic!("{line}: {e}")),
    }
}

fn case(name: &str, kind: Kind, line: &str, seed: u64) -> Case {
    Case {
        name: name.to_string(),
        kind,
        input: SimInput::new(km_profile(), plan(line), seed),
        analysis_plan: None,
        strip_speed: false,
        laps: Laps::None,
    }
}

/// Rolling hills whose steepest gradient is `peak` (0.05 = 5 %), crest to crest `wl` m:
/// amplitude = peak * wl / 2π.
fn rolling(peak: f64, wl: f64) -> Terrain {
    Terrain::Rolling {
        amplitude_m: peak * wl / std::f64::consts::TAU,
        wavelength_m: wl,
    }
}

use FileFormat::{Gpx, Tcx};
use Kind::{NonRunning, Progression, Race, Set, Steady};

/// The whole test set.
pub fn corpus() -> Vec<Case> {
    let mut v = vec![
        // ---- Steady runs on the flat.
        case("easy 45 flat", Steady, "45:00 easy", 101),
        case("easy 60 flat", Steady, "60:00 easy", 102).fmt(Tcx),
        case("easy 40 flat", Steady, "40:00 easy", 103).fmt(Gpx),
        case("long 90 flat 22C", Steady, "90:00 easy", 104).temp(22.0),
        case("long 100 hot 28C", Steady, "100:00 easy", 105)
            .temp(28.0)
            .fmt(Tcx),
        case("easy 50 mile", Steady, "50:00 easy", 106).mile(),
        case("easy 35 smart", Steady, "35:00 easy", 107)
            .smart()
            .fmt(Gpx),
        case("easy 60 auto-km laps", Steady, "60:00 easy", 108).auto_laps(1000.0),
        case("long 90 auto-mile laps", Steady, "90:00 easy", 109)
            .mile()
            .auto_laps(1609.344),
        case("easy 50 gpx noisy", Steady, "50:00 easy", 110)
            .fmt(Gpx)
            .no_speed()
            .gps(4.0, 5.0),
        // ---- Steady runs on rolling hills, even effort.
        case("rolling 3% easy 50", Steady, "50:00 easy", 111).even_hills(rolling(0.03, 1200.0)),
        case("rolling 5% easy 50", Steady, "50:00 easy", 112).even_hills(rolling(0.05, 1000.0)),
        case("rolling 8% easy 50", Steady, "50:00 easy", 113).even_hills(rolling(0.08, 800.0)),
        case("rolling 3% long 80", Steady, "80:00 easy", 114)
            .even_hills(rolling(0.03, 1600.0))
            .fmt(Tcx),
        case("rolling 5% long 80", Steady, "80:00 easy", 115)
            .even_hills(rolling(0.05, 1400.0))
            .fmt(Gpx),
        case("rolling 8% long 75", Steady, "75:00 easy", 116)
            .even_hills(rolling(0.08, 1000.0))
            .fmt(Tcx),
        case("rolling 5% mile gpx", Steady, "55:00 easy", 117)
            .even_hills(rolling(0.05, 900.0))
            .mile()
            .fmt(Gpx)
            .no_speed(),
        case("rolling 8% gps noise", Steady, "60:00 easy", 118)
            .even_hills(rolling(0.08, 700.0))
            .gps(4.0, 6.0)
            .out_and_back(3000.0),
        case("rolling 5% usual effort 50", Steady, "50:00 easy", 119)
            .terrain(rolling(0.05, 1000.0))
            .fmt(Tcx),
        case("rolling 8% usual effort 60", Steady, "60:00 easy", 120)
            .terrain(rolling(0.08, 800.0))
            .fmt(Gpx),
        case("long 70 surging", Steady, "70:00 easy", 138)
            .pacing(Pacing::Surging)
            .fmt(Tcx),
        case("long 80 fading", Steady, "80:00 easy", 139).pacing(Pacing::Fading),
        case("long 60 downhill 3%", Steady, "60:00 easy", 140)
            .terrain(Terrain::Downhill {
                grade: 0.03,
                flat_m: 2000.0,
            })
            .out_and_back(20_000.0),
        // ---- Standing at the start and/or end, watch recording.
        case(
            "stand 0:10 + easy 40",
            Steady,
            "rec 0:10 stand; 40:00 easy",
            121,
        ),
        case(
            "stand 1:00 + easy 45 gpx",
            Steady,
            "rec 1:00 stand; 45:00 easy",
            122,
        )
        .fmt(Gpx)
        .no_speed()
        .jitter(5.0),
        case(
            "stand 3:00 + easy 50",
            Steady,
            "rec 3:00 stand; 50:00 easy",
            123,
        )
        .fmt(Tcx),
        case(
            "easy 45 + stand 2:00",
            Steady,
            "45:00 easy; rec 2:00 stand",
            124,
        ),
        case(
            "easy 40 + stand 5:00 gpx",
            Steady,
            "40:00 easy; rec 5:00 stand",
            125,
        )
        .fmt(Gpx)
        .no_speed()
        .jitter(6.0),
        case(
            "stand 0:30 + easy 50 + stand 1:00",
            Steady,
            "rec 0:30 stand; 50:00 easy; rec 1:00 stand",
            126,
        )
        .fmt(Tcx),
        case(
            "stand 0:05 + easy 30 + stand 0:20",
            Steady,
            "rec 0:05 stand; 30:00 easy; rec 0:20 stand",
            127,
        ),
        case(
            "stand 2:00 + easy 40 + stand 3:00 gpx",
            Steady,
            "rec 2:00 stand; 40:00 easy; rec 3:00 stand",
            128,
        )
        .fmt(Gpx)
        .no_speed()
        .jitter(8.0),
        case(
            "long 80 + stand 10:00",
            Steady,
            "80:00 easy; rec 10:00 stand",
            129,
        )
        .mile(),
        case(
            "stand 1:00 + easy 45 fit jitter",
            Steady,
            "rec 1:00 stand; 45:00 easy",
            130,
        )
        .jitter(5.0),
        case(
            "stand 0:40 + easy 45 + stand 1:30 mile tcx",
            Steady,
            "rec 0:40 stand; 45:00 easy; rec 1:30 stand",
            136,
        )
        .mile()
        .fmt(Tcx),
        // ---- Walks.
        case(
            "easy 45 + walk 5:00",
            Steady,
            "45:00 easy; rec 5:00 walk",
            131,
        ),
        case(
            "easy 50 + walk 3:00 + stand 1:00 gpx",
            Steady,
            "50:00 easy; rec 3:00 walk; rec 1:00 stand",
            132,
        )
        .fmt(Gpx)
        .jitter(4.0),
        case(
            "long 75 + walk 8:00",
            Steady,
            "75:00 easy; rec 8:00 walk",
            133,
        )
        .fmt(Tcx),
        case(
            "walk 3:00 + easy 40",
            Steady,
            "rec 3:00 walk; 40:00 easy",
            134,
        ),
        case(
            "rolling 8% easy 40 + walk 3:00 gpx",
            Steady,
            "40:00 easy; rec 3:00 walk",
            137,
        )
        .even_hills(rolling(0.08, 800.0))
        .fmt(Gpx)
        .no_speed(),
        case(
            "rolling 5% easy 45 + walk 4:00",
            Steady,
            "45:00 easy; rec 4:00 walk",
            135,
        )
        .even_hills(rolling(0.05, 1000.0))
        .mile(),
        // ---- Stops: auto-pause with markers, and gaps without.
        case("easy 50 two marked stops", Steady, "50:00 easy", 141)
            .stops(&[(900.0, 40.0), (2100.0, 90.0)]),
        case("easy 50 two gaps gpx", Steady, "50:00 easy", 142)
            .gaps(&[(900.0, 40.0), (2100.0, 90.0)])
            .fmt(Gpx),
        case("easy 45 three gaps tcx", Steady, "45:00 easy", 143)
            .gaps(&[(700.0, 30.0), (1500.0, 60.0), (2200.0, 120.0)])
            .fmt(Tcx),
        case("long 80 stop + gap", Steady, "80:00 easy", 144)
            .stops(&[(1800.0, 60.0)])
            .gaps(&[(3300.0, 150.0)]),
        case("rolling 5% gaps gpx", Steady, "55:00 easy", 145)
            .even_hills(rolling(0.05, 1100.0))
            .gaps(&[(1200.0, 45.0), (2400.0, 45.0)])
            .fmt(Gpx)
            .no_speed(),
        case("easy 40 long gap fit", Steady, "40:00 easy", 146).gaps(&[(1300.0, 300.0)]),
        // ---- Progression runs (no plan).
        case(
            "progression 4x10min",
            Progression,
            "steady 10:00 @ easy; steady 10:00 @ marathon; steady 10:00 @ half; \
             steady 10:00 @ threshold",
            151,
        ),
        case("progression continuous 50", Progression, "50:00 easy", 152)
            .pacing(Pacing::Progression)
            .fmt(Tcx),
        case(
            "progression 5x8min gpx",
            Progression,
            "steady 8:00 @ easy; steady 8:00 @ marathon; steady 8:00 @ half; \
             steady 8:00 @ threshold; steady 8:00 @ 10k",
            153,
        )
        .fmt(Gpx),
        case(
            "progression 3x12min mile",
            Progression,
            "steady 12:00 @ easy; steady 12:00 @ marathon; steady 12:00 @ half",
            154,
        )
        .mile(),
        case(
            "progression rolling 3%",
            Progression,
            "steady 10:00 @ easy; steady 10:00 @ marathon; steady 10:00 @ half",
            155,
        )
        .even_hills(rolling(0.03, 1200.0)),
        // ---- Races and time trials with warm-up and cool-down.
        case("5k race", Race, "wu 15:00; work 5km @ 5k; cd 10:00", 161),
        case("10k race", Race, "wu 20:00; work 10km @ 10k; cd 10:00", 162).fmt(Tcx),
        case(
            "half marathon",
            Race,
            "wu 10:00; work 21.1km @ half; cd 5:00",
            163,
        ),
        case(
            "5k time trial gpx",
            Race,
            "wu 12:00; work 5km @ 5k; cd 8:00",
            164,
        )
        .fmt(Gpx),
        case(
            "10k badly paced",
            Race,
            "wu 15:00; work 10km @ 10k; cd 10:00",
            165,
        )
        .pacing(Pacing::SurgeAndFade),
        case(
            "10 mile race",
            Race,
            "wu 12:00; work 10mi @ half; cd 8:00",
            166,
        )
        .mile(),
        case(
            "stand + 8k race + stand mile tcx",
            Race,
            "rec 0:30 stand; wu 12:00; work 8km @ 10k; cd 8:00; rec 1:00 stand",
            167,
        )
        .mile()
        .fmt(Tcx),
        case("parkrun no warm-up", Race, "work 5km @ 5k", 168).fmt(Gpx),
        case(
            "stand + 5k + walk",
            Race,
            "rec 1:00 stand; work 5km @ 5k; rec 5:00 walk",
            169,
        ),
        case(
            "10k race rolling 3%",
            Race,
            "wu 15:00; work 10km @ 10k; cd 10:00",
            170,
        )
        .even_hills(rolling(0.03, 1500.0))
        .fmt(Tcx),
        // ---- Fartlek.
        case(
            "fartlek 8x1min",
            Set,
            "15:00 easy; 8 x 1:00 @ 5k / 1:00 jog; 10:00 easy",
            171,
        ),
        case(
            "fartlek 6x2min",
            Set,
            "15:00 easy; 6 x 2:00 @ 10k / 1:30 jog; 10:00 easy",
            172,
        )
        .fmt(Tcx),
        case(
            "fartlek 10x45s rolling",
            Set,
            "15:00 easy; 10 x 0:45 @ 3k / 1:15 jog; 10:00 easy",
            173,
        )
        .even_hills(rolling(0.03, 1200.0)),
        case(
            "fartlek 5x3min gpx",
            Set,
            "12:00 easy; 5 x 3:00 @ 10k / 2:00 jog; 10:00 easy",
            174,
        )
        .fmt(Gpx),
        case(
            "fartlek 8x90s mile tcx",
            Set,
            "12:00 easy; 8 x 1:30 @ 5k / 1:30 jog; 10:00 easy",
            175,
        )
        .mile()
        .fmt(Tcx),
        // ---- Track reps.
        case(
            "6x800 jog",
            Set,
            "15:00 easy; 6 x 800m @ 5k / 2:00 jog; 10:00 easy",
            181,
        )
        .route_track(),
        case(
            "10x400 jog200",
            Set,
            "15:00 easy; 10 x 400m @ 3k / 200m jog; 10:00 easy",
            182,
        )
        .route_track()
        .fmt(Tcx),
        case(
            "5x1000 stand",
            Set,
            "15:00 easy; 5 x 1000m @ 5k / 2:00 stand; 10:00 easy",
            183,
        )
        .route_track(),
        case(
            "6x800 stand gpx",
            Set,
            "15:00 easy; 6 x 800m @ 5k / 1:30 stand; 10:00 easy",
            184,
        )
        .route_track()
        .fmt(Gpx),
        case(
            "10x400 stand mile",
            Set,
            "15:00 easy; 10 x 400m @ 3k / 1:00 stand; 10:00 easy",
            185,
        )
        .route_track()
        .mile(),
        case(
            "5x1000 with plan",
            Set,
            "15:00 easy; 5 x 1000m @ 5k / 2:00 jog; 10:00 easy",
            186,
        )
        .route_track()
        .planned(),
        case(
            "6x800 with plan tcx",
            Set,
            "15:00 easy; 6 x 800m @ 5k / 2:00 jog; 10:00 easy",
            187,
        )
        .route_track()
        .planned()
        .fmt(Tcx),
        case(
            "4x1mi jog400 mile",
            Set,
            "15:00 easy; 4 x 1mi @ 10k / 400m jog; 10:00 easy",
            188,
        )
        .route_track()
        .mile(),
        case(
            "6x400 walk mile",
            Set,
            "15:00 easy; 6 x 400m @ 3k / 1:30 walk; 10:00 easy",
            189,
        )
        .route_track()
        .mile(),
        case(
            "hill repeats 8x1min 6%",
            Set,
            "15:00 easy; 8 x 1:00 @ 5k / 1:30 jog; 10:00 easy",
            190,
        )
        .terrain(Terrain::Hill { grade: 0.06 }),
        case(
            "hill repeats 6x90s 8% gpx",
            Set,
            "15:00 easy; 6 x 1:30 @ 5k / 2:00 jog; 10:00 easy",
            194,
        )
        .terrain(Terrain::Hill { grade: 0.08 })
        .fmt(Gpx),
        // ---- Treadmill.
        case("treadmill easy 40", Steady, "40:00 easy", 191).treadmill(),
        case(
            "treadmill 6x3min",
            Set,
            "10:00 easy; 6 x 3:00 @ 5k / 2:00 jog; 8:00 easy",
            192,
        )
        .treadmill(),
        case(
            "treadmill progression",
            Progression,
            "steady 10:00 @ easy; steady 10:00 @ marathon; steady 10:00 @ half",
            193,
        )
        .treadmill()
        .fmt(Tcx),
        case(
            "treadmill easy 30 + stand 2:00",
            Steady,
            "30:00 easy; rec 2:00 stand",
            195,
        )
        .treadmill(),
        // ---- Heart-rate drop-outs.
        case("easy 50 hr dropouts", Steady, "50:00 easy", 201).dropouts(4),
        case("long 80 hr dropouts", Steady, "80:00 easy", 202)
            .dropouts(6)
            .fmt(Tcx),
        case("long 90 many hr dropouts", Steady, "90:00 easy", 205)
            .dropouts(20)
            .fmt(Gpx),
        case(
            "6x800 hr dropouts",
            Set,
            "15:00 easy; 6 x 800m @ 5k / 2:00 jog; 10:00 easy",
            203,
        )
        .route_track()
        .dropouts(3),
        case(
            "stand 1:00 + easy 45 smart gpx",
            Steady,
            "rec 1:00 stand; 45:00 easy; rec 1:00 stand",
            204,
        )
        .smart()
        .fmt(Gpx)
        .no_speed()
        .jitter(5.0),
        // ---- Not running.
        case("ride 60 flat", NonRunning, "60:00 easy", 211).ride(),
        case("ride 90 tcx", NonRunning, "90:00 easy", 212)
            .ride()
            .fmt(Tcx),
        case("ride 45 gpx", NonRunning, "45:00 easy", 213)
            .ride()
            .fmt(Gpx),
        case(
            "ride 60 rolling 5% usual effort",
            NonRunning,
            "60:00 easy",
            215,
        )
        .ride()
        .terrain(rolling(0.05, 2000.0))
        .fmt(Tcx),
        case(
            "ride intervals",
            NonRunning,
            "15:00 easy; 5 x 4:00 @ threshold / 3:00 jog; 10:00 easy",
            216,
        )
        .ride(),
        case("ride rolling 3%", NonRunning, "75:00 easy", 214)
            .ride()
            .even_hills(rolling(0.03, 3000.0)),
    ];
    for c in &mut v {
        // The plans the simulator follows are "what happened", never the coach's plan.
        c.input.plan.title = c.name.clone();
    }
    v
}

impl Case {
    /// A 400 m track.
    fn route_track(mut self) -> Case {
        self.input.conditions.route = Route::Loop { length_m: 400.0 };
        self
    }
}

/// One case run through the whole path.
pub struct Run {
    pub name: String,
    pub out: SimOutput,
    /// The session as ingest read it back from the bytes.
    pub session: Session,
    pub review: Review,
}

/// The recorded session as the file will hold it (laps, channels).
pub fn recorded(case: &Case, out: &SimOutput) -> Session {
    let mut s = out.session.clone();
    s.laps = match case.laps {
        Laps::None => Vec::new(),
        Laps::Auto { metres } => auto_laps(&s, metres),
    };
    if case.strip_speed {
        s.speed = None;
    }
    s
}

/// Laps every `metres` of recorded distance, the last one closing at the end.
fn auto_laps(s: &Session, metres: f64) -> Vec<DeviceLap> {
    let Some(dist) = s.distance.as_ref() else {
        return Vec::new();
    };
    let mut laps = Vec::new();
    let mut start = 0.0;
    let mut next = metres;
    for (q, &t) in s.t.iter().enumerate() {
        if let Some(d) = dist.get(q) {
            if d >= next {
                laps.push(DeviceLap {
                    start_s: start,
                    end_s: t,
                    trigger: Some("distance".into()),
                });
                start = t;
                next += metres;
            }
        }
    }
    let end = s.t.last().copied().unwrap_or(0.0);
    if end > start {
        laps.push(DeviceLap {
            start_s: start,
            end_s: end,
            trigger: Some("distance".into()),
        });
    }
    laps
}

/// The file bytes of a recorded session.
pub fn write_bytes(s: &Session, format: FileFormat) -> Vec<u8> {
    match format {
        FileFormat::Fit => fit_writer::write(s),
        FileFormat::Tcx => tcx_writer::write(s),
        FileFormat::Gpx => gpx_writer::write(s),
    }
}

/// Simulate, write, ingest, analyse.
pub fn run(case: &Case) -> Run {
    let out = simulate(&case.input);
    let rec = recorded(case, &out);
    let bytes = write_bytes(&rec, case.input.format);
    let session =
        splitdesk::ingest::ingest_bytes(&bytes, case.input.format, Some(&case.input.profile))
            .unwrap_or_else(|e| panic!("{}: ingest: {e}", case.name));
    let review =
        splitdesk::analysis::analyze(&session, case.analysis_plan.as_ref(), &case.input.profile);
    Run {
        name: case.name.clone(),
        out,
        session,
        review,
    }
}
