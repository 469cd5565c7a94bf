//! One recorded session as a struct of arrays, at the sampling the device recorded.
//!
//! All values are SI: seconds, metres, metres per second, beats per minute,
//! steps per minute, degrees. A channel the file does not carry at all is `None`;
//! a single missing sample inside a present channel is `None` at that index.
//! No sentinel number (0, -1, NaN) ever stands for "missing".

use chrono::{DateTime, NaiveDate, Utc};
use serde::{Deserialize, Serialize};

use super::flags::Flag;

/// The container format a session was read from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum FileFormat {
    Fit,
    Tcx,
    Gpx,
}

impl FileFormat {
    pub fn as_str(self) -> &'static str {
        match self {
            FileFormat::Fit => "fit",
            FileFormat::Tcx => "tcx",
            FileFormat::Gpx => "gpx",
        }
    }

    /// Guess the format from a file extension (case-insensitive).
    pub fn from_extension(ext: &str) -> Option<FileFormat> {
        match ext.to_ascii_lowercase().as_str() {
            "fit" => Some(FileFormat::Fit),
            "tcx" => Some(FileFormat::Tcx),
            "gpx" => Some(FileFormat::Gpx),
            _ => None,
        }
    }
}

impl std::fmt::Display for FileFormat {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// What kind of activity the file says it is.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum Sport {
    Running,
    Walking,
    Cycling,
    Other(String),
    #[default]
    Unknown,
}

impl Sport {
    /// Map a free-text sport name (FIT enum name, TCX `Sport` attribute, GPX `type`).
    pub fn from_name(name: &str) -> Sport {
        let n = name.trim().to_ascii_lowercase();
        match n.as_str() {
            "running" | "run" | "trail_running" | "treadmill_running" | "track_running" => {
                Sport::Running
            }
            "walking" | "walk" | "hiking" => Sport::Walking,
            "cycling" | "biking" | "ride" => Sport::Cycling,
            "" | "unknown" | "generic" => Sport::Unknown,
            // Exporters name variants freely ("virtualrun", "road_biking", "e_bike_ride",
            // "hike"): the family word decides. Since a session that is not a run loses the
            // running analysis, only clear words move a session out of running.
            _ if n.contains("run") || n == "treadmill" => Sport::Running,
            _ if ["bik", "cycl", "ride"].iter().any(|w| n.contains(w)) => Sport::Cycling,
            _ if ["walk", "hik"].iter().any(|w| n.contains(w)) => Sport::Walking,
            // From memory: some GPX exporters write a numeric activity code in `type`; no
            // code table is standard, so a number says nothing about the sport.
            _ if n.chars().all(|c| c.is_ascii_digit()) => Sport::Unknown,
            _ => Sport::Other(n),
        }
    }

    /// Whether the session gets the running analysis (intervals, pace, running findings).
    /// Runs do, and so do files that name no sport (most of them are runs); a ride, a walk
    /// or hike, or any other named sport does not.
    pub fn analysed_as_running(&self) -> bool {
        matches!(self, Sport::Running | Sport::Unknown)
    }

    /// The sport as a capitalised word for headings ("Cycling"); control characters from
    /// the file are left out.
    pub fn title(&self) -> String {
        let label: String = self
            .label()
            .chars()
            .filter(|c| !c.is_control())
            .map(|c| if c == '_' { ' ' } else { c })
            .collect();
        let mut chars = label.chars();
        match chars.next() {
            Some(c) => c.to_uppercase().chain(chars).collect(),
            None => String::new(),
        }
    }

    pub fn label(&self) -> &str {
        match self {
            Sport::Running => "running",
            Sport::Walking => "walking",
            Sport::Cycling => "cycling",
            Sport::Other(s) => s,
            Sport::Unknown => "unknown",
        }
    }
}

/// One channel of samples. `values.len()` always equals the session's sample count.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct Channel {
    pub values: Vec<Option<f64>>,
}

impl Channel {
    pub fn new(values: Vec<Option<f64>>) -> Channel {
        Channel { values }
    }

    /// A channel with every sample present.
    pub fn from_values(values: impl IntoIterator<Item = f64>) -> Channel {
        Channel {
            values: values.into_iter().map(Some).collect(),
        }
    }

    /// The sample at `i`, `None` if missing or out of range.
    pub fn get(&self, i: usize) -> Option<f64> {
        self.values.get(i).copied().flatten()
    }

    pub fn len(&self) -> usize {
        self.values.len()
    }

    pub fn is_empty(&self) -> bool {
        self.values.is_empty()
    }

    /// Number of samples that are present.
    pub fn present(&self) -> usize {
        self.values.iter().filter(|v| v.is_some()).count()
    }

    /// Present samples with their indices.
    pub fn iter_present(&self) -> impl Iterator<Item = (usize, f64)> + '_ {
        self.values
            .iter()
            .enumerate()
            .filter_map(|(i, v)| v.map(|x| (i, x)))
    }

    /// Turn a channel whose samples are all missing into "absent".
    pub fn into_option(self) -> Option<Channel> {
        if self.values.iter().any(|v| v.is_some()) {
            Some(self)
        } else {
            None
        }
    }
}

/// A lap the device recorded (button press, auto-lap or a structured-workout step).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DeviceLap {
    /// Seconds from the first sample.
    pub start_s: f64,
    pub end_s: f64,
    /// What triggered the lap, when the file says (`manual`, `distance`, `time`, ...).
    pub trigger: Option<String>,
}

/// A stretch where the device's timer was stopped (auto-pause or stop button).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Pause {
    pub from_s: f64,
    pub to_s: f64,
}

impl Pause {
    pub fn duration_s(&self) -> f64 {
        (self.to_s - self.from_s).max(0.0)
    }
}

/// One recorded session, normalised.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Session {
    pub format: FileFormat,
    pub sport: Sport,
    /// Time of the first sample (UTC).
    pub start: DateTime<Utc>,
    /// Elapsed seconds from the first sample; non-decreasing, `t[0] == 0`.
    pub t: Vec<f64>,
    /// Absolute UTC timestamp of each sample.
    pub time: Vec<DateTime<Utc>>,
    /// Cumulative distance, metres.
    pub distance: Option<Channel>,
    /// Speed, metres per second.
    pub speed: Option<Channel>,
    /// Heart rate, beats per minute.
    pub hr: Option<Channel>,
    /// Cadence, steps per minute (both feet).
    pub cadence: Option<Channel>,
    /// Altitude, metres.
    pub altitude: Option<Channel>,
    /// Latitude, degrees.
    pub lat: Option<Channel>,
    /// Longitude, degrees.
    pub lon: Option<Channel>,
    pub laps: Vec<DeviceLap>,
    pub pauses: Vec<Pause>,
    /// Bad-data flags (filled by `ingest::clean`). Samples are never deleted.
    pub flags: Vec<Flag>,
    /// Lowercase hex SHA-256 of the file's bytes.
    pub content_hash: String,
    /// The athlete's note when the file itself carries one (TCX `Notes`, GPX `desc`).
    pub note: Option<String>,
    /// Which channels were derived by us rather than recorded (e.g. distance from positions).
    pub derived: Vec<ChannelKind>,
    /// What ingest noticed and worked around while reading the file, one plain sentence each
    /// (timestamps dropped as out of range, bytes after the end of a FIT file, ...).
    #[serde(default)]
    pub warnings: Vec<String>,
}

/// The names of the per-sample channels.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum ChannelKind {
    Distance,
    Speed,
    Hr,
    Cadence,
    Altitude,
    Position,
}

impl ChannelKind {
    pub fn as_str(self) -> &'static str {
        match self {
            ChannelKind::Distance => "distance",
            ChannelKind::Speed => "speed",
            ChannelKind::Hr => "hr",
            ChannelKind::Cadence => "cadence",
            ChannelKind::Altitude => "altitude",
            ChannelKind::Position => "position",
        }
    }
}

impl std::fmt::Display for ChannelKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

impl Session {
    /// An empty session of the given format starting at `start`.
    pub fn empty(format: FileFormat, start: DateTime<Utc>) -> Session {
        Session {
            format,
            sport: Sport::Unknown,
            start,
            t: Vec::new(),
            time: Vec::new(),
            distance: None,
            speed: None,
            hr: None,
            cadence: None,
            altitude: None,
            lat: None,
            lon: None,
            laps: Vec::new(),
            pauses: Vec::new(),
            flags: Vec::new(),
            content_hash: String::new(),
            note: None,
            derived: Vec::new(),
            warnings: Vec::new(),
        }
    }

    pub fn len(&self) -> usize {
        self.t.len()
    }

    pub fn is_empty(&self) -> bool {
        self.t.is_empty()
    }

    /// Elapsed time from first to last sample, seconds.
    pub fn duration_s(&self) -> f64 {
        self.t.last().copied().unwrap_or(0.0)
    }

    /// Elapsed time minus timer pauses, seconds.
    pub fn timer_s(&self) -> f64 {
        let paused: f64 = self.pauses.iter().map(Pause::duration_s).sum();
        (self.duration_s() - paused).max(0.0)
    }

    /// Total distance: the last present cumulative distance minus the first, metres (a
    /// file may start its cumulative distance above zero, e.g. a recording resumed).
    pub fn distance_m(&self) -> Option<f64> {
        let d = self.distance.as_ref()?;
        let first = d.values.iter().find_map(|v| *v)?;
        let last = d.values.iter().rev().find_map(|v| *v)?;
        Some((last - first).max(0.0))
    }

    /// The channel of that kind, if present. `Position` returns latitude.
    pub fn channel(&self, kind: ChannelKind) -> Option<&Channel> {
        match kind {
            ChannelKind::Distance => self.distance.as_ref(),
            ChannelKind::Speed => self.speed.as_ref(),
            ChannelKind::Hr => self.hr.as_ref(),
            ChannelKind::Cadence => self.cadence.as_ref(),
            ChannelKind::Altitude => self.altitude.as_ref(),
            ChannelKind::Position => self.lat.as_ref(),
        }
    }

    /// Which channels are present, in a fixed order.
    pub fn channels_present(&self) -> Vec<ChannelKind> {
        let mut out = Vec::new();
        for k in [
            ChannelKind::Distance,
            ChannelKind::Speed,
            ChannelKind::Hr,
            ChannelKind::Cadence,
            ChannelKind::Altitude,
        ] {
            if self.channel(k).is_some() {
                out.push(k);
            }
        }
        if self.lat.is_some() && self.lon.is_some() {
            out.push(ChannelKind::Position);
        }
        out
    }

    /// Position of sample `i` as (lat, lon) degrees, when both are present.
    pub fn position(&self, i: usize) -> Option<(f64, f64)> {
        Some((self.lat.as_ref()?.get(i)?, self.lon.as_ref()?.get(i)?))
    }

    /// True when `t_s` falls inside a timer pause.
    pub fn is_paused_at(&self, t_s: f64) -> bool {
        self.pauses.iter().any(|p| t_s > p.from_s && t_s < p.to_s)
    }

    /// Median spacing between consecutive samples, seconds (0 for fewer than two samples).
    pub fn median_interval_s(&self) -> f64 {
        let mut d: Vec<f64> = self
            .t
            .iter()
            .zip(self.t.iter().skip(1))
            .map(|(a, b)| b - a)
            .collect();
        d.sort_by(f64::total_cmp);
        d.get(d.len() / 2).copied().unwrap_or(0.0)
    }

    /// Check the struct-of-arrays invariants; used by tests and after ingest.
    pub fn check_invariants(&self) -> Result<(), String> {
        let n = self.t.len();
        if self.time.len() != n {
            return Err(format!("time has {} samples, t has {n}", self.time.len()));
        }
        for (name, ch) in [
            ("distance", &self.distance),
            ("speed", &self.speed),
            ("hr", &self.hr),
            ("cadence", &self.cadence),
            ("altitude", &self.altitude),
            ("lat", &self.lat),
            ("lon", &self.lon),
        ] {
            if let Some(c) = ch {
                if c.len() != n {
                    return Err(format!("{name} has {} samples, t has {n}", c.len()));
                }
                if c.values.iter().flatten().any(|v| !v.is_finite()) {
                    return Err(format!("{name} holds a non-finite value"));
                }
            }
        }
        if self.t.first().is_some_and(|&t0| t0 != 0.0) {
            return Err("t does not start at 0".into());
        }
        if self.t.iter().zip(self.t.iter().skip(1)).any(|(a, b)| b < a) {
            return Err("t goes backwards".into());
        }
        Ok(())
    }
}

/// The calendar day a session counts for: the date its file name starts with
/// (`YYYY-MM-DD-...`, the athlete's own calendar) when that is within a day of the UTC date
/// of its start (an evening run west of Greenwich starts on the next UTC day); else the UTC
/// date. `stem` is the file name without extension (or a session id `<athlete>/<stem>`).
pub fn session_day(stem: &str, start: DateTime<Utc>) -> NaiveDate {
    let stem = stem.rsplit('/').next().unwrap_or(stem);
    let utc = start.date_naive();
    stem.get(..10)
        .and_then(|d| NaiveDate::parse_from_str(d, "%Y-%m-%d").ok())
        .filter(|d| (*d - utc).num_days().abs() <= 1)
        .unwrap_or(utc)
}

#[cfg(test)]
mod tests {
    use super::Sport;

    #[test]
    fn sport_names_map_to_their_family() {
        for (name, sport) in [
            ("Running", Sport::Running),
            ("VirtualRun", Sport::Running),
            ("trail_run", Sport::Running),
            ("Biking", Sport::Cycling),
            ("road_biking", Sport::Cycling),
            ("E_Bike_Ride", Sport::Cycling),
            ("indoor_cycling", Sport::Cycling),
            ("Hike", Sport::Walking),
            ("walking", Sport::Walking),
            ("9", Sport::Unknown),
            ("", Sport::Unknown),
            ("Swimming", Sport::Other("swimming".into())),
        ] {
            assert_eq!(Sport::from_name(name), sport, "{name}");
        }
        assert!(Sport::Unknown.analysed_as_running() && Sport::Running.analysed_as_running());
        assert!(!Sport::Cycling.analysed_as_running() && !Sport::Walking.analysed_as_running());
        assert!(!Sport::Other("swimming".into()).analysed_as_running());
    }

    #[test]
    fn sport_titles_are_capitalised_and_clean() {
        assert_eq!(Sport::Cycling.title(), "Cycling");
        assert_eq!(
            Sport::Other("open_water\u{1b}[2J".into()).title(),
            "Open water[2J"
        );
    }
}
