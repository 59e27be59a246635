//! The keys of an `anova` block that say how its results are shown: tables,
//! order, labels, figures and the notes the author has dealt with.

use super::block::{
    CheckSet, Located, NOTE_KINDS, Order, PlotKind, Show, SpecError, bad, list, one_of,
    parse_decimals,
};
use super::block_keys::AnovaDraft;
use super::keyvalue::Entry;

pub(super) fn read_levels(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let names = list(&e.value);
    if names.len() < 2 {
        return Err(bad(
            e,
            "`levels` must list at least two levels".into(),
            "separate level names with commas: `levels: ctrl, trt1, trt2`",
        ));
    }
    if let Some(dup) = names
        .iter()
        .enumerate()
        .find(|(i, n)| names[..*i].contains(n))
        .map(|(_, n)| n)
    {
        return Err(bad(
            e,
            format!("`levels` lists `{dup}` twice"),
            "list each level once",
        ));
    }
    d.levels = Some(Located {
        value: names,
        line: e.line,
        column: e.value_column,
    });
    Ok(())
}

pub(super) fn read_caption(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.caption = Some(e.value.clone());
    Ok(())
}

pub(super) fn read_decimals(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.decimals = Some(parse_decimals(e)?);
    Ok(())
}

pub(super) fn read_order(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], Order); 2] = [
        (&["mean", "means"], Order::Mean),
        (&["levels", "data"], Order::Levels),
    ];
    let hint = "write `mean` (highest first) or `levels` (as listed or as in the data)";
    d.order = Some(one_of(e, "order", &choices, hint)?);
    Ok(())
}

pub(super) fn read_show(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let mut s = Show {
        anova: false,
        means: false,
        pairs: false,
    };
    for item in list(&e.value) {
        match item.as_str() {
            "anova" => s.anova = true,
            "means" => s.means = true,
            "pairs" => s.pairs = true,
            "none" => {}
            other => {
                let hint = match crate::diag::nearest(other, ["anova", "means", "pairs", "none"]) {
                    Some(n) => {
                        format!("did you mean `{n}`? Choose from anova, means, pairs, or none")
                    }
                    None => "choose from anova, means, pairs, or none (prose can still quote the results)".into(),
                };
                return Err(bad(e, format!("unknown table `{other}` in `show`"), hint));
            }
        }
    }
    d.show = Some(s);
    Ok(())
}

pub(super) fn read_checks(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], CheckSet); 3] = [
        (&["all", "yes", "show"], CheckSet::All),
        (&["none", "no", "hide"], CheckSet::Hidden),
        (&["summary"], CheckSet::Summary),
    ];
    d.checks = Some(one_of(
        e,
        "`checks` value",
        &choices,
        "write `all` (the default), `none` to hide the table (the checks stay in the results file), or `summary` for only the checks per-level summaries allow",
    )?);
    Ok(())
}

pub(super) fn read_plot(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    for item in list(&e.value) {
        match PlotKind::ALL
            .iter()
            .find(|k| k.key() == item.to_ascii_lowercase())
        {
            Some(k) if !d.plots.kinds.contains(k) => d.plots.kinds.push(*k),
            Some(_) => {}
            None => {
                let keys: Vec<&str> = PlotKind::ALL.iter().map(|k| k.key()).collect();
                let hint = match crate::diag::nearest(&item, keys.iter().copied()) {
                    Some(n) => format!("did you mean `{n}`? The kinds are {}", keys.join(", ")),
                    None => format!("the kinds are {}", keys.join(", ")),
                };
                return Err(bad(e, format!("unknown plot kind `{item}`"), hint));
            }
        }
    }
    d.plot = Some(e.clone());
    Ok(())
}

pub(super) fn read_label(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.plots.label = Some(e.value.clone());
    Ok(())
}

pub(super) fn read_unit(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.plots.unit = Some(e.value.clone());
    Ok(())
}

pub(super) fn read_reference(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let value = e.value.trim().parse::<f64>().ok().filter(|v| v.is_finite());
    d.plots.reference = Some(value.ok_or_else(|| {
        bad(
            e,
            format!("`reference` must be a number, found `{}`", e.value),
            "for example `reference: 0`",
        )
    })?);
    Ok(())
}

pub(super) fn read_labels(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    for part in list(&e.value) {
        let Some((from, to)) = part.split_once('=') else {
            return Err(bad(
                e,
                format!("expected `level = label`, found `{part}`"),
                "for example `labels: ctrl = Control, trt1 = Treatment 1`",
            ));
        };
        d.labels
            .push((from.trim().to_string(), to.trim().to_string()));
    }
    d.labels_at = Some((e.line, e.value_column));
    Ok(())
}

pub(super) fn read_acknowledge(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    for kind in list(&e.value) {
        if !NOTE_KINDS.iter().any(|(k, _)| *k == kind) {
            let known: Vec<&str> = NOTE_KINDS.iter().map(|(k, _)| *k).collect();
            let hint = match crate::diag::nearest(&kind, known.iter().copied()) {
                Some(k) => format!("did you mean `{k}`? (kinds: {})", known.join(", ")),
                None => format!("the kinds are {}", known.join(", ")),
            };
            return Err(bad(e, format!("`{kind}` is not a kind of note"), hint));
        }
        d.acknowledge.push(kind);
    }
    Ok(())
}

/// `names` and `x_axis` name columns of the model: they are checked against
/// it once every key is read (`block_checks`).
pub(super) fn read_names(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.names = Some(e.clone());
    Ok(())
}

pub(super) fn read_x_axis(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.x_axis = Some(e.clone());
    Ok(())
}
