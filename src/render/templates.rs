//! The templates (embedded at compile time from `templates/`) and the
//! environment that lays views out with them: HTML auto-escape for `.html`,
//! Markdown escaping for `.md`.

use crate::diag::Diagnostic;
use crate::escape::{css_string, html_escape, markdown_escape};
use minijinja::value::Value;
use minijinja::{AutoEscape, Environment};
use serde::Serialize;

const TEMPLATES: [(&str, &str); 5] = [
    ("block.html", include_str!("../../templates/block.html")),
    ("block.md", include_str!("../../templates/block.md")),
    ("report.html", include_str!("../../templates/report.html")),
    ("report.md", include_str!("../../templates/report.md")),
    ("report.css", include_str!("../../templates/report.css")),
];

pub(crate) fn template_source(name: &str) -> &'static str {
    TEMPLATES
        .iter()
        .find(|(n, _)| *n == name)
        .map_or("", |(_, s)| s)
}

/// A serializable view as a template value.
pub(crate) fn to_value<T: Serialize>(x: T) -> Value {
    Value::from(minijinja::value::Serde(x))
}

pub(crate) fn environment() -> Environment<'static> {
    let mut env = Environment::new();
    env.set_auto_escape_callback(|name| {
        if name.ends_with(".html") {
            AutoEscape::Html
        } else if name.ends_with(".md") {
            AutoEscape::Custom("markdown".into())
        } else {
            AutoEscape::None
        }
    });
    env.set_formatter(|out, state, value| {
        if matches!(state.auto_escape(), AutoEscape::Custom(n) if n == "markdown") {
            let text = value.to_string();
            let text = if value.is_safe() {
                text
            } else {
                markdown_escape(&text)
            };
            return out.write_str(&text).map_err(minijinja::Error::from);
        }
        minijinja::escape_formatter(out, state, value)
    });
    env.add_filter("code_spans", code_spans);
    env.add_filter("css_string", |text: String| {
        Value::from_safe_string(css_string(&text))
    });
    for (name, _) in TEMPLATES {
        // The templates are ours and fixed at compile time; a syntax error is
        // caught by every test that renders a report.
        let _ = env.add_template(name, template_source(name));
    }
    env
}

/// Escapes a sentence of ours that may quote keys or names in backticks, and
/// turns those quotes into code: `<code>` in HTML, a code span in Markdown.
/// The text inside the backticks is escaped too, so data strings stay inert.
fn code_spans(state: &minijinja::State, text: String) -> Value {
    let markdown = matches!(state.auto_escape(), AutoEscape::Custom(n) if n == "markdown");
    let mut out = String::with_capacity(text.len() + 16);
    for (i, part) in text.split('`').enumerate() {
        // Odd parts sit between backticks (an unmatched last one stays plain).
        let quoted = i % 2 == 1 && text.matches('`').count() > i;
        match (markdown, quoted) {
            (true, true) if !part.contains('\n') => {
                out.push('`');
                out.push_str(part);
                out.push('`');
            }
            (true, _) => out.push_str(&markdown_escape(part)),
            (false, true) => {
                out.push_str("<code>");
                out.push_str(&html_escape(part));
                out.push_str("</code>");
            }
            (false, false) => out.push_str(&html_escape(part)),
        }
    }
    Value::from_safe_string(out)
}

pub(crate) fn render(env: &Environment<'_>, name: &str, ctx: Value) -> Result<String, Diagnostic> {
    env.get_template(name)
        .and_then(|t| t.render(ctx))
        .map_err(|e| Diagnostic::new(format!("internal error in template `{name}`: {e}")))
}
