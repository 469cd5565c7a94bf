//! Load through the history path (analysis::history::build): the EWMA acute/chronic ratio
//! with its seed rule, the impulse-response model, and the caution on a sharp rise.

mod history_support;

use history_support::{close, day, profile, with_load};
use splitdesk::analysis::history::{build, HistoryParams};

fn series(loads: &[f64]) -> Vec<splitdesk::analysis::history::SessionSummary> {
    loads
        .iter()
        .enumerate()
        .filter(|(_, &l)| l > 0.0)
        .map(|(k, &l)| with_load(k as i64 + 1, l))
        .collect()
}

#[test]
fn ewma_ratio_21_days_at_40_then_7_at_60() {
    // Source: Williams et al., BJSM 2017;51(3):209–210 (EWMA); values computed, methods.md §9:
    // seeded with the first week's mean (= the first day's load here) the ratio is 1.198.
    let mut loads = vec![40.0; 21];
    loads.extend([60.0; 7]);
    let h = build(
        &series(&loads),
        &profile(),
        &HistoryParams::default(),
        day(28),
    );
    let latest = h.acute_chronic_latest.expect("ratio on day 28");
    close(latest.value, 1.198, 0.0005);
    assert_eq!(latest.band, "within");
    assert!(h.cautions.is_empty(), "{:?}", h.cautions);
    // No ratio before day 28 (no full chronic window).
    let d27 = h
        .acute_chronic_ratio
        .iter()
        .find(|r| r.date == day(27))
        .unwrap();
    assert_eq!(d27.value, None);
    // The series ends today and the method names the seed.
    assert_eq!(h.acute_chronic_ratio.last().unwrap().date, day(28));
    assert!(h.acute_chronic_bands.method.contains("first 7 days"));
}

#[test]
fn ewma_ratio_27_days_at_50_then_200() {
    // Source: Williams et al., BJSM 2017;51(3):209–210 (EWMA); values computed, methods.md §9:
    // 87.5 / 60.34 = 1.450.
    let mut loads = vec![50.0; 27];
    loads.push(200.0);
    let h = build(
        &series(&loads),
        &profile(),
        &HistoryParams::default(),
        day(28),
    );
    let latest = h.acute_chronic_latest.unwrap();
    close(latest.value, 1.450, 0.0005);
    assert_eq!(latest.band, "above");
    assert!(h.cautions.is_empty());
    // The published criticism is always shown with the ratio.
    assert!(h.acute_chronic_bands.criticism.contains("Impellizzeri"));
    assert!(h.notes.iter().any(|n| n.contains("Impellizzeri")));
}

#[test]
fn seed_is_the_mean_of_the_first_week() {
    // Our rule, documented in analysis::history: both averages start from the mean load of
    // the first 7 days of data (here 290/7), not from the first day's load (10). Checked
    // against a hand-rolled EWMA with that seed (Williams et al. 2017 update).
    let mut loads = vec![10.0, 70.0, 10.0, 70.0, 10.0, 60.0, 60.0];
    loads.extend([40.0; 21]);
    let seed = 290.0 / 7.0;
    let (mut a, mut c) = (seed, seed);
    for &l in &loads {
        a = 0.25 * l + 0.75 * a;
        c = 2.0 / 29.0 * l + 27.0 / 29.0 * c;
    }
    let h = build(
        &series(&loads),
        &profile(),
        &HistoryParams::default(),
        day(28),
    );
    close(h.acute_chronic_latest.unwrap().value, a / c, 1e-12);
    // Seeded from the first day instead, the ratio would differ.
    let (mut a1, mut c1) = (10.0, 10.0);
    for &l in &loads {
        a1 = 0.25 * l + 0.75 * a1;
        c1 = 2.0 / 29.0 * l + 27.0 / 29.0 * c1;
    }
    assert!((a1 / c1 - a / c).abs() > 0.01);
}

#[test]
fn impulse_response_through_the_history() {
    // Source: Banister et al., Aust J Sports Med 1975;7:57–61 (model); values computed,
    // methods.md §10: 100 per day on days 1-14, then 7 rest days; τ 42/7, k1 = 1, k2 = 2.
    let mut loads = vec![100.0; 14];
    loads.extend([0.0; 7]);
    let h = build(
        &series(&loads),
        &profile(),
        &HistoryParams::default(),
        day(21),
    );
    let at = |s: &[splitdesk::analysis::history::DailyValue], n: i64| {
        s.iter().find(|v| v.date == day(n)).unwrap().value
    };
    close(at(&h.fitness, 1), 100.0, 1e-9);
    close(at(&h.fatigue, 1), 100.0, 1e-9);
    close(at(&h.readiness, 1), -100.0, 1e-9);
    close(at(&h.fitness, 7), 652.5, 0.05);
    close(at(&h.fatigue, 7), 474.8, 0.05);
    close(at(&h.readiness, 7), -297.2, 0.05);
    close(at(&h.fitness, 14), 1205.0, 0.5);
    close(at(&h.fatigue, 14), 649.5, 0.05);
    close(at(&h.readiness, 14), -94.26, 0.005);
    close(at(&h.fitness, 21), 1020.0, 0.5);
    close(at(&h.fatigue, 21), 238.9, 0.05);
    close(at(&h.readiness, 21), 541.9, 0.05);
    // Days before the first session hold no load and no fitness.
    assert_eq!(at(&h.fitness, 0), 0.0);
    assert_eq!(at(&h.daily_load, 0), 0.0);
    close(at(&h.daily_load, 3), 100.0, 1e-12);
}

#[test]
fn impulse_response_gains_and_time_constants_are_configurable() {
    let mut loads = vec![100.0; 14];
    loads.extend([0.0; 7]);
    let params = HistoryParams {
        tau_fitness_days: 50.0,
        tau_fatigue_days: 10.0,
        k_fitness: 1.5,
        k_fatigue: 2.5,
        ..HistoryParams::default()
    };
    let h = build(&series(&loads), &profile(), &params, day(21));
    let (mut g, mut f) = (0.0f64, 0.0f64);
    for &w in &loads {
        g = g * (-1.0f64 / 50.0).exp() + w;
        f = f * (-1.0f64 / 10.0).exp() + w;
    }
    let last = |s: &[splitdesk::analysis::history::DailyValue]| s.last().unwrap().value;
    close(last(&h.fitness), g, 1e-9);
    close(last(&h.fatigue), f, 1e-9);
    close(last(&h.readiness), 1.5 * g - 2.5 * f, 1e-9);
}

#[test]
fn a_sharp_rise_in_load_shows_the_caution() {
    // Planted: four weeks at 40 a day, then a week at 150 a day.
    let mut loads = vec![40.0; 28];
    loads.extend([150.0; 7]);
    let h = build(
        &series(&loads),
        &profile(),
        &HistoryParams::default(),
        day(35),
    );
    let latest = h.acute_chronic_latest.unwrap();
    assert!(latest.value >= 1.5, "{}", latest.value);
    assert_eq!(latest.band, "caution");
    assert_eq!(h.cautions.len(), 1);
    let c = &h.cautions[0];
    assert!(c.contains("acute/chronic ratio"), "{c}");
    assert!(c.contains("not medical advice"), "{c}");
    // The steady four weeks before it carried no caution.
    let h28 = build(
        &series(&loads[..28]),
        &profile(),
        &HistoryParams::default(),
        day(28),
    );
    assert!(h28.cautions.is_empty());
}

#[test]
fn sessions_without_load_count_as_zero_and_are_named() {
    let mut s = series(&[40.0; 28]);
    s[3].trimp = None;
    let h = build(&s, &profile(), &HistoryParams::default(), day(28));
    assert_eq!(
        h.daily_load
            .iter()
            .find(|v| v.date == day(4))
            .unwrap()
            .value,
        0.0
    );
    assert!(h
        .notes
        .iter()
        .any(|n| n.starts_with("1 session(s) without a load")));
}

#[test]
fn load_spike_days_are_the_days_that_reach_the_caution_band() {
    use splitdesk::analysis::history::{load_spike_days, DailyValue};
    let series = |last: f64| -> Vec<DailyValue> {
        (1..=29)
            .map(|n| DailyValue {
                date: history_support::day(n),
                value: match n {
                    28 => last,
                    29 => 0.0,
                    _ => 50.0,
                },
            })
            .collect()
    };
    // Source: methods.md §9 check (computed from Williams et al. 2017's EWMA): 27 days at 50,
    // then 200 on day 28 gives 87.5/60.34 = 1.450 with both averages seeded at 50 (our seed
    // rule: the mean of the first 7 days). Under the line: no spike.
    assert!(load_spike_days(&series(200.0)).is_empty());
    // 250 on day 28 (computed here with the same formula): acute 0.25·250 + 0.75·50 = 100,
    // chronic (2/29)·250 + (27/29)·50 = 63.79, ratio 1.568. The rest day after is not listed.
    let spikes = load_spike_days(&series(250.0));
    assert_eq!(spikes.len(), 1, "{spikes:?}");
    assert_eq!(spikes[0].0, history_support::day(28));
    close(
        spikes[0].1,
        100.0 / (2.0 / 29.0 * 250.0 + 27.0 / 29.0 * 50.0),
        1e-9,
    );
    close(spikes[0].1, 1.568, 0.001);
}
