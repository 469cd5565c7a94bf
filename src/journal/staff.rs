//! A coaching staff on one journal: who the coaches are, which athletes each coaches, whose
//! records a journal handle reads and writes, and what coaches may see of each other.
//!
//! - A journal without a staff has one unnamed coach (''): today's single-coach journal.
//! - `staff add` of the first coach makes the staff; the unnamed coach's reviews become that
//!   coach's (the one who kept the journal alone is the one who sets up the staff), and the
//!   command says how many.
//! - On a journal with a staff every write of a coach's record needs a coach on it
//!   ([`Journal::set_coach`]); a removed coach keeps their records but can write no more.
//! - Blind per coach: each coach has their own reviews. A colleague's grades of a session are
//!   shown only once one's own blind grading of it is complete
//!   ([`Journal::colleague_grades`]), the same rule as for the athlete's notes.
//! - "Reviewing now" marks are advisory: a coach's workstation marks the session it shows
//!   until a time a few minutes ahead and renews the mark while it stays; an expired mark is
//!   ignored.

use std::collections::BTreeMap;
use std::path::Path;

use chrono::{DateTime, Utc};

use super::db::Sql;
use super::{parse_ts, parse_verdict, ts, Journal, JournalError, PurposeVerdict, Result};
use crate::analysis::agreement::CoachGrade;

/// The longest coach name (characters).
pub const MAX_COACH_NAME: usize = 64;

/// How long a "reviewing now" mark lasts unless renewed.
pub const REVIEWING_FOR: chrono::Duration = chrono::Duration::minutes(3);

/// One coach of the staff.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StaffMember {
    pub name: String,
    pub added_at: DateTime<Utc>,
    /// When the coach left the staff; their records stay.
    pub removed_at: Option<DateTime<Utc>>,
    /// The athletes assigned to the coach, by id.
    pub athletes: Vec<String>,
    /// How many reviews the coach has begun.
    pub reviews: u64,
}

/// What `staff add` did.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct StaffAdded {
    /// The coach was on the staff before and came back.
    pub returned: bool,
    /// Reviews of the journal's unnamed single coach that became this coach's (only when
    /// the first coach is added).
    pub took_over_reviews: u64,
}

/// A colleague's blind grades of a session (see [`Journal::colleague_grades`]).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ColleagueGrades {
    pub coach: String,
    /// Blind scores by work interval (1-based).
    pub scores: Vec<(u32, u8)>,
    /// The blind purpose verdict, when given.
    pub verdict: Option<PurposeVerdict>,
    /// Whether the colleague has revealed the notes (their blind grading is complete).
    pub revealed: bool,
}

/// Check a coach name typed by a person: 1-64 characters, printable, no surrounding space.
pub fn check_coach_name(name: &str) -> std::result::Result<(), String> {
    if name.is_empty() {
        return Err("a coach name cannot be empty".into());
    }
    if name.chars().count() > MAX_COACH_NAME {
        return Err(format!(
            "a coach name has at most {MAX_COACH_NAME} characters"
        ));
    }
    if name
        .chars()
        .any(|c| c.is_control() || crate::roster::is_unsafe(c))
    {
        return Err("a coach name cannot hold control characters".into());
    }
    if name.trim() != name {
        return Err("a coach name cannot start or end with a space".into());
    }
    Ok(())
}

/// Active coaches, and whether `coach` is one of them.
fn active(conn: &mut dyn Sql, path: &Path, coach: &str) -> Result<(u64, bool)> {
    conn.query_one(
        path,
        "SELECT (SELECT count(*) FROM coach WHERE removed_at IS NULL),
                (SELECT count(*) FROM coach WHERE removed_at IS NULL AND name = ?1)",
        &[&coach],
        |r| Ok((r.get::<i64>(0)?.max(0) as u64, r.get::<i64>(1)? > 0)),
    )
}

/// Refuse a write of a coach's record by someone the journal does not know as a writer: on
/// a journal with a staff, anyone but an active coach; on one without, any named coach.
pub(super) fn require_writer(conn: &mut dyn Sql, path: &Path, coach: &str) -> Result<()> {
    let (staff, known) = active(conn, path, coach)?;
    match (staff, coach.is_empty(), known) {
        (0, true, _) => Ok(()),
        (_, false, true) => Ok(()),
        (0, false, _) => Err(JournalError::UnknownCoach {
            path: path.to_path_buf(),
            coach: coach.to_string(),
            staff: 0,
        }),
        (staff, true, _) => Err(JournalError::NoCoach {
            path: path.to_path_buf(),
            staff,
        }),
        (staff, false, false) => Err(JournalError::UnknownCoach {
            path: path.to_path_buf(),
            coach: coach.to_string(),
            staff,
        }),
    }
}

impl Journal {
    /// The coach whose records this handle reads and writes ('' for the single coach of a
    /// journal without a staff).
    pub fn coach(&self) -> &str {
        &self.coach
    }

    /// Read and write as `name`, who must be an active coach of the staff ('' is the single
    /// coach of a journal without a staff).
    pub fn set_coach(&mut self, name: &str) -> Result<()> {
        let (staff, known) = self.read(|conn, path| active(conn, path, name))?;
        match (staff, name.is_empty(), known) {
            (0, true, _) | (_, false, true) => {
                self.coach = name.to_string();
                Ok(())
            }
            (staff, true, _) => Err(JournalError::NoCoach {
                path: self.path.clone(),
                staff,
            }),
            (staff, false, false) => Err(JournalError::UnknownCoach {
                path: self.path.clone(),
                coach: name.to_string(),
                staff,
            }),
        }
    }

    /// How many active coaches the journal's staff has (0: a single-coach journal).
    pub fn staff_size(&self) -> Result<u64> {
        self.read(|conn, path| Ok(active(conn, path, "")?.0))
    }

    /// Every coach ever on the staff, by name, with their athletes and their reviews.
    pub fn staff(&self) -> Result<Vec<StaffMember>> {
        self.read(|conn, path| {
            let mut members = conn.query(
                path,
                "SELECT c.name, c.added_at, c.removed_at,
                    (SELECT count(*) FROM review r WHERE r.coach = c.name)
                 FROM coach c ORDER BY c.name",
                &[],
                |r| {
                    Ok(StaffMember {
                        name: r.get(0)?,
                        added_at: parse_ts(path, &r.get::<String>(1)?)?,
                        removed_at: match r.get::<Option<String>>(2)? {
                            Some(at) => Some(parse_ts(path, &at)?),
                            None => None,
                        },
                        athletes: Vec::new(),
                        reviews: r.get::<i64>(3)?.max(0) as u64,
                    })
                },
            )?;
            let pairs: Vec<(String, String)> = conn.query(
                path,
                "SELECT coach, athlete_id FROM assignment ORDER BY athlete_id",
                &[],
                |r| Ok((r.get(0)?, r.get(1)?)),
            )?;
            for (coach, athlete) in pairs {
                if let Some(m) = members.iter_mut().find(|m| m.name == coach) {
                    m.athletes.push(athlete);
                }
            }
            Ok(members)
        })
    }

    /// Add a coach to the staff (or bring back one who was removed). The first coach added
    /// takes over the reviews of the journal's unnamed single coach.
    pub fn staff_add(&mut self, name: &str, now: DateTime<Utc>) -> Result<StaffAdded> {
        check_coach_name(name).map_err(|why| JournalError::BadCoachName {
            path: self.path.clone(),
            name: crate::roster::printable(name),
            why,
        })?;
        self.write_unchecked(|tx, path| {
            let existing: Option<Option<String>> = tx.query_opt(
                path,
                "SELECT removed_at FROM coach WHERE name = ?1",
                &[&name],
                |r| r.get(0),
            )?;
            match existing {
                Some(None) => Err(JournalError::AlreadyOnStaff {
                    path: path.to_path_buf(),
                    coach: name.to_string(),
                }),
                Some(Some(_)) => {
                    tx.exec(
                        path,
                        "UPDATE coach SET removed_at = NULL WHERE name = ?1",
                        &[&name],
                    )?;
                    Ok(StaffAdded {
                        returned: true,
                        took_over_reviews: 0,
                    })
                }
                None => {
                    let ever: i64 =
                        tx.query_one(path, "SELECT count(*) FROM coach", &[], |r| r.get(0))?;
                    tx.exec(
                        path,
                        "INSERT INTO coach (name, added_at) VALUES (?1, ?2)",
                        &[&name, &ts(now)],
                    )?;
                    let took_over = if ever == 0 {
                        tx.exec(
                            path,
                            "UPDATE session_review SET coach = ?1 WHERE coach = ''",
                            &[&name],
                        )?;
                        tx.exec(
                            path,
                            "UPDATE review SET coach = ?1 WHERE coach = ''",
                            &[&name],
                        )?
                    } else {
                        0
                    };
                    Ok(StaffAdded {
                        returned: false,
                        took_over_reviews: took_over,
                    })
                }
            }
        })
    }

    /// Take a coach off the staff: their records stay, their athletes become unassigned,
    /// and they can write no more. The last active coach cannot be removed.
    pub fn staff_remove(&mut self, name: &str, now: DateTime<Utc>) -> Result<()> {
        self.write_unchecked(|tx, path| {
            let (staff, known) = active(tx, path, name)?;
            if !known {
                return Err(JournalError::UnknownCoach {
                    path: path.to_path_buf(),
                    coach: name.to_string(),
                    staff,
                });
            }
            if staff <= 1 {
                return Err(JournalError::LastCoach {
                    path: path.to_path_buf(),
                    coach: name.to_string(),
                });
            }
            tx.exec(
                path,
                "UPDATE coach SET removed_at = ?2 WHERE name = ?1",
                &[&name, &ts(now)],
            )?;
            tx.exec(path, "DELETE FROM assignment WHERE coach = ?1", &[&name])?;
            tx.exec(path, "DELETE FROM reviewing WHERE coach = ?1", &[&name])?;
            Ok(())
        })
    }

    /// Assign an athlete to an active coach (`Some`), or leave them unassigned (`None`).
    pub fn assign(&mut self, athlete: &str, coach: Option<&str>, now: DateTime<Utc>) -> Result<()> {
        self.write_unchecked(|tx, path| {
            match coach {
                Some(coach) => {
                    let (staff, known) = active(tx, path, coach)?;
                    if !known {
                        return Err(JournalError::UnknownCoach {
                            path: path.to_path_buf(),
                            coach: coach.to_string(),
                            staff,
                        });
                    }
                    tx.exec(
                        path,
                        "INSERT INTO assignment (athlete_id, coach, at) VALUES (?1, ?2, ?3)
                         ON CONFLICT (athlete_id) DO UPDATE SET coach = excluded.coach,
                             at = excluded.at",
                        &[&athlete, &coach, &ts(now)],
                    )?;
                }
                None => {
                    tx.exec(
                        path,
                        "DELETE FROM assignment WHERE athlete_id = ?1",
                        &[&athlete],
                    )?;
                }
            }
            Ok(())
        })
    }

    /// Put this coach's own athletes' sessions first, then the others' (covering for a
    /// colleague), keeping the order within each; unchanged for a journal without a staff.
    pub fn own_athletes_first(&self, queue: &mut [super::QueueEntry]) -> Result<()> {
        if self.coach.is_empty() {
            return Ok(());
        }
        let assigned = self.assignments()?;
        queue.sort_by_key(|e| assigned.get(&e.athlete) != Some(&self.coach));
        Ok(())
    }

    /// Each assigned athlete's coach, by athlete id.
    pub fn assignments(&self) -> Result<BTreeMap<String, String>> {
        self.read(|conn, path| {
            let pairs: Vec<(String, String)> =
                conn.query(path, "SELECT athlete_id, coach FROM assignment", &[], |r| {
                    Ok((r.get(0)?, r.get(1)?))
                })?;
            Ok(pairs.into_iter().collect())
        })
    }

    /// Every named coach's blind interval scores of the sessions in the roster, for the
    /// agreement between coaches: the values given before the reveal (revisions after it
    /// are not blind and are left out), for the work intervals the review counts.
    pub fn coach_grades(&self) -> Result<Vec<CoachGrade>> {
        self.read(|conn, path| {
            conn.query(
                path,
                "SELECT r.coach, s.athlete_id, s.session_id, s.start_time, c.interval_no, c.score
                 FROM score c
                 JOIN review r ON r.id = c.review_id
                 JOIN session_review sr ON sr.review_id = r.id AND sr.coach = r.coach
                 JOIN session s ON s.session_id = sr.session_id
                 WHERE r.coach <> '' AND r.content_hash = s.content_hash
                   AND c.interval_no <= coalesce(
                       CASE WHEN r.revealed_at IS NOT NULL THEN r.work_intervals END,
                       s.work_intervals, 0)
                 ORDER BY s.start_time, s.session_id, c.interval_no, r.coach",
                &[],
                |r| {
                    Ok(CoachGrade {
                        coach: r.get(0)?,
                        athlete_id: r.get(1)?,
                        session_id: r.get(2)?,
                        start_time: parse_ts(path, &r.get::<String>(3)?)?,
                        interval_no: r.get(4)?,
                        score: r.get(5)?,
                    })
                },
            )
        })
    }

    /// [`Journal::coach_grades`] as this coach may see them: only the sessions whose blind
    /// grading this coach has completed (a colleague's scores of any other session stay
    /// hidden, as in [`Journal::colleague_grades`]), with the number of sessions left out.
    pub fn coach_grades_seen(&self) -> Result<(Vec<CoachGrade>, usize)> {
        let all = self.coach_grades()?;
        let mut complete: BTreeMap<String, bool> = BTreeMap::new();
        for g in &all {
            if !complete.contains_key(&g.session_id) {
                let st = self.review_state(&g.session_id)?;
                let done = st.revealed_at.is_some()
                    || (st.work_intervals.is_some() && st.missing.is_empty());
                complete.insert(g.session_id.clone(), done);
            }
        }
        let held_back = complete.values().filter(|done| !**done).count();
        let seen = all
            .into_iter()
            .filter(|g| complete.get(&g.session_id) == Some(&true))
            .collect();
        Ok((seen, held_back))
    }

    /// The other coaches' blind grades of a session, once this coach's own blind grading of
    /// it is complete; refused with [`JournalError::ColleaguesHidden`] before that, so a
    /// coach never grades with a colleague's scores in view.
    pub fn colleague_grades(&self, session_id: &str) -> Result<Vec<ColleagueGrades>> {
        let own = self.review_state(session_id)?;
        if !own.missing.is_empty() || own.work_intervals.is_none() {
            return Err(JournalError::ColleaguesHidden {
                path: self.path.clone(),
                session_id: session_id.to_string(),
                missing: own.missing,
            });
        }
        let coach = self.coach.clone();
        self.read(|conn, path| {
            let reviews: Vec<(String, i64, Option<String>, bool)> = conn.query(
                path,
                "SELECT sr.coach, r.id, r.verdict, r.revealed_at IS NOT NULL
                 FROM session_review sr JOIN review r ON r.id = sr.review_id
                 WHERE sr.session_id = ?1 AND sr.coach <> ?2
                 ORDER BY sr.coach",
                &[&session_id, &coach],
                |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?, r.get(3)?)),
            )?;
            let mut out = Vec::new();
            for (name, rid, verdict, revealed) in reviews {
                let scores: Vec<(u32, u8)> = conn.query(
                    path,
                    "SELECT interval_no, score FROM score WHERE review_id = ?1
                     ORDER BY interval_no",
                    &[&rid],
                    |r| Ok((r.get(0)?, r.get(1)?)),
                )?;
                out.push(ColleagueGrades {
                    coach: name,
                    scores,
                    verdict: verdict.map(|v| parse_verdict(path, &v)).transpose()?,
                    revealed,
                });
            }
            Ok(out)
        })
    }

    /// Mark the session as being reviewed by this coach now, until [`REVIEWING_FOR`] from
    /// `now` (advisory: other workstations show it). Does nothing for the unnamed coach.
    pub fn mark_reviewing(&mut self, session_id: &str, now: DateTime<Utc>) -> Result<()> {
        if self.coach.is_empty() || self.read_only.is_some() {
            return Ok(());
        }
        let until = ts(now + REVIEWING_FOR);
        let coach = self.coach.clone();
        self.write(|tx, path| {
            // One session at a time: the one on the screen.
            tx.exec(
                path,
                "DELETE FROM reviewing WHERE coach = ?1 AND session_id <> ?2",
                &[&coach, &session_id],
            )?;
            tx.exec(
                path,
                "INSERT INTO reviewing (session_id, coach, until) VALUES (?1, ?2, ?3)
                 ON CONFLICT (session_id, coach) DO UPDATE SET until = excluded.until",
                &[&session_id, &coach, &until],
            )?;
            Ok(())
        })
    }

    /// Drop this coach's "reviewing now" marks (the workstation is closing).
    pub fn clear_reviewing(&mut self) -> Result<()> {
        if self.coach.is_empty() || self.read_only.is_some() {
            return Ok(());
        }
        let coach = self.coach.clone();
        self.write(|tx, path| {
            tx.exec(path, "DELETE FROM reviewing WHERE coach = ?1", &[&coach])?;
            Ok(())
        })
    }

    /// Sessions other coaches are reviewing now (marks not expired at `now`): session id to
    /// the coaches' names.
    pub fn reviewing_by_others(&self, now: DateTime<Utc>) -> Result<BTreeMap<String, Vec<String>>> {
        let coach = self.coach.clone();
        self.read(|conn, path| {
            let rows: Vec<(String, String)> = conn.query(
                path,
                "SELECT session_id, coach FROM reviewing
                 WHERE coach <> ?1 AND until > ?2 ORDER BY session_id, coach",
                &[&coach, &ts(now)],
                |r| Ok((r.get(0)?, r.get(1)?)),
            )?;
            let mut out: BTreeMap<String, Vec<String>> = BTreeMap::new();
            for (session, coach) in rows {
                out.entry(session).or_default().push(coach);
            }
            Ok(out)
        })
    }
}
