//! The one-line shorthand: a hand-written recursive-descent parser, kind inference shared with
//! the TOML form, and the writer that turns steps back into shorthand.
//!
//! ```text
//! plan      = step { ";" step } [ ";" ] ;
//! step      = repeat | segment ;
//! repeat    = COUNT ( "x" | "×" ) ( "(" segment { "," segment } ")" | segment )
//!             [ "/" segment ] ;
//! segment   = [ kind ] amount { modifier } ;
//! kind      = "wu" | "warmup" | "work" | "steady" | "rec" | "recovery" | "cd" | "cooldown" ;
//! amount    = CLOCK | NUMBER unit ;
//! unit      = "s" | "sec" | "min" | "h" | "m" | "km" | "k" | "mi" ;
//! modifier  = [ "@" ] target | mode | "hill" ;
//! target    = "open" | "hr" NUMBER "-" NUMBER [ "bpm" ]
//!           | CLOCK [ "-" CLOCK ] "/" ( "km" | "mi" ) [ tolerance ]
//!           | name [ tolerance ] ;
//! name      = WORD | NUMBER WORD ;            (* easy, half, 10k, threshold ... *)
//! tolerance = ( "±" | "+-" ) NUMBER [ "s" ] ;
//! mode      = "jog" | "walk" | "stand" ;
//! ```

use super::error::PlanErrorKind;
use super::lexer::{tokenize, SynErr, Tok, Token};
use super::{DEFAULT_TOLERANCE_S_PER_KM, MAX_REPEATS};
use crate::model::units::{parse_clock, METRES_PER_MILE};
use crate::model::{Amount, RecoveryMode, Segment, SegmentKind, Step, Target};

/// Words that never name a pace.
const RESERVED: &[&str] = &[
    "x", "jog", "walk", "stand", "hill", "hr", "open", "km", "mi",
];

/// A step before single-segment kinds are inferred.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum DraftStep {
    /// A single segment; `explicit` when its kind was written out.
    Single { seg: Segment, explicit: bool },
    /// A repeat block, kinds already final.
    Repeat(Step),
}

/// Easy-looking targets do not make a single segment a work segment.
fn is_quality(target: &Target) -> bool {
    match target {
        Target::PaceRange { .. } => true,
        Target::NamedPace { name, .. } => !matches!(name.as_str(), "easy" | "recovery"),
        Target::Open | Target::HrRange { .. } => false,
    }
}

/// Kind of a single segment whose kind is not written out.
///
/// `anchors` is `Some((first, last))`: the indices of the first and last repeat block or work
/// segment in the plan, or `None` when there are neither.
fn positional_kind(index: usize, anchors: Option<(usize, usize)>, seg: &Segment) -> SegmentKind {
    if is_quality(&seg.target) {
        return SegmentKind::Work;
    }
    match anchors {
        None => SegmentKind::Steady,
        Some((first, _)) if index < first => SegmentKind::Warmup,
        Some((_, last)) if index > last => SegmentKind::Cooldown,
        Some(_) if seg.mode.is_some() => SegmentKind::Recovery,
        Some(_) => SegmentKind::Steady,
    }
}

fn anchors_of(is_anchor: impl Iterator<Item = bool>) -> Option<(usize, usize)> {
    let idx: Vec<usize> = is_anchor
        .enumerate()
        .filter_map(|(i, a)| a.then_some(i))
        .collect();
    Some((*idx.first()?, *idx.last()?))
}

/// Give every single segment written without a kind its kind:
/// quality targets (a pace band, or a named pace other than `easy`/`recovery`) are work;
/// repeat blocks and work segments are anchors; before the first anchor is warm-up, after the
/// last is cool-down, between anchors is recovery (if a jog/walk/stand mode is given) or steady;
/// a plan without anchors is all steady.
pub(crate) fn resolve_kinds(drafts: Vec<DraftStep>) -> Vec<Step> {
    let mut drafts = drafts;
    for d in &mut drafts {
        if let DraftStep::Single { seg, explicit } = d {
            if !*explicit && is_quality(&seg.target) {
                seg.kind = SegmentKind::Work;
                *explicit = true;
            }
        }
    }
    let anchors = anchors_of(drafts.iter().map(|d| match d {
        DraftStep::Repeat(_) => true,
        DraftStep::Single { seg, explicit } => *explicit && seg.kind == SegmentKind::Work,
    }));
    drafts
        .into_iter()
        .enumerate()
        .map(|(i, d)| match d {
            DraftStep::Repeat(step) => step,
            DraftStep::Single {
                seg,
                explicit: true,
            } => Step::Single(seg),
            DraftStep::Single {
                mut seg,
                explicit: false,
            } => {
                seg.kind = positional_kind(i, anchors, &seg);
                Step::Single(seg)
            }
        })
        .collect()
}

struct Parser<'a> {
    src: &'a str,
    toks: Vec<Token<'a>>,
    pos: usize,
}

fn quote(t: Option<&Token<'_>>) -> String {
    match t {
        Some(t) => format!("\"{}\"", t.text),
        None => "end of input".to_string(),
    }
}

fn lower(t: &Token<'_>) -> String {
    t.text.to_ascii_lowercase()
}

fn kind_word(w: &str) -> Option<SegmentKind> {
    match w {
        "wu" | "warmup" => Some(SegmentKind::Warmup),
        "work" => Some(SegmentKind::Work),
        "steady" => Some(SegmentKind::Steady),
        "rec" | "recovery" => Some(SegmentKind::Recovery),
        "cd" | "cooldown" => Some(SegmentKind::Cooldown),
        _ => None,
    }
}

fn mode_word(w: &str) -> Option<RecoveryMode> {
    match w {
        "jog" => Some(RecoveryMode::Jog),
        "walk" => Some(RecoveryMode::Walk),
        "stand" => Some(RecoveryMode::Stand),
        _ => None,
    }
}

/// Metres per unit for a distance word, seconds per unit for a duration word.
fn unit_word(w: &str) -> Option<(bool, f64)> {
    match w {
        "s" | "sec" | "secs" => Some((true, 1.0)),
        "min" | "mins" => Some((true, 60.0)),
        "h" => Some((true, 3600.0)),
        "m" => Some((false, 1.0)),
        "km" | "k" => Some((false, 1000.0)),
        "mi" => Some((false, METRES_PER_MILE)),
        _ => None,
    }
}

const EXPECT_AMOUNT: &str = "a duration like 3:00 or a distance like 400m";
const EXPECT_STEP: &str = "a step like 12:00 easy or 5 x 400m @ 5k";
const EXPECT_TARGET: &str =
    "a target like easy, half ±5, 4:05/km, 4:00-4:10/km, hr 140-150 or open";

impl<'a> Parser<'a> {
    fn new(src: &'a str) -> Result<Parser<'a>, SynErr> {
        Ok(Parser {
            src,
            toks: tokenize(src)?,
            pos: 0,
        })
    }

    fn peek(&self) -> Option<&Token<'a>> {
        self.toks.get(self.pos)
    }

    fn peek_at(&self, n: usize) -> Option<&Token<'a>> {
        self.toks.get(self.pos + n)
    }

    fn peek_tok(&self) -> Option<Tok> {
        self.peek().map(|t| t.tok)
    }

    fn peek_word(&self) -> Option<String> {
        self.peek().filter(|t| t.tok == Tok::Word).map(lower)
    }

    fn bump(&mut self) -> Option<Token<'a>> {
        let t = self.toks.get(self.pos).copied();
        if t.is_some() {
            self.pos += 1;
        }
        t
    }

    fn offset(&self) -> usize {
        self.peek().map_or(self.src.len(), |t| t.start)
    }

    fn expected(&self, what: &str) -> SynErr {
        SynErr {
            offset: self.offset(),
            kind: PlanErrorKind::Expected {
                expected: what.to_string(),
                found: quote(self.peek()),
            },
        }
    }

    fn at_end(&self) -> bool {
        self.pos >= self.toks.len()
    }

    fn is_repeat_sign(t: Option<&Token<'_>>) -> bool {
        match t {
            Some(t) => t.tok == Tok::Times || (t.tok == Tok::Word && lower(t) == "x"),
            None => false,
        }
    }

    fn plan(&mut self) -> Result<Vec<DraftStep>, SynErr> {
        let mut steps = Vec::new();
        loop {
            steps.push(self.step()?);
            match self.peek_tok() {
                None => break,
                Some(Tok::Semi) => {
                    self.bump();
                    if self.at_end() {
                        break;
                    }
                }
                Some(_) => return Err(self.expected("\";\" between steps")),
            }
        }
        Ok(steps)
    }

    fn step(&mut self) -> Result<DraftStep, SynErr> {
        let starts_repeat = matches!(self.peek_tok(), Some(Tok::Number(_)))
            && Self::is_repeat_sign(self.peek_at(1));
        if starts_repeat {
            return self.repeat().map(DraftStep::Repeat);
        }
        let starts_segment = match self.peek() {
            Some(t) => match t.tok {
                Tok::Clock(_) | Tok::Number(_) => true,
                Tok::Word => kind_word(&lower(t)).is_some(),
                _ => false,
            },
            None => false,
        };
        if !starts_segment {
            return Err(self.expected(EXPECT_STEP));
        }
        let (seg, explicit) = self.segment(None)?;
        Ok(DraftStep::Single { seg, explicit })
    }

    fn repeat(&mut self) -> Result<Step, SynErr> {
        let count_tok = self.bump();
        let count = match count_tok.map(|t| t.tok) {
            Some(Tok::Number(n)) if n.fract() == 0.0 && n >= 1.0 && n <= f64::from(MAX_REPEATS) => {
                n as u32
            }
            _ => {
                return Err(SynErr {
                    offset: count_tok.map_or(self.src.len(), |t| t.start),
                    kind: PlanErrorKind::Expected {
                        expected: format!("a repeat count from 1 to {MAX_REPEATS}"),
                        found: quote(count_tok.as_ref()),
                    },
                })
            }
        };
        self.bump(); // the `x`
        let mut work = Vec::new();
        if self.peek_tok() == Some(Tok::LParen) {
            self.bump();
            loop {
                work.push(self.segment(Some(SegmentKind::Work))?.0);
                match self.peek_tok() {
                    Some(Tok::Comma) => {
                        self.bump();
                    }
                    Some(Tok::RParen) => {
                        self.bump();
                        break;
                    }
                    _ => return Err(self.expected("\",\" or \")\"")),
                }
            }
        } else {
            work.push(self.segment(Some(SegmentKind::Work))?.0);
        }
        let recovery = match self.peek_tok() {
            Some(Tok::Slash) => {
                self.bump();
                Some(self.segment(Some(SegmentKind::Recovery))?.0)
            }
            None | Some(Tok::Semi) => None,
            Some(_) => return Err(self.expected("\"/\" before a recovery, or \";\" between steps")),
        };
        Ok(Step::Repeat {
            count,
            work,
            recovery,
        })
    }

    /// A segment; `default` is the kind inside a repeat, `None` for a single step
    /// (the kind is then inferred later unless written out).
    fn segment(&mut self, default: Option<SegmentKind>) -> Result<(Segment, bool), SynErr> {
        let explicit = self.peek_word().and_then(|w| kind_word(&w));
        if explicit.is_some() {
            self.bump();
        }
        let amount = self.amount()?;
        let mut seg = Segment {
            kind: explicit.or(default).unwrap_or(SegmentKind::Steady),
            amount,
            target: Target::Open,
            mode: None,
        };
        let mut have_target = false;
        let mut have_mode = false;
        while let Some(t) = self.peek().copied() {
            let target_follows = match t.tok {
                Tok::At | Tok::Clock(_) => true,
                // `10k` names a pace; `200m` after a target is a missing `/` or `;`.
                Tok::Number(_) => match self.peek_at(1) {
                    Some(n) if n.tok == Tok::Word => {
                        let w = lower(n);
                        w != "x" && (w == "k" || unit_word(&w).is_none())
                    }
                    _ => false,
                },
                Tok::Word => {
                    let w = lower(&t);
                    if let Some(mode) = mode_word(&w) {
                        if have_mode {
                            return Err(SynErr::invalid(
                                t.start,
                                "this segment already has a recovery mode",
                            ));
                        }
                        self.bump();
                        seg.mode = Some(mode);
                        have_mode = true;
                        continue;
                    }
                    if w == "hill" {
                        // Terrain is not part of the plan: accepted and ignored.
                        self.bump();
                        continue;
                    }
                    w != "x"
                }
                _ => false,
            };
            if !target_follows {
                break;
            }
            if have_target {
                return Err(SynErr::invalid(
                    t.start,
                    "this segment already has a target",
                ));
            }
            if t.tok == Tok::At {
                self.bump();
            }
            seg.target = self.target()?;
            have_target = true;
        }
        Ok((seg, explicit.is_some() || default.is_some()))
    }

    fn amount(&mut self) -> Result<Amount, SynErr> {
        let Some(t) = self.peek().copied() else {
            return Err(self.expected(EXPECT_AMOUNT));
        };
        match t.tok {
            Tok::Clock(secs) => {
                self.bump();
                if secs <= 0.0 {
                    return Err(SynErr::invalid(t.start, "a duration must be longer than 0"));
                }
                Ok(Amount::Duration(secs))
            }
            Tok::Number(v) => {
                if Self::is_repeat_sign(self.peek_at(1)) {
                    return Err(SynErr::invalid(t.start, "repeats cannot be nested"));
                }
                self.bump();
                let unit = self
                    .peek_word()
                    .and_then(|w| unit_word(&w))
                    .ok_or_else(|| {
                        self.expected(&format!(
                            "a unit after \"{}\": s, min, h, m, km or mi",
                            t.text
                        ))
                    })?;
                self.bump();
                if v <= 0.0 {
                    return Err(SynErr::invalid(t.start, "an amount must be more than 0"));
                }
                Ok(match unit {
                    (true, k) => Amount::Duration(v * k),
                    (false, k) => Amount::Distance(v * k),
                })
            }
            _ => Err(self.expected(EXPECT_AMOUNT)),
        }
    }

    fn target(&mut self) -> Result<Target, SynErr> {
        let Some(t) = self.peek().copied() else {
            return Err(self.expected(EXPECT_TARGET));
        };
        match t.tok {
            Tok::Clock(_) => self.pace(),
            Tok::Number(_) => {
                let unit = self.peek_at(1).copied().filter(|u| u.tok == Tok::Word);
                let Some(u) = unit else {
                    return Err(self.expected(EXPECT_TARGET));
                };
                self.bump();
                self.bump();
                let name = format!("{}{}", t.text, u.text).to_ascii_lowercase();
                self.named(name)
            }
            Tok::Word => {
                let w = lower(&t);
                match w.as_str() {
                    "open" => {
                        self.bump();
                        Ok(Target::Open)
                    }
                    "hr" => {
                        self.bump();
                        self.hr()
                    }
                    _ if RESERVED.contains(&w.as_str()) => Err(self.expected(EXPECT_TARGET)),
                    _ => {
                        self.bump();
                        self.named(w)
                    }
                }
            }
            _ => Err(self.expected(EXPECT_TARGET)),
        }
    }

    fn named(&mut self, name: String) -> Result<Target, SynErr> {
        let tolerance = self.tolerance()?.unwrap_or(DEFAULT_TOLERANCE_S_PER_KM);
        Ok(Target::NamedPace {
            name,
            tolerance_s_per_km: tolerance,
        })
    }

    fn tolerance(&mut self) -> Result<Option<f64>, SynErr> {
        if self.peek_tok() != Some(Tok::PlusMinus) {
            return Ok(None);
        }
        self.bump();
        let t = self.peek().copied();
        let v = match t.map(|t| t.tok) {
            Some(Tok::Number(v)) => v,
            _ => return Err(self.expected("a tolerance in seconds, like ±5")),
        };
        self.bump();
        if self.peek_word().as_deref() == Some("s") {
            self.bump();
        }
        if v > 120.0 {
            return Err(SynErr::invalid(
                t.map_or(0, |t| t.start),
                "a tolerance must be at most 120 seconds",
            ));
        }
        Ok(Some(v))
    }

    fn pace(&mut self) -> Result<Target, SynErr> {
        let first = self.bump();
        let a = match first.map(|t| t.tok) {
            Some(Tok::Clock(v)) => v,
            _ => return Err(self.expected(EXPECT_TARGET)),
        };
        let mut band = None;
        if self.peek_tok() == Some(Tok::Dash) {
            self.bump();
            match self.peek_tok() {
                Some(Tok::Clock(b)) => {
                    self.bump();
                    band = Some(b);
                }
                _ => return Err(self.expected("the other end of the pace band, like 4:10")),
            }
        }
        let unit_ok = self.peek_tok() == Some(Tok::Slash)
            && matches!(self.peek_at(1), Some(u) if u.tok == Tok::Word
                && matches!(lower(u).as_str(), "km" | "mi"));
        if !unit_ok {
            let text = first.map_or("", |t| t.text);
            return Err(self.expected(&format!("\"/km\" or \"/mi\" after the pace \"{text}\"")));
        }
        self.bump();
        let metres = match self.bump().map(|u| lower(&u)).as_deref() {
            Some("mi") => METRES_PER_MILE,
            _ => 1000.0,
        };
        let tol_at = self.offset();
        let tolerance = self.tolerance()?;
        let (slow_s, fast_s) = match (band, tolerance) {
            (Some(_), Some(_)) => {
                return Err(SynErr::invalid(tol_at, "a pace band takes no tolerance"))
            }
            (Some(b), None) => (a.max(b), a.min(b)),
            (None, tol) => {
                let t = tol.unwrap_or(DEFAULT_TOLERANCE_S_PER_KM);
                (a + t, a - t)
            }
        };
        let start = first.map_or(0, |t| t.start);
        if fast_s <= 0.0 {
            return Err(SynErr::invalid(start, "a pace must be slower than 0:00"));
        }
        Ok(Target::PaceRange {
            slow_mps: metres / slow_s,
            fast_mps: metres / fast_s,
        })
    }

    fn hr(&mut self) -> Result<Target, SynErr> {
        const EXPECT_HR: &str = "a heart-rate band like 140-150";
        let lo_tok = self.peek().copied();
        let Some(Tok::Number(lo)) = lo_tok.map(|t| t.tok) else {
            return Err(self.expected(EXPECT_HR));
        };
        self.bump();
        if self.peek_tok() != Some(Tok::Dash) {
            return Err(self.expected(EXPECT_HR));
        }
        self.bump();
        let Some(Tok::Number(hi)) = self.peek_tok() else {
            return Err(self.expected(EXPECT_HR));
        };
        self.bump();
        if self.peek_word().as_deref() == Some("bpm") {
            self.bump();
        }
        let start = lo_tok.map_or(0, |t| t.start);
        if lo > hi {
            return Err(SynErr::invalid(
                start,
                format!("heart-rate band {lo}-{hi} is reversed: write the low end first"),
            ));
        }
        if lo < 20.0 || hi > 260.0 {
            return Err(SynErr::invalid(
                start,
                format!("heart-rate band {lo}-{hi} is outside 20-260 bpm"),
            ));
        }
        Ok(Target::HrRange {
            low_bpm: lo,
            high_bpm: hi,
        })
    }

    fn finish(&self) -> Result<(), SynErr> {
        if self.at_end() {
            Ok(())
        } else {
            Err(self.expected("end of the value"))
        }
    }
}

/// Parse a whole shorthand plan into draft steps (kinds of singles not yet inferred).
pub(crate) fn parse_drafts(src: &str) -> Result<Vec<DraftStep>, SynErr> {
    let mut p = Parser::new(src)?;
    p.plan()
}

/// Parse an amount on its own (`3:00`, `90s`, `400m`, `1.5km`).
pub(crate) fn parse_amount_str(src: &str) -> Result<Amount, SynErr> {
    let mut p = Parser::new(src)?;
    let a = p.amount()?;
    p.finish()?;
    Ok(a)
}

/// Parse a pace target on its own (`half`, `half ±3`, `4:05/km`, `4:00-4:10/km`, `open`),
/// with an optional tolerance given separately (seconds, per km or per mile for `/mi` paces).
pub(crate) fn parse_pace_str(src: &str, tolerance: Option<f64>) -> Result<Target, SynErr> {
    if tolerance.is_some() && (src.contains('±') || src.contains("+-")) {
        return Err(SynErr::invalid(0, "tolerance given twice"));
    }
    let mut p = Parser::new(src)?;
    if p.peek_word().as_deref() == Some("hr") {
        return Err(p.expected("a pace like half, 4:05/km or 4:00-4:10/km (use hr = \"...\")"));
    }
    let target = p.target()?;
    p.finish()?;
    match (target, tolerance) {
        (t, None) => Ok(t),
        (Target::NamedPace { name, .. }, Some(tol)) => {
            if !(0.0..=120.0).contains(&tol) {
                return Err(SynErr::invalid(0, "a tolerance must be 0 to 120 seconds"));
            }
            Ok(Target::NamedPace {
                name,
                tolerance_s_per_km: tol,
            })
        }
        (Target::PaceRange { .. }, Some(tol)) => {
            // Re-parse with the tolerance written inline so the single-pace rules apply.
            let with = format!("{src} ±{tol}");
            let mut p = Parser::new(&with)?;
            let t = p.target().map_err(|e| SynErr { offset: 0, ..e })?;
            Ok(t)
        }
        (_, Some(_)) => Err(SynErr::invalid(
            0,
            "a tolerance only applies to a named pace or a single pace",
        )),
    }
}

/// Parse a heart-rate band on its own (`140-150`).
pub(crate) fn parse_hr_str(src: &str) -> Result<Target, SynErr> {
    let mut p = Parser::new(src)?;
    if p.peek_word().as_deref() == Some("hr") {
        p.bump();
    }
    let t = p.hr()?;
    p.finish()?;
    Ok(t)
}

/// Kind from a word (`warmup`, `wu`, `work`, `steady`, `recovery`, `rec`, `cooldown`, `cd`).
pub(crate) fn parse_kind_str(s: &str) -> Option<SegmentKind> {
    kind_word(&s.trim().to_ascii_lowercase())
}

/// Recovery mode from a word (`jog`, `walk`, `stand`).
pub(crate) fn parse_mode_str(s: &str) -> Option<RecoveryMode> {
    mode_word(&s.trim().to_ascii_lowercase())
}

// ---------------------------------------------------------------------------------------------
// Writing shorthand back.

fn short_kind(k: SegmentKind) -> &'static str {
    match k {
        SegmentKind::Warmup => "wu",
        SegmentKind::Work => "work",
        SegmentKind::Recovery => "rec",
        SegmentKind::Steady => "steady",
        SegmentKind::Cooldown => "cd",
    }
}

fn clock(total: u64) -> String {
    let (h, m, s) = (total / 3600, (total / 60) % 60, total % 60);
    if h > 0 {
        format!("{h}:{m:02}:{s:02}")
    } else {
        format!("{m}:{s:02}")
    }
}

fn write_amount(a: &Amount) -> String {
    match *a {
        Amount::Duration(s) if s.fract() == 0.0 && (60.0..1e9).contains(&s) => clock(s as u64),
        Amount::Duration(s) => format!("{s}s"),
        Amount::Distance(d) => {
            let miles = d / METRES_PER_MILE;
            let tenths = (miles * 10.0).round() / 10.0;
            if tenths > 0.0 && tenths * METRES_PER_MILE == d {
                format!("{tenths}mi")
            } else if d >= 1000.0 && (d / 100.0).fract() == 0.0 {
                format!("{}km", d / 1000.0)
            } else {
                format!("{d}m")
            }
        }
    }
}

/// Seconds per `metres` for a speed as a clock (`4:05`, `4:05.5`), written so that parsing
/// gives back exactly the same speed, or `None` when no short spelling does.
fn exact_clock(speed: f64, metres: f64) -> Option<String> {
    let secs = metres / speed;
    if !(1.0..3600.0).contains(&secs) {
        return None;
    }
    (0..=3usize).find_map(|decimals| {
        let scale = 10f64.powi(decimals as i32);
        let rounded = (secs * scale).round() / scale;
        let whole_min = (rounded / 60.0).floor();
        let rest = rounded - whole_min * 60.0;
        let width = if decimals == 0 { 2 } else { 3 + decimals };
        let text = format!("{whole_min}:{rest:0width$.decimals$}");
        let back = parse_clock(&text)?;
        (back > 0.0 && metres / back == speed).then_some(text)
    })
}

fn write_pace_range(slow: f64, fast: f64) -> String {
    for (metres, unit) in [(1000.0, "km"), (METRES_PER_MILE, "mi")] {
        if let (Some(a), Some(b)) = (exact_clock(fast, metres), exact_clock(slow, metres)) {
            return if slow == fast {
                format!("{a}/{unit} ±0")
            } else {
                format!("{a}-{b}/{unit}")
            };
        }
    }
    // Not whole seconds in either unit: closest whole-second km band.
    let a = clock((1000.0 / fast).round().max(1.0) as u64);
    let b = clock((1000.0 / slow).round().max(1.0) as u64);
    format!("{a}-{b}/km")
}

fn write_target(t: &Target) -> Option<String> {
    match t {
        Target::Open => None,
        Target::PaceRange { slow_mps, fast_mps } => {
            Some(format!("@ {}", write_pace_range(*slow_mps, *fast_mps)))
        }
        Target::NamedPace {
            name,
            tolerance_s_per_km,
        } => {
            let at = if is_quality(t) { "@ " } else { "" };
            Some(if *tolerance_s_per_km == DEFAULT_TOLERANCE_S_PER_KM {
                format!("{at}{name}")
            } else {
                format!("{at}{name} ±{tolerance_s_per_km}")
            })
        }
        Target::HrRange { low_bpm, high_bpm } => Some(format!("hr {low_bpm}-{high_bpm}")),
    }
}

fn write_segment(seg: &Segment, default: SegmentKind) -> String {
    let mut parts = Vec::new();
    if seg.kind != default {
        parts.push(short_kind(seg.kind).to_string());
    }
    parts.push(write_amount(&seg.amount));
    if let Some(t) = write_target(&seg.target) {
        parts.push(t);
    }
    if let Some(m) = seg.mode {
        parts.push(m.as_str().to_string());
    }
    parts.join(" ")
}

/// Write steps as shorthand; kinds are written out only where the inference rules would
/// give a different kind, so `parse_line(&describe_line(s)) == Ok(s)`.
pub fn describe_line(steps: &[Step]) -> String {
    let anchors = anchors_of(steps.iter().map(|s| match s {
        Step::Repeat { .. } => true,
        Step::Single(seg) => seg.kind == SegmentKind::Work,
    }));
    let parts: Vec<String> = steps
        .iter()
        .enumerate()
        .map(|(i, step)| match step {
            Step::Single(seg) => write_segment(seg, positional_kind(i, anchors, seg)),
            Step::Repeat {
                count,
                work,
                recovery,
            } => {
                let body: Vec<String> = work
                    .iter()
                    .map(|s| write_segment(s, SegmentKind::Work))
                    .collect();
                let mut out = if body.len() == 1 {
                    format!("{count} x {}", body.join(""))
                } else {
                    format!("{count} x ({})", body.join(", "))
                };
                if let Some(r) = recovery {
                    out.push_str(" / ");
                    out.push_str(&write_segment(r, SegmentKind::Recovery));
                }
                out
            }
        })
        .collect();
    parts.join("; ")
}
