//! Mixed-model checks: blocks with random terms run as reports run them,
//! against the closed forms and reference values of the mixed-model
//! specification (section 9; closed forms from stratum mean squares, p
//! from scipy). Data: the open oats split-plot and Machines datasets.

use super::{Area, Bar, Check, run_block};

const OATS: &str = include_str!("../../tests/data/open/oats.csv");
const MACHINES: &str = include_str!("../../tests/data/open/Machines.csv");

/// The closed forms hold exactly in balanced designs; the REML fit reaches
/// them to about 1e-11 relative, so LRE 9 is the bar.
const LRE9: Bar = Bar::MinLre { lre: 9.0 };

pub(super) fn mixed_cases(checks: &mut Vec<Check>) {
    let src = "mixed-models specification 9.1 (closed form; scipy)";
    let oats = run_block("model: Y ~ V * N\nrandom: B + B:V\ncompare: tukey", OATS);
    let term = |name: &str| {
        oats.as_ref()
            .and_then(|o| o.terms.iter().find(|t| t.name == name))
    };
    let get = |name: &str, f: fn(&crate::outcome::linear::TermTest) -> f64| {
        term(name).map_or(f64::NAN, f)
    };
    let mut push = |name: &str, got: f64, want: f64, bar: Bar| {
        checks.push(Check::new(Area::MixedModels, name, src, got, want, bar));
    };
    push(
        "oats: F of varieties against the whole-plot error",
        get("V", |t| t.f),
        1.48534037944,
        LRE9,
    );
    push(
        "oats: p of varieties",
        get("V", |t| t.p),
        0.272386856735,
        LRE9,
    );
    push(
        "oats: Kenward-Roger df of varieties",
        get("V", |t| t.denominator_df),
        10.0,
        LRE9,
    );
    push(
        "oats: F of nitrogen",
        get("N", |t| t.f),
        37.6856470588,
        LRE9,
    );
    push(
        "oats: F of the interaction",
        get("V:N", |t| t.f),
        0.302823529412,
        LRE9,
    );
    let mean_se = oats
        .as_ref()
        .and_then(|o| o.main_family("V"))
        .and_then(|f| f.estimates.first())
        .map_or(f64::NAN, |e| e.se);
    push(
        "oats: SE of a variety mean, blocks random",
        mean_se,
        7.79753937921,
        LRE9,
    );
    let sed = |kind: &str| {
        oats.as_ref()
            .and_then(|o| o.mixed.as_ref())
            .and_then(|m| m.seds.iter().find(|s| s.kind == kind))
            .map_or((f64::NAN, f64::NAN), |s| (s.sed, s.df))
    };
    let (across, across_df) = sed("two V levels at the same N");
    push(
        "oats: SED of two varieties at one nitrogen rate",
        across,
        9.71502511386,
        LRE9,
    );
    push("oats: its Satterthwaite df", across_df, 30.2307802367, LRE9);
    let src = "mixed-models specification 9.3 (closed form; scipy)";
    let machines = run_block(
        "model: score ~ Machine\nrandom: Worker + Worker:Machine\ncompare: tukey",
        MACHINES,
    );
    let m = machines
        .as_ref()
        .and_then(|o| o.terms.iter().find(|t| t.name == "Machine"));
    checks.push(Check::new(
        Area::MixedModels,
        "Machines: F of machines against worker × machine",
        src,
        m.map_or(f64::NAN, |t| t.f),
        20.5760829641,
        LRE9,
    ));
    let components = machines.as_ref().and_then(|o| o.mixed.as_ref());
    for (i, (what, want)) in [
        ("workers", 22.8584444444),
        ("worker × machine", 13.9094567901),
        ("residual", 0.92462962963),
    ]
    .into_iter()
    .enumerate()
    {
        checks.push(Check::new(
            Area::MixedModels,
            format!("Machines: variance of {what} (REML = ANOVA estimate)"),
            src,
            components
                .and_then(|c| c.components.get(i))
                .map_or(f64::NAN, |c| c.variance),
            want,
            LRE9,
        ));
    }
}
