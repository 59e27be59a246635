//! The words of a comparison procedure's notes.

use crate::outcome::procedure_note::ProcedureNote;
use crate::stats::dunnett::Sides;

pub fn procedure_note_text(note: &ProcedureNote) -> String {
    match note {
        ProcedureNote::Unprotected { several_tests } => format!(
            "Unprotected LSD: pairs were tested whatever the F {} showed.",
            if *several_tests { "tests" } else { "test" }
        ),
        ProcedureNote::ProtectionWithheld { term, alpha } => {
            let test = term
                .as_ref()
                .map_or(String::new(), |t| format!(" for `{t}`"));
            format!(
                "Fisher's protected LSD: the F test{test} was not significant at α = {alpha}, so no pair is declared different."
            )
        }
        ProcedureNote::ProtectionPassed { alpha } => format!(
            "Fisher's protected LSD: the F test was significant at α = {alpha}, so pairs were tested."
        ),
        ProcedureNote::LsdManyLevels => "With four or more levels the LSD does not hold the familywise error rate at α; Tukey-Kramer does.".into(),
        ProcedureNote::Holm => "Holm's procedure has no matching simultaneous intervals; the intervals shown are Bonferroni's.".into(),
        ProcedureNote::Scheffe => "Scheffé's procedure covers every contrast, not only pairs, so it is the most conservative choice for pairwise comparisons.".into(),
        ProcedureNote::Dunn { adjust } => format!(
            "Dunn's test compares mean ranks from the joint Kruskal-Wallis ranking, with {} adjustment.",
            adjust.title()
        ),
        ProcedureNote::GamesHowell => "Games-Howell uses each pair's own variances and Welch-Satterthwaite degrees of freedom.".into(),
        ProcedureNote::Dunnett { sides } => match sides {
            Sides::Two => "Dunnett's procedure compares each treatment with the control, two-sided.".to_string(),
            Sides::Greater => "Dunnett's procedure compares each treatment with the control, one-sided: is the treatment above the control?".to_string(),
            Sides::Less => "Dunnett's procedure compares each treatment with the control, one-sided: is the treatment below the control?".to_string(),
        },
        ProcedureNote::MixedOwnDf => "Each pair is compared with its own standard error and df from the mixed model (Kenward-Roger or Satterthwaite, as the tests).".into(),
        ProcedureNote::MixedTukeyApproximate => "Tukey's procedure with a df per pair is exact when every pair lies in one stratum of a balanced design, and an approximation otherwise.".into(),
        ProcedureNote::Nemenyi => "Nemenyi's procedure compares the rank sums within blocks with the studentized range at infinite df, simultaneously over all pairs; it is conservative, and ignores ties in its standard error.".into(),
        ProcedureNote::ConoverFriedman { rejected: true, alpha } => format!(
            "Conover's procedure tests each pair with t on the rank sums, unadjusted, once Friedman's test has rejected at α = {alpha}: it does not hold the familywise error rate with many levels."
        ),
        ProcedureNote::ConoverFriedman { rejected: false, alpha } => format!(
            "Conover's procedure tests pairs only after Friedman's test rejects; it did not at α = {alpha}, so no pair is declared different."
        ),
        ProcedureNote::MixedDunnett => "Each treatment is compared with the control with its own standard error and df from the mixed model; Dunnett's joint critical value applies because the comparisons share one df and the product correlation.".into(),
    }
}
