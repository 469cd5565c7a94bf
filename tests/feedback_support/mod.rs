//! Shared by the feedback draft tests: every demo session analysed once, with its note.
#![allow(dead_code)]

use std::sync::OnceLock;

use splitdesk::analysis::review::Review;
use splitdesk::export::feedback::{DraftInput, Grades};
use splitdesk::journal::PurposeVerdict;
use splitdesk::model::AthleteProfile;

pub struct DemoSession {
    pub id: String,
    pub profile: AthleteProfile,
    pub review: Review,
    pub note: Option<String>,
}

/// Every session of the bundled demo roster, analysed (in roster order).
pub fn demo() -> &'static [DemoSession] {
    static DEMO: OnceLock<Vec<DemoSession>> = OnceLock::new();
    DEMO.get_or_init(|| {
        let roster = splitdesk::roster::Roster::open(&splitdesk::config::demo_roster())
            .expect("demo roster");
        let mut out = Vec::new();
        for a in &roster.athletes {
            for act in &a.activities {
                // The planted damaged file has no review.
                let Ok(an) = splitdesk::workspace::analyse_activity(a, act) else {
                    continue;
                };
                let note = act
                    .note_file
                    .as_ref()
                    .and_then(|p| std::fs::read_to_string(p).ok())
                    .or_else(|| an.session.note.clone());
                out.push(DemoSession {
                    id: format!("{}/{}", a.id, act.stem),
                    profile: a.profile.clone(),
                    review: an.review,
                    note,
                });
            }
        }
        out
    })
}

/// The demo sessions plus kinds the demo roster does not have, made from a demo easy run:
/// the same run on a treadmill (no positions, no plan) and a ride.
pub fn every_kind() -> &'static [DemoSession] {
    static ALL: OnceLock<Vec<DemoSession>> = OnceLock::new();
    ALL.get_or_init(|| {
        let mut out: Vec<DemoSession> = Vec::new();
        for s in demo() {
            out.push(DemoSession {
                id: s.id.clone(),
                profile: s.profile.clone(),
                review: s.review.clone(),
                note: s.note.clone(),
            });
        }
        for base in [
            "mira-castellan/2026-10-29-easy-run",
            "ansel-marchetti/2026-11-06-easy-run",
        ] {
            let s = session(base);
            let mut r = s.review.clone();
            r.session.channels.retain(|c| c != "position");
            r.plan = None;
            r.kind = splitdesk::analysis::kind::classify(&r, None);
            out.push(DemoSession {
                id: format!("{base} (treadmill)"),
                profile: s.profile.clone(),
                review: r,
                note: s.note.clone(),
            });
            let mut r = s.review.clone();
            r.running = false;
            r.session.sport = "cycling".into();
            r.kind = splitdesk::analysis::kind::classify(&r, None);
            out.push(DemoSession {
                id: format!("{base} (ride)"),
                profile: s.profile.clone(),
                review: r,
                note: s.note.clone(),
            });
        }
        out
    })
}

pub fn session(id: &str) -> &'static DemoSession {
    demo()
        .iter()
        .find(|s| s.id == id)
        .unwrap_or_else(|| panic!("no demo session {id}"))
}

/// Grades: every work interval gets `score(k)` and the verdict.
pub fn grades(review: &Review, verdict: PurposeVerdict, score: impl Fn(u32) -> u8) -> Grades {
    let n = review.work().count() as u32;
    Grades {
        scores: (1..=n).map(|k| (k, score(k))).collect(),
        verdict: Some(verdict),
    }
}

pub fn input<'a>(s: &'a DemoSession, grades: Grades, with_note: bool) -> DraftInput<'a> {
    DraftInput {
        review: &s.review,
        profile: &s.profile,
        grades,
        note: if with_note { s.note.as_deref() } else { None },
        marks: Vec::new(),
        earlier: None,
    }
}
