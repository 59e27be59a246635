//! Wilkinson-Rogers model formulas: `response ~ terms`.
//!
//! Terms are joined by `+`; `a:b` is an interaction; `a*b` expands to
//! `a + b + a:b` (and `a*b*c` to all main effects and interactions). Names
//! are identifiers, or any text in backticks (`` `dry weight` ``). The
//! parser is general; which models can be fitted is decided later.

use std::fmt;

/// At most this many factors may be crossed with `*` in one chunk (63 terms).
pub const MAX_CROSSED: usize = 6;

/// A parsed model: the response and its terms in model order.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Formula {
    /// The first (usually only) response.
    pub response: String,
    /// Every response named left of `~` (`yield, height ~ variety`), in
    /// order; one entry for an ordinary model.
    pub responses: Vec<String>,
    pub terms: Vec<Term>,
}

/// A main effect (one factor) or an interaction (several).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Term {
    pub factors: Vec<String>,
}

impl fmt::Display for Term {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.factors.join(":"))
    }
}

impl Formula {
    /// True when several responses (traits) share the model.
    pub fn several(&self) -> bool {
        self.responses.len() > 1
    }

    /// The same model for one of its responses alone.
    pub fn for_response(&self, response: &str) -> Formula {
        Formula {
            response: response.to_string(),
            responses: vec![response.to_string()],
            terms: self.terms.clone(),
        }
    }

    /// Every factor named in any term, in order of first mention.
    pub fn factors(&self) -> Vec<&str> {
        let mut out: Vec<&str> = Vec::new();
        for t in &self.terms {
            for f in &t.factors {
                if !out.contains(&f.as_str()) {
                    out.push(f);
                }
            }
        }
        out
    }
}

/// A formula syntax error at a character column (0-based within the formula).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FormulaError {
    pub offset: usize,
    pub message: String,
    pub hint: String,
}

#[derive(Debug, Clone, PartialEq)]
enum Token {
    Name(String),
    Tilde,
    Plus,
    Colon,
    Star,
    Comma,
}

fn tokenize(text: &str) -> Result<Vec<(usize, Token)>, FormulaError> {
    let chars: Vec<char> = text.chars().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        match c {
            ' ' | '\t' => i += 1,
            '~' => {
                out.push((i, Token::Tilde));
                i += 1
            }
            '+' => {
                out.push((i, Token::Plus));
                i += 1
            }
            ':' => {
                out.push((i, Token::Colon));
                i += 1
            }
            '*' => {
                out.push((i, Token::Star));
                i += 1
            }
            ',' => {
                out.push((i, Token::Comma));
                i += 1
            }
            '`' => {
                let start = i;
                let close = chars[i + 1..]
                    .iter()
                    .position(|&c| c == '`')
                    .ok_or(FormulaError {
                        offset: start,
                        message: "a backtick-quoted name is not closed".into(),
                        hint: "close the name with a second backtick".into(),
                    })?;
                let name: String = chars[i + 1..i + 1 + close].iter().collect();
                if name.trim().is_empty() {
                    return Err(FormulaError {
                        offset: start,
                        message: "an empty name".into(),
                        hint: "write the column name between the backticks".into(),
                    });
                }
                out.push((start, Token::Name(name)));
                i += close + 2;
            }
            c if c.is_alphanumeric() || c == '_' || c == '.' => {
                let start = i;
                while i < chars.len()
                    && (chars[i].is_alphanumeric() || chars[i] == '_' || chars[i] == '.')
                {
                    i += 1;
                }
                out.push((start, Token::Name(chars[start..i].iter().collect())));
            }
            other => {
                return Err(FormulaError {
                    offset: i,
                    message: format!("unexpected `{other}` in the model"),
                    hint: "models read `response ~ factor`, with terms joined by `+`, `*` or `:`; put column names with spaces or symbols in backticks".into(),
                });
            }
        }
    }
    Ok(out)
}

/// Parses a formula such as `weight ~ group`, `y ~ A * B` or, with several
/// responses analysed one by one, `yield, height ~ variety + block`.
pub fn parse_formula(text: &str) -> Result<Formula, FormulaError> {
    let tokens = tokenize(text)?;
    let end = text.chars().count();
    let mut it = tokens.into_iter().peekable();
    let responses = response_list(&mut it, end)?;
    let mut terms = term_list(&mut it, end)?;
    for response in &responses {
        if terms.iter().any(|t| t.factors.contains(response)) {
            return Err(FormulaError {
                offset: 0,
                message: format!("`{response}` is both the response and a factor"),
                hint: "the column left of `~` is the measured response; factors go on the right"
                    .into(),
            });
        }
    }
    // Main effects first, then interactions by order, as in the usual tables.
    terms.sort_by_key(|t| t.factors.len());
    Ok(Formula {
        response: responses[0].clone(),
        responses,
        terms,
    })
}

/// The responses before `~`: one name, or several joined by `,`, each once.
fn response_list(
    it: &mut std::iter::Peekable<std::vec::IntoIter<(usize, Token)>>,
    end: usize,
) -> Result<Vec<String>, FormulaError> {
    let mut responses: Vec<String> = Vec::new();
    loop {
        let (at, name) = match it.next() {
            Some((at, Token::Name(name))) => (at, name),
            other => {
                let first = responses.is_empty();
                return Err(FormulaError {
                    offset: other.map_or(end, |(at, _)| at),
                    message: if first {
                        "the model must start with the response column".into()
                    } else {
                        "expected a response column after `,`".into()
                    },
                    hint: "write `response ~ factor`, for example `weight ~ group`, or several responses joined by `,`".into(),
                });
            }
        };
        if responses.contains(&name) {
            return Err(FormulaError {
                offset: at,
                message: format!("`{name}` is named twice as a response"),
                hint: "name each response once".into(),
            });
        }
        responses.push(name);
        match it.next() {
            Some((_, Token::Tilde)) => return Ok(responses),
            Some((_, Token::Comma)) => continue,
            other => {
                return Err(FormulaError {
                    offset: other.map_or(end, |(at, _)| at),
                    message: "expected `~` after the response".into(),
                    hint: "write `response ~ factor`, for example `weight ~ group`; join several responses with `,`".into(),
                });
            }
        }
    }
}

/// The terms after `~` (or of a `random` list): `+`-separated chunks, each
/// a product of `:`/`*`-joined names.
fn term_list(
    it: &mut std::iter::Peekable<std::vec::IntoIter<(usize, Token)>>,
    end: usize,
) -> Result<Vec<Term>, FormulaError> {
    let mut terms: Vec<Term> = Vec::new();
    loop {
        let mut names: Vec<(String, bool)> = Vec::new(); // (name, joined to previous by `*`)
        let mut joiner_star = false;
        loop {
            match it.next() {
                Some((_, Token::Name(n))) => names.push((n, joiner_star)),
                other => {
                    return Err(FormulaError {
                        offset: other.map_or(end, |(at, _)| at),
                        message: "expected a factor name".into(),
                        hint: "a term is a column name, or names joined by `:` or `*`".into(),
                    });
                }
            }
            match it.peek() {
                Some((_, Token::Colon)) => joiner_star = false,
                Some((_, Token::Star)) => joiner_star = true,
                _ => break,
            }
            it.next();
        }
        // `a * b * c …` expands to 2^g − 1 terms: refuse before that explodes.
        let crossed = names.iter().filter(|(_, star)| *star).count() + 1;
        if crossed > MAX_CROSSED {
            return Err(FormulaError {
                offset: 0,
                message: format!(
                    "`*` crosses {crossed} factors, which would give {} terms",
                    (1u64 << crossed.min(63)) - 1
                ),
                hint: format!(
                    "sheaf fits at most {MAX_CROSSED}-way crossings; list the terms you need with `+` and `:`"
                ),
            });
        }
        for t in expand(&names) {
            if !terms.contains(&t) {
                terms.push(t);
            }
        }
        match it.next() {
            None => break,
            Some((_, Token::Plus)) => continue,
            Some((at, _)) => {
                return Err(FormulaError {
                    offset: at,
                    message: "expected `+` between terms".into(),
                    hint: "join terms with `+`, for example `y ~ variety + block`".into(),
                });
            }
        }
    }
    Ok(terms)
}

/// Parses a list of terms without a response, such as the random terms
/// `block + block:variety`.
pub fn parse_terms(text: &str) -> Result<Vec<Term>, FormulaError> {
    let tokens = tokenize(text)?;
    if let Some((at, _)) = tokens.iter().find(|(_, t)| *t == Token::Tilde) {
        return Err(FormulaError {
            offset: *at,
            message: "a list of terms has no `~`".into(),
            hint: "write the terms only, for example `block + block:plot`".into(),
        });
    }
    let end = text.chars().count();
    let mut terms = term_list(&mut tokens.into_iter().peekable(), end)?;
    terms.sort_by_key(|t| t.factors.len());
    Ok(terms)
}

/// Expands one chunk: `a:b` stays one term; `a*b` gives a, b and a:b.
fn expand(names: &[(String, bool)]) -> Vec<Term> {
    // Split into `*`-separated groups of `:`-joined names.
    let mut groups: Vec<Vec<String>> = Vec::new();
    for (name, star) in names {
        if *star || groups.is_empty() {
            groups.push(vec![name.clone()]);
        } else if let Some(last) = groups.last_mut() {
            last.push(name.clone());
        }
    }
    // Every non-empty subset of the groups, in order of size then position.
    let g = groups.len();
    let mut subsets: Vec<Vec<usize>> = (1..(1u32 << g))
        .map(|mask| (0..g).filter(|i| mask & (1 << i) != 0).collect())
        .collect();
    subsets.sort_by_key(|s| (s.len(), s.clone()));
    subsets
        .into_iter()
        .map(|s| {
            let mut factors: Vec<String> = Vec::new();
            for i in s {
                for f in &groups[i] {
                    if !factors.contains(f) {
                        factors.push(f.clone());
                    }
                }
            }
            Term { factors }
        })
        .collect()
}

#[cfg(test)]
#[path = "formula_tests.rs"]
mod tests;
