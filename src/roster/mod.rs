//! The roster folder: athletes, profiles, plans, activities and notes.
//!
//! ```text
//! <roster>/roster.toml                 optional: name, units
//! <roster>/<athlete-id>/athlete.toml   profile
//! <roster>/<athlete-id>/plans/*.toml   planned workouts
//! <roster>/<athlete-id>/activities/*   recorded sessions (.fit, .tcx, .gpx)
//! <roster>/<athlete-id>/notes/<stem>.txt   the athlete's own comments
//! ```
//!
//! Discovery only lists files; it never decodes activities, nor reads plan files (they are
//! read when a session is analysed, and checked when their problems are asked for). An
//! entry that is not a symbolic link is known from its folder's listing; only links are
//! resolved, so nothing outside the roster is ever read. Anything unreadable becomes a
//! `Problem` in the listing, never a failure of the whole roster.

pub mod plans;
mod profile;
mod safe_text;

pub(crate) use profile::toml_error_line;

use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use serde::Deserialize;

use crate::model::{AthleteProfile, FileFormat, Units};

pub use profile::{parse_profile, read_profile, ProfileError, ProfileProblem, ProfileReport};
pub use safe_text::{is_unsafe, json_text, printable, printable_text};

/// The roster root itself could not be read.
#[derive(Debug, thiserror::Error)]
pub enum RosterError {
    /// The reason is said in the message itself (not as a source as well, so an error
    /// chain names it once).
    #[error("{path}: {reason}")]
    Io {
        path: PathBuf,
        reason: std::io::Error,
    },
    #[error("{path}: no such folder (the roster is read from this folder)")]
    Missing { path: PathBuf },
    #[error("{path}: not a folder")]
    NotADir { path: PathBuf },
    /// The folder holds an `athlete.toml`: it is one athlete, not a roster of them.
    #[error(
        "{path}: this looks like an athlete folder (it has an athlete.toml), not a roster; \
         use the folder that holds it as the roster: --roster {parent}"
    )]
    AthleteFolder { path: PathBuf, parent: PathBuf },
}

/// Something in the roster that could not be used; the rest of the roster still works.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Problem {
    pub path: PathBuf,
    pub message: String,
}

impl std::fmt::Display for Problem {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{}: {}",
            printable(&self.path.display().to_string()),
            printable(&self.message)
        )
    }
}

/// One recorded-session file of an athlete.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Activity {
    pub path: PathBuf,
    /// File name without extension; with the athlete id it forms the session id.
    pub stem: String,
    pub format: FileFormat,
    /// `notes/<stem>.txt` when it exists.
    pub note_file: Option<PathBuf>,
}

/// One athlete folder.
#[derive(Debug, Clone)]
pub struct Athlete {
    pub id: String,
    pub dir: PathBuf,
    pub profile: AthleteProfile,
    /// Sorted by file name.
    pub activities: Vec<Activity>,
    /// Plan files (`plans/*.toml`), sorted by file name.
    pub plan_files: Vec<PathBuf>,
    /// What is wrong in `athlete.toml`; `profile` holds every key that could be read.
    pub profile_problems: Vec<ProfileProblem>,
    /// Plan files that cannot be read, or that name paces the profile does not have:
    /// checked when first asked for ([`Athlete::plan_problems`]), not at open.
    plan_problems: OnceLock<Vec<Problem>>,
    /// What is wrong with the folder itself (no `athlete.toml`, a profile that leads
    /// outside the roster).
    pub folder_problems: Vec<Problem>,
    /// A digest of everything besides the activity file that a review of this athlete's
    /// sessions depends on (the profile's content, and every plan file's name and stat; see
    /// `inputs_digest` in this module for why the stat): a cached review made under another
    /// digest is stale.
    pub inputs_digest: String,
}

impl Athlete {
    /// The athlete's `athlete.toml`.
    pub fn profile_path(&self) -> PathBuf {
        self.dir.join("athlete.toml")
    }

    /// The problems of the athlete's plan files (a file that cannot be read, is not a valid
    /// plan, or names paces the profile does not have), one line each. The plan files are
    /// read and checked the first time this is asked for (by `splitdesk check`, the
    /// workstation's problems), not when the roster is opened: a command that never shows
    /// them never reads them. The result is kept for the life of this value.
    pub fn plan_problems(&self) -> &[Problem] {
        self.plan_problems.get_or_init(|| {
            self.plan_files
                .iter()
                .flat_map(|p| plans::check_plan_file(p, &self.profile))
                .collect()
        })
    }

    /// Every folder, profile and plan problem of this athlete, one line each.
    pub fn problems(&self) -> Vec<Problem> {
        let profile = self.profile_path();
        self.folder_problems
            .iter()
            .cloned()
            .chain(self.profile_problems.iter().map(|p| Problem {
                path: profile.clone(),
                message: p.to_string(),
            }))
            .chain(self.plan_problems().iter().cloned())
            .collect()
    }

    /// Whether the folder, the profile or a plan has a problem.
    pub fn has_problems(&self) -> bool {
        !self.folder_problems.is_empty()
            || !self.profile_problems.is_empty()
            || !self.plan_problems().is_empty()
    }

    /// The stable session id of an activity: `<athlete-id>/<file-stem>`.
    pub fn session_id(&self, activity: &Activity) -> String {
        format!("{}/{}", self.id, activity.stem)
    }
}

/// A discovered roster.
#[derive(Debug, Clone)]
pub struct Roster {
    pub root: PathBuf,
    pub name: String,
    pub units: Units,
    /// Sorted by id.
    pub athletes: Vec<Athlete>,
    /// The problems found while listing the roster (roster.toml, folders, links, files),
    /// without the athletes' own.
    found: Vec<Problem>,
    /// For each athlete (same order as `athletes`), where in `found` its own problems go.
    athlete_slots: Vec<usize>,
    /// `found` with every athlete's own problems in place, made when first asked for.
    problems: OnceLock<Vec<Problem>>,
}

#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
struct RosterFile {
    name: Option<String>,
    units: Option<String>,
}

impl Roster {
    /// Every problem of the roster, one line each, in the order of the listing: the roster's
    /// own, each folder's, and after each athlete's files its folder, profile and plan
    /// problems ([`Athlete::problems`]). The first call reads and checks every plan file
    /// ([`Athlete::plan_problems`]).
    pub fn problems(&self) -> &[Problem] {
        self.problems.get_or_init(|| {
            let mut out = Vec::with_capacity(self.found.len());
            let mut from = 0;
            for (athlete, &slot) in self.athletes.iter().zip(&self.athlete_slots) {
                out.extend(
                    self.found
                        .get(from..slot)
                        .unwrap_or_default()
                        .iter()
                        .cloned(),
                );
                out.extend(athlete.problems());
                from = slot.max(from);
            }
            out.extend(self.found.get(from..).unwrap_or_default().iter().cloned());
            out
        })
    }

    /// The athlete with this id. `athletes` is sorted by id: a binary search (the queue
    /// asks once per session), with a plain search when the list was reordered since.
    pub fn athlete(&self, id: &str) -> Option<&Athlete> {
        match self.athletes.binary_search_by(|a| a.id.as_str().cmp(id)) {
            Ok(k) => self.athletes.get(k),
            Err(_) => self.athletes.iter().find(|a| a.id == id),
        }
    }

    /// Find an activity by session id `<athlete-id>/<stem>`.
    pub fn find_session(&self, session_id: &str) -> Option<(&Athlete, &Activity)> {
        let (aid, stem) = session_id.split_once('/')?;
        let athlete = self.athlete(aid)?;
        let act = athlete.activities.iter().find(|a| a.stem == stem)?;
        Some((athlete, act))
    }

    /// The athlete folder and activity entry of a file inside this roster, if it is one.
    pub fn locate_file(&self, file: &Path) -> Option<(&Athlete, &Activity)> {
        let canon = std::fs::canonicalize(file).ok()?;
        self.activities().find(|(_, a)| {
            std::fs::canonicalize(&a.path)
                .map(|p| p == canon)
                .unwrap_or(false)
        })
    }

    /// Every activity of every athlete.
    pub fn activities(&self) -> impl Iterator<Item = (&Athlete, &Activity)> {
        self.athletes
            .iter()
            .flat_map(|a| a.activities.iter().map(move |x| (a, x)))
    }

    /// Discover a roster folder.
    pub fn open(root: &Path) -> Result<Roster, RosterError> {
        Roster::open_some(root, None)
    }

    /// The roster with one athlete's folder read (`id`), for a command about that athlete
    /// alone: the other athletes are left out (their files are not listed, nor their
    /// problems found); the problems of `roster.toml` and of the roster folder's own entries
    /// are kept. An athlete folder that is a link to another is left out as
    /// [`Roster::open`] leaves it out.
    pub fn open_athlete(root: &Path, id: &str) -> Result<Roster, RosterError> {
        Roster::open_some(root, Some(id))
    }

    fn open_some(root: &Path, only: Option<&str>) -> Result<Roster, RosterError> {
        let meta = std::fs::metadata(root).map_err(|reason| {
            if reason.kind() == std::io::ErrorKind::NotFound {
                RosterError::Missing {
                    path: root.to_path_buf(),
                }
            } else {
                RosterError::Io {
                    path: root.to_path_buf(),
                    reason,
                }
            }
        })?;
        if !meta.is_dir() {
            return Err(RosterError::NotADir {
                path: root.to_path_buf(),
            });
        }
        if root.join("athlete.toml").is_file() {
            // The parent as the coach would type it: `..`-free when the path allows.
            let parent = std::fs::canonicalize(root)
                .ok()
                .and_then(|p| p.parent().map(Path::to_path_buf))
                .or_else(|| root.parent().map(Path::to_path_buf))
                .unwrap_or_else(|| PathBuf::from(".."));
            return Err(RosterError::AthleteFolder {
                path: root.to_path_buf(),
                parent,
            });
        }
        let mut problems = Vec::new();
        let mut name = root
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| "roster".to_string());
        let mut units = Units::Km;
        let roster_toml = root.join("roster.toml");
        if roster_toml.exists() {
            match read_roster_file(&roster_toml) {
                Ok(rf) => {
                    if let Some(n) = rf.name {
                        name = n;
                    }
                    match rf.units.as_deref().map(|u| (u, Units::parse(u))) {
                        Some((_, Some(u))) => units = u,
                        Some((raw, None)) => problems.push(Problem {
                            path: roster_toml.clone(),
                            message: format!("units: expected \"km\" or \"mi\", found {raw:?}"),
                        }),
                        None => {}
                    }
                }
                Err(message) => problems.push(Problem {
                    path: roster_toml.clone(),
                    message,
                }),
            }
        }

        let inside = std::fs::canonicalize(root).map_err(|reason| RosterError::Io {
            path: root.to_path_buf(),
            reason,
        })?;
        let mut athletes = Vec::new();
        let mut athlete_slots = Vec::new();
        for found in athlete_folders(root, &inside, &mut problems) {
            if only.is_some_and(|id| id != found.id) {
                continue;
            }
            let athlete = read_athlete(found, &inside, units, &mut problems);
            athlete_slots.push(problems.len());
            athletes.push(athlete);
        }
        Ok(Roster {
            root: root.to_path_buf(),
            name,
            units,
            athletes,
            found: problems,
            athlete_slots,
            problems: OnceLock::new(),
        })
    }
}

fn read_roster_file(path: &Path) -> Result<RosterFile, String> {
    let text = crate::ingest::read_text_file(path).map_err(|e| e.to_string())?;
    toml::from_str(&text).map_err(|e| profile::toml_error_line(&text, &e))
}

/// Why an athlete folder's `athlete.toml` is missing, as the coach reads it.
pub const NO_PROFILE: &str = "no athlete.toml: its sessions are listed with a bare profile \
     (no heart-rate or pace zones) until the file is written";

/// A folder of the roster that holds an athlete.
struct AthleteFolder {
    id: String,
    dir: PathBuf,
    /// The folder's listing.
    listing: Folder,
    has_profile: bool,
}

/// Whether `path` is a symbolic link (not followed).
fn is_link(path: &Path) -> bool {
    std::fs::symlink_metadata(path).is_ok_and(|m| m.file_type().is_symlink())
}

/// Whether an entry exists at `path` (a dangling link counts).
fn entry_exists(path: &Path) -> bool {
    std::fs::symlink_metadata(path).is_ok()
}

/// Where `path` really is, when that is inside the roster (`inside`, canonical). A
/// dangling or looping link, or one that leads outside the roster, is a problem and
/// `None`: nothing outside the roster is ever read.
fn resolve(path: &Path, inside: &Path, problems: &mut Vec<Problem>) -> Option<PathBuf> {
    let message = match std::fs::canonicalize(path) {
        Ok(real) if real.starts_with(inside) => return Some(real),
        Ok(real) => format!(
            "a symbolic link to {}, outside the roster; not followed",
            real.display()
        ),
        Err(e) if e.raw_os_error() == Some(libc::ELOOP) => {
            "a symbolic link that loops back on itself; skipped".to_string()
        }
        Err(e) if e.kind() == std::io::ErrorKind::NotFound && is_link(path) => {
            match std::fs::read_link(path) {
                Ok(to) => format!(
                    "a symbolic link to {}, which does not exist; skipped",
                    to.display()
                ),
                Err(_) => "a symbolic link to nothing; skipped".to_string(),
            }
        }
        Err(e) => format!("{e}; skipped"),
    };
    problems.push(Problem {
        path: path.to_path_buf(),
        message,
    });
    None
}

/// One entry of a listed folder, with what the listing said it is.
struct Entry {
    name: std::ffi::OsString,
    path: PathBuf,
    /// The entry itself (a link is a link, not followed), from the folder listing (no
    /// extra system call on the usual file systems); `None` when it could not be told.
    kind: Option<std::fs::FileType>,
    listed: std::fs::DirEntry,
}

impl Entry {
    fn of(e: std::fs::DirEntry) -> Entry {
        Entry {
            name: e.file_name(),
            path: e.path(),
            kind: e.file_type().ok(),
            listed: e,
        }
    }

    /// The metadata of what the entry leads to: of an ordinary entry looked up from its
    /// open folder (no walk of the whole path), of a link followed.
    fn metadata(&self) -> std::io::Result<std::fs::Metadata> {
        match &self.kind {
            Some(k) if !k.is_symlink() => self.listed.metadata(),
            _ => std::fs::metadata(&self.path),
        }
    }
}

/// What an entry of a folder of the roster really is.
enum Real {
    /// A regular file, at this canonical path.
    File(PathBuf),
    /// A folder.
    Dir,
    /// Something else (a device, a socket, a pipe).
    Other,
}

/// What the entry `e` of the folder whose canonical path is `real_dir` really is, when that
/// is inside the roster. An ordinary entry (not a symbolic link) of a folder that is inside
/// the roster is inside too, at `real_dir/<name>`: only a link (or an entry the listing
/// could not tell) is resolved, with [`resolve`], which reports it when it leads outside the
/// roster, dangles or loops.
fn real_entry(
    e: &Entry,
    real_dir: &Path,
    inside: &Path,
    problems: &mut Vec<Problem>,
) -> Option<Real> {
    match (&e.kind, e.path.file_name()) {
        (Some(kind), Some(name)) if !kind.is_symlink() => {
            let real = real_dir.join(name);
            Some(if kind.is_file() {
                Real::File(real)
            } else if kind.is_dir() {
                Real::Dir
            } else {
                Real::Other
            })
        }
        _ => resolve(&e.path, inside, problems).map(Real::of),
    }
}

impl Real {
    /// What the canonical path `real` is (one `stat`).
    fn of(real: PathBuf) -> Real {
        match std::fs::metadata(&real) {
            Ok(m) if m.is_file() => Real::File(real),
            Ok(m) if m.is_dir() => Real::Dir,
            _ => Real::Other,
        }
    }
}

/// A folder of the roster listed once: an entry is found by name in the listing, without
/// a look-up of its own; when the folder cannot be listed, each name is looked up alone.
struct Folder {
    path: PathBuf,
    /// The canonical path of the folder (inside the roster).
    real: PathBuf,
    /// By name; `None` when the folder could not be listed.
    entries: Option<std::collections::HashMap<std::ffi::OsString, Entry>>,
}

impl Folder {
    fn list(path: PathBuf, real: PathBuf) -> Folder {
        let entries = std::fs::read_dir(&path).ok().map(|rd| {
            rd.filter_map(|e| {
                let e = Entry::of(e.ok()?);
                Some((e.name.clone(), e))
            })
            .collect()
        });
        Folder {
            path,
            real,
            entries,
        }
    }

    fn entry(&self, name: &str) -> Option<&Entry> {
        self.entries.as_ref()?.get(std::ffi::OsStr::new(name))
    }

    /// Whether the folder holds an entry `name` (a dangling link counts).
    fn has(&self, name: &str) -> bool {
        match &self.entries {
            Some(_) => self.entry(name).is_some(),
            None => entry_exists(&self.path.join(name)),
        }
    }

    /// Whether entry `name` is a folder (a link is followed).
    fn has_dir(&self, name: &str) -> bool {
        match (&self.entries, self.entry(name)) {
            (Some(_), None) => false,
            (Some(_), Some(Entry { kind: Some(k), .. })) if !k.is_symlink() => k.is_dir(),
            _ => self.path.join(name).is_dir(),
        }
    }

    /// Entry `name` and its canonical path, when it exists and is inside the roster: an
    /// ordinary entry is at `real/<name>`; a link (or an entry the listing could not tell)
    /// is resolved, and a problem when it leads outside the roster, dangles or loops. A
    /// missing entry is `None` without a problem.
    fn resolve(
        &self,
        name: &str,
        inside: &Path,
        problems: &mut Vec<Problem>,
    ) -> Option<(PathBuf, PathBuf)> {
        match (&self.entries, self.entry(name)) {
            (Some(_), None) => None,
            (Some(_), Some(e)) => match &e.kind {
                Some(k) if !k.is_symlink() => Some((e.path.clone(), self.real.join(name))),
                _ => Some((e.path.clone(), resolve(&e.path, inside, problems)?)),
            },
            (None, _) => {
                let path = self.path.join(name);
                if !entry_exists(&path) {
                    return None;
                }
                let real = resolve(&path, inside, problems)?;
                Some((path, real))
            }
        }
    }

    /// Entry `name` when it is a regular file inside the roster (problems as for
    /// [`Folder::resolve`]).
    fn file(&self, name: &str, inside: &Path, problems: &mut Vec<Problem>) -> Option<PathBuf> {
        match self.entry(name) {
            Some(e) => match real_entry(e, &self.real, inside, problems)? {
                Real::File(_) => Some(e.path.clone()),
                _ => None,
            },
            None => {
                let (path, real) = self.resolve(name, inside, problems)?;
                real.is_file().then_some(path)
            }
        }
    }
}

/// The message for an entry whose name is not UTF-8.
fn not_utf8(what: &str) -> String {
    format!("the {what} name is not valid UTF-8 (shown here with �); rename it; skipped")
}

/// The athlete folders of the roster, sorted by id. A folder reached twice (a symbolic
/// link to another athlete folder) is listed once, by its real name; a folder that is
/// neither an athlete folder nor hidden is a problem. Each is canonicalized once.
fn athlete_folders(root: &Path, inside: &Path, problems: &mut Vec<Problem>) -> Vec<AthleteFolder> {
    let mut found: Vec<(AthleteFolder, PathBuf, bool)> = Vec::new();
    for entry in sorted_entries(root, problems) {
        let dir = entry.path;
        let Some(name) = dir.file_name() else {
            continue;
        };
        if name.as_encoded_bytes().starts_with(b".") {
            continue;
        }
        let link = match &entry.kind {
            Some(kind) => kind.is_symlink(),
            None => is_link(&dir),
        };
        let is_dir = match &entry.kind {
            Some(kind) => kind.is_dir(),
            None => dir.is_dir(),
        };
        if !link && !is_dir {
            // roster.toml, a read-me, ...: not the roster's business.
            continue;
        }
        // An ordinary folder of the roster is inside it; only a link is resolved.
        let real = if link {
            match resolve(&dir, inside, problems) {
                Some(real) if real.is_dir() => real,
                _ => continue,
            }
        } else {
            inside.join(name)
        };
        let Some(id) = name.to_str().map(str::to_string) else {
            problems.push(Problem {
                path: dir.clone(),
                message: not_utf8("folder"),
            });
            continue;
        };
        let listing = Folder::list(dir.clone(), real.clone());
        let has_profile = listing.has("athlete.toml");
        if !has_profile && !listing.has_dir("activities") {
            problems.push(Problem {
                path: dir.clone(),
                message: "not an athlete folder (no athlete.toml, no activities folder); \
                          skipped"
                    .to_string(),
            });
            continue;
        }
        found.push((
            AthleteFolder {
                id,
                dir,
                listing,
                has_profile,
            },
            real,
            link,
        ));
    }
    // Real folders before links to them: the link is the one reported.
    found.sort_by_key(|(_, _, link)| *link);
    let mut seen: std::collections::BTreeMap<PathBuf, PathBuf> = Default::default();
    let mut out = Vec::new();
    for (f, real, _) in found {
        if let Some(first) = seen.get(&real) {
            problems.push(Problem {
                path: f.dir.clone(),
                message: format!(
                    "the same folder as {} (a symbolic link to it); listed once",
                    first.display()
                ),
            });
            continue;
        }
        seen.insert(real, f.dir.clone());
        out.push(f);
    }
    out.sort_by(|a, b| a.id.cmp(&b.id));
    out
}

/// The digest of an athlete's inputs: the profile's content, and each plan file's name,
/// size, modification and change times (nanoseconds) and inode — not its content.
///
/// Why the plan files' stat and not their content: reading every plan file of the roster
/// at each start cost more than the rest of a warm start together (thousands of files on a
/// big roster), while an edited plan changes its stat (size or times; a file replaced by a
/// new one, its inode), so its athlete's cached reviews are still stale after any edit.
/// Plans are read when a session is analysed ([`plans::choose_plan`]), and checked when
/// their problems are asked for ([`Athlete::plan_problems`]). A plan touched without a
/// change (copied back, `touch`ed) re-analyses its athlete's sessions once; so did the
/// switch to this digest, once, like a new analysis version. The profile is read at open
/// anyway (its keys are needed), so its content is used.
fn inputs_digest(profile_text: &[u8], plan_files: &[Entry]) -> String {
    use std::os::unix::fs::MetadataExt;
    let mut inputs = Vec::with_capacity(profile_text.len() + 64 * plan_files.len() + 16);
    inputs.extend_from_slice(b"profile+plan-stats\0");
    inputs.extend_from_slice(profile_text);
    for p in plan_files {
        inputs.extend_from_slice(b"\0plan\0");
        inputs.extend_from_slice(p.name.as_encoded_bytes());
        inputs.push(0);
        match p.metadata() {
            Ok(m) => {
                for n in [
                    m.len() as i64,
                    m.mtime(),
                    m.mtime_nsec(),
                    m.ctime(),
                    m.ctime_nsec(),
                    m.ino() as i64,
                ] {
                    inputs.extend_from_slice(&n.to_le_bytes());
                }
            }
            Err(_) => inputs.extend_from_slice(b"unreadable"),
        }
    }
    crate::ingest::hash::sha256_hex(&inputs)
}

/// Read one athlete folder: profile, plan file names, activities and notes. Plan files are
/// not read here ([`inputs_digest`]).
fn read_athlete(
    found: AthleteFolder,
    inside: &Path,
    units: Units,
    problems: &mut Vec<Problem>,
) -> Athlete {
    let AthleteFolder {
        id,
        dir,
        listing,
        has_profile,
    } = found;
    let profile_path = dir.join("athlete.toml");
    let mut folder_problems = Vec::new();
    let mut profile_problems = Vec::new();
    let mut profile_text = String::new();
    let profile = if !has_profile {
        folder_problems.push(Problem {
            path: dir.clone(),
            message: NO_PROFILE.to_string(),
        });
        AthleteProfile::bare(&id)
    } else if listing
        .resolve("athlete.toml", inside, &mut folder_problems)
        .is_none()
    {
        AthleteProfile::bare(&id)
    } else {
        match crate::ingest::read_text_file(&profile_path) {
            Ok(text) => {
                let report = read_profile(&text, &id, units);
                profile_text = text;
                profile_problems = report.problems;
                report.profile
            }
            Err(e) => {
                problems.push(Problem {
                    path: profile_path.clone(),
                    message: e.to_string(),
                });
                AthleteProfile::bare(&id)
            }
        }
    };
    let activities = discover_activities(&listing, inside, problems);
    let plans: Vec<Entry> = match listing.resolve("plans", inside, problems) {
        Some((plans, real_plans)) => sorted_entries(&plans, &mut Vec::new())
            .into_iter()
            .filter(|e| {
                e.path
                    .extension()
                    .is_some_and(|x| x.eq_ignore_ascii_case("toml"))
            })
            .filter(|e| {
                matches!(
                    real_entry(e, &real_plans, inside, problems),
                    Some(Real::File(_))
                )
            })
            .collect(),
        None => Vec::new(),
    };
    let inputs_digest = inputs_digest(profile_text.as_bytes(), &plans);
    let plan_files = plans.into_iter().map(|e| e.path).collect();
    Athlete {
        id,
        dir,
        profile,
        activities,
        plan_files,
        profile_problems,
        plan_problems: std::sync::OnceLock::new(),
        folder_problems,
        inputs_digest,
    }
}

/// The entries of a folder sorted by name; a missing folder is empty, an unreadable one a problem.
fn sorted_entries(dir: &Path, problems: &mut Vec<Problem>) -> Vec<Entry> {
    let rd = match std::fs::read_dir(dir) {
        Ok(rd) => rd,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Vec::new(),
        Err(e) => {
            problems.push(Problem {
                path: dir.to_path_buf(),
                message: e.to_string(),
            });
            return Vec::new();
        }
    };
    let mut out: Vec<Entry> = rd.filter_map(|e| Some(Entry::of(e.ok()?))).collect();
    // One folder: the order of the names is that of the paths.
    out.sort_by(|a, b| a.name.cmp(&b.name));
    out
}

/// The activities of an athlete folder (`athlete`: its listing), each with its note.
fn discover_activities(
    athlete: &Folder,
    inside: &Path,
    problems: &mut Vec<Problem>,
) -> Vec<Activity> {
    let Some((activities, real_activities)) = athlete.resolve("activities", inside, problems)
    else {
        return Vec::new();
    };
    let notes = athlete
        .resolve("notes", inside, problems)
        .map(|(path, real)| Folder::list(path, real));
    let mut out = Vec::new();
    let mut real_paths: std::collections::HashMap<PathBuf, PathBuf> = Default::default();
    for entry in sorted_entries(&activities, problems) {
        let Some(name) = entry.path.file_name() else {
            continue;
        };
        if name.as_encoded_bytes().starts_with(b".") {
            continue;
        }
        let Some(real) = real_entry(&entry, &real_activities, inside, problems) else {
            continue;
        };
        let path = entry.path;
        let real = match real {
            Real::File(real) => real,
            Real::Dir => {
                problems.push(Problem {
                    path: path.clone(),
                    message: "a folder, not an activity file; skipped".into(),
                });
                continue;
            }
            Real::Other => {
                problems.push(Problem {
                    path: path.clone(),
                    message: "not a regular file; skipped".into(),
                });
                continue;
            }
        };
        let Some(name) = path.file_name() else {
            continue;
        };
        if name.to_str().is_none() {
            problems.push(Problem {
                path: path.clone(),
                message: not_utf8("file"),
            });
            continue;
        }
        if let Some(first) = real_paths.get(&real) {
            problems.push(Problem {
                path: path.clone(),
                message: format!(
                    "the same file as {} (a symbolic link to it); listed once",
                    first.display()
                ),
            });
            continue;
        }
        real_paths.insert(real, path.clone());
        let format = path
            .extension()
            .and_then(|e| e.to_str())
            .and_then(FileFormat::from_extension);
        let Some(format) = format else {
            problems.push(Problem {
                path: path.clone(),
                message: "not a .fit, .tcx or .gpx file; skipped".into(),
            });
            continue;
        };
        let stem = path
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_default();
        let note_file = notes
            .as_ref()
            .and_then(|n| n.file(&format!("{stem}.txt"), inside, problems));
        out.push(Activity {
            path,
            note_file,
            stem,
            format,
        });
    }
    // Two files with the same stem would share a session id: keep the first, report the rest.
    let mut seen = std::collections::HashSet::new();
    out.retain(|a| {
        if seen.insert(a.stem.clone()) {
            true
        } else {
            problems.push(Problem {
                path: a.path.clone(),
                message: format!("another file already has the name {:?}; skipped", a.stem),
            });
            false
        }
    });
    out
}
