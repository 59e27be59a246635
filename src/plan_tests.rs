//! Unit tests for `plan`.

use super::*;

/// Files in memory; no clock.
struct Memory;

impl World for Memory {
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
        match path {
            "here.csv" => Ok(b"y,g\n1,a\n2,b\n".to_vec()),
            _ => Err(std::io::ErrorKind::NotFound.into()),
        }
    }
    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

fn errors_of(text: &str) -> Vec<Diagnostic> {
    match plan("r.md", text.as_bytes(), &Memory) {
        Ok(_) => Vec::new(),
        Err(d) => d.each(),
    }
}

#[test]
fn a_missing_data_file_is_found_before_reading() {
    let e = errors_of("```anova\ndata: gone.csv\nmodel: y ~ g\n```\n");
    assert_eq!(e.len(), 1);
    assert_eq!(
        e[0].message,
        "cannot read data file `gone.csv`: no such file"
    );
    assert_eq!(e[0].place.as_ref().and_then(|p| p.line), Some(2));
}

#[test]
fn prose_naming_no_block_is_an_error_with_the_nearest_id() {
    let e = errors_of(
        "```anova\nid: growth\ndata: here.csv\nmodel: y ~ g\n```\n\nF = {{ grwth.f }}.\n",
    );
    assert_eq!(e.len(), 1);
    assert_eq!(e[0].message, "`grwth` is not the id of an analysis block");
    assert_eq!(e[0].hints, vec!["did you mean `growth`?"]);
}

#[test]
fn prose_quoting_a_block_with_errors_is_not_a_second_error() {
    let e = errors_of(
        "```anova\nid: growth\ndata: here.csv\nmodel: y ~ g\nalpha: 2\n```\n\nF = {{ growth.f }}.\n",
    );
    assert_eq!(e.len(), 1, "{e:?}");
    assert!(e[0].message.starts_with("`alpha` must be"));
}

#[test]
fn functions_and_literals_are_not_block_ids() {
    let e = errors_of(
        "```anova\nid: growth\ndata: here.csv\nmodel: y ~ g\n```\n\nSee {{ table(\"growth-anova\") }}, {{ \"x\" }} and {{ 455.125 | round(2) }}.\n",
    );
    assert!(e.is_empty(), "{e:?}");
}

#[test]
fn date_today_without_a_clock_is_reported_with_the_others() {
    let e = errors_of("---\ndate: today\nalpha: 7\n---\n");
    assert_eq!(e.len(), 2);
    assert!(e[0].message.starts_with("`alpha` must be"));
    assert!(e[1].message.starts_with("`date: today` needs a clock"));
}
