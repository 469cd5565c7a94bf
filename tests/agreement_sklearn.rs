//! Weighted kappa against scikit-learn's `cohen_kappa_score` (PyPI), an independent
//! implementation, on 300 random score sets (quadratic, linear and unweighted).
//!
//! Runs `$SPLITDESK_PYTHON tests/kappa_check.py` (`.ci/run` installs scikit-learn in its
//! venv). Without `SPLITDESK_PYTHON`, or without scikit-learn there, the check is skipped with
//! a message.

mod kappa_support;

use splitdesk::analysis::agreement::{weighted_kappa, Weights};

#[test]
fn weighted_kappa_agrees_with_scikit_learn() {
    let mut seed = 2026u64;
    let mut next = |m: u64| {
        seed = seed
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        (seed >> 33) % m
    };
    let mut cases = Vec::new();
    let mut ours = Vec::new();
    for i in 0..300 {
        let n = 2 + next(60) as usize;
        let pairs: Vec<(u8, u8)> = (0..n)
            .map(|_| {
                let a = 1 + next(5) as u8;
                // Mostly close scores, as two coaches give, sometimes anything.
                let b = match next(4) {
                    0 => 1 + next(5) as u8,
                    1 => a.saturating_sub(1).max(1),
                    2 => (a + 1).min(5),
                    _ => a,
                };
                (a, b)
            })
            .collect();
        let (weights, name) = match i % 3 {
            0 => (Weights::Quadratic, serde_json::json!("quadratic")),
            1 => (Weights::Linear, serde_json::json!("linear")),
            _ => (Weights::Unweighted, serde_json::Value::Null),
        };
        cases.push(serde_json::json!({
            "a": pairs.iter().map(|p| p.0).collect::<Vec<_>>(),
            "b": pairs.iter().map(|p| p.1).collect::<Vec<_>>(),
            "weights": name,
        }));
        ours.push(weighted_kappa(&pairs, 5, weights).unwrap().kappa);
    }
    let Some(theirs) = kappa_support::sklearn_kappas(cases) else {
        return;
    };
    assert_eq!(theirs.len(), ours.len());
    let mut compared = 0;
    for (i, (a, b)) in ours.iter().zip(&theirs).enumerate() {
        match (a, b) {
            (Some(a), Some(b)) => {
                assert!((a - b).abs() < 1e-9, "case {i}: ours {a}, scikit-learn {b}");
                compared += 1;
            }
            (None, None) => {}
            // scikit-learn gives 0/0 = NaN or a number where chance agreement is total;
            // we say "undefined" there. Only allowed when every score is one and the same.
            (None, Some(_)) | (Some(_), None) => panic!("case {i}: ours {a:?}, scikit-learn {b:?}"),
        }
    }
    assert!(compared >= 290, "only {compared} cases compared");
}
