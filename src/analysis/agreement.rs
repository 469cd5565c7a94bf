//! Agreement between two coaches' blind scores of the same intervals: weighted kappa.
//!
//! Source: Cohen J. (1968) Weighted kappa: nominal scale agreement with provision for scaled
//! disagreement or partial credit, Psychological Bulletin 70:213. For k ordered categories,
//! observed proportions p[i][j] (coach A gave i, coach B gave j), marginals r (A) and c (B)
//! and agreement weights a[i][j] = 1 − w[i][j]:
//!
//! ```text
//! p_o = Σ a·p        p_e = Σ a[i][j]·r_i·c_j        kappa_w = (p_o − p_e) / (1 − p_e)
//! ```
//!
//! Quadratic disagreement weights w = (i − j)² / (k − 1)², linear w = |i − j| / (k − 1),
//! unweighted w = 1 off the diagonal (Cohen's 1960 kappa).
//!
//! The standard error is the large-sample one of Fleiss, Cohen & Everitt (1969), Large sample
//! standard errors of kappa and weighted kappa, Psychological Bulletin 72:323 (from memory):
//!
//! ```text
//! ā_i. = Σ_j c_j·a[i][j]      ā_.j = Σ_i r_i·a[i][j]
//! var = [Σ p[i][j]·(a[i][j] − (ā_i. + ā_.j)(1 − κ))² − (κ − p_e(1 − κ))²] / (n (1 − p_e)²)
//! ```
//!
//! which is the multinomial delta method applied to kappa_w as a function of the cell
//! proportions (the tests check it against a numerical delta method). The 95 % interval is
//! kappa ± 1.96·SE, clipped to [−1, 1]; with few items it is wide, and it says so.
//!
//! For a staff, [`staff_agreement`] takes every coach's blind interval scores and gives each
//! pair of coaches its quadratic weighted kappa over the intervals both scored, the intervals
//! they scored two points apart or more, and the staff's mean of the pairwise kappas (Light
//! 1971, see [`OverallAgreement`]).
//!
//! Pure: scores in, numbers out.

/// How far apart two scores count as disagreeing.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Weights {
    /// (i − j)² / (k − 1)²: the default for ordered scores (Cohen 1968).
    Quadratic,
    /// |i − j| / (k − 1).
    Linear,
    /// Any difference counts fully (Cohen 1960).
    Unweighted,
}

impl Weights {
    /// Disagreement weight of scores `i` and `j` (0-based) on a `k`-point scale.
    fn disagreement(self, i: usize, j: usize, k: usize) -> f64 {
        let d = i.abs_diff(j) as f64;
        let span = (k.max(2) - 1) as f64;
        match self {
            Weights::Quadratic => (d / span).powi(2),
            Weights::Linear => d / span,
            Weights::Unweighted => {
                if i == j {
                    0.0
                } else {
                    1.0
                }
            }
        }
    }
}

/// Why a kappa cannot be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum AgreementError {
    /// A score outside 1..=k.
    #[error("score {score} is outside the scale 1-{k}")]
    OutOfScale { score: u8, k: u8 },
    /// A scale of fewer than two points.
    #[error("a scale needs at least two points (got {k})")]
    Scale { k: u8 },
    /// A coach asked for by name who scored no interval blind.
    #[error("no interval was scored blind by a coach named \"{coach}\"")]
    UnknownCoach { coach: String },
    /// Fewer than two distinct coaches asked for: there is no pair to compare.
    #[error("agreement needs two different coaches (got {found})")]
    TooFewCoaches { found: usize },
    /// A blind score outside 1..=5.
    #[error(
        "coach \"{coach}\" has a blind score of {score} (outside 1-5) for interval {interval_no} of session {session_id}"
    )]
    GradeOutOfScale {
        coach: String,
        session_id: String,
        interval_no: u32,
        score: u8,
    },
    /// One coach with two different blind scores for one interval.
    #[error(
        "coach \"{coach}\" has two different blind scores ({first} and {second}) for interval {interval_no} of session {session_id}"
    )]
    ConflictingGrades {
        coach: String,
        session_id: String,
        interval_no: u32,
        first: u8,
        second: u8,
    },
}

/// Weighted kappa of one pair of coaches over the items both scored.
#[derive(Debug, Clone, PartialEq)]
pub struct Kappa {
    /// Items (intervals) both coaches scored.
    pub n: usize,
    /// Kappa, or `None` when it is undefined: no items, or no disagreement was possible by
    /// chance (both coaches gave one and the same score throughout).
    pub kappa: Option<f64>,
    /// Observed weighted agreement p_o.
    pub observed: f64,
    /// Agreement expected by chance from the two coaches' own score mixes, p_e.
    pub expected: f64,
    /// Large-sample standard error (Fleiss, Cohen & Everitt 1969), when kappa is defined.
    pub se: Option<f64>,
    /// 95 % interval, kappa ± 1.96·SE clipped to [−1, 1].
    pub ci95: Option<(f64, f64)>,
}

/// Two-sided 95 % normal quantile.
const Z95: f64 = 1.959_963_984_540_054;

/// Weighted kappa of paired scores `(coach A, coach B)` on the scale 1..=`k`.
pub fn weighted_kappa(
    pairs: &[(u8, u8)],
    k: u8,
    weights: Weights,
) -> Result<Kappa, AgreementError> {
    if k < 2 {
        return Err(AgreementError::Scale { k });
    }
    for &(a, b) in pairs {
        for score in [a, b] {
            if score < 1 || score > k {
                return Err(AgreementError::OutOfScale { score, k });
            }
        }
    }
    let k = usize::from(k);
    let n = pairs.len();
    let mut p = vec![vec![0.0; k]; k];
    for &(a, b) in pairs {
        if let Some(cell) = p
            .get_mut(usize::from(a) - 1)
            .and_then(|row| row.get_mut(usize::from(b) - 1))
        {
            *cell += 1.0;
        }
    }
    if n == 0 {
        return Ok(Kappa {
            n,
            kappa: None,
            observed: 0.0,
            expected: 0.0,
            se: None,
            ci95: None,
        });
    }
    for row in &mut p {
        for cell in row.iter_mut() {
            *cell /= n as f64;
        }
    }
    Ok(from_proportions(&p, n, weights))
}

/// Kappa from a k×k table of cell proportions summing to 1, over `n` items.
fn from_proportions(p: &[Vec<f64>], n: usize, weights: Weights) -> Kappa {
    let k = p.len();
    let agree = |i: usize, j: usize| 1.0 - weights.disagreement(i, j, k);
    let rows: Vec<f64> = p.iter().map(|row| row.iter().sum()).collect();
    let cols: Vec<f64> = (0..k)
        .map(|j| p.iter().filter_map(|row| row.get(j)).sum())
        .collect();
    let cells = || {
        p.iter()
            .enumerate()
            .flat_map(|(i, row)| row.iter().enumerate().map(move |(j, &x)| (i, j, x)))
    };
    let observed: f64 = cells().map(|(i, j, x)| agree(i, j) * x).sum();
    let expected: f64 = rows
        .iter()
        .enumerate()
        .flat_map(|(i, &r)| cols.iter().enumerate().map(move |(j, &c)| (i, j, r * c)))
        .map(|(i, j, rc)| agree(i, j) * rc)
        .sum();
    let chance_room = 1.0 - expected;
    if chance_room <= 1e-12 {
        return Kappa {
            n,
            kappa: None,
            observed,
            expected,
            se: None,
            ci95: None,
        };
    }
    let kappa = (observed - expected) / chance_room;
    let row_mean: Vec<f64> = (0..k)
        .map(|i| cols.iter().enumerate().map(|(j, &c)| c * agree(i, j)).sum())
        .collect();
    let col_mean: Vec<f64> = (0..k)
        .map(|j| rows.iter().enumerate().map(|(i, &r)| r * agree(i, j)).sum())
        .collect();
    let spread: f64 = cells()
        .map(|(i, j, x)| {
            let ri = row_mean.get(i).copied().unwrap_or(0.0);
            let cj = col_mean.get(j).copied().unwrap_or(0.0);
            x * (agree(i, j) - (ri + cj) * (1.0 - kappa)).powi(2)
        })
        .sum();
    let var =
        (spread - (kappa - expected * (1.0 - kappa)).powi(2)) / (n as f64 * chance_room.powi(2));
    let se = var.max(0.0).sqrt();
    Kappa {
        n,
        kappa: Some(kappa),
        observed,
        expected,
        se: Some(se),
        ci95: Some(((kappa - Z95 * se).max(-1.0), (kappa + Z95 * se).min(1.0))),
    }
}

/// The items on which two scores differ by `gap` points or more, in the order given: the
/// reps a head coach looks at first when calibrating a staff.
pub fn wide_disagreements<T: Clone>(items: &[(T, u8, u8)], gap: u8) -> Vec<(T, u8, u8)> {
    items
        .iter()
        .filter(|(_, a, b)| a.abs_diff(*b) >= gap)
        .cloned()
        .collect()
}

// ---------------------------------------------------------------------------------------------
// A staff: every pair of coaches, and the staff as a whole.
// ---------------------------------------------------------------------------------------------

/// The points of the coaches' score scale (1 to 5).
pub const SCORE_POINTS: u8 = 5;

/// Two scores this many points apart or more are a wide disagreement.
pub const WIDE_GAP: u8 = 2;

/// One coach's blind score of one interval (revisions after the reveal are not grades here).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CoachGrade {
    pub coach: String,
    pub athlete_id: String,
    pub session_id: String,
    pub start_time: chrono::DateTime<chrono::Utc>,
    /// The interval's number within its session.
    pub interval_no: u32,
    /// 1..=5.
    pub score: u8,
}

/// Why a pair of coaches has no kappa.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NoKappa {
    /// The two coaches scored no interval in common.
    NoSharedItems,
    /// Both coaches gave one and the same score to every interval they share: chance alone
    /// would give that agreement (expected disagreement 0), so kappa is 0/0.
    OneScoreThroughout,
}

/// An interval two coaches scored [`WIDE_GAP`] points apart or more.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct WideDisagreement {
    pub athlete_id: String,
    pub session_id: String,
    pub start_time: chrono::DateTime<chrono::Utc>,
    pub interval_no: u32,
    /// The first coach's (the pair's `coach_a`) score.
    pub score_a: u8,
    /// The second coach's (`coach_b`) score.
    pub score_b: u8,
}

/// Agreement of one pair of coaches over the intervals both scored blind.
#[derive(Debug, Clone, PartialEq)]
pub struct PairAgreement {
    /// The pair, `coach_a` < `coach_b` by name.
    pub coach_a: String,
    pub coach_b: String,
    /// Quadratic weighted kappa over the shared intervals ([`weighted_kappa`]): `n`, kappa,
    /// observed and chance-expected weighted *agreement* (disagreement is one minus each),
    /// standard error and 95 % interval.
    pub kappa: Kappa,
    /// Why `kappa.kappa` is `None`; `None` exactly when there is a kappa.
    pub no_kappa: Option<NoKappa>,
    /// The shared intervals scored [`WIDE_GAP`] points apart or more, by start time, then
    /// interval number, then session id.
    pub wide: Vec<WideDisagreement>,
}

/// How many intervals one coach scored blind.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CoachCount {
    pub coach: String,
    pub items: usize,
}

/// The staff as a whole.
///
/// Source: Light R. J. (1971) Measures of response agreement for qualitative data: some
/// generalizations and alternatives, Psychological Bulletin 76:365 — with more than two
/// raters, the mean of the pairwise kappas.
///
/// The mean has no confidence interval here: the pairs share coaches and intervals, so their
/// kappas are not independent and no simple standard error of the mean follows from the
/// pairwise ones. When exactly one pair has a kappa, the mean *is* that pair's kappa and
/// carries that pair's interval.
#[derive(Debug, Clone, PartialEq)]
pub struct OverallAgreement {
    /// Light's kappa: the mean of the pairwise kappas that could be computed; `None` when
    /// none could.
    pub kappa: Option<f64>,
    /// How many pairwise kappas the mean averages.
    pub pairs_averaged: usize,
    /// The 95 % interval, only when `pairs_averaged` is 1 (that pair's).
    pub ci95: Option<(f64, f64)>,
    /// Distinct intervals (session, interval number) scored blind by two or more of the
    /// coaches considered.
    pub items: usize,
}

/// Agreement between the coaches of a staff.
#[derive(Debug, Clone, PartialEq)]
pub struct StaffAgreement {
    /// The coaches considered, by name, with how many intervals each scored blind.
    pub coaches: Vec<CoachCount>,
    /// Every unordered pair of the coaches considered, by (coach_a, coach_b).
    pub pairs: Vec<PairAgreement>,
    pub overall: OverallAgreement,
}

/// One interval as the staff scored it: its athlete and start, and each coach's score.
struct Item<'a> {
    athlete_id: &'a str,
    start_time: chrono::DateTime<chrono::Utc>,
    scores: std::collections::BTreeMap<&'a str, u8>,
}

/// Agreement between coaches from their blind interval scores.
///
/// The coaches considered are `only` when it is not empty (each must have scored at least
/// one interval, and at least two different names are needed), else every coach in `grades`.
/// With no filter and fewer than two coaches in `grades` the result has no pairs and no
/// overall kappa (nothing to compare yet; not an error). An interval is (session id,
/// interval number); its athlete and start time are taken from its first grade in
/// `grades`. A coach with the same score twice for one interval counts it once; two
/// different scores are an error (the caller passes blind scores only, one per interval).
pub fn staff_agreement(
    grades: &[CoachGrade],
    only: &[String],
) -> Result<StaffAgreement, AgreementError> {
    use std::collections::{BTreeMap, BTreeSet};

    for g in grades {
        if !(1..=SCORE_POINTS).contains(&g.score) {
            return Err(AgreementError::GradeOutOfScale {
                coach: g.coach.clone(),
                session_id: g.session_id.clone(),
                interval_no: g.interval_no,
                score: g.score,
            });
        }
    }
    let present: BTreeSet<&str> = grades.iter().map(|g| g.coach.as_str()).collect();
    let considered: BTreeSet<&str> = if only.is_empty() {
        present.clone()
    } else {
        for name in only {
            if !present.contains(name.as_str()) {
                return Err(AgreementError::UnknownCoach {
                    coach: name.clone(),
                });
            }
        }
        let chosen: BTreeSet<&str> = only.iter().map(String::as_str).collect();
        if chosen.len() < 2 {
            return Err(AgreementError::TooFewCoaches {
                found: chosen.len(),
            });
        }
        chosen
    };

    // Every interval, with each considered coach's score, in (session, interval) order.
    let mut items: BTreeMap<(&str, u32), Item<'_>> = BTreeMap::new();
    for g in grades
        .iter()
        .filter(|g| considered.contains(g.coach.as_str()))
    {
        let item = items
            .entry((g.session_id.as_str(), g.interval_no))
            .or_insert_with(|| Item {
                athlete_id: &g.athlete_id,
                start_time: g.start_time,
                scores: BTreeMap::new(),
            });
        match item.scores.get(g.coach.as_str()) {
            Some(&first) if first != g.score => {
                return Err(AgreementError::ConflictingGrades {
                    coach: g.coach.clone(),
                    session_id: g.session_id.clone(),
                    interval_no: g.interval_no,
                    first,
                    second: g.score,
                })
            }
            Some(_) => {}
            None => {
                item.scores.insert(g.coach.as_str(), g.score);
            }
        }
    }

    let coaches: Vec<CoachCount> = considered
        .iter()
        .map(|&coach| CoachCount {
            coach: coach.to_string(),
            items: items
                .values()
                .filter(|i| i.scores.contains_key(coach))
                .count(),
        })
        .collect();

    let names: Vec<&str> = considered.iter().copied().collect();
    let mut pairs = Vec::new();
    for (i, &a) in names.iter().enumerate() {
        for &b in names.iter().skip(i + 1) {
            pairs.push(pair_agreement(&items, a, b)?);
        }
    }

    let defined: Vec<&PairAgreement> = pairs.iter().filter(|p| p.kappa.kappa.is_some()).collect();
    let kappas: Vec<f64> = defined.iter().filter_map(|p| p.kappa.kappa).collect();
    let overall = OverallAgreement {
        kappa: (!kappas.is_empty()).then(|| kappas.iter().sum::<f64>() / kappas.len() as f64),
        pairs_averaged: kappas.len(),
        ci95: match defined.as_slice() {
            [one] => one.kappa.ci95,
            _ => None,
        },
        items: items.values().filter(|i| i.scores.len() >= 2).count(),
    };
    Ok(StaffAgreement {
        coaches,
        pairs,
        overall,
    })
}

/// Kappa and wide disagreements of coaches `a` and `b` over the intervals both scored.
fn pair_agreement(
    items: &std::collections::BTreeMap<(&str, u32), Item<'_>>,
    a: &str,
    b: &str,
) -> Result<PairAgreement, AgreementError> {
    let shared: Vec<(WideDisagreement, u8, u8)> = items
        .iter()
        .filter_map(|(&(session_id, interval_no), item)| {
            let sa = *item.scores.get(a)?;
            let sb = *item.scores.get(b)?;
            let at = WideDisagreement {
                athlete_id: item.athlete_id.to_string(),
                session_id: session_id.to_string(),
                start_time: item.start_time,
                interval_no,
                score_a: sa,
                score_b: sb,
            };
            Some((at, sa, sb))
        })
        .collect();
    let scores: Vec<(u8, u8)> = shared.iter().map(|&(_, sa, sb)| (sa, sb)).collect();
    let kappa = weighted_kappa(&scores, SCORE_POINTS, Weights::Quadratic)?;
    let no_kappa = match kappa.kappa {
        Some(_) => None,
        None if kappa.n == 0 => Some(NoKappa::NoSharedItems),
        None => Some(NoKappa::OneScoreThroughout),
    };
    let mut wide: Vec<WideDisagreement> = wide_disagreements(&shared, WIDE_GAP)
        .into_iter()
        .map(|(at, _, _)| at)
        .collect();
    wide.sort_by(|x, y| {
        (x.start_time, x.interval_no, &x.session_id).cmp(&(
            y.start_time,
            y.interval_no,
            &y.session_id,
        ))
    });
    Ok(PairAgreement {
        coach_a: a.to_string(),
        coach_b: b.to_string(),
        kappa,
        no_kappa,
        wide,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pairs(a: &[u8], b: &[u8]) -> Vec<(u8, u8)> {
        a.iter().copied().zip(b.iter().copied()).collect()
    }

    /// Source: ../shared/design/methods.md, "Weighted kappa": check values computed with the
    /// formula and with scikit-learn's `cohen_kappa_score` (agreeing to 6 decimals).
    #[test]
    fn matches_the_check_values() {
        let p = pairs(
            &[1, 2, 3, 4, 5, 3, 3, 4, 2, 5, 4, 3],
            &[1, 3, 3, 4, 4, 3, 2, 4, 2, 5, 5, 2],
        );
        let k = |w| weighted_kappa(&p, 5, w).unwrap().kappa.unwrap();
        assert!((k(Weights::Quadratic) - 0.852941).abs() < 5e-7);
        assert!((k(Weights::Linear) - 0.687500).abs() < 5e-7);
        assert!((k(Weights::Unweighted) - 0.464286).abs() < 5e-7);
    }

    /// Quadratic weighted kappa on equally spaced scores equals the ratio
    /// 2·s_xy / (s_x² + s_y² + (x̄ − ȳ)²) with 1/n moments.
    /// From memory: Fleiss & Cohen 1973, Educ Psychol Meas 33:613 (the equivalence of
    /// quadratic weighted kappa and an intraclass correlation).
    #[test]
    fn quadratic_kappa_equals_the_moment_ratio() {
        let mut seed = 7u64;
        let mut next = || {
            seed = seed.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1);
            ((seed >> 33) % 5) as u8 + 1
        };
        for _ in 0..50 {
            let p: Vec<(u8, u8)> = (0..40)
                .map(|_| {
                    let a = next();
                    let b = if next() <= 3 { a } else { next() };
                    (a, b)
                })
                .collect();
            let n = p.len() as f64;
            let mx = p.iter().map(|x| f64::from(x.0)).sum::<f64>() / n;
            let my = p.iter().map(|x| f64::from(x.1)).sum::<f64>() / n;
            let sxy = p
                .iter()
                .map(|x| (f64::from(x.0) - mx) * (f64::from(x.1) - my))
                .sum::<f64>()
                / n;
            let sx = p.iter().map(|x| (f64::from(x.0) - mx).powi(2)).sum::<f64>() / n;
            let sy = p.iter().map(|x| (f64::from(x.1) - my).powi(2)).sum::<f64>() / n;
            let ratio = 2.0 * sxy / (sx + sy + (mx - my).powi(2));
            let kappa = weighted_kappa(&p, 5, Weights::Quadratic)
                .unwrap()
                .kappa
                .unwrap();
            assert!((kappa - ratio).abs() < 1e-12, "{kappa} vs {ratio}");
        }
    }

    /// The closed-form standard error is the multinomial delta method: compare it with the
    /// delta method done numerically (central differences of kappa in each cell).
    #[test]
    fn standard_error_matches_a_numerical_delta_method() {
        let p = pairs(
            &[1, 2, 3, 4, 5, 3, 3, 4, 2, 5, 4, 3, 2, 2, 4, 5, 1, 3],
            &[1, 3, 3, 4, 4, 3, 2, 4, 2, 5, 5, 2, 1, 2, 3, 5, 2, 3],
        );
        for w in [Weights::Quadratic, Weights::Linear, Weights::Unweighted] {
            let got = weighted_kappa(&p, 5, w).unwrap();
            let n = got.n;
            let mut table = vec![vec![0.0; 5]; 5];
            for &(a, b) in &p {
                table[usize::from(a) - 1][usize::from(b) - 1] += 1.0 / n as f64;
            }
            // kappa as a function of the (unnormalised) cell weights: f(p) with p free.
            let f = |t: &[Vec<f64>]| {
                let total: f64 = t.iter().flatten().sum();
                let norm: Vec<Vec<f64>> = t
                    .iter()
                    .map(|r| r.iter().map(|x| x / total).collect())
                    .collect();
                from_proportions(&norm, n, w).kappa.unwrap()
            };
            let h = 1e-6;
            let mut grad = vec![vec![0.0; 5]; 5];
            for i in 0..5 {
                for j in 0..5 {
                    let mut up = table.clone();
                    up[i][j] += h;
                    let mut down = table.clone();
                    down[i][j] -= h;
                    grad[i][j] = (f(&up) - f(&down)) / (2.0 * h);
                }
            }
            let mean: f64 = (0..5)
                .flat_map(|i| (0..5).map(move |j| (i, j)))
                .map(|(i, j)| table[i][j] * grad[i][j])
                .sum();
            let second: f64 = (0..5)
                .flat_map(|i| (0..5).map(move |j| (i, j)))
                .map(|(i, j)| table[i][j] * grad[i][j].powi(2))
                .sum();
            let delta_se = ((second - mean * mean) / n as f64).sqrt();
            let se = got.se.unwrap();
            assert!((se - delta_se).abs() < 1e-6, "{w:?}: {se} vs {delta_se}");
            let (lo, hi) = got.ci95.unwrap();
            let kappa = got.kappa.unwrap();
            assert!(lo < kappa && kappa < hi);
        }
    }

    #[test]
    fn edge_cases_are_said_not_guessed() {
        // Perfect agreement on a spread of scores: kappa 1, no spread.
        let same = pairs(&[1, 2, 3, 4, 5], &[1, 2, 3, 4, 5]);
        let k = weighted_kappa(&same, 5, Weights::Quadratic).unwrap();
        assert_eq!(k.kappa, Some(1.0));
        assert!(k.se.unwrap() < 1e-12);
        // One score throughout from both: chance agreement is total, kappa undefined.
        let flat = pairs(&[3, 3, 3], &[3, 3, 3]);
        assert_eq!(
            weighted_kappa(&flat, 5, Weights::Quadratic).unwrap().kappa,
            None
        );
        assert_eq!(weighted_kappa(&[], 5, Weights::Quadratic).unwrap().n, 0);
        assert_eq!(
            weighted_kappa(&[(1, 6)], 5, Weights::Quadratic),
            Err(AgreementError::OutOfScale { score: 6, k: 5 })
        );
        assert_eq!(
            weighted_kappa(&[(0, 1)], 5, Weights::Linear),
            Err(AgreementError::OutOfScale { score: 0, k: 5 })
        );
        assert_eq!(
            weighted_kappa(&[(1, 1)], 1, Weights::Linear),
            Err(AgreementError::Scale { k: 1 })
        );
        // Swapping the coaches changes nothing.
        let p = pairs(&[1, 2, 4, 5, 3, 2], &[2, 2, 5, 3, 3, 1]);
        let swapped: Vec<(u8, u8)> = p.iter().map(|&(a, b)| (b, a)).collect();
        let a = weighted_kappa(&p, 5, Weights::Quadratic).unwrap();
        let b = weighted_kappa(&swapped, 5, Weights::Quadratic).unwrap();
        assert!((a.kappa.unwrap() - b.kappa.unwrap()).abs() < 1e-12);
        assert!((a.se.unwrap() - b.se.unwrap()).abs() < 1e-12);
        // Systematic opposition is below zero.
        let opposed = pairs(&[1, 2, 4, 5], &[5, 4, 2, 1]);
        assert!(
            weighted_kappa(&opposed, 5, Weights::Quadratic)
                .unwrap()
                .kappa
                .unwrap()
                < -0.9
        );
    }

    #[test]
    fn wide_disagreements_are_listed_in_order() {
        let items = vec![
            ("rep 1", 3, 5),
            ("rep 2", 4, 4),
            ("rep 3", 5, 2),
            ("rep 4", 2, 3),
        ];
        assert_eq!(
            wide_disagreements(&items, 2),
            vec![("rep 1", 3, 5), ("rep 3", 5, 2)]
        );
    }
}
