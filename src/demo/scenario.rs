//! The bundled demo roster: an invented running club, its six invented athletes, and six
//! weeks of their training, described as data the run simulator and the writers turn into
//! `demo-athletes/`.
//!
//! The club is the *Orrendale Striders*, a small club from the invented river town of
//! Orrendale. Everything here is made up: people, club, town, routes. The six weeks run from
//! Monday 2026-10-19 to Sunday 2026-11-29; each athlete runs 4-6 times a week (easy runs,
//! long runs, tempo runs, progression repeats, hill repeats, short reps with walked
//! recoveries, intervals, time trials and races). Every session with structure has a plan
//! file written from the same shorthand the simulator runs from (parsed with
//! [`crate::plan::parse_line`], written back with [`crate::plan::describe_line`]), so file
//! and recording always agree. Most sessions have a note in the athlete's own voice.
//!
//! | athlete | sex | born (age) | units | threshold | HR max/rest |
//! |---|---|---|---|---|---|
//! | `tobias-wrenfield` | male | 2001 (25) | km | 3:20/km | 196/44 |
//! | `mira-castellan` | female | 2007 (19) | km | 3:55/km | 203/52 |
//! | `keziah-brandt` | female | 1990 (36) | km | 4:45/km | 186/50 |
//! | `ansel-marchetti` | male | 1979 (47) | mi | 7:15/mi (4:30/km) | 178/54 |
//! | `oren-falkner` | male | 1984 (42) | mi | 8:51/mi (5:30/km) | 181/56 |
//! | `dagny-holloway` | female | 1968 (58) | mi | 10:28/mi (6:30/km) | 163/58 |
//!
//! # Planted cases
//!
//! Put there on purpose, for the review, the analysis and their tests to find. "Weeks"
//! count from week 1 (2026-10-19 to 10-25) to week 6 (2026-11-23 to 11-29).
//!
//! | athlete | date | file stem | what is planted |
//! |---|---|---|---|
//! | tobias-wrenfield | 2026-10-29 | 2026-10-29-tempo | good execution of the 20-minute tempo: even pace on target, cool day |
//! | tobias-wrenfield | 2026-10-29 | 2026-10-29-tempo | misleading note: a strong session the athlete calls awful |
//! | tobias-wrenfield | 2026-11-05 | 2026-11-05-progression-repeats | treadmill session (no positions, no altitude) |
//! | tobias-wrenfield | 2026-11-12 | 2026-11-12-tempo | poor execution of the same tempo: too fast early, fades (fatigue 0.5, 17 C) |
//! | mira-castellan | 2026-10-24 | 2026-10-24-time-trial | badly paced 5 km time trial: surging, then a fade (fatigue 1.0) |
//! | mira-castellan | 2026-10-27 | 2026-10-27-intervals | good execution of 6 x 3:00 at 5k pace: fresh, recoveries drop well |
//! | mira-castellan | 2026-11-17 | 2026-11-17-intervals | poor execution of the same intervals, fatigue 0.9: recovery troughs climb rep to rep, HR lag after each rep lengthens (to about 20 s by the last reps; the simulator's fatigue does not do this, so the recorded HR after each rep is slowed a little more every rep, see `effects`) |
//! | mira-castellan | 2026-11-17 | 2026-11-17-intervals | misleading note: a weak session the athlete calls great |
//! | mira-castellan | 2026-11-28 | 2026-11-28-time-trial | well-paced 5 km time trial (even pacing) |
//! | keziah-brandt | 2026-11-01 | 2026-11-01-long-run | long gentle downhill after a 4 km flat start (2.5 % down): negative decoupling |
//! | keziah-brandt | 2026-11-03 | 2026-11-03-easy-run | GPS jumps (4) |
//! | keziah-brandt | 2026-11-15 | 2026-11-15-long-run | hot-day long run: 30 C, 1:50:00 easy, decoupling well over 5 % |
//! | ansel-marchetti | weeks 1-6 | (all) | easy-run efficiency improves week by week (simulated threshold +2.5 %/week; athlete.toml unchanged) |
//! | oren-falkner | 2026-11-06 | 2026-11-06-easy-run | truncated FIT file (cut at 60 % of its bytes): the roster must report it, not crash |
//! | oren-falkner | week 5 | 2026-11-16 to 2026-11-22 | training load jumps: six longer and harder sessions after four short ones a week |
//! | oren-falkner | 2026-11-19 | 2026-11-19-tempo | misleading note: a faded, weak tempo the athlete calls great |
//! | dagny-holloway | weeks 1-6 | (all) | smart recording: a sample every 1-7 s instead of every second |
//! | dagny-holloway | 2026-11-02 | 2026-11-02-easy-run | optical HR locks onto cadence for 20 minutes |
//! | keziah-brandt | 2026-11-19 | 2026-11-19-easy-run | missed planned session: the easy run is planned (a plan file) and not run (no activity) |
//! | mira-castellan | 2026-11-25 | 2026-11-25-easy-run | missed planned session: the easy run is planned and not run |
//! | oren-falkner | 2026-11-24 | 2026-11-24-tempo | missed planned session: the tempo after the load jump is planned and not run |
//!
//! The table is kept in step with [`Scenario::planted`] by a unit test.

mod athletes;
pub(crate) mod effects;
mod notes;

use chrono::{DateTime, Duration, NaiveDate, TimeZone, Utc};

use crate::demo::simulate::{Conditions, Faults, Pacing, Route, Sampling, SimInput, Terrain};
use crate::model::{AthleteProfile, FileFormat, Plan, Sex, Step, Units};
use crate::plan::PlanError;

/// The seed of the committed `demo-athletes/` roster.
pub const DEFAULT_SEED: u64 = 20_261_129;

/// The club's name (invented).
pub const CLUB_NAME: &str = "Orrendale Striders";

/// The club's home town (invented).
pub const PLACE: &str = "Orrendale";

/// Monday of week 1.
pub fn first_day() -> NaiveDate {
    NaiveDate::from_ymd_opt(2026, 10, 19).unwrap_or_default()
}

/// Sunday of week 6, the last day of the scenario.
pub fn last_day() -> NaiveDate {
    first_day() + Duration::days(41)
}

/// The date of `dow` (0 = Monday) in `week` (1-6).
pub fn day(week: u32, dow: u32) -> NaiveDate {
    first_day() + Duration::days(i64::from((week.max(1) - 1) * 7 + dow))
}

/// The scenario week (1-6) of a date, `None` outside the six weeks.
pub fn week_of(date: NaiveDate) -> Option<u32> {
    let d = (date - first_day()).num_days();
    (0..42).contains(&d).then(|| (d / 7) as u32 + 1)
}

/// What kind of session it is (picks the note voice and the default plan text).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum SessionKind {
    /// Easy aerobic run.
    Easy,
    /// Long run.
    Long,
    /// Tempo run at threshold.
    Tempo,
    /// Repeats that get faster within the set.
    Progression,
    /// Hill repeats.
    Hills,
    /// Short fast reps with walked recoveries.
    ShortReps,
    /// Intervals at 5 km pace.
    Intervals,
    /// A time trial or race.
    TimeTrial,
}

/// The athlete's note for a session.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum NoteSpec {
    /// Take the next line from the athlete's voice bank for the session kind.
    Auto,
    /// This exact text.
    Text(String),
    /// No note.
    None,
}

/// What was planted on purpose.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum PlantedKind {
    /// A well-executed session of a kind that also has a poor execution.
    GoodExecution,
    /// A poorly executed session of the same kind.
    PoorExecution,
    /// A long run on a hot day: decoupling well over 5 %.
    HotLongRun,
    /// Long gentle downhills after a flat start: negative decoupling.
    DownhillRun,
    /// Intervals run tired: recovery troughs climb and the HR lag lengthens.
    FatiguedIntervals,
    /// A time trial run with surges and a fade.
    BadlyPacedTimeTrial,
    /// A time trial run at even pace.
    WellPacedTimeTrial,
    /// A week whose training load jumps.
    LoadJump,
    /// Easy runs getting more economical week by week.
    ImprovingEfficiency,
    /// GPS position jumps.
    GpsJumps,
    /// Optical heart rate locked onto cadence.
    CadenceLock,
    /// A treadmill session.
    Treadmill,
    /// Smart recording (irregular sampling).
    SmartSampling,
    /// A damaged (truncated) file.
    Truncated,
    /// A strong session the athlete calls awful.
    NoteUnderstates,
    /// A weak session the athlete calls great.
    NoteOverstates,
    /// A planned session not run: its plan file is written, no activity or note.
    MissedSession,
}

/// One planted case, as listed in the module documentation.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Planted {
    /// Athlete id.
    pub athlete: String,
    /// When: the session's date, or the weeks a case spans (`weeks 1-6`).
    pub when: String,
    /// The session's date; `None` for a case that spans weeks.
    pub date: Option<NaiveDate>,
    /// The session's file stem; `None` for a case that spans weeks.
    pub stem: Option<String>,
    /// What kind of case.
    pub kind: PlantedKind,
    /// Plain words.
    pub what: String,
}

/// One recorded session of the scenario.
#[derive(Debug, Clone, PartialEq)]
pub struct SessionSpec {
    /// Day of the session.
    pub date: NaiveDate,
    /// File-name slug, e.g. `tempo`.
    pub slug: String,
    /// What kind of session.
    pub kind: SessionKind,
    /// Plan title.
    pub title: String,
    /// Plan purpose.
    pub purpose: String,
    /// The plan in shorthand; the simulator runs it and the plan file holds it.
    pub shorthand: String,
    /// Write `plans/<stem>.toml` (always true for structured sessions).
    pub plan_file: bool,
    /// Start time of day (UTC): hour, minute.
    pub start_hm: (u32, u32),
    /// The format of the activity file.
    pub format: FileFormat,
    /// Weather, terrain, pacing, sampling.
    pub conditions: Conditions,
    /// Injected sensor faults.
    pub faults: Faults,
    /// Multiplier on the threshold speed the simulation uses (fitness on the day); the
    /// athlete's `athlete.toml` is not changed.
    pub fitness: f64,
    /// The athlete's note.
    pub note: NoteSpec,
    /// Also put the note inside the file (TCX `Notes`, GPX `desc`).
    pub note_in_file: bool,
    /// Keep only this fraction of the file's bytes (a damaged file).
    pub truncate_at: Option<f64>,
    /// Lengthen the HR lag after each work rep, up to this warp (see
    /// `effects::stretch_hr_lag`); `None` leaves the recording as simulated.
    pub hr_lag_stretch: Option<f64>,
    /// Planted cases on this session: kind and plain words.
    pub planted: Vec<(PlantedKind, String)>,
}

impl SessionSpec {
    /// `<date>-<slug>`: the activity, plan and note file stem.
    pub fn stem(&self) -> String {
        format!("{}-{}", self.date, self.slug)
    }

    /// The activity file name, `<stem>.<ext>`.
    pub fn file_name(&self) -> String {
        format!("{}.{}", self.stem(), self.format.as_str())
    }

    /// Start of the recording (UTC).
    pub fn start(&self) -> DateTime<Utc> {
        let (h, m) = self.start_hm;
        let naive = self.date.and_hms_opt(h.min(23), m.min(59), 0);
        naive.map(|n| Utc.from_utc_datetime(&n)).unwrap_or_default()
    }

    /// The plan's steps, parsed from the shorthand.
    pub fn steps(&self) -> Result<Vec<Step>, PlanError> {
        crate::plan::parse_line(&self.shorthand)
    }

    /// The plan as the simulator runs it and the plan file describes it.
    pub fn plan(&self) -> Result<Plan, PlanError> {
        Ok(Plan {
            title: self.title.clone(),
            purpose: self.purpose.clone(),
            date: Some(self.date),
            steps: self.steps()?,
        })
    }

    /// True when the plan has structure: a repeat block or a work segment.
    pub fn is_structured(&self) -> bool {
        self.steps().is_ok_and(|steps| {
            steps.iter().any(|s| match s {
                Step::Repeat { .. } => true,
                Step::Single(seg) => seg.kind == crate::model::SegmentKind::Work,
            })
        })
    }

    /// The note text, once the voice bank has been applied.
    pub fn note_text(&self) -> Option<&str> {
        match &self.note {
            NoteSpec::Text(t) => Some(t),
            NoteSpec::Auto | NoteSpec::None => None,
        }
    }

    // ---- Builder-style tweaks used by the athlete definitions. ----

    fn note(&mut self, text: &str) -> &mut Self {
        self.note = NoteSpec::Text(text.to_string());
        self
    }
    fn format(&mut self, f: FileFormat) -> &mut Self {
        self.format = f;
        self
    }
    fn note_in_file(&mut self) -> &mut Self {
        self.note_in_file = true;
        self
    }
    fn temp(&mut self, c: f64) -> &mut Self {
        self.conditions.temperature_c = c;
        self
    }
    fn at(&mut self, h: u32, m: u32) -> &mut Self {
        self.start_hm = (h, m);
        self
    }
    fn fatigue(&mut self, f: f64) -> &mut Self {
        self.conditions.fatigue = f;
        self
    }
    fn pacing(&mut self, p: Pacing) -> &mut Self {
        self.conditions.pacing = p;
        self
    }
    fn terrain(&mut self, t: Terrain) -> &mut Self {
        self.conditions.terrain = t;
        self
    }
    fn route(&mut self, r: Route) -> &mut Self {
        self.conditions.route = r;
        self
    }
    fn origin(&mut self, o: (f64, f64)) -> &mut Self {
        self.conditions.origin = o;
        self
    }
    fn treadmill(&mut self) -> &mut Self {
        self.conditions.treadmill = true;
        self
    }
    fn gps_jumps(&mut self, n: u32) -> &mut Self {
        self.faults.gps_jumps = n;
        self
    }
    fn cadence_lock(&mut self, from_s: f64, dur_s: f64) -> &mut Self {
        self.faults.cadence_lock = Some((from_s, dur_s));
        self
    }
    fn truncate(&mut self, keep: f64) -> &mut Self {
        self.truncate_at = Some(keep);
        self
    }
    fn stretch_hr_lag(&mut self, max_c: f64) -> &mut Self {
        self.hr_lag_stretch = Some(max_c);
        self
    }
    fn no_plan(&mut self) -> &mut Self {
        self.plan_file = false;
        self
    }
    fn title_purpose(&mut self, title: &str, purpose: &str) -> &mut Self {
        self.title = title.to_string();
        self.purpose = purpose.to_string();
        self
    }
    fn plant(&mut self, kind: PlantedKind, what: &str) -> &mut Self {
        self.planted.push((kind, what.to_string()));
        self
    }
}

/// One athlete of the scenario: the profile as written to `athlete.toml`, and the sessions.
#[derive(Debug, Clone, PartialEq)]
pub struct AthleteSpec {
    /// Folder name, lowercase-hyphenated.
    pub id: String,
    /// Full name (invented).
    pub name: String,
    /// For load weighting.
    pub sex: Sex,
    /// Birth year.
    pub birth_year: i32,
    /// Maximum heart rate, bpm.
    pub hr_max: u32,
    /// Resting heart rate, bpm.
    pub hr_rest: u32,
    /// Threshold pace as written, e.g. `3:20/km`.
    pub threshold_pace: String,
    /// Units the athlete thinks in.
    pub units: Units,
    /// Named paces as written: easy, marathon, half, 10k, 5k.
    pub paces: Vec<(String, String)>,
    /// The sessions, in date order.
    pub sessions: Vec<SessionSpec>,
    /// Planned sessions the athlete did not run, in date order: each has its plan file and
    /// no activity or note (the week strip's missed sessions). Never on a day with a session.
    pub missed: Vec<SessionSpec>,
    /// Planted cases spanning several sessions: (kind, when, what).
    pub planted: Vec<(PlantedKind, String, String)>,
}

impl AthleteSpec {
    /// The text of `athlete.toml`.
    pub fn athlete_toml(&self) -> String {
        let sex = match self.sex {
            Sex::Female => "female",
            Sex::Male => "male",
            Sex::Unspecified => "unspecified",
        };
        let mut out = String::new();
        out.push_str(&format!("name = {}\n", toml_string(&self.name)));
        out.push_str(&format!("sex = \"{sex}\"\n"));
        out.push_str(&format!("birth_year = {}\n", self.birth_year));
        out.push_str(&format!("hr_max = {}\n", self.hr_max));
        out.push_str(&format!("hr_rest = {}\n", self.hr_rest));
        out.push_str(&format!(
            "threshold_pace = {}\n",
            toml_string(&self.threshold_pace)
        ));
        out.push_str(&format!("units = \"{}\"\n", self.units.label()));
        out.push_str("\n[paces]\n");
        for (name, pace) in &self.paces {
            out.push_str(&format!("{name} = {}\n", toml_string(pace)));
        }
        out
    }

    /// The profile, parsed from [`AthleteSpec::athlete_toml`] exactly as the roster will.
    pub fn profile(&self, roster_units: Units) -> Result<AthleteProfile, String> {
        crate::roster::parse_profile(&self.athlete_toml(), &self.id, roster_units)
            .map_err(|e| format!("{}/athlete.toml: {e}", self.id))
    }
}

/// The whole demo: club, athletes, seed.
#[derive(Debug, Clone, PartialEq)]
pub struct Scenario {
    /// Club name for `roster.toml`.
    pub club: String,
    /// Home town (invented).
    pub place: String,
    /// Default units for `roster.toml`.
    pub units: Units,
    /// Seed of every simulated session.
    pub seed: u64,
    /// Sorted by id.
    pub athletes: Vec<AthleteSpec>,
}

impl Scenario {
    /// The Orrendale Striders demo with the given simulation seed. The seed changes the
    /// recorded samples only; the file list, plans and notes are the same for every seed.
    pub fn build(seed: u64) -> Scenario {
        let mut athletes = athletes::all();
        for a in &mut athletes {
            notes::apply(a);
        }
        athletes.sort_by(|a, b| a.id.cmp(&b.id));
        Scenario {
            club: CLUB_NAME.to_string(),
            place: PLACE.to_string(),
            units: Units::Km,
            seed,
            athletes,
        }
    }

    /// The default demo ([`DEFAULT_SEED`]).
    pub fn default_demo() -> Scenario {
        Scenario::build(DEFAULT_SEED)
    }

    /// Every planted case, athlete by athlete (athlete-wide cases first), in date order.
    pub fn planted(&self) -> Vec<Planted> {
        let mut out = Vec::new();
        for a in &self.athletes {
            for (kind, when, what) in &a.planted {
                out.push(Planted {
                    athlete: a.id.clone(),
                    when: when.clone(),
                    date: None,
                    stem: None,
                    kind: *kind,
                    what: what.clone(),
                });
            }
            let mut specs: Vec<&SessionSpec> = a.sessions.iter().chain(&a.missed).collect();
            specs.sort_by_key(|s| s.date);
            for s in specs {
                for (kind, what) in &s.planted {
                    out.push(Planted {
                        athlete: a.id.clone(),
                        when: s.date.to_string(),
                        date: Some(s.date),
                        stem: Some(s.stem()),
                        kind: *kind,
                        what: what.clone(),
                    });
                }
            }
        }
        out
    }

    /// The planted case of that kind (the first, if several).
    pub fn find_planted(&self, kind: PlantedKind) -> Option<Planted> {
        self.planted().into_iter().find(|p| p.kind == kind)
    }

    /// The athlete with that id.
    pub fn athlete(&self, id: &str) -> Option<&AthleteSpec> {
        self.athletes.iter().find(|a| a.id == id)
    }

    /// The simulator input of one session: the athlete's profile (threshold scaled by the
    /// session's fitness), the parsed plan, the start, conditions, faults and a seed mixed from
    /// the scenario seed and the session's id.
    pub fn sim_input(&self, athlete: &AthleteSpec, s: &SessionSpec) -> Result<SimInput, String> {
        let mut profile = athlete.profile(self.units)?;
        if let Some(v) = profile.threshold_speed_mps.as_mut() {
            *v *= s.fitness;
        }
        let plan = s
            .plan()
            .map_err(|e| format!("{}/{}: plan: {e}", athlete.id, s.stem()))?;
        Ok(SimInput {
            profile,
            plan,
            start: s.start(),
            conditions: s.conditions.clone(),
            faults: s.faults.clone(),
            seed: session_seed(self.seed, &athlete.id, &s.stem()),
            format: s.format,
        })
    }
}

/// A seed for one session: FNV-1a of `athlete/stem`, mixed with the scenario seed
/// (splitmix64 finaliser). Independent of the order sessions are simulated in.
pub fn session_seed(seed: u64, athlete: &str, stem: &str) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in athlete.bytes().chain([b'/']).chain(stem.bytes()) {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    let mut z = h ^ seed.wrapping_mul(0x9e37_79b9_7f4a_7c15);
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// A TOML basic string, quoted and escaped.
pub fn toml_string(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 2);
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\n' => out.push_str("\\n"),
            '\t' => out.push_str("\\t"),
            '\r' => out.push_str("\\r"),
            c if (c as u32) < 0x20 || c as u32 == 0x7f => {
                out.push_str(&format!("\\u{:04X}", c as u32));
            }
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// `m:ss` or `h:mm:ss` for whole seconds, as the shorthand writes durations.
pub(crate) fn clock(secs: u32) -> String {
    let (h, m, s) = (secs / 3600, (secs / 60) % 60, secs % 60);
    if h > 0 {
        format!("{h}:{m:02}:{s:02}")
    } else {
        format!("{m}:{s:02}")
    }
}

/// Per-athlete defaults the session constructors start from.
#[derive(Debug, Clone)]
pub(crate) struct Defaults {
    /// Where the athlete's runs start (invented coordinates).
    pub origin: (f64, f64),
    /// The athlete's usual route.
    pub route: Route,
    /// Usual start time (UTC).
    pub start_hm: (u32, u32),
    /// The athlete's watch recording rhythm.
    pub sampling: Sampling,
    /// Threshold-speed gain per week for the simulation (fitness trend).
    pub fitness_per_week: f64,
}

/// Builds an athlete's sessions from the kinds of session the club runs.
#[derive(Debug)]
pub(crate) struct Builder {
    defaults: Defaults,
    sessions: Vec<SessionSpec>,
    missed: Vec<SessionSpec>,
}

/// Autumn temperature of a day, 5-13 C, a deterministic wobble.
fn autumn_temp(date: NaiveDate) -> f64 {
    let k = (date - first_day()).num_days() as f64;
    let t = 9.0 + 3.0 * (0.9 * k).sin() + 1.0 * (0.37 * k + 1.0).cos();
    (t * 2.0).round() / 2.0
}

impl Builder {
    pub fn new(defaults: Defaults) -> Builder {
        Builder {
            defaults,
            sessions: Vec::new(),
            missed: Vec::new(),
        }
    }

    pub fn finish(self) -> Vec<SessionSpec> {
        self.finish_with_missed().0
    }

    /// The sessions run and the planned sessions missed, each in date order.
    pub fn finish_with_missed(mut self) -> (Vec<SessionSpec>, Vec<SessionSpec>) {
        self.sessions.sort_by_key(|s| s.date);
        self.missed.sort_by_key(|s| s.date);
        (self.sessions, self.missed)
    }

    /// The session just added is planned and not run: it keeps its plan file and gets no
    /// activity or note (a [`PlantedKind::MissedSession`] described by `what`).
    pub fn miss_last(&mut self, what: &str) {
        if let Some(mut s) = self.sessions.pop() {
            s.note = NoteSpec::None;
            s.plan_file = true;
            s.planted
                .push((PlantedKind::MissedSession, what.to_string()));
            self.missed.push(s);
        }
    }

    #[allow(clippy::too_many_arguments)]
    #[allow(clippy::indexing_slicing)] // `i` is the spec pushed just before it is used.
    fn base(
        &mut self,
        week: u32,
        dow: u32,
        kind: SessionKind,
        slug: &str,
        title: &str,
        purpose: &str,
        shorthand: String,
    ) -> &mut SessionSpec {
        let date = day(week, dow);
        let d = &self.defaults;
        let (h, m) = d.start_hm;
        let minute = m + (week * 7 + dow * 3) % 20;
        let spec = SessionSpec {
            date,
            slug: slug.to_string(),
            kind,
            title: title.to_string(),
            purpose: purpose.to_string(),
            shorthand,
            plan_file: true,
            start_hm: (h + minute / 60, minute % 60),
            format: FileFormat::Fit,
            conditions: Conditions {
                temperature_c: autumn_temp(date),
                terrain: Terrain::Flat,
                route: d.route,
                origin: d.origin,
                fatigue: 0.0,
                pacing: Pacing::Even,
                sampling: d.sampling,
                treadmill: false,
                stops: Vec::new(),
                ..Conditions::default()
            },
            faults: Faults::default(),
            fitness: 1.0 + d.fitness_per_week * f64::from(week.max(1) - 1),
            note: NoteSpec::Auto,
            note_in_file: false,
            truncate_at: None,
            hr_lag_stretch: None,
            planted: Vec::new(),
        };
        let i = self.sessions.len();
        self.sessions.push(spec);
        &mut self.sessions[i]
    }

    /// An easy run of `minutes`.
    pub fn easy(&mut self, week: u32, dow: u32, minutes: u32) -> &mut SessionSpec {
        self.base(
            week,
            dow,
            SessionKind::Easy,
            "easy-run",
            "Easy run",
            "Aerobic volume at a conversational pace. Relaxed from start to finish.",
            format!("{} easy", clock(minutes * 60)),
        )
    }

    /// A long run of `minutes` at easy pace.
    pub fn long(&mut self, week: u32, dow: u32, minutes: u32) -> &mut SessionSpec {
        self.base(
            week,
            dow,
            SessionKind::Long,
            "long-run",
            "Long run",
            "Time on feet at easy pace. Start slower than you want to; drink on the way.",
            format!("{} easy", clock(minutes * 60)),
        )
        .route(Route::OutAndBack { length_m: 6000.0 })
    }

    /// Warm-up, `minutes` at threshold, cool-down.
    pub fn tempo(&mut self, week: u32, dow: u32, minutes: u32) -> &mut SessionSpec {
        self.base(
            week,
            dow,
            SessionKind::Tempo,
            "tempo",
            "Tempo",
            &format!("{minutes} minutes at threshold with even splits; do not win the first five."),
            format!(
                "15:00 easy; {} @ threshold ±4; 10:00 easy",
                clock(minutes * 60)
            ),
        )
    }

    /// Repeats of `rep` (a shorthand distance) around threshold, each faster than the last.
    pub fn progression(&mut self, week: u32, dow: u32, reps: u32, rep: &str) -> &mut SessionSpec {
        self.base(
            week,
            dow,
            SessionKind::Progression,
            "progression-repeats",
            "Progression repeats",
            "Each repeat a little quicker than the one before: start just under threshold, \
             finish just over it. Jog the recoveries.",
            format!("15:00 easy; {reps} x {rep} @ threshold ±6 / 2:00 jog; 10:00 easy"),
        )
        .pacing(Pacing::Progression)
    }

    /// Hill repeats of `rep_s` seconds at 5 km effort on a `grade` hill, jogging down.
    pub fn hills(
        &mut self,
        week: u32,
        dow: u32,
        reps: u32,
        rep_s: u32,
        rec_s: u32,
        grade: f64,
    ) -> &mut SessionSpec {
        let pct = (grade * 100.0).round();
        self.base(
            week,
            dow,
            SessionKind::Hills,
            "hill-repeats",
            "Hill repeats",
            &format!(
                "Strength and form on the {pct} % hill by the weir: drive the arms, 5k effort up, \
                 jog back down."
            ),
            format!(
                "15:00 easy; {reps} x {} @ 5k hill / {} jog; 10:00 easy",
                clock(rep_s),
                clock(rec_s)
            ),
        )
        .terrain(Terrain::Hill { grade })
    }

    /// Short fast reps on the track with walked recoveries, at an absolute `pace`.
    pub fn short_reps(
        &mut self,
        week: u32,
        dow: u32,
        reps: u32,
        rep: &str,
        pace: &str,
    ) -> &mut SessionSpec {
        self.base(
            week,
            dow,
            SessionKind::ShortReps,
            "short-reps",
            "Short reps, walked recoveries",
            "Leg speed and form: quick, relaxed reps on the track. Walk every recovery fully.",
            format!("15:00 easy; {reps} x {rep} @ {pace} / {rep} walk; 10:00 easy"),
        )
        .route(Route::Loop { length_m: 400.0 })
    }

    /// Intervals of `rep_s` at 5 km pace with `rec_s` jogged.
    pub fn intervals(
        &mut self,
        week: u32,
        dow: u32,
        reps: u32,
        rep_s: u32,
        rec_s: u32,
    ) -> &mut SessionSpec {
        self.base(
            week,
            dow,
            SessionKind::Intervals,
            "intervals",
            "Intervals at 5k pace",
            "Aerobic power: every rep on 5k pace, the last as good as the first. Keep the jog moving.",
            format!(
                "15:00 easy; {reps} x {} @ 5k / {} jog; 10:00 easy",
                clock(rep_s),
                clock(rec_s)
            ),
        )
    }

    /// A time trial or race over `distance` (shorthand, e.g. `5km`).
    pub fn time_trial(
        &mut self,
        week: u32,
        dow: u32,
        distance: &str,
        race: bool,
    ) -> &mut SessionSpec {
        let (slug, title, purpose) = if race {
            (
                "race",
                format!("{distance} race"),
                "Race day. Even effort, patient first half, race the last third.",
            )
        } else {
            (
                "time-trial",
                format!("{distance} time trial"),
                "Benchmark for the next block: even pacing, strongest over the last kilometre.",
            )
        };
        self.base(
            week,
            dow,
            SessionKind::TimeTrial,
            slug,
            &title,
            purpose,
            format!("wu 15:00 easy; work {distance} open; cd 10:00 easy"),
        )
        .route(Route::Loop { length_m: 2500.0 })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn doc_table_lists_every_planted_case() {
        let src = include_str!("scenario.rs");
        let scenario = Scenario::default_demo();
        let planted = scenario.planted();
        assert!(planted.len() >= 15);
        for p in &planted {
            let row = match &p.stem {
                Some(s) => format!("| {} | {} | {s} |", p.athlete, p.when),
                None => format!("| {} | {} |", p.athlete, p.when),
            };
            assert!(src.contains(&row), "doc table has no row starting {row}");
        }
    }

    #[test]
    fn weeks_and_days() {
        assert_eq!(day(1, 0).to_string(), "2026-10-19");
        assert_eq!(day(6, 6), last_day());
        assert_eq!(last_day().to_string(), "2026-11-29");
        assert_eq!(week_of(last_day()), Some(6));
        assert_eq!(week_of(first_day()), Some(1));
        assert_eq!(week_of(first_day() - Duration::days(1)), None);
    }

    #[test]
    fn every_session_is_well_formed() {
        let scenario = Scenario::default_demo();
        assert_eq!(scenario.athletes.len(), 6);
        for a in &scenario.athletes {
            assert!(a.id.chars().all(|c| c.is_ascii_lowercase() || c == '-'));
            a.profile(Units::Km).unwrap();
            let mut stems = std::collections::BTreeSet::new();
            for w in 1..=6 {
                let n = a
                    .sessions
                    .iter()
                    .filter(|s| week_of(s.date) == Some(w))
                    .count();
                assert!((4..=6).contains(&n), "{} week {w}: {n} sessions", a.id);
            }
            for s in &a.sessions {
                assert!(stems.insert(s.stem()), "{} {}", a.id, s.stem());
                s.plan().unwrap();
                if s.is_structured() {
                    assert!(s.plan_file, "{} {} needs a plan", a.id, s.stem());
                }
                assert!(s.date <= last_day() && s.date >= first_day());
            }
            for m in &a.missed {
                assert!(stems.insert(m.stem()), "{} {}", a.id, m.stem());
                m.plan().unwrap();
                assert!(
                    m.plan_file && m.note == NoteSpec::None,
                    "{} {}",
                    a.id,
                    m.stem()
                );
                assert!(
                    a.sessions.iter().all(|s| s.date != m.date),
                    "{} {}: a missed session on a day with a run",
                    a.id,
                    m.stem()
                );
                assert!(m.date <= last_day() && m.date >= first_day());
            }
        }
    }

    #[test]
    fn missed_sessions_are_planted_in_the_last_two_weeks() {
        let scenario = Scenario::default_demo();
        let missed: Vec<Planted> = scenario
            .planted()
            .into_iter()
            .filter(|p| p.kind == PlantedKind::MissedSession)
            .collect();
        assert_eq!(missed.len(), 3);
        for p in &missed {
            let d = p.date.unwrap();
            assert!(week_of(d).is_some_and(|w| w >= 5), "{p:?}");
            let a = scenario.athlete(&p.athlete).unwrap();
            assert!(a.missed.iter().any(|m| Some(m.stem()) == p.stem));
        }
        // One easy run and one quality session among them.
        let kinds: Vec<SessionKind> = scenario
            .athletes
            .iter()
            .flat_map(|a| a.missed.iter().map(|m| m.kind))
            .collect();
        assert!(kinds.contains(&SessionKind::Easy) && kinds.contains(&SessionKind::Tempo));
    }
}
