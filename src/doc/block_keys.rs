//! The keys of an `anova` block: one table, each key with the handler that
//! reads its value into a draft. Handlers check only their own value;
//! `block_checks` then checks the keys against each other.

use super::block::{
    CheckSet, Located, Omnibus, Order, PlotSpec, Show, SpecError, bad, list, one_of, parse_alpha,
    parse_compare, parse_id, parse_yes_no,
};
use super::block_display as display;
use super::block_rows as rows;
use super::formula::{Formula, parse_formula};
use super::keytable::KeyTable;
use super::keyvalue::Entry;
use crate::data::{CsvFormat, RowRules, SummaryColumns};
use crate::stats::compare::Method;
use crate::stats::dunnett::Sides;
use crate::stats::linear::SsType;

/// An `anova` block as its entries give it, before the keys are checked
/// against each other. An entry kept whole is needed for a later message.
#[derive(Debug, Default)]
pub struct AnovaDraft {
    pub id: Option<Located<String>>,
    pub data: Option<Entry>,
    pub model: Option<Located<Formula>>,
    pub method: Option<Omnibus>,
    pub compare: Option<(Entry, Option<Method>)>,
    pub alpha: Option<f64>,
    pub decimals: Option<u32>,
    pub levels: Option<Located<Vec<String>>>,
    pub caption: Option<String>,
    pub csv: CsvFormat,
    pub decimal: Option<Entry>,
    pub missing_given: bool,
    pub protected: Option<(Entry, bool)>,
    pub order: Option<Order>,
    pub show: Option<Show>,
    pub checks: Option<CheckSet>,
    pub control: Option<Entry>,
    pub sides: Option<(Entry, Sides)>,
    pub adjust: Option<(Entry, Method)>,
    /// `input`, and whether it is `summary`.
    pub input: Option<(Entry, bool)>,
    pub columns: Option<(Entry, SummaryColumns)>,
    /// `query`: the SQL file that computed the summary file.
    pub query: Option<Entry>,
    pub ss_type: Option<Located<SsType>>,
    pub compare_terms: Option<Located<Vec<String>>>,
    pub within: Option<Located<String>>,
    pub cells: Option<Located<super::block::CellComparison>>,
    pub blocks: Option<Located<Vec<String>>>,
    /// Keys that need two or more factors (`ss`, `compare_term`, `within`,
    /// `cells`), in that order.
    pub multi_factor: Vec<Entry>,
    pub plots: PlotSpec,
    pub plot: Option<Entry>,
    /// `layout`, and whether it is `wide`.
    pub layout: Option<(Entry, bool)>,
    pub rows: RowRules,
    pub labels: Vec<(String, String)>,
    pub labels_at: Option<(usize, usize)>,
    pub acknowledge: Vec<String>,
    pub names: Option<Entry>,
    pub x_axis: Option<Entry>,
    pub sheet: Option<Entry>,
    pub range: Option<Entry>,
    /// `random`: the unit structure, as terms.
    pub random: Option<(Entry, Vec<super::formula::Term>)>,
    pub ddf: Option<(Entry, super::block::DdfMethod)>,
    /// `subject`: the unit measured repeatedly.
    pub subject: Option<(Entry, super::formula::Term)>,
    /// `trend`: polynomial trend over a quantitative factor.
    pub trend: Option<super::block_trend::TrendSpec>,
    /// `contrast`: planned contrasts, one line each.
    pub contrasts: Vec<super::block_contrasts::ContrastSpec>,
    pub contrast_adjust: Option<Located<super::block_contrasts::ContrastAdjust>>,
    /// `covariate`: numeric columns entering the model as straight lines.
    pub covariates: Option<(Entry, Vec<String>)>,
    /// `covariance`: the repeated-measures error structure.
    pub covariance: Option<(Entry, super::block_covariance::Covariance)>,
    /// `transform`: the scale the analysis runs on, or the Box-Cox profile.
    pub transform: Option<(Entry, super::block_transform::TransformChoice)>,
    /// `offset`: a constant added before a log or square root.
    pub offset: Option<(Entry, f64)>,
    /// `noec`: the dose-response procedures asked for.
    pub noec: Option<(Entry, Vec<super::block_dose::DoseProcedure>)>,
    /// `doses`: each level's dose, when the names are not numbers.
    pub doses: Option<Located<Vec<(String, f64)>>>,
    /// `margin`: equivalence margins, which turn the equivalence tests on.
    pub margin: Option<(Entry, super::block_equivalence::Margins)>,
    /// `claim`: separate claims per level, or one for all levels.
    pub claim: Option<(Entry, super::block_equivalence::Claim)>,
}

/// Every key an `anova` block accepts, in the order hints list them.
pub const ANOVA: KeyTable<AnovaDraft> = KeyTable {
    section: "an anova block",
    unknown: "unknown key",
    keys: &[
        ("id", read_id),
        ("data", rows::read_data),
        ("model", read_model),
        ("compare", read_compare),
        ("alpha", read_alpha),
        ("levels", display::read_levels),
        ("caption", display::read_caption),
        ("decimals", display::read_decimals),
        ("delimiter", rows::read_delimiter),
        ("decimal", rows::read_decimal),
        ("missing", rows::read_missing),
        ("protected", read_protected),
        ("order", display::read_order),
        ("show", display::read_show),
        ("method", read_method),
        ("checks", display::read_checks),
        ("control", read_control),
        ("sides", read_sides),
        ("adjust", read_adjust),
        ("input", rows::read_input),
        ("columns", rows::read_columns),
        ("query", rows::read_query),
        ("ss", read_ss),
        ("compare_term", read_compare_term),
        ("within", read_within),
        ("cells", read_cells),
        ("block", read_block),
        ("covariate", super::block_covariates::read_covariate),
        ("contrast", super::block_contrasts::read_contrast),
        ("trend", super::block_trend::read_trend),
        ("transform", super::block_transform::read_transform),
        ("offset", super::block_transform::read_offset),
        ("noec", super::block_dose::read_noec),
        ("doses", super::block_dose::read_doses),
        ("margin", super::block_equivalence::read_margin),
        ("claim", super::block_equivalence::read_claim),
        (
            "contrast_adjust",
            super::block_contrasts::read_contrast_adjust,
        ),
        ("random", super::block_random::read_random),
        ("ddf", super::block_random::read_ddf),
        ("subject", super::block_random::read_subject),
        ("covariance", super::block_covariance::read_covariance),
        ("plot", display::read_plot),
        ("label", display::read_label),
        ("unit", display::read_unit),
        ("reference", display::read_reference),
        ("layout", rows::read_layout),
        ("where", rows::read_where),
        ("exclude", rows::read_exclude),
        ("labels", display::read_labels),
        ("sheet", rows::read_sheet),
        ("range", rows::read_range),
        ("acknowledge", display::read_acknowledge),
        ("names", display::read_names),
        ("x_axis", display::read_x_axis),
    ],
};

pub(super) fn located(e: &Entry) -> Located<String> {
    Located {
        value: e.value.clone(),
        line: e.line,
        column: e.value_column,
    }
}

fn located_list(e: &Entry) -> Located<Vec<String>> {
    Located {
        value: list(&e.value),
        line: e.line,
        column: e.value_column,
    }
}

fn read_id(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.id = Some(parse_id(e)?);
    Ok(())
}

fn read_model(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let formula = parse_formula(&e.value).map_err(|x| SpecError {
        line: e.line,
        column: e.value_column + x.offset,
        message: x.message,
        hint: Some(x.hint),
    })?;
    d.model = Some(Located {
        value: formula,
        line: e.line,
        column: e.value_column,
    });
    Ok(())
}

fn read_compare(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.compare = Some((e.clone(), parse_compare(e)?));
    Ok(())
}

fn read_alpha(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.alpha = Some(parse_alpha(e)?);
    Ok(())
}

fn read_protected(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.protected = Some((e.clone(), parse_yes_no(e)?));
    Ok(())
}

fn read_method(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], Omnibus); 3] = [
        (&["anova"], Omnibus::Anova),
        (&["welch"], Omnibus::Welch),
        (&["ranks", "kruskal"], Omnibus::Ranks),
    ];
    d.method = Some(one_of(
        e,
        "method",
        &choices,
        "write `anova` (the F test), `welch` (unequal variances) or `ranks` (Kruskal-Wallis)",
    )?);
    Ok(())
}

fn read_control(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.control = Some(e.clone());
    Ok(())
}

fn read_sides(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], Sides); 3] = [
        (&["2", "two", "both"], Sides::Two),
        (&["1", "greater", "above"], Sides::Greater),
        (&["less", "below"], Sides::Less),
    ];
    let sides = one_of(
        e,
        "`sides` value",
        &choices,
        "write `2` (two-sided), `1` or `greater` (treatments above the control), or `less`",
    )?;
    d.sides = Some((e.clone(), sides));
    Ok(())
}

fn read_adjust(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], Method); 2] = [
        (&["holm"], Method::Holm),
        (&["bonferroni"], Method::Bonferroni),
    ];
    let hint = "write `holm` (the default) or `bonferroni`";
    d.adjust = Some((e.clone(), one_of(e, "adjustment", &choices, hint)?));
    Ok(())
}

fn read_ss(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let value = match e.value.trim().to_ascii_uppercase().as_str() {
        "1" | "I" => SsType::I,
        "2" | "II" => SsType::II,
        "3" | "III" => SsType::III,
        _ => {
            return Err(bad(
                e,
                format!("unknown sums-of-squares type `{}`", e.value),
                "write 1 (sequential), 2 or 3",
            ));
        }
    };
    d.ss_type = Some(Located {
        value,
        line: e.line,
        column: e.value_column,
    });
    d.multi_factor.push(e.clone());
    Ok(())
}

fn read_compare_term(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.compare_terms = Some(located_list(e));
    d.multi_factor.push(e.clone());
    Ok(())
}

fn read_within(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.within = Some(located(e));
    d.multi_factor.push(e.clone());
    Ok(())
}

fn read_cells(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    use super::block::CellComparison;
    let value = if e.value.trim().eq_ignore_ascii_case("all") {
        CellComparison::All
    } else if parse_yes_no(e).map_err(|_| {
        bad(
            e,
            format!("`cells` must be yes, no or all, found `{}`", e.value),
            "write `yes` (the design's usual display), `all` (one letter set over every cell) or `no`",
        )
    })? {
        CellComparison::Yes
    } else {
        CellComparison::No
    };
    d.cells = Some(Located {
        value,
        line: e.line,
        column: e.value_column,
    });
    d.multi_factor.push(e.clone());
    Ok(())
}

fn read_block(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.blocks = Some(located_list(e));
    Ok(())
}
