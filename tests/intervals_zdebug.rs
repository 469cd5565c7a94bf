mod sim_support;
use sim_support::profile;
use splitdesk::analysis::intervals::find_intervals;
use splitdesk::analysis::gradient::hill_adjusted_speed;
use splitdesk::demo::simulate::{simulate, Pacing, SimInput, Terrain};
use splitdesk::ingest::clean;
use splitdesk::model::Plan;
use splitdesk::plan::parse_line;
#[test]
fn dbg() {
    let prof = profile();
    let line = std::env::var("LINE").unwrap_or("10:00 easy; 6 x 3:00 @ 5k / 2:00 jog; 8:00 easy".into());
    let p = Plan { title: "t".into(), purpose: "p".into(), date: None, steps: parse_line(&line).unwrap() };
    let mut inp = SimInput::new(prof.clone(), p.clone(), std::env::var("SEED").unwrap().parse().unwrap());
    if std::env::var("ROLL").is_ok() { inp.conditions.terrain = Terrain::Rolling { amplitude_m: 12.0, wavelength_m: 900.0 }; inp.conditions.pacing = Pacing::Surging; }
    if std::env::var("HILL").is_ok() { inp.conditions.terrain = Terrain::Hill { grade: 0.07 }; }
    if std::env::var("SMART").is_ok() { inp.conditions.sampling = splitdesk::demo::simulate::Sampling::Smart{min_s:1,max_s:7}; inp.faults = splitdesk::demo::simulate::Faults{gps_jumps:3,cadence_lock:Some((900.0,120.0)),hr_dropouts:3}; }
    let out = simulate(&inp);
    let mut s = out.session;
    s.laps.clear();
    s.flags = clean::flag(&s, Some(&prof));
    let set = find_intervals(&s, Some(&p), &prof);
    for i in &set.intervals { eprintln!("{:?} {:.0}-{:.0} {:?} {:?}", i.kind, i.start_s, i.end_s, i.expected, i.mode); }
    eprintln!("{:?} {:?} {:?}", set.missing, set.extra, set.notes);
    for w in &out.truth.intervals { eprintln!("T {:?} {:.0}-{:.0} {:.2}", w.kind, w.start_s, w.end_s, w.avg_speed_mps); }
    let h = hill_adjusted_speed(&s).unwrap();
    let v = s.speed.as_ref().unwrap();
    let alt = s.altitude.as_ref().unwrap();
    let from: f64 = std::env::var("FROM").unwrap_or("0".into()).parse().unwrap(); let to: f64 = std::env::var("TO").unwrap_or("0".into()).parse().unwrap();
    for f in &s.flags { eprintln!("FLAG {:?}", f); }
    for k in 0..s.len() { if s.t[k] < from || s.t[k] > to { continue; } eprintln!("{:.0} v {:.2} adj {:.2} alt {:.1} g {:.3}", s.t[k], v.get(k).unwrap_or(-1.0), h.values[k].unwrap_or(-1.0), alt.get(k).unwrap_or(0.0), out.truth.grade[k]); }
}
