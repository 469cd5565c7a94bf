//! The TOML plan file: `title`, `purpose`, `date`, and either a shorthand `steps` string or
//! `[[step]]` tables. Every error is mapped to a line and column of the file.

use std::ops::Range;

use chrono::NaiveDate;
use serde::Deserialize;
use toml::Spanned;

use super::error::{line_col, PlanError, PlanErrorKind};
use super::lexer::SynErr;
use super::shorthand::{
    parse_amount_str, parse_drafts, parse_hr_str, parse_kind_str, parse_mode_str, parse_pace_str,
    resolve_kinds, DraftStep,
};
use super::MAX_REPEATS;
use crate::model::{Amount, Plan, Segment, SegmentKind, Step, Target};

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPlan {
    title: Option<Spanned<String>>,
    purpose: Option<String>,
    date: Option<Spanned<toml::Value>>,
    steps: Option<Spanned<String>>,
    step: Option<Spanned<Vec<Spanned<RawStep>>>>,
}

/// The fields that describe one segment.
#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
struct RawSeg {
    kind: Option<Spanned<String>>,
    duration: Option<Spanned<String>>,
    distance: Option<Spanned<String>>,
    pace: Option<Spanned<String>>,
    hr: Option<Spanned<String>>,
    tolerance: Option<Spanned<f64>>,
    mode: Option<Spanned<String>>,
}

/// A `[[step]]` table: a segment, or `repeat = N` with `[[step.work]]` tables (or the segment
/// fields on the step itself for a single work segment) and an optional `[step.recovery]`.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawStep {
    repeat: Option<Spanned<i64>>,
    work: Option<Vec<Spanned<RawSeg>>>,
    recovery: Option<Spanned<RawSeg>>,
    kind: Option<Spanned<String>>,
    duration: Option<Spanned<String>>,
    distance: Option<Spanned<String>>,
    pace: Option<Spanned<String>>,
    hr: Option<Spanned<String>>,
    tolerance: Option<Spanned<f64>>,
    mode: Option<Spanned<String>>,
}

impl RawStep {
    fn take_seg(&mut self) -> RawSeg {
        RawSeg {
            kind: self.kind.take(),
            duration: self.duration.take(),
            distance: self.distance.take(),
            pace: self.pace.take(),
            hr: self.hr.take(),
            tolerance: self.tolerance.take(),
            mode: self.mode.take(),
        }
    }
}

impl RawSeg {
    /// The span of the first field present, for errors about the segment as a whole.
    fn first_span(&self) -> Option<Range<usize>> {
        [
            self.kind.as_ref().map(|s| s.span()),
            self.duration.as_ref().map(|s| s.span()),
            self.distance.as_ref().map(|s| s.span()),
            self.pace.as_ref().map(|s| s.span()),
            self.hr.as_ref().map(|s| s.span()),
            self.tolerance.as_ref().map(|s| s.span()),
            self.mode.as_ref().map(|s| s.span()),
        ]
        .into_iter()
        .flatten()
        .min_by_key(|r| r.start)
    }
}

/// Parsing context: the whole file, for positions.
struct Ctx<'a> {
    src: &'a str,
}

impl Ctx<'_> {
    fn err(&self, offset: usize, kind: PlanErrorKind) -> PlanError {
        PlanError::at(self.src, offset, kind)
    }

    fn invalid(&self, offset: usize, msg: impl Into<String>) -> PlanError {
        self.err(offset, PlanErrorKind::Invalid(msg.into()))
    }

    /// Byte offset in the file where the decoded string `value` starts, when the TOML string
    /// at `span` holds it verbatim (no escapes before the end of the value).
    fn string_origin(&self, span: &Range<usize>, value: &str) -> Option<usize> {
        let raw = self.src.get(span.clone())?;
        let mut open = if raw.starts_with("\"\"\"") || raw.starts_with("'''") {
            3
        } else if raw.starts_with('"') || raw.starts_with('\'') {
            1
        } else {
            return None;
        };
        if open == 3 {
            let rest = raw.get(3..)?;
            if rest.starts_with("\r\n") {
                open += 2;
            } else if rest.starts_with('\n') {
                open += 1;
            }
        }
        raw.get(open..)?
            .starts_with(value)
            .then_some(span.start + open)
    }

    /// Map an error inside the string value of `key` to the file, or report it relative to
    /// the string with the key as context.
    fn in_string(&self, key: &str, s: &Spanned<String>, e: SynErr) -> PlanError {
        let span = s.span();
        match self.string_origin(&span, s.get_ref()) {
            Some(origin) => self.err(origin + e.offset, e.kind),
            None => {
                let mut pe = PlanError::at(s.get_ref(), e.offset, e.kind);
                pe.context = Some(key.to_string());
                pe
            }
        }
    }
}

/// The date (and the rest of the stem) from a file name like `2026-10-14-hill-repeats.toml`.
fn file_name_date(file_name: &str) -> (Option<NaiveDate>, Option<String>) {
    let base = file_name.rsplit(['/', '\\']).next().unwrap_or(file_name);
    let stem = base.strip_suffix(".toml").unwrap_or(base);
    let date = stem
        .get(..10)
        .and_then(|d| NaiveDate::parse_from_str(d, "%Y-%m-%d").ok());
    match date {
        Some(d) => match stem.get(10..) {
            Some("") => (Some(d), None),
            Some(rest) if rest.starts_with('-') => (Some(d), rest.get(1..).map(str::to_string)),
            _ => (None, Some(stem.to_string())),
        },
        None => (None, Some(stem.to_string())),
    }
}

/// `hill-repeats` -> `Hill repeats`.
fn title_from_slug(slug: &str) -> Option<String> {
    let words = slug.replace(['-', '_'], " ");
    let words = words.trim();
    let mut chars = words.chars();
    let first = chars.next()?;
    Some(first.to_uppercase().chain(chars).collect())
}

fn toml_error(src: &str, e: &toml::de::Error) -> PlanError {
    let offset = e.span().map_or(0, |s| s.start);
    let (line, column) = line_col(src, offset);
    PlanError {
        line,
        column,
        context: None,
        kind: PlanErrorKind::Toml(e.message().trim().to_string()),
    }
}

/// Parse a plan file's text. `file_name` (a bare name or a path) supplies the date from a
/// `YYYY-MM-DD-` prefix when the file has no `date`, and the title from the rest of the name
/// when the file has no `title`.
pub fn parse_toml(text: &str, file_name: Option<&str>) -> Result<Plan, PlanError> {
    let ctx = Ctx { src: text };
    let raw: RawPlan = toml::from_str(text).map_err(|e| toml_error(text, &e))?;
    let (name_date, slug) = file_name.map_or((None, None), file_name_date);

    let date = match &raw.date {
        None => name_date,
        Some(d) => {
            let at = d.span().start;
            let parsed = match d.get_ref() {
                toml::Value::String(s) => NaiveDate::parse_from_str(s.trim(), "%Y-%m-%d").ok(),
                toml::Value::Datetime(dt) if dt.time.is_none() && dt.offset.is_none() => {
                    dt.date.and_then(|x| {
                        NaiveDate::from_ymd_opt(
                            i32::from(x.year),
                            u32::from(x.month),
                            u32::from(x.day),
                        )
                    })
                }
                _ => None,
            };
            let Some(parsed) = parsed else {
                return Err(ctx.invalid(at, "expected a date like 2026-10-14"));
            };
            if let Some(nd) = name_date {
                if nd != parsed {
                    return Err(ctx.invalid(
                        at,
                        format!("date {parsed} disagrees with the file name's date {nd}"),
                    ));
                }
            }
            Some(parsed)
        }
    };

    let title = match &raw.title {
        Some(t) if t.get_ref().trim().is_empty() => {
            return Err(ctx.invalid(t.span().start, "the title is empty"))
        }
        Some(t) => t.get_ref().trim().to_string(),
        None => match slug.as_deref().and_then(title_from_slug) {
            Some(t) => t,
            None => return Err(ctx.invalid(0, "missing title = \"...\"")),
        },
    };

    let drafts = match (&raw.steps, raw.step) {
        (Some(_), Some(tables)) => {
            return Err(ctx.invalid(
                tables.span().start,
                "give either steps = \"...\" or [[step]] tables, not both",
            ))
        }
        (None, None) => {
            return Err(ctx.invalid(
                text.len(),
                "missing steps: add steps = \"...\" (shorthand) or [[step]] tables",
            ))
        }
        (Some(s), None) => parse_drafts(s.get_ref()).map_err(|e| ctx.in_string("steps", s, e))?,
        (None, Some(tables)) => {
            let at = tables.span().start;
            let tables = tables.into_inner();
            if tables.is_empty() {
                return Err(ctx.invalid(at, "no steps"));
            }
            tables
                .into_iter()
                .map(|t| step_from_table(&ctx, t))
                .collect::<Result<Vec<_>, _>>()?
        }
    };

    Ok(Plan {
        title,
        purpose: raw
            .purpose
            .map(|p| p.trim().to_string())
            .unwrap_or_default(),
        date,
        steps: resolve_kinds(drafts),
    })
}

fn step_from_table(ctx: &Ctx<'_>, table: Spanned<RawStep>) -> Result<DraftStep, PlanError> {
    let at = table.span().start;
    let mut raw = table.into_inner();
    let Some(count) = raw.repeat.take() else {
        if let Some(w) = raw.work.as_ref().and_then(|w| w.first()) {
            return Err(ctx.invalid(w.span().start, "work tables need repeat = N on the step"));
        }
        if let Some(r) = &raw.recovery {
            return Err(ctx.invalid(r.span().start, "a recovery needs repeat = N on the step"));
        }
        let seg = raw.take_seg();
        let explicit = seg.kind.is_some();
        let seg = segment_from(ctx, seg, SegmentKind::Steady, at, false)?;
        return Ok(DraftStep::Single { seg, explicit });
    };
    let n = *count.get_ref();
    if n < 1 || n > i64::from(MAX_REPEATS) {
        return Err(ctx.invalid(
            count.span().start,
            format!("repeat must be from 1 to {MAX_REPEATS}, found {n}"),
        ));
    }
    let own = raw.take_seg();
    let work = match raw.work.take() {
        Some(tables) => {
            if let Some(span) = own.first_span() {
                return Err(ctx.invalid(
                    span.start,
                    "with [[step.work]] tables, put the segment fields in them",
                ));
            }
            if tables.is_empty() {
                return Err(ctx.invalid(at, "a repeat needs at least one work segment"));
            }
            tables
                .into_iter()
                .map(|t| {
                    let wat = t.span().start;
                    segment_from(ctx, t.into_inner(), SegmentKind::Work, wat, false)
                })
                .collect::<Result<Vec<_>, _>>()?
        }
        None => vec![segment_from(ctx, own, SegmentKind::Work, at, true)?],
    };
    let recovery = match raw.recovery.take() {
        Some(r) => {
            let rat = r.span().start;
            Some(segment_from(
                ctx,
                r.into_inner(),
                SegmentKind::Recovery,
                rat,
                false,
            )?)
        }
        None => None,
    };
    Ok(DraftStep::Repeat(Step::Repeat {
        count: n as u32,
        work,
        recovery,
    }))
}

fn segment_from(
    ctx: &Ctx<'_>,
    raw: RawSeg,
    default: SegmentKind,
    at: usize,
    repeat_step: bool,
) -> Result<Segment, PlanError> {
    let kind = match &raw.kind {
        Some(k) => parse_kind_str(k.get_ref()).ok_or_else(|| {
            ctx.err(
                k.span().start,
                PlanErrorKind::Expected {
                    expected: "warmup, work, recovery, steady or cooldown".into(),
                    found: format!("\"{}\"", k.get_ref()),
                },
            )
        })?,
        None => default,
    };
    let mode = match &raw.mode {
        Some(m) => Some(parse_mode_str(m.get_ref()).ok_or_else(|| {
            ctx.err(
                m.span().start,
                PlanErrorKind::Expected {
                    expected: "jog, walk or stand".into(),
                    found: format!("\"{}\"", m.get_ref()),
                },
            )
        })?),
        None => None,
    };
    let amount = match (&raw.duration, &raw.distance) {
        (Some(_), Some(d)) => {
            return Err(ctx.invalid(d.span().start, "give either duration or distance, not both"))
        }
        (Some(d), None) => {
            parse_amount_str(d.get_ref()).map_err(|e| ctx.in_string("duration", d, e))?
        }
        (None, Some(d)) => {
            parse_amount_str(d.get_ref()).map_err(|e| ctx.in_string("distance", d, e))?
        }
        (None, None) => {
            let msg = if repeat_step {
                "missing [[step.work]] tables, or duration = \"3:00\" or distance = \"400m\" \
                 on this repeat"
            } else {
                "missing duration = \"3:00\" or distance = \"400m\" in this step"
            };
            return Err(ctx.invalid(at, msg));
        }
    };
    match (&amount, &raw.duration, &raw.distance) {
        (Amount::Distance(_), Some(d), _) => {
            return Err(ctx.invalid(
                d.span().start,
                format!(
                    "\"{}\" is a distance: write distance = \"...\"",
                    d.get_ref()
                ),
            ))
        }
        (Amount::Duration(_), _, Some(d)) => {
            return Err(ctx.invalid(
                d.span().start,
                format!(
                    "\"{}\" is a duration: write duration = \"...\"",
                    d.get_ref()
                ),
            ))
        }
        _ => {}
    }
    let tolerance = raw.tolerance.as_ref().map(|t| *t.get_ref());
    let target = match (&raw.pace, &raw.hr) {
        (Some(_), Some(h)) => {
            return Err(ctx.invalid(h.span().start, "give either pace or hr, not both"))
        }
        (Some(p), None) => {
            parse_pace_str(p.get_ref(), tolerance).map_err(|e| ctx.in_string("pace", p, e))?
        }
        (None, Some(h)) => {
            if let Some(t) = &raw.tolerance {
                return Err(ctx.invalid(t.span().start, "tolerance applies to a pace only"));
            }
            parse_hr_str(h.get_ref()).map_err(|e| ctx.in_string("hr", h, e))?
        }
        (None, None) => {
            if let Some(t) = &raw.tolerance {
                return Err(ctx.invalid(t.span().start, "tolerance applies to a pace only"));
            }
            Target::Open
        }
    };
    Ok(Segment {
        kind,
        amount,
        target,
        mode,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn file_name_prefix_gives_date_and_slug() {
        let (d, s) = file_name_date("plans/2026-10-14-hill-repeats.toml");
        assert_eq!(d, NaiveDate::from_ymd_opt(2026, 10, 14));
        assert_eq!(s.as_deref(), Some("hill-repeats"));
        assert_eq!(
            title_from_slug("hill-repeats").as_deref(),
            Some("Hill repeats")
        );
        let (d, s) = file_name_date("tempo.toml");
        assert_eq!(d, None);
        assert_eq!(s.as_deref(), Some("tempo"));
    }
}
