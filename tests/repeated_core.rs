//! The univariate repeated-measures core (`stats::repeated`) against the
//! check values of the mixed-models specification (9.4 table B for
//! sleepstudy, 9.1 for oats read as repeated measures) and against pingouin
//! and statsmodels on INVENTED data with two within-subject factors and with
//! a between-subject factor (tests/reference/repeated_measures.json, written
//! by tests/reference/repeated_measures.py).
//!
//! Tolerances: the spec prints 12 significant digits (10 for a few values),
//! so rounding alone is up to 5e-10 relative; the computation here keeps
//! about 13 digits (compensated sums, a Cholesky log-determinant, and the
//! project's F and χ² tails, themselves checked to ~1e-13). 1e-9 relative
//! therefore separates a wrong formula from printing. The JSON holds full
//! doubles from the libraries, whose own rounding (uncompensated sums, SVD
//! log-determinants) is of order 1e-13; we allow 1e-9 relative there too.
//! The worst errors measured are printed with --nocapture.

use sheaf::stats::repeated::{
    BetweenTerm, RepeatedAnalysis, RepeatedInput, Sphericity, WithinEffect, analyse,
};

const REL: f64 = 1e-9;

fn close(found: f64, expected: f64, what: &str) {
    let err = ((found - expected) / expected).abs();
    eprintln!("{what}: found {found:.12e}, expected {expected:.12e}, rel err {err:.1e}");
    assert!(
        err <= REL,
        "{what}: {found} vs {expected} (relative error {err:e})"
    );
}

/// A CSV of the open datasets as text rows (no quoting in these files).
fn read(name: &str) -> (Vec<String>, Vec<Vec<String>>) {
    let path = format!("{}/tests/data/open/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path}: {e}"));
    let mut lines = text.lines().filter(|l| !l.trim().is_empty());
    let header = lines
        .next()
        .unwrap()
        .split(',')
        .map(str::to_string)
        .collect();
    let rows = lines
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect();
    (header, rows)
}

/// Index of `label` in `seen`, added in order of first appearance.
fn level(seen: &mut Vec<String>, label: &str) -> usize {
    seen.iter().position(|s| s == label).unwrap_or_else(|| {
        seen.push(label.to_string());
        seen.len() - 1
    })
}

/// sleepstudy: 18 subjects × Days 0-9 (Days as the occasion index).
fn sleepstudy() -> Vec<Vec<f64>> {
    let (header, rows) = read("sleepstudy.csv");
    let col = |n: &str| header.iter().position(|h| h == n).unwrap();
    let (reaction, days, subject) = (col("Reaction"), col("Days"), col("Subject"));
    let mut subjects = Vec::new();
    let mut responses: Vec<Vec<f64>> = Vec::new();
    for r in &rows {
        let s = level(&mut subjects, &r[subject]);
        if s == responses.len() {
            responses.push(vec![f64::NAN; 10]);
        }
        let day: usize = r[days].parse().unwrap();
        responses[s][day] = r[reaction].parse().unwrap();
    }
    responses
}

fn tested(effect: &WithinEffect) -> &sheaf::stats::repeated::MauchlyTest {
    match &effect.sphericity {
        Sphericity::Tested(t) => t,
        Sphericity::HoldsTrivially => panic!("effect {:?} was not tested", effect.factors),
    }
}

/// mixed-models spec 9.4 table B; the source column of each value is named.
#[test]
fn sleepstudy_matches_spec_table_b() {
    let responses = sleepstudy();
    let input = RepeatedInput {
        responses: &responses,
        within: &[10],
        between: &[],
    };
    let a = analyse(&input).unwrap();
    assert_eq!((a.subjects, a.occasions, a.residual_df), (18, 10, 17));
    assert!(a.between.terms.is_empty());
    // SS Subject (17), Days (9), Days × Subject (153): "own; pingouin (Days, error)".
    close(a.between.error.ss, 250618.108273, "SS Subject");
    assert_eq!(a.between.error.df, 17);
    let days = &a.within[0];
    close(days.effect.test.ss, 166235.122502, "SS Days");
    close(days.error.ss, 151101.038615, "SS Days × Subject");
    assert_eq!((days.effect.test.df, days.error.df), (9, 153));
    // F Days (9, 153); p: "own, pingouin, statsmodels AnovaRM; scipy".
    close(days.effect.test.f, 18.7026979326, "F Days");
    close(days.effect.test.p, 8.995345416e-21, "p Days");
    // ε GG; ε HF (= Lecoutre, one group); lower bound: "own = pingouin".
    close(days.epsilons.gg, 0.369029844794, "eps GG");
    close(
        days.epsilons.hf_uncapped,
        0.46936479691,
        "eps HF (Lecoutre)",
    );
    close(days.epsilons.hf, 0.46936479691, "eps HF capped");
    close(days.epsilons.hf_original, 0.46936479691, "eps HF original");
    close(days.epsilons.lower_bound, 0.111111111111, "lower bound");
    // p GG-corrected; p HF-corrected: "own (GG also pingouin)".
    close(days.effect.corrected.gg, 5.46309176758e-09, "p GG");
    close(days.effect.corrected.hf, 7.07655175337e-11, "p HF");
    // Mauchly W; χ²; df: "own = pingouin".
    let m = tested(days);
    close(m.w, 2.19020403394e-04, "Mauchly W");
    close(m.chi_sq, 116.252361507, "Mauchly chi-square");
    assert_eq!(m.df, 44);
    // Mauchly p first order; second order (Anderson): "own".
    close(m.p, 1.94172524757e-08, "Mauchly p first order");
    close(
        m.p_second_order,
        5.15000070995e-08,
        "Mauchly p second order",
    );
}

/// oats read as repeated measures (spec 9.1, "a computation check for
/// 7.2-7.3"): the 18 whole plots (B:V) as subjects, N (4 levels) within.
fn oats(with_blocks: bool) -> RepeatedAnalysis {
    let (header, rows) = read("oats.csv");
    let col = |n: &str| header.iter().position(|h| h == n).unwrap();
    let (mut plots, mut blocks, mut varieties, mut rates) = (vec![], vec![], vec![], vec![]);
    let mut responses: Vec<Vec<f64>> = Vec::new();
    let (mut block_of, mut variety_of) = (Vec::new(), Vec::new());
    for r in &rows {
        let plot = level(&mut plots, &format!("{}|{}", r[col("B")], r[col("V")]));
        if plot == responses.len() {
            responses.push(vec![f64::NAN; 4]);
            block_of.push(level(&mut blocks, &r[col("B")]));
            variety_of.push(level(&mut varieties, &r[col("V")]));
        }
        let n = level(&mut rates, &r[col("N")]);
        responses[plot][n] = r[col("Y")].parse().unwrap();
    }
    let variety = BetweenTerm {
        levels: 3,
        level_of: variety_of,
    };
    let block = BetweenTerm {
        levels: 6,
        level_of: block_of,
    };
    let between = if with_blocks {
        vec![block, variety]
    } else {
        vec![variety]
    };
    let input = RepeatedInput {
        responses: &responses,
        within: &[4],
        between: &between,
    };
    analyse(&input).unwrap()
}

/// Between model V (ν = 15): the within-subject F of N and V × N are the
/// subplot-stratum F of the classical split-plot table (an identity: both
/// errors are N × whole plots within V on 45 df).
#[test]
fn oats_by_variety_reproduces_the_split_plot_subplot_stratum() {
    let a = oats(false);
    assert_eq!(a.residual_df, 15);
    let n = &a.within[0];
    // spec 9.1, "statsmodels OLS": SS N, V:N, Error (b).
    close(n.effect.test.ss, 20020.5, "SS N");
    close(n.by_between[0].test.ss, 321.75, "SS V:N");
    close(n.error.ss, 7968.75, "SS Error (b)");
    assert_eq!(n.error.df, 45);
    // spec 9.1, "closed form": F N on (3, 45); F V:N on (6, 45) and p.
    close(n.effect.test.f, 37.6856470588, "F N");
    close(n.effect.test.p, 2.45770955456e-12, "p N");
    close(n.by_between[0].test.f, 0.302823529412, "F V:N");
    close(n.by_between[0].test.p, 0.932198758999, "p V:N");
    // spec 9.1, "pingouin F V (blocks ignored, error df 15)".
    close(a.between.terms[0].f, 0.612086590041, "F V (blocks ignored)");
    // spec 9.1, "own, between model V (ν = 15)".
    close(n.epsilons.gg, 0.892797462581, "eps GG (nu 15)");
    close(
        n.epsilons.hf_original,
        1.25013619525,
        "eps HF original (nu 15)",
    );
    close(
        n.epsilons.hf_uncapped,
        1.105220452,
        "eps HF Lecoutre (nu 15)",
    );
    assert_eq!(n.epsilons.hf, 1.0);
    let m = tested(n);
    close(m.w, 0.819986656012, "W (nu 15)");
    close(m.chi_sq, 2.72341118706, "chi-square (nu 15)");
    close(m.p, 0.742535537621, "Mauchly p first order (nu 15)");
    // HF capped at 1: the HF-corrected p is the uncorrected one.
    assert_eq!(n.effect.corrected.hf, n.effect.test.p);
}

/// Between model B + V (ν = 10), spec 9.1 and 7.3: the original Huynh-Feldt
/// 1.622 against Lecoutre's 0.958.
#[test]
fn oats_with_blocks_shows_lecoutres_correction() {
    let a = oats(true);
    assert_eq!(a.residual_df, 10);
    // spec 9.1, "statsmodels OLS": the between table is the whole-plot
    // stratum: SS Blocks, V, Error (a); "closed form": F V on (2, 10), p.
    close(a.between.terms[0].ss, 15875.2777778, "SS Blocks");
    close(a.between.terms[1].ss, 1786.36111111, "SS V");
    close(a.between.error.ss, 6013.30555556, "SS Error (a)");
    close(a.between.terms[1].f, 1.48534037944, "F V");
    close(a.between.terms[1].p, 0.272386856735, "p V");
    let n = &a.within[0];
    close(n.effect.test.ss, 20020.5, "SS N");
    close(n.by_between[1].test.ss, 321.75, "SS V:N");
    assert_eq!(n.error.df, 30);
    // spec 9.1, "own, between model B + V (ν = 10)".
    close(n.epsilons.gg, 0.738513380404, "eps GG (nu 10)");
    close(
        n.epsilons.hf_original,
        1.6220231602,
        "eps HF original (nu 10)",
    );
    close(
        n.epsilons.hf_uncapped,
        0.957931655253,
        "eps HF Lecoutre (nu 10)",
    );
    close(n.epsilons.hf, 0.957931655253, "eps HF capped (nu 10)");
    let m = tested(n);
    close(m.w, 0.499679002422, "W (nu 10)");
    close(m.chi_sq, 6.0513851642, "chi-square (nu 10)");
    close(m.p, 0.301250987642, "Mauchly p first order (nu 10)");
}

/// tests/reference/repeated_measures.json (INVENTED data and the library
/// values computed on it).
fn reference() -> serde_json::Value {
    let path = format!(
        "{}/tests/reference/repeated_measures.json",
        env!("CARGO_MANIFEST_DIR")
    );
    serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap()
}

fn number(v: &serde_json::Value, key: &str) -> f64 {
    v[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} missing from the reference"))
}

/// The subjects' responses, keeping only the occasions `keep` selects.
fn reference_subjects(
    r: &serde_json::Value,
    keep: impl Fn(usize) -> bool,
) -> (Vec<Vec<f64>>, Vec<usize>) {
    let subjects = r["subjects"].as_array().unwrap();
    let responses = subjects
        .iter()
        .map(|s| {
            let y = s["y"].as_array().unwrap();
            (0..y.len())
                .filter(|&o| keep(o))
                .map(|o| y[o].as_f64().unwrap())
                .collect()
        })
        .collect();
    let group = subjects
        .iter()
        .map(|s| s["group"].as_u64().unwrap() as usize)
        .collect();
    (responses, group)
}

/// Two within factors A (3) × B (4), one group: each effect's contrasts are
/// the Kronecker product of the factors' contrasts. pingouin's Mauchly p for
/// p ≥ 3 contrasts uses a variant of the second-order term (spec 7.2, 9.7),
/// so only its W, χ² and df are compared there; the first-order p is scipy's
/// χ² tail on pingouin's χ², and the second-order p Anderson's formula as
/// written in the reference script. With one group pingouin's HF (n − 1 in
/// the denominator) is Lecoutre's, capped at 1 as our `hf`.
#[test]
fn two_within_factors_match_pingouin_and_statsmodels() {
    let r = reference();
    let (responses, _) = reference_subjects(&r, |_| true);
    let input = RepeatedInput {
        responses: &responses,
        within: &[3, 4],
        between: &[],
    };
    let a = analyse(&input).unwrap();
    assert_eq!(a.residual_df, 14);
    for (index, name) in ["A", "B", "A:B"].iter().enumerate() {
        let e = &a.within[index];
        let x = &r["two_within"][*name];
        let what = |s: &str| format!("{name} {s}");
        assert_eq!(e.contrasts as f64, number(x, "contrasts"));
        let df = x["df [pingouin rm_anova]"].as_array().unwrap();
        assert_eq!(e.effect.test.df as u64, df[0].as_u64().unwrap());
        assert_eq!(e.error.df as u64, df[1].as_u64().unwrap());
        close(
            e.effect.test.ss,
            number(x, "ss [pingouin rm_anova]"),
            &what("SS"),
        );
        close(
            e.effect.test.f,
            number(x, "f [pingouin rm_anova]"),
            &what("F pingouin"),
        );
        close(
            e.effect.test.f,
            number(x, "f [statsmodels AnovaRM]"),
            &what("F statsmodels"),
        );
        close(
            e.effect.test.p,
            number(x, "p [pingouin rm_anova]"),
            &what("p pingouin"),
        );
        close(
            e.effect.test.p,
            number(x, "p [statsmodels AnovaRM]"),
            &what("p statsmodels"),
        );
        close(
            e.epsilons.gg,
            number(x, "eps_gg [pingouin epsilon]"),
            &what("eps GG"),
        );
        close(
            e.epsilons.gg,
            number(x, "eps_gg [pingouin rm_anova]"),
            &what("eps GG rm_anova"),
        );
        close(
            e.epsilons.hf,
            number(x, "eps_hf_capped [pingouin epsilon]"),
            &what("eps HF"),
        );
        close(
            e.epsilons.lower_bound,
            number(x, "eps_lb [pingouin epsilon]"),
            &what("eps LB"),
        );
        let corrected = &e.effect.corrected;
        close(
            corrected.gg,
            number(x, "p_gg [pingouin rm_anova]"),
            &what("p GG"),
        );
        let hf_key = "p_hf [scipy f.sf with pingouin's capped HF epsilon]";
        close(corrected.hf, number(x, hf_key), &what("p HF"));
        let lb_key = "p_lb [scipy f.sf with pingouin's lower bound]";
        close(corrected.lower_bound, number(x, lb_key), &what("p LB"));
        let m = tested(e);
        close(
            m.w,
            number(x, "mauchly_w [pingouin sphericity]"),
            &what("W"),
        );
        close(
            m.chi_sq,
            number(x, "chi_sq [pingouin sphericity]"),
            &what("chi-square"),
        );
        assert_eq!(m.df as f64, number(x, "chi_df [pingouin sphericity]"));
        let p1 = "p_first_order [scipy chi2.sf on pingouin's chi_sq]";
        close(m.p, number(x, p1), &what("Mauchly p first order"));
        let p2 = "p_second_order [Anderson formula in this script on pingouin's chi_sq]";
        close(
            m.p_second_order,
            number(x, p2),
            &what("Mauchly p second order"),
        );
        if e.contrasts == 2 {
            // ω₂ = 0 for p = 2 in both forms, so here the variant is the same p.
            let variant = number(x, "p_variant [pingouin sphericity]");
            close(
                m.p_second_order,
                variant,
                &what("Mauchly p (pingouin, p = 2)"),
            );
        }
    }
}

/// A between factor with unequal groups (4, 5, 6 subjects) and one within
/// factor B (4 levels, at A's first level), against pingouin's mixed_anova
/// (GG from the pooled within-group covariance; it gives no HF).
#[test]
fn unequal_groups_match_pingouin_mixed_anova() {
    let r = reference();
    let (responses, group) = reference_subjects(&r, |o| o < 4);
    let between = [BetweenTerm {
        levels: 3,
        level_of: group,
    }];
    let input = RepeatedInput {
        responses: &responses,
        within: &[4],
        between: &between,
    };
    let a = analyse(&input).unwrap();
    assert_eq!(a.residual_df, 12);
    let x = &r["with_groups_first_a_level"];
    let g = &x["group"];
    let line = &a.between.terms[0];
    close(line.ss, number(g, "ss [pingouin mixed_anova]"), "group SS");
    close(line.f, number(g, "f [pingouin mixed_anova]"), "group F");
    close(line.p, number(g, "p [pingouin mixed_anova]"), "group p");
    let b = &a.within[0];
    for (found, key) in [(&b.effect, "B"), (&b.by_between[0], "Interaction")] {
        let y = &x[key];
        close(
            found.test.ss,
            number(y, "ss [pingouin mixed_anova]"),
            &format!("{key} SS"),
        );
        close(
            found.test.f,
            number(y, "f [pingouin mixed_anova]"),
            &format!("{key} F"),
        );
        close(
            found.test.p,
            number(y, "p [pingouin mixed_anova]"),
            &format!("{key} p"),
        );
        let p_gg = number(y, "p_gg [pingouin mixed_anova]");
        close(found.corrected.gg, p_gg, &format!("{key} p GG"));
        close(
            b.epsilons.gg,
            number(y, "eps_gg [pingouin mixed_anova]"),
            &format!("{key} eps GG"),
        );
    }
    close(
        tested(b).w,
        number(&x["B"], "mauchly_w [pingouin mixed_anova]"),
        "B W",
    );
}
