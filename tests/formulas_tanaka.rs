//! The Tanaka et al. 2001 age estimate of HR max with its stated error, and the words every
//! view puts beside zones that rest on it.

use splitdesk::analysis::zones::{
    estimated_hr_max_words, fox_hr_max, hr_max_estimate_note, tanaka_hr_max, AGE_FORMULA_ERROR_BPM,
    TANAKA_SE_BPM,
};
use splitdesk::model::AthleteProfile;

#[test]
fn tanaka_formula_and_its_error() {
    // Source: Tanaka H, Monahan KD, Seals DR, J Am Coll Cardiol 2001;37(1):153–156,
    // HRmax = 208 − 0.7·age (methods.md §3, values computed from the formula): 20 → 194,
    // 40 → 180, 60 → 166; it crosses Fox (220 − age) exactly at 40.
    for (age, max) in [(20.0, 194.0), (40.0, 180.0), (60.0, 166.0)] {
        assert!(
            (tanaka_hr_max(age).unwrap() - max).abs() < 1e-9,
            "age {age}"
        );
    }
    assert_eq!(tanaka_hr_max(40.0), fox_hr_max(40.0));
    assert!(tanaka_hr_max(39.0).unwrap() < fox_hr_max(39.0).unwrap());
    assert!(tanaka_hr_max(41.0).unwrap() > fox_hr_max(41.0).unwrap());
    // From memory: the paper's spread of individual maxima about the line is about ±10 bpm.
    // Source: Robergs & Landwehr 2002, JEPonline 5(2):1–10 (methods.md §3): age formulas
    // err by 7–11 bpm; the figure we show lies inside that published bound.
    assert_eq!(TANAKA_SE_BPM, 10.0);
    assert_eq!(AGE_FORMULA_ERROR_BPM, (7.0, 11.0));
    assert!((AGE_FORMULA_ERROR_BPM.0..=AGE_FORMULA_ERROR_BPM.1).contains(&TANAKA_SE_BPM));
}

#[test]
fn an_estimate_is_labelled_beside_it() {
    let w = estimated_hr_max_words(180.0, 40.0);
    assert!(
        w.starts_with("HR max 180 bpm estimated from age 40 (Tanaka et al. 2001, about ±10 bpm"),
        "{w}"
    );
    assert!(
        w.contains("7-11 bpm") && w.contains("Robergs & Landwehr 2002"),
        "{w}"
    );

    // No hr_max, a birth year: the zones rest on the estimate, and say so.
    let mut p = AthleteProfile::bare("estimated");
    p.birth_year = Some(1986);
    p.hr_rest = Some(50.0);
    let note = hr_max_estimate_note(&p, Some(40.0)).unwrap();
    assert_eq!(note, w);
    // Resting HR unknown: zones by fraction of the estimate, still labelled.
    p.hr_rest = None;
    assert_eq!(hr_max_estimate_note(&p, Some(40.0)).unwrap(), w);
    // A measured maximum, or no age: nothing to label.
    p.hr_max = Some(188.0);
    assert_eq!(hr_max_estimate_note(&p, Some(40.0)), None);
    p.hr_max = None;
    assert_eq!(hr_max_estimate_note(&p, None), None);
}

#[test]
fn analyze_says_the_zones_rest_on_the_estimate() {
    let file = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("demo-athletes/oren-falkner/activities/2026-10-26-easy-run.fit");
    if !file.exists() {
        eprintln!("skipped: no demo-athletes/ roster in the tree");
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let run = |toml: &str| -> String {
        let athlete = dir.path().join("athlete.toml");
        std::fs::write(&athlete, toml).unwrap();
        let out = assert_cmd::Command::cargo_bin("splitdesk")
            .unwrap()
            .env("SPLITDESK_CONFIG", "/nonexistent/config.toml")
            .arg("analyze")
            .arg(&file)
            .arg("--athlete")
            .arg(&athlete)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        String::from_utf8_lossy(&out.stdout).into_owned()
    };
    // Born 1984, session in 2026: age 42, Tanaka 208 − 29.4 = 178.6.
    let out = run("name = \"Est\"\nbirth_year = 1984\nhr_rest = 56\n");
    assert!(out.contains("HR zones: "), "{out}");
    assert!(
        out.contains("(HR max 179 bpm estimated from age 42 (Tanaka et al. 2001, about ±10 bpm"),
        "{out}"
    );
    let out = run("name = \"Measured\"\nbirth_year = 1984\nhr_rest = 56\nhr_max = 181\n");
    assert!(out.contains("HR zones: "), "{out}");
    assert!(!out.contains("estimated from age"), "{out}");
}
