//! A session in its context: the earlier runs of the same workout and the week around it.
//!
//! Everything comes from the journal's session cards (no activity file is read again) and,
//! for the planned sessions of the week, the athlete's plan files. The comparisons
//! themselves are pure ([`crate::analysis::earlier`], [`crate::analysis::week`]).

use chrono::{Duration, NaiveDate};

use crate::analysis::card::SessionCard;
use crate::analysis::earlier::{self, Candidate, Comparison};
use crate::analysis::kind::SessionKind;
use crate::analysis::review::ANALYSIS_VERSION;
use crate::analysis::shape::WorkoutShape;
use crate::analysis::week::{self, Week};
use crate::journal::{Journal, JournalError};
use crate::roster::Athlete;

/// Why a session's context cannot be given.
#[derive(Debug, thiserror::Error)]
pub enum ContextError {
    #[error(transparent)]
    Journal(#[from] JournalError),
    #[error(
        "{0}: no current analysis in the journal (the file cannot be read, or it has not \
         been analysed since it changed); run `splitdesk check` and try again"
    )]
    NotAnalysed(String),
}

/// A card from its JSON, under the id the journal holds it for (a renamed file's card is
/// the card of the same content under its old id). `None` for a damaged card.
pub fn parse_card(session_id: &str, json: &str) -> Option<SessionCard> {
    let mut card: SessionCard = serde_json::from_str(json).ok()?;
    card.session_id = session_id.to_string();
    Some(card)
}

/// The current card of one session.
pub fn card(
    journal: &Journal,
    athlete: &Athlete,
    session_id: &str,
) -> Result<SessionCard, ContextError> {
    journal
        .card(session_id, &athlete.inputs_digest, ANALYSIS_VERSION)?
        .and_then(|json| parse_card(session_id, &json))
        .ok_or_else(|| ContextError::NotAnalysed(session_id.to_string()))
}

/// The athlete's sessions as the search for earlier runs sees them (no card is read).
pub fn candidates(journal: &Journal, athlete: &Athlete) -> Result<Vec<Candidate>, ContextError> {
    let rows = journal.card_index(&athlete.id, &athlete.inputs_digest, ANALYSIS_VERSION)?;
    Ok(rows
        .into_iter()
        .filter_map(|r| {
            let start = chrono::DateTime::parse_from_rfc3339(&r.start_time)
                .ok()?
                .with_timezone(&chrono::Utc);
            let kind: SessionKind =
                serde_json::from_value(serde_json::Value::String(r.kind)).ok()?;
            let shape: Option<WorkoutShape> = r
                .shape_json
                .as_deref()
                .and_then(|j| serde_json::from_str(j).ok());
            Some(Candidate {
                session_id: r.session_id,
                start,
                kind,
                shape,
            })
        })
        .collect())
}

/// The session's earlier runs of the same workout: its card and theirs (latest first).
pub fn earlier_runs(
    journal: &Journal,
    athlete: &Athlete,
    session_id: &str,
) -> Result<(SessionCard, Vec<SessionCard>), ContextError> {
    let current = card(journal, athlete, session_id)?;
    let all = candidates(journal, athlete)?;
    let picked = earlier::pick_earlier(&current, &all);
    let mut cards = Vec::with_capacity(picked.len());
    for i in picked {
        let Some(c) = all.get(i) else { continue };
        if let Some(json) = journal.card(&c.session_id, &athlete.inputs_digest, ANALYSIS_VERSION)? {
            if let Some(card) = parse_card(&c.session_id, &json) {
                cards.push(card);
            }
        }
    }
    Ok((current, cards))
}

/// The session beside its earlier runs, in the athlete's units.
pub fn comparison(
    journal: &Journal,
    athlete: &Athlete,
    session_id: &str,
) -> Result<Comparison, ContextError> {
    let (current, earlier_cards) = earlier_runs(journal, athlete, session_id)?;
    Ok(earlier::compare(
        &current,
        &earlier_cards,
        athlete.profile.units,
    ))
}

/// The week around a day of the athlete's (`current`: the session it is centred on).
pub fn week_around(
    journal: &Journal,
    athlete: &Athlete,
    centre: NaiveDate,
    current: Option<&str>,
    today: NaiveDate,
) -> Result<Week, ContextError> {
    let back = (week::LOAD_WEEKS + 1) * 7;
    let from = centre - Duration::days(back.max(week::LOOKBACK_DAYS));
    let to = centre + Duration::days(week::DAYS_AFTER);
    let cards: Vec<SessionCard> = journal
        .cards_between(
            &athlete.id,
            &athlete.inputs_digest,
            ANALYSIS_VERSION,
            &from.to_string(),
            &to.to_string(),
        )?
        .into_iter()
        .filter_map(|(id, json)| parse_card(&id, &json))
        .collect();
    let planned =
        crate::roster::plans::planned_days(athlete, centre - Duration::days(week::DAYS_BEFORE), to);
    Ok(week::week_strip(
        &athlete.id,
        centre,
        current,
        &cards,
        &planned,
        today,
    ))
}

/// The week around a session.
pub fn week_of_session(
    journal: &Journal,
    athlete: &Athlete,
    session_id: &str,
    today: NaiveDate,
) -> Result<Week, ContextError> {
    let card = card(journal, athlete, session_id)?;
    week_around(journal, athlete, card.day, Some(session_id), today)
}
