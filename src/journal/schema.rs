//! The journal schema as a list of migration steps.
//!
//! `PRAGMA user_version` holds the number of steps applied. Each step runs in its own
//! `BEGIN IMMEDIATE` transaction together with the `user_version` bump, so a crash leaves the
//! journal at a whole step. Steps are append-only: never edit a released step, add a new one.
//!
//! Design notes:
//! - `session` is what the roster showed us (one row per session id). It links to a `review`
//!   through `review_id`. Reviews are linked to the content hash they were graded against, so a
//!   renamed or moved file (new session id, same hash) finds its review again, and a file whose
//!   bytes changed keeps its old review, flagged as changed.
//! - Reviews and everything under them are never deleted by the journal.
//! - Blind values live in `score` and on `review` (verdict); changes after the reveal go to
//!   `revision` and never touch the blind values.
//! - Times are RFC 3339 UTC strings with milliseconds (`2026-03-01T07:15:00.000Z`), so they
//!   sort as text.

/// `PRAGMA application_id` of a splitdesk journal: ASCII "SPLD".
pub const APPLICATION_ID: i32 = 0x5350_4C44;

/// The schema steps. `user_version == MIGRATIONS.len()` is the current schema.
pub const MIGRATIONS: &[&str] = &[
    // 1: initial schema
    r#"
CREATE TABLE review (
    id              INTEGER PRIMARY KEY,
    content_hash    TEXT NOT NULL,
    created_at      TEXT NOT NULL,
    verdict         TEXT CHECK (verdict IN ('met', 'partly', 'missed')),
    verdict_at      TEXT,
    revealed_at     TEXT,
    work_intervals  INTEGER CHECK (work_intervals >= 0)
);
CREATE INDEX review_by_hash ON review (content_hash);

CREATE TABLE session (
    session_id       TEXT PRIMARY KEY,
    athlete_id       TEXT NOT NULL,
    file_path        TEXT NOT NULL,
    content_hash     TEXT NOT NULL,
    start_time       TEXT NOT NULL,
    seen_at          TEXT NOT NULL,
    review_id        INTEGER REFERENCES review (id) ON DELETE RESTRICT,
    summary_json     TEXT,
    summary_version  INTEGER,
    summary_hash     TEXT,
    work_intervals   INTEGER CHECK (work_intervals >= 0)
);
CREATE INDEX session_by_athlete ON session (athlete_id, start_time);
CREATE INDEX session_by_hash ON session (content_hash);

CREATE TABLE score (
    review_id    INTEGER NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    interval_no  INTEGER NOT NULL CHECK (interval_no >= 1),
    score        INTEGER NOT NULL CHECK (score BETWEEN 1 AND 5),
    given_at     TEXT NOT NULL,
    PRIMARY KEY (review_id, interval_no)
) WITHOUT ROWID;

CREATE TABLE revision (
    id           INTEGER PRIMARY KEY,
    review_id    INTEGER NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    target       TEXT NOT NULL CHECK (target IN ('score', 'verdict')),
    interval_no  INTEGER CHECK ((target = 'score') = (interval_no IS NOT NULL)),
    old_value    TEXT NOT NULL,
    new_value    TEXT NOT NULL,
    at           TEXT NOT NULL
);
CREATE INDEX revision_by_review ON revision (review_id, id);

CREATE TABLE feedback_version (
    id         INTEGER PRIMARY KEY,
    review_id  INTEGER NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    body       TEXT NOT NULL,
    saved_at   TEXT NOT NULL
);
CREATE INDEX feedback_by_review ON feedback_version (review_id, id);

CREATE TABLE feedback_event (
    id         INTEGER PRIMARY KEY,
    review_id  INTEGER NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    kind       TEXT NOT NULL CHECK (kind IN ('copied', 'exported', 'printed')),
    at         TEXT NOT NULL
);
CREATE INDEX feedback_event_by_review ON feedback_event (review_id, id);

CREATE TABLE ruler (
    id         INTEGER PRIMARY KEY,
    review_id  INTEGER NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    from_s     REAL NOT NULL,
    to_s       REAL NOT NULL CHECK (to_s > from_s),
    added_at   TEXT NOT NULL
);
CREATE INDEX ruler_by_review ON ruler (review_id, id);
"#,
    // 2: what the roster file looked like when its content hash was taken (path, size,
    // modification time in ns), so an unchanged file is known from one stat, unread
    r#"
ALTER TABLE session ADD COLUMN file_size INTEGER CHECK (file_size >= 0);
ALTER TABLE session ADD COLUMN file_mtime_ns INTEGER;
"#,
    // 3: closing sessions without a full grading.
    // - `session.unreadable`: why the session's file cannot be read (derived, like the
    //   analysis cache: cleared when the file reads again). Such a session has no analysis;
    //   its number of work intervals is taken as zero, so its blind grade is the purpose
    //   verdict alone.
    // - `review.file_unreadable`: the problem the coach was shown when giving the blind
    //   verdict of a session whose file could not be read: the record that they saw it.
    // - `seen_event`: a session marked as looked at without a grade (`seen = 1`) or brought
    //   back to the queue (`seen = 0`); the latest event is in force, none kept is unseen.
    //   Events are only added, never changed, like every other record of the coach's.
    r#"
ALTER TABLE session ADD COLUMN unreadable TEXT;
ALTER TABLE review ADD COLUMN file_unreadable TEXT;
CREATE TABLE seen_event (
    id         INTEGER PRIMARY KEY,
    review_id  INTEGER NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    seen       INTEGER NOT NULL CHECK (seen IN (0, 1)),
    at         TEXT NOT NULL
);
CREATE INDEX seen_event_by_review ON seen_event (review_id, id);
"#,
    // 4: the session card, a compact cut of each session's analysis for the comparisons
    // across sessions (the same workout over time, the week around a session). Derived like
    // the analysis cache: written with it, current while `content_hash` is the session's and
    // `analysis_version` and `inputs_digest` are those in force. `shape_json` is the workout
    // shape alone, so an athlete's whole history is matched without reading the cards.
    r#"
CREATE TABLE session_card (
    session_id        TEXT PRIMARY KEY,
    athlete_id        TEXT NOT NULL,
    start_time        TEXT NOT NULL,
    day               TEXT NOT NULL,
    kind              TEXT NOT NULL,
    content_hash      TEXT NOT NULL,
    analysis_version  INTEGER NOT NULL,
    inputs_digest     TEXT NOT NULL,
    shape_json        TEXT,
    card_json         TEXT NOT NULL
);
CREATE INDEX session_card_by_athlete ON session_card (athlete_id, start_time);
CREATE INDEX session_card_by_day ON session_card (athlete_id, day);
"#,
    // 5: what the warm commands need of a cached summary, beside it in plain columns, so
    // that an unchanged file is known current and listed without reading the summary JSON.
    // Derived like the summary (see `BRIEF_FROM_SUMMARY`): filled from it in SQL whenever it
    // is written. `summary_inputs` is the athlete inputs digest the summary was made under;
    // the `brief_*` columns are what a session's one-line title needs. `session_lists` holds
    // every column of the warm check, the title facts and the session lists, so that these
    // read the index alone, never the rows with their long summaries.
    r#"
ALTER TABLE session ADD COLUMN summary_inputs TEXT;
ALTER TABLE session ADD COLUMN brief_plan_title TEXT;
ALTER TABLE session ADD COLUMN brief_sport TEXT;
ALTER TABLE session ADD COLUMN brief_running INTEGER;
ALTER TABLE session ADD COLUMN brief_distance_m REAL;
UPDATE session SET
    summary_inputs = CASE WHEN typeof(summary_json) = 'text' AND json_valid(summary_json)
        AND json_type(summary_json, '$.analysis_inputs') = 'text'
        THEN json_extract(summary_json, '$.analysis_inputs') END,
    brief_plan_title = CASE WHEN typeof(summary_json) = 'text' AND json_valid(summary_json)
        AND json_type(summary_json, '$.plan.title') = 'text'
        THEN json_extract(summary_json, '$.plan.title') END,
    brief_sport = CASE WHEN typeof(summary_json) = 'text' AND json_valid(summary_json)
        AND json_type(summary_json, '$.session.sport') = 'text'
        THEN json_extract(summary_json, '$.session.sport') END,
    brief_running = CASE WHEN typeof(summary_json) = 'text' AND json_valid(summary_json)
        AND json_type(summary_json, '$.running') IN ('true', 'false')
        THEN json_extract(summary_json, '$.running') END,
    brief_distance_m = CASE WHEN typeof(summary_json) = 'text' AND json_valid(summary_json)
        AND json_type(summary_json, '$.session.distance_m') IN ('integer', 'real')
        THEN json_extract(summary_json, '$.session.distance_m') END
WHERE summary_json IS NOT NULL;
CREATE INDEX session_lists ON session (athlete_id, start_time, session_id, file_path,
    content_hash, review_id, unreadable, work_intervals, file_size, file_mtime_ns,
    summary_version, summary_hash, summary_inputs, brief_plan_title, brief_sport,
    brief_running, brief_distance_m);
"#,
    // 6: a coaching staff. `coach` lists the staff (a removed coach keeps their records);
    // `assignment` gives an athlete their coach. Each coach has their own reviews
    // (`review.coach`; '' is the single coach of a journal without a staff), linked to
    // sessions per coach through `session_review`, which replaces `session.review_id` (kept,
    // always NULL from here on). `reviewing` holds the advisory marks "this coach has the
    // session open", each until a time after which it is ignored.
    r#"
CREATE TABLE coach (
    name        TEXT PRIMARY KEY CHECK (length(name) BETWEEN 1 AND 64),
    added_at    TEXT NOT NULL,
    removed_at  TEXT
);
CREATE TABLE assignment (
    athlete_id  TEXT PRIMARY KEY,
    coach       TEXT NOT NULL REFERENCES coach (name) ON DELETE RESTRICT,
    at          TEXT NOT NULL
);
ALTER TABLE review ADD COLUMN coach TEXT NOT NULL DEFAULT '';
CREATE INDEX review_by_coach_hash ON review (coach, content_hash);
CREATE TABLE session_review (
    session_id  TEXT NOT NULL,
    coach       TEXT NOT NULL,
    review_id   INTEGER NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    PRIMARY KEY (session_id, coach)
);
CREATE INDEX session_review_by_review ON session_review (review_id);
INSERT INTO session_review (session_id, coach, review_id)
    SELECT session_id, '', review_id FROM session WHERE review_id IS NOT NULL;
UPDATE session SET review_id = NULL;
CREATE TABLE reviewing (
    session_id  TEXT NOT NULL,
    coach       TEXT NOT NULL,
    until       TEXT NOT NULL,
    PRIMARY KEY (session_id, coach)
);
"#,
];

/// Fill the `summary_inputs` and `brief_*` columns of session `?1` from its summary JSON (the
/// same expressions as step 5; NULL where the summary is missing, damaged or lacks the key).
pub const BRIEF_FROM_SUMMARY: &str = r#"
UPDATE session SET
    summary_inputs = CASE WHEN typeof(summary_json) = 'text' AND json_valid(summary_json)
        AND json_type(summary_json, '$.analysis_inputs') = 'text'
        THEN json_extract(summary_json, '$.analysis_inputs') END,
    brief_plan_title = CASE WHEN typeof(summary_json) = 'text' AND json_valid(summary_json)
        AND json_type(summary_json, '$.plan.title') = 'text'
        THEN json_extract(summary_json, '$.plan.title') END,
    brief_sport = CASE WHEN typeof(summary_json) = 'text' AND json_valid(summary_json)
        AND json_type(summary_json, '$.session.sport') = 'text'
        THEN json_extract(summary_json, '$.session.sport') END,
    brief_running = CASE WHEN typeof(summary_json) = 'text' AND json_valid(summary_json)
        AND json_type(summary_json, '$.running') IN ('true', 'false')
        THEN json_extract(summary_json, '$.running') END,
    brief_distance_m = CASE WHEN typeof(summary_json) = 'text' AND json_valid(summary_json)
        AND json_type(summary_json, '$.session.distance_m') IN ('integer', 'real')
        THEN json_extract(summary_json, '$.session.distance_m') END
WHERE session_id = ?1"#;

/// The key of the summary JSON that holds the athlete inputs digest it was made under (read
/// into `session.summary_inputs` by [`BRIEF_FROM_SUMMARY`]).
pub const SUMMARY_INPUTS_KEY: &str = "analysis_inputs";

/// The schema version this build writes and reads.
pub fn current_version() -> u32 {
    MIGRATIONS.len() as u32
}

/// The same schema steps for a PostgreSQL journal, one for one with [`MIGRATIONS`] (step N
/// here is step N there, in PostgreSQL's types): integers are `BIGINT`, reals
/// `DOUBLE PRECISION`, row ids identity columns. The version is kept in the one-row table
/// `splitdesk_journal` (with [`APPLICATION_ID`]) rather than in pragmas.
pub const PG_MIGRATIONS: &[&str] = &[
    // 1: initial schema
    r#"
CREATE TABLE review (
    id              BIGINT GENERATED BY DEFAULT AS IDENTITY PRIMARY KEY,
    content_hash    TEXT NOT NULL,
    created_at      TEXT NOT NULL,
    verdict         TEXT CHECK (verdict IN ('met', 'partly', 'missed')),
    verdict_at      TEXT,
    revealed_at     TEXT,
    work_intervals  BIGINT CHECK (work_intervals >= 0)
);
CREATE INDEX review_by_hash ON review (content_hash);

CREATE TABLE session (
    session_id       TEXT PRIMARY KEY,
    athlete_id       TEXT NOT NULL,
    file_path        TEXT NOT NULL,
    content_hash     TEXT NOT NULL,
    start_time       TEXT NOT NULL,
    seen_at          TEXT NOT NULL,
    review_id        BIGINT REFERENCES review (id) ON DELETE RESTRICT,
    summary_json     TEXT,
    summary_version  BIGINT,
    summary_hash     TEXT,
    work_intervals   BIGINT CHECK (work_intervals >= 0)
);
CREATE INDEX session_by_athlete ON session (athlete_id, start_time);
CREATE INDEX session_by_hash ON session (content_hash);

CREATE TABLE score (
    review_id    BIGINT NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    interval_no  BIGINT NOT NULL CHECK (interval_no >= 1),
    score        BIGINT NOT NULL CHECK (score BETWEEN 1 AND 5),
    given_at     TEXT NOT NULL,
    PRIMARY KEY (review_id, interval_no)
);

CREATE TABLE revision (
    id           BIGINT GENERATED BY DEFAULT AS IDENTITY PRIMARY KEY,
    review_id    BIGINT NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    target       TEXT NOT NULL CHECK (target IN ('score', 'verdict')),
    interval_no  BIGINT CHECK ((target = 'score') = (interval_no IS NOT NULL)),
    old_value    TEXT NOT NULL,
    new_value    TEXT NOT NULL,
    at           TEXT NOT NULL
);
CREATE INDEX revision_by_review ON revision (review_id, id);

CREATE TABLE feedback_version (
    id         BIGINT GENERATED BY DEFAULT AS IDENTITY PRIMARY KEY,
    review_id  BIGINT NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    body       TEXT NOT NULL,
    saved_at   TEXT NOT NULL
);
CREATE INDEX feedback_by_review ON feedback_version (review_id, id);

CREATE TABLE feedback_event (
    id         BIGINT GENERATED BY DEFAULT AS IDENTITY PRIMARY KEY,
    review_id  BIGINT NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    kind       TEXT NOT NULL CHECK (kind IN ('copied', 'exported', 'printed')),
    at         TEXT NOT NULL
);
CREATE INDEX feedback_event_by_review ON feedback_event (review_id, id);

CREATE TABLE ruler (
    id         BIGINT GENERATED BY DEFAULT AS IDENTITY PRIMARY KEY,
    review_id  BIGINT NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    from_s     DOUBLE PRECISION NOT NULL,
    to_s       DOUBLE PRECISION NOT NULL CHECK (to_s > from_s),
    added_at   TEXT NOT NULL
);
CREATE INDEX ruler_by_review ON ruler (review_id, id);
"#,
    // 2: the file stat behind the content hash
    r#"
ALTER TABLE session ADD COLUMN file_size BIGINT CHECK (file_size >= 0);
ALTER TABLE session ADD COLUMN file_mtime_ns BIGINT;
"#,
    // 3: closing sessions without a full grading
    r#"
ALTER TABLE session ADD COLUMN unreadable TEXT;
ALTER TABLE review ADD COLUMN file_unreadable TEXT;
CREATE TABLE seen_event (
    id         BIGINT GENERATED BY DEFAULT AS IDENTITY PRIMARY KEY,
    review_id  BIGINT NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    seen       BIGINT NOT NULL CHECK (seen IN (0, 1)),
    at         TEXT NOT NULL
);
CREATE INDEX seen_event_by_review ON seen_event (review_id, id);
"#,
    // 4: the session card
    r#"
CREATE TABLE session_card (
    session_id        TEXT PRIMARY KEY,
    athlete_id        TEXT NOT NULL,
    start_time        TEXT NOT NULL,
    day               TEXT NOT NULL,
    kind              TEXT NOT NULL,
    content_hash      TEXT NOT NULL,
    analysis_version  BIGINT NOT NULL,
    inputs_digest     TEXT NOT NULL,
    shape_json        TEXT,
    card_json         TEXT NOT NULL
);
CREATE INDEX session_card_by_athlete ON session_card (athlete_id, start_time);
CREATE INDEX session_card_by_day ON session_card (athlete_id, day);
"#,
    // 5: the brief columns beside the summary. `splitdesk_try_jsonb` reads a summary as JSON,
    // NULL when it is not valid JSON (a damaged cache row is a miss, as on SQLite). No
    // covering index: a server reads its tables from memory.
    r#"
ALTER TABLE session ADD COLUMN summary_inputs TEXT;
ALTER TABLE session ADD COLUMN brief_plan_title TEXT;
ALTER TABLE session ADD COLUMN brief_sport TEXT;
ALTER TABLE session ADD COLUMN brief_running BIGINT;
ALTER TABLE session ADD COLUMN brief_distance_m DOUBLE PRECISION;
CREATE FUNCTION splitdesk_try_jsonb(t TEXT) RETURNS JSONB LANGUAGE plpgsql IMMUTABLE AS $fn$
BEGIN
    RETURN t::jsonb;
EXCEPTION WHEN OTHERS THEN
    RETURN NULL;
END
$fn$;
UPDATE session SET
    summary_inputs = CASE WHEN jsonb_typeof(j -> 'analysis_inputs') = 'string'
        THEN j ->> 'analysis_inputs' END,
    brief_plan_title = CASE WHEN jsonb_typeof(j -> 'plan' -> 'title') = 'string'
        THEN j -> 'plan' ->> 'title' END,
    brief_sport = CASE WHEN jsonb_typeof(j -> 'session' -> 'sport') = 'string'
        THEN j -> 'session' ->> 'sport' END,
    brief_running = CASE WHEN jsonb_typeof(j -> 'running') = 'boolean'
        THEN CASE WHEN (j -> 'running')::boolean THEN 1 ELSE 0 END END,
    brief_distance_m = CASE WHEN jsonb_typeof(j -> 'session' -> 'distance_m') = 'number'
        THEN (j -> 'session' ->> 'distance_m')::double precision END
FROM (SELECT session_id AS sid, splitdesk_try_jsonb(summary_json) AS j FROM session) AS parsed
WHERE parsed.sid = session.session_id AND session.summary_json IS NOT NULL;
"#,
    // 6: a coaching staff (see step 6 of `MIGRATIONS`)
    r#"
CREATE TABLE coach (
    name        TEXT PRIMARY KEY CHECK (length(name) BETWEEN 1 AND 64),
    added_at    TEXT NOT NULL,
    removed_at  TEXT
);
CREATE TABLE assignment (
    athlete_id  TEXT PRIMARY KEY,
    coach       TEXT NOT NULL REFERENCES coach (name) ON DELETE RESTRICT,
    at          TEXT NOT NULL
);
ALTER TABLE review ADD COLUMN coach TEXT NOT NULL DEFAULT '';
CREATE INDEX review_by_coach_hash ON review (coach, content_hash);
CREATE TABLE session_review (
    session_id  TEXT NOT NULL,
    coach       TEXT NOT NULL,
    review_id   BIGINT NOT NULL REFERENCES review (id) ON DELETE RESTRICT,
    PRIMARY KEY (session_id, coach)
);
CREATE INDEX session_review_by_review ON session_review (review_id);
INSERT INTO session_review (session_id, coach, review_id)
    SELECT session_id, '', review_id FROM session WHERE review_id IS NOT NULL;
UPDATE session SET review_id = NULL;
CREATE TABLE reviewing (
    session_id  TEXT NOT NULL,
    coach       TEXT NOT NULL,
    until       TEXT NOT NULL,
    PRIMARY KEY (session_id, coach)
);
"#,
];

/// [`BRIEF_FROM_SUMMARY`] for PostgreSQL (the same columns from the same keys).
pub const BRIEF_FROM_SUMMARY_PG: &str = r#"
UPDATE session SET
    summary_inputs = CASE WHEN jsonb_typeof(parsed.j -> 'analysis_inputs') = 'string'
        THEN parsed.j ->> 'analysis_inputs' END,
    brief_plan_title = CASE WHEN jsonb_typeof(parsed.j -> 'plan' -> 'title') = 'string'
        THEN parsed.j -> 'plan' ->> 'title' END,
    brief_sport = CASE WHEN jsonb_typeof(parsed.j -> 'session' -> 'sport') = 'string'
        THEN parsed.j -> 'session' ->> 'sport' END,
    brief_running = CASE WHEN jsonb_typeof(parsed.j -> 'running') = 'boolean'
        THEN CASE WHEN (parsed.j -> 'running')::boolean THEN 1 ELSE 0 END END,
    brief_distance_m = CASE WHEN jsonb_typeof(parsed.j -> 'session' -> 'distance_m') = 'number'
        THEN (parsed.j -> 'session' ->> 'distance_m')::double precision END
FROM (SELECT splitdesk_try_jsonb(summary_json) AS j FROM session WHERE session_id = ?1) AS parsed
WHERE session.session_id = ?1"#;

/// The one-row table of a PostgreSQL journal that names it ours and holds its version.
pub const PG_META: &str = "CREATE TABLE splitdesk_journal (
    application_id  BIGINT NOT NULL,
    schema_version  BIGINT NOT NULL
);";
