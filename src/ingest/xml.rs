//! Helpers shared by the TCX and GPX readers (local names, timestamps).
//!
//! The readers are built on [`walk`], a single pass over quick-xml's streaming reader that
//! keeps a stack of classified element tags, gathers the text of the current element into one
//! reused buffer, and hands `start`/`end` callbacks to a format-specific [`Handler`].
//!
//! Entities: the document type declaration is skipped and never interpreted, so custom
//! entities are never expanded (no "billion laughs"). In text, the five predefined entities
//! (`&amp;` `&lt;` `&gt;` `&quot;` `&apos;`) and character references (`&#38;`, `&#x26;`)
//! are resolved; any other `&name;` reference is an error.

use chrono::{DateTime, NaiveDateTime, Utc};
use quick_xml::events::{BytesRef, BytesStart, Event};
use quick_xml::Reader;

/// What a format reader does with the elements `walk` reports.
pub(crate) trait Handler {
    /// A cheap classification of an element's local name.
    type Tag: Copy + Eq;

    /// Classify an element by its local name (namespace prefix already removed).
    fn classify(&self, local: &[u8]) -> Self::Tag;

    /// An element opened. `stack` holds its ancestors' tags and, last, its own.
    fn start(&mut self, stack: &[Self::Tag], e: &BytesStart<'_>) -> Result<(), String>;

    /// An element closed. `stack` is the same as at `start`; `text` is the element's own
    /// character data (entities resolved, untrimmed).
    fn end(&mut self, stack: &[Self::Tag], text: &str) -> Result<(), String>;
}

/// Stream `bytes` through `handler`, checking that the root element's local name is `root`.
///
/// Errors are short messages with a line and column; the caller wraps them in its
/// format's `ParseError` variant.
pub(crate) fn walk<H: Handler>(bytes: &[u8], root: &str, handler: &mut H) -> Result<(), String> {
    let mut reader = Reader::from_reader(bytes);
    // Defaults already check end names and refuse a bare `&`; be explicit about both.
    reader.config_mut().check_end_names = true;
    reader.config_mut().allow_dangling_amp = false;

    let mut stack: Vec<H::Tag> = Vec::with_capacity(16);
    // Local names of the open elements, concatenated; `name_ends[i]` ends element `i`.
    let mut names: Vec<u8> = Vec::with_capacity(256);
    let mut name_ends: Vec<usize> = Vec::with_capacity(16);
    let mut text = String::with_capacity(64);
    let mut root_done = false;

    loop {
        let event = match reader.read_event() {
            Ok(ev) => ev,
            Err(err) => {
                let (line, col) = line_col(bytes, reader.error_position());
                return Err(format!("malformed XML at line {line}, column {col}: {err}"));
            }
        };
        let at = |reader: &Reader<&[u8]>, msg: String| {
            let (line, col) = line_col(bytes, reader.buffer_position());
            format!("{msg} (line {line}, column {col})")
        };
        match event {
            Event::Start(ref e) | Event::Empty(ref e) => {
                let local = e.local_name();
                let local = local.as_ref();
                if stack.is_empty() {
                    if root_done {
                        return Err(at(
                            &reader,
                            format!(
                                "second root element <{}> after </{root}>",
                                String::from_utf8_lossy(local)
                            ),
                        ));
                    }
                    if local != root.as_bytes() {
                        return Err(format!(
                            "root element is <{}>, expected <{root}>",
                            String::from_utf8_lossy(local)
                        ));
                    }
                }
                stack.push(handler.classify(local));
                names.extend_from_slice(local);
                name_ends.push(names.len());
                text.clear();
                handler.start(&stack, e).map_err(|m| at(&reader, m))?;
                if matches!(event, Event::Empty(_)) {
                    handler.end(&stack, "").map_err(|m| at(&reader, m))?;
                    pop(&mut stack, &mut names, &mut name_ends);
                    root_done |= stack.is_empty();
                }
            }
            Event::End(_) => {
                // quick-xml has already checked that the name matches the open element.
                handler.end(&stack, &text).map_err(|m| at(&reader, m))?;
                text.clear();
                pop(&mut stack, &mut names, &mut name_ends);
                root_done |= stack.is_empty();
            }
            Event::Text(ref t) => {
                if !stack.is_empty() {
                    let s = t
                        .decode()
                        .map_err(|e| at(&reader, format!("bad text: {e}")))?;
                    text.push_str(&s);
                }
            }
            Event::CData(ref c) => {
                if !stack.is_empty() {
                    let s = c
                        .decode()
                        .map_err(|e| at(&reader, format!("bad CDATA: {e}")))?;
                    text.push_str(&s);
                }
            }
            Event::GeneralRef(ref r) => {
                push_reference(&mut text, r).map_err(|m| at(&reader, m))?;
            }
            // The DOCTYPE is skipped whole: its entity declarations are never interpreted.
            Event::DocType(_) | Event::Decl(_) | Event::PI(_) | Event::Comment(_) => {}
            Event::Eof => break,
        }
    }

    if let Some(&end) = name_ends.last() {
        let begin = name_ends
            .len()
            .checked_sub(2)
            .and_then(|i| name_ends.get(i).copied())
            .unwrap_or(0);
        return Err(format!(
            "truncated: input ends inside <{}>",
            String::from_utf8_lossy(names.get(begin..end).unwrap_or_default())
        ));
    }
    if !root_done {
        return Err(format!("no <{root}> root element"));
    }
    Ok(())
}

fn pop<T>(stack: &mut Vec<T>, names: &mut Vec<u8>, name_ends: &mut Vec<usize>) {
    stack.pop();
    name_ends.pop();
    names.truncate(name_ends.last().copied().unwrap_or(0));
}

/// Append a predefined entity or character reference; refuse anything else.
fn push_reference(text: &mut String, r: &BytesRef<'_>) -> Result<(), String> {
    match r.resolve_char_ref() {
        Ok(Some(c)) => {
            text.push(c);
            return Ok(());
        }
        Ok(None) => {}
        Err(e) => return Err(format!("bad character reference: {e}")),
    }
    let name = r
        .decode()
        .map_err(|e| format!("bad entity reference: {e}"))?;
    match quick_xml::escape::resolve_predefined_entity(&name) {
        Some(s) => {
            text.push_str(s);
            Ok(())
        }
        None => Err(format!(
            "undefined entity &{name}; (custom entities are never expanded)"
        )),
    }
}

/// 1-based line and column (in bytes) of a byte offset.
pub(crate) fn line_col(bytes: &[u8], pos: u64) -> (usize, usize) {
    let pos = usize::try_from(pos).unwrap_or(usize::MAX).min(bytes.len());
    let before = bytes.get(..pos).unwrap_or_default();
    let line = before.iter().filter(|&&b| b == b'\n').count() + 1;
    let col = match before.iter().rposition(|&b| b == b'\n') {
        Some(nl) => pos - nl,
        None => pos + 1,
    };
    (line, col)
}

/// Parse an XML Schema `dateTime` / RFC 3339 timestamp into UTC.
///
/// Accepts `Z` or numeric offsets (`+02:00`, `-05:30`), any number of fractional-second
/// digits, and a timestamp without offset (taken as UTC, as the TCX and GPX schemas
/// intend). Surrounding whitespace is ignored. `None` when it is not a timestamp.
pub(crate) fn parse_time(s: &str) -> Option<DateTime<Utc>> {
    let s = s.trim();
    if let Ok(t) = DateTime::parse_from_rfc3339(s) {
        return Some(t.with_timezone(&Utc));
    }
    NaiveDateTime::parse_from_str(s, "%Y-%m-%dT%H:%M:%S%.f")
        .ok()
        .map(|n| n.and_utc())
}

/// Parse a decimal number; `None` for anything unparseable or non-finite.
pub(crate) fn parse_num(s: &str) -> Option<f64> {
    s.trim().parse::<f64>().ok().filter(|v| v.is_finite())
}

/// Parse a raw attribute value (bytes) as a decimal number.
pub(crate) fn parse_num_bytes(b: &[u8]) -> Option<f64> {
    std::str::from_utf8(b).ok().and_then(parse_num)
}

/// The (unescaped) value of the attribute whose local name is `local`.
pub(crate) fn attr_str(e: &BytesStart<'_>, local: &[u8]) -> Result<Option<String>, String> {
    for a in e.attributes() {
        let a = a.map_err(|err| format!("bad attribute: {err}"))?;
        if a.key.local_name().as_ref() == local {
            let v = a
                .unescape_value()
                .map_err(|err| format!("bad attribute value: {err}"))?;
            return Ok(Some(v.into_owned()));
        }
    }
    Ok(None)
}

/// The raw bytes of the attribute whose local name is `local`, parsed as a number.
/// `Ok(None)` when absent or not a finite number.
pub(crate) fn attr_num(e: &BytesStart<'_>, local: &[u8]) -> Result<Option<f64>, String> {
    for a in e.attributes() {
        let a = a.map_err(|err| format!("bad attribute: {err}"))?;
        if a.key.local_name().as_ref() == local {
            return Ok(parse_num_bytes(&a.value));
        }
    }
    Ok(None)
}

/// Trimmed note text; `None` when empty.
pub(crate) fn note(text: &str) -> Option<String> {
    let t = text.trim();
    (!t.is_empty()).then(|| t.to_string())
}

/// Seconds from `start` to `t`, microsecond resolution.
pub(crate) fn secs_between(start: DateTime<Utc>, t: DateTime<Utc>) -> f64 {
    let d = t - start;
    match d.num_microseconds() {
        Some(us) => us as f64 / 1e6,
        None => d.num_milliseconds() as f64 / 1e3,
    }
}

/// True when cadence from a per-foot count should be doubled into steps per minute:
/// foot sports, and files that do not name their sport.
pub(crate) fn is_foot_sport(sport: &crate::model::Sport) -> bool {
    use crate::model::Sport;
    matches!(sport, Sport::Running | Sport::Walking | Sport::Unknown)
}

/// A position only when both halves are present and in range.
pub(crate) fn valid_position(lat: Option<f64>, lon: Option<f64>) -> (Option<f64>, Option<f64>) {
    match (lat, lon) {
        (Some(a), Some(o)) if (-90.0..=90.0).contains(&a) && (-180.0..=180.0).contains(&o) => {
            (Some(a), Some(o))
        }
        _ => (None, None),
    }
}

/// One track point read from an XML file, in model units (cadence in steps per minute).
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct TrackSample {
    pub lat: Option<f64>,
    pub lon: Option<f64>,
    pub altitude: Option<f64>,
    pub distance: Option<f64>,
    pub speed: Option<f64>,
    pub hr: Option<f64>,
    pub cadence: Option<f64>,
}

/// Fill the session's time base and channels from timed track points sorted by time, the
/// first at `s.start`. Positions are kept only where valid, and only when the file has both
/// latitude and longitude; a channel with no value at all stays `None`.
pub(crate) fn fill_track(s: &mut crate::model::Session, points: &[(DateTime<Utc>, TrackSample)]) {
    use crate::model::Channel;
    let n = points.len();
    let mut t = Vec::with_capacity(n);
    let mut time = Vec::with_capacity(n);
    let mut cols: [Vec<Option<f64>>; 7] = std::array::from_fn(|_| Vec::with_capacity(n));
    for &(pt, p) in points {
        t.push(secs_between(s.start, pt));
        time.push(pt);
        let (lat, lon) = valid_position(p.lat, p.lon);
        let values = [p.distance, p.speed, p.hr, p.cadence, p.altitude, lat, lon];
        for (col, v) in cols.iter_mut().zip(values) {
            col.push(v);
        }
    }
    let [distance, speed, hr, cadence, altitude, lat, lon] =
        cols.map(|c| Channel::new(c).into_option());
    s.t = t;
    s.time = time;
    s.distance = distance;
    s.speed = speed;
    s.hr = hr;
    s.cadence = cadence;
    s.altitude = altitude;
    if lat.is_some() && lon.is_some() {
        s.lat = lat;
        s.lon = lon;
    }
}

/// The element `up` levels below the top of an element stack (0: the top itself).
pub(crate) fn parent<T: Copy>(stack: &[T], up: usize) -> Option<T> {
    stack
        .len()
        .checked_sub(1 + up)
        .and_then(|i| stack.get(i).copied())
}

/// Absolute pause ranges to seconds from the first sample, sorted, empty ones dropped.
pub(crate) fn build_pauses(
    raw: &[(DateTime<Utc>, DateTime<Utc>)],
    start: DateTime<Utc>,
) -> Vec<crate::model::Pause> {
    let mut pauses: Vec<crate::model::Pause> = raw
        .iter()
        .filter(|(a, b)| b > a)
        .map(|&(a, b)| crate::model::Pause {
            from_s: secs_between(start, a).max(0.0),
            to_s: secs_between(start, b).max(0.0),
        })
        .filter(|p| p.to_s > p.from_s)
        .collect();
    pauses.sort_by(|a, b| a.from_s.total_cmp(&b.from_s));
    pauses
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::TimeZone;

    #[test]
    fn timestamps_with_offsets_and_fractions() {
        let want = Utc.with_ymd_and_hms(2024, 3, 9, 8, 0, 0).unwrap();
        assert_eq!(parse_time("2024-03-09T08:00:00Z"), Some(want));
        assert_eq!(parse_time(" 2024-03-09T10:00:00+02:00\n"), Some(want));
        assert_eq!(parse_time("2024-03-09T03:00:00-05:00"), Some(want));
        assert_eq!(parse_time("2024-03-09T08:00:00"), Some(want));
        let frac = parse_time("2024-03-09T08:00:00.250Z").unwrap();
        assert_eq!(secs_between(want, frac), 0.25);
        let frac = parse_time("2024-03-09T10:00:01.5+02:00").unwrap();
        assert_eq!(secs_between(want, frac), 1.5);
        assert_eq!(parse_time("yesterday"), None);
    }

    #[test]
    fn line_and_column() {
        let b = b"ab\ncde\nf";
        assert_eq!(line_col(b, 0), (1, 1));
        assert_eq!(line_col(b, 4), (2, 2));
        assert_eq!(line_col(b, 7), (3, 1));
    }

    #[test]
    fn numbers_reject_non_finite() {
        assert_eq!(parse_num(" 12.5 "), Some(12.5));
        assert_eq!(parse_num("NaN"), None);
        assert_eq!(parse_num("inf"), None);
        assert_eq!(parse_num(""), None);
    }
}
