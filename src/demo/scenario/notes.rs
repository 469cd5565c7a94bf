//! The athletes' own words: one voice bank per athlete, a few lines per kind of session.
//!
//! Sessions whose note is [`NoteSpec::Auto`] take the next line of their kind in turn; every
//! fourth easy or long run goes without a note (athletes do not always write one), except
//! when the note must also go inside the file.

use super::{AthleteSpec, NoteSpec, SessionKind};

/// Lines for one kind of session in one athlete's voice.
type Bank = &'static [&'static str];

fn bank(athlete: &str, kind: SessionKind) -> Bank {
    use SessionKind::*;
    match (athlete, kind) {
        // Precise, a little formal, reports how the body felt.
        ("tobias-wrenfield", Easy) => &[
            "Easy, kept it honest. Heart rate low, legs fine.",
            "Recovery pace along the river. Nothing to report.",
            "Easy. Slight tightness in the left calf, gone after ten minutes.",
            "Relaxed run, good rhythm, cadence felt quick.",
        ],
        ("tobias-wrenfield", Long) => &[
            "Long run done. Gel at 45 minutes, pace held without effort.",
            "Long run, headwind on the way out, stayed patient and came back stronger.",
            "Solid long run. Last twenty minutes heavier than I would like.",
            "Long run with two of the club. Conversational the whole way.",
            "Long run. Good. Hip flexors a bit tight at the end.",
        ],
        ("tobias-wrenfield", Hills) => &[
            "Hills: all eight done, form held, drove the arms on the last two.",
            "Hill reps. Strong up, controlled down. Quads know about it.",
        ],
        ("tobias-wrenfield", ShortReps) => &[
            "200s on the track. Walked every recovery fully as asked. Snappy.",
            "Short reps. Felt quick and light; kept it relaxed rather than flat out.",
            "Track 200s in the wind, the back straight was hard work.",
        ],
        ("tobias-wrenfield", Progression) => &[
            "Progression reps, each one a notch quicker. Controlled throughout.",
            "Kilometre reps getting quicker. Last one properly hard but on target.",
            "Progression session. Started a bit conservative, finished well.",
        ],
        ("tobias-wrenfield", Intervals) => &["Five by three minutes. Tough but consistent."],
        // Nineteen, lower case, exclamation marks.
        ("mira-castellan", Easy) => &[
            "easy run w/ the group, chatted the whole way",
            "legs a bit sore from tuesday but fine",
            "nice easy one, sunny!!",
            "easy. uni deadline tmrw so kept it short-ish",
            "easy, listened to a podcast and forgot i was running",
        ],
        ("mira-castellan", Long) => &[
            "long run!! got a bit bored in the middle but ok",
            "long one with jess, slow and chatty, perfect",
            "long run, stitch at 40 min, went away",
            "long. hungry the whole time lol",
        ],
        ("mira-castellan", Hills) => &[
            "hills hurt!! but good hurt",
            "hill reps, last two were really slow, arms were doing nothing",
        ],
        ("mira-castellan", ShortReps) => &[
            "200s on the track, walking back felt weird but ok",
            "fast 200s!! felt like flying",
        ],
        ("mira-castellan", Progression) => &[
            "progression k's, each one faster, last one was hard",
            "k reps getting faster, nailed it i think?",
        ],
        ("mira-castellan", Tempo) => &[
            "tempo 20 min, tried to keep it even, think i went a bit fast at the start",
            "tempo felt ok, breathing was hard last 5 min",
        ],
        // Nurse on shifts, practical and brief.
        ("keziah-brandt", Easy) => &[
            "Post night shift, kept it very easy.",
            "Day off run. Fine.",
            "Easy before work. Cold hands, otherwise good.",
            "Easy. Slept badly but legs were okay.",
            "Steady easy run, nothing special.",
        ],
        ("keziah-brandt", Long) => &[
            "Long run on my day off. Fuelled properly this time, felt good.",
            "Long run. Tired in the last half hour, two shifts in a row before this.",
            "Long, slow and muddy.",
        ],
        ("keziah-brandt", Hills) => &["Hill reps. Hard but did them all."],
        ("keziah-brandt", Tempo) => &["Tempo between shifts. Held it but it was work."],
        ("keziah-brandt", ShortReps) => &["Track 200s with walks. Felt quick for once."],
        ("keziah-brandt", Progression) => &["K reps, getting faster each one. Last one hurt."],
        ("keziah-brandt", Intervals) => &["5 x 3 min. Legs heavy after the late shift."],
        ("keziah-brandt", TimeTrial) => {
            &["10k race. Went with the plan, faded a little in the last 2k but pleased."]
        }
        // Comeback runner, dry humour, mentions the knee and work.
        ("ansel-marchetti", Easy) => &[
            "Easy forty. Knee quiet. Best part of the day.",
            "Easy loop at lunch. Felt a little smoother than last week.",
            "Easy. Meeting ran over so this was rushed getting out the door, fine once going.",
            "Forty minutes easy. Breathing easier on the bridge than it used to be.",
            "Easy run. Nothing hurts, which at my age counts as news.",
        ],
        ("ansel-marchetti", Long) => &[
            "Long run. Longest since the comeback started. Tired but whole.",
            "Long one. Took a gel, felt like a proper runner.",
            "Long run, steady. Knee a bit stiff in the last mile.",
            "Long run in the drizzle. Fine.",
        ],
        ("ansel-marchetti", Hills) => &[
            "Hills. The hill won, narrowly.",
            "Hill repeats. Better than last time; jogged down properly.",
        ],
        ("ansel-marchetti", Tempo) => &[
            "Cruise miles. Kept them even, more or less.",
            "Cruise miles. Second one a bit quick, settled after.",
        ],
        ("ansel-marchetti", Progression) => &["Mile reps getting quicker. Did not die. Progress."],
        ("ansel-marchetti", ShortReps) => &["200s. I had forgotten I could run that fast."],
        // Terse.
        ("oren-falkner", Easy) => &["Done.", "Easy. Ok.", "Legs ok.", "Fine.", "Easy. Windy."],
        ("oren-falkner", Long) => &["Long. Ok.", "Long run done. Tired end.", "Long. Fine."],
        ("oren-falkner", Tempo) => &["Tempo done. Hard.", "Tempo. Ok."],
        ("oren-falkner", Hills) => &["Hills. Done."],
        ("oren-falkner", Progression) => &["Reps. Faster each one."],
        ("oren-falkner", Intervals) => &["Intervals. Heavy legs."],
        // Chatty, full sentences, her dog Pip and the allotment.
        ("dagny-holloway", Easy) => &[
            "Lovely crisp morning. Took Pip for the first loop and then carried on without \
             her. Felt steady all the way round.",
            "A bit stiff getting going, as usual these days, but loosened up after ten \
             minutes or so.",
            "Easy run before the allotment. Saw the heron by the weir again!",
            "Nice and gentle. Chatted to Maureen at the gate on the way out, then a slow \
             loop by the river.",
            "Not my best, legs felt old today, but I got out and that's what counts.",
        ],
        ("dagny-holloway", Long) => &[
            "My long run. Took it very steady and enjoyed the leaves. Tired but happy.",
            "Long one today. Legs were heavy in the last stretch but I kept going.",
            "Long run with the Saturday ladies. We talked far too much to go fast.",
            "Long run, a little further than last week. Very pleased with myself.",
        ],
        ("dagny-holloway", ShortReps) => &[
            "The little fast bits on the track with walks in between. I quite like these now, \
             they make me feel young.",
            "Short reps. Walked the recoveries as you said, and the last two felt the best.",
            "Track session. It was cold and I was glad of the walks.",
        ],
        ("dagny-holloway", Hills) => {
            &["Hills! I did all five, the last one very slowly. Pip was not impressed."]
        }
        ("dagny-holloway", Tempo) => {
            &["The fifteen minutes at 'comfortably hard'. Not sure it was comfortable."]
        }
        ("dagny-holloway", TimeTrial) => &[
            "5k time trial. I tried to go evenly like we discussed. Very tired at the end \
             but I think it went well?",
        ],
        _ => &[],
    }
}

/// Fill in every [`NoteSpec::Auto`] note of the athlete from the voice bank.
pub(super) fn apply(a: &mut AthleteSpec) {
    let mut used: std::collections::BTreeMap<SessionKind, usize> = Default::default();
    let mut plain = 0usize;
    for s in &mut a.sessions {
        if s.note != NoteSpec::Auto {
            continue;
        }
        let lines = bank(&a.id, s.kind);
        let skip = if matches!(s.kind, SessionKind::Easy | SessionKind::Long) {
            plain += 1;
            plain.is_multiple_of(4) && !s.note_in_file
        } else {
            false
        };
        let k = used.entry(s.kind).or_insert(0);
        s.note = match lines.get(*k % lines.len().max(1)) {
            Some(line) if !skip => {
                *k += 1;
                NoteSpec::Text((*line).to_string())
            }
            _ => NoteSpec::None,
        };
    }
}
