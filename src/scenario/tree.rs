//! A checked walk over a parsed TOML document.
//!
//! Owns: turning TOML values into numbers, strings and tables with errors
//! that name the file, the field path, the line and column and what is
//! allowed; and catching unknown keys (with a suggestion when one is close).
//! May use: `toml`'s spanned parser. Only the scenario layer uses this.

use std::cell::RefCell;
use std::ops::Range;

use toml::Spanned;
use toml::de::{DeArray, DeTable, DeValue};

use super::ScenarioError;

/// The text being read and the file it is reported under.
#[derive(Debug, Clone, Copy)]
pub struct Text<'s> {
    pub file: &'s str,
    pub text: &'s str,
}

impl<'s> Text<'s> {
    /// Line and column (1-based) of a byte offset.
    pub fn line_col(&self, offset: usize) -> (usize, usize) {
        let offset = offset.min(self.text.len());
        let before = &self.text[..offset];
        let line = before.matches('\n').count() + 1;
        let col = before.rfind('\n').map_or(offset, |i| offset - i - 1) + 1;
        (line, col)
    }

    /// An error at a span.
    pub fn error(
        &self,
        path: &str,
        span: Range<usize>,
        message: impl Into<String>,
    ) -> ScenarioError {
        let (line, column) = self.line_col(span.start);
        ScenarioError {
            file: self.file.to_string(),
            path: path.to_string(),
            line,
            column,
            message: message.into(),
        }
    }
}

/// One value with its path and place.
#[derive(Debug, Clone, Copy)]
pub struct Val<'a, 's> {
    pub src: Text<'s>,
    pub path: &'a str,
    pub span: (usize, usize),
    pub value: &'a DeValue<'s>,
}

fn type_name(v: &DeValue<'_>) -> &'static str {
    match v {
        DeValue::String(_) => "a string",
        DeValue::Integer(_) => "an integer",
        DeValue::Float(_) => "a number",
        DeValue::Boolean(_) => "true/false",
        DeValue::Datetime(_) => "a date",
        DeValue::Array(_) => "a list",
        DeValue::Table(_) => "a table",
    }
}

fn parse_integer(text: &str) -> Option<i128> {
    let t = text.replace('_', "");
    let (neg, body) = match t.strip_prefix('-') {
        Some(b) => (true, b.to_string()),
        None => (false, t.trim_start_matches('+').to_string()),
    };
    let v = if let Some(h) = body.strip_prefix("0x") {
        i128::from_str_radix(h, 16).ok()?
    } else if let Some(o) = body.strip_prefix("0o") {
        i128::from_str_radix(o, 8).ok()?
    } else if let Some(b) = body.strip_prefix("0b") {
        i128::from_str_radix(b, 2).ok()?
    } else {
        body.parse::<i128>().ok()?
    };
    Some(if neg { -v } else { v })
}

impl<'a, 's> Val<'a, 's> {
    fn range(&self) -> Range<usize> {
        self.span.0..self.span.1
    }

    /// An error about this value.
    pub fn error(&self, message: impl Into<String>) -> ScenarioError {
        self.src.error(self.path, self.range(), message)
    }

    fn wrong_type(&self, wanted: &str) -> ScenarioError {
        self.error(format!(
            "expected {wanted}, found {}",
            type_name(self.value)
        ))
    }

    /// Any number (integer or float), possibly NaN or infinite.
    pub fn number(&self) -> Result<f64, ScenarioError> {
        match self.value {
            DeValue::Integer(i) => parse_integer(i.as_str())
                .map(|v| v as f64)
                .ok_or_else(|| self.error("this integer cannot be read")),
            DeValue::Float(f) => {
                let t = f.as_str().replace('_', "");
                t.parse::<f64>()
                    .map_err(|_| self.error("this number cannot be read"))
            }
            _ => Err(self.wrong_type("a number")),
        }
    }

    /// A finite number greater than zero.
    pub fn positive(&self) -> Result<f64, ScenarioError> {
        let x = self.number()?;
        if x > 0.0 && x.is_finite() {
            Ok(x)
        } else {
            Err(self.error(format!("must be a finite number greater than 0 (got {x})")))
        }
    }

    /// A finite number of at least zero.
    pub fn non_negative(&self) -> Result<f64, ScenarioError> {
        let x = self.number()?;
        if x >= 0.0 && x.is_finite() {
            Ok(x)
        } else {
            Err(self.error(format!("must be a finite number of at least 0 (got {x})")))
        }
    }

    /// A finite number.
    pub fn finite(&self) -> Result<f64, ScenarioError> {
        let x = self.number()?;
        if x.is_finite() {
            Ok(x)
        } else {
            Err(self.error(format!("must be a finite number (got {x})")))
        }
    }

    /// A whole number in `[min, max]`.
    pub fn integer(&self, min: i128, max: i128) -> Result<i128, ScenarioError> {
        match self.value {
            DeValue::Integer(i) => {
                let v = parse_integer(i.as_str())
                    .ok_or_else(|| self.error("this integer cannot be read"))?;
                if v < min || v > max {
                    Err(self.error(format!(
                        "must be a whole number from {min} to {max} (got {v})"
                    )))
                } else {
                    Ok(v)
                }
            }
            _ => Err(self.wrong_type("a whole number")),
        }
    }

    /// A string.
    pub fn string(&self) -> Result<&'a str, ScenarioError> {
        match self.value {
            DeValue::String(s) => Ok(s.as_ref()),
            _ => Err(self.wrong_type("a string")),
        }
    }

    /// `true` or `false`.
    pub fn boolean(&self) -> Result<bool, ScenarioError> {
        match self.value {
            DeValue::Boolean(b) => Ok(*b),
            _ => Err(self.error("expected true or false")),
        }
    }

    /// A string from a fixed set.
    pub fn one_of<'c>(&self, allowed: &[&'c str]) -> Result<&'c str, ScenarioError> {
        let s = self.string()?;
        if let Some(found) = allowed.iter().find(|a| **a == s) {
            Ok(found)
        } else {
            let hint = did_you_mean(s, allowed.iter().copied());
            Err(self.error(format!(
                "`{s}` is not allowed here{hint}; allowed: {}",
                allowed.join(", ")
            )))
        }
    }

    /// A list.
    pub fn array(&self) -> Result<&'a DeArray<'s>, ScenarioError> {
        match self.value {
            DeValue::Array(a) => Ok(a),
            _ => Err(self.wrong_type("a list")),
        }
    }

    /// A table, to be read field by field.
    pub fn table(&self) -> Result<Tbl<'a, 's>, ScenarioError> {
        match self.value {
            DeValue::Table(t) => Ok(Tbl {
                src: self.src,
                path: self.path.to_string(),
                span: self.span,
                map: t,
                used: RefCell::new(Vec::new()),
            }),
            _ => Err(self.wrong_type("a table")),
        }
    }

    /// True if the value is a table.
    pub fn is_table(&self) -> bool {
        matches!(self.value, DeValue::Table(_))
    }
}

/// Read each element of a list with its own path (`path[i]`).
pub fn each<'a, 's, T>(
    v: &Val<'a, 's>,
    mut f: impl FnMut(Val<'_, 's>) -> Result<T, ScenarioError>,
) -> Result<Vec<T>, ScenarioError> {
    let arr = v.array()?;
    let mut out = Vec::with_capacity(arr.len());
    for (i, item) in arr.iter().enumerate() {
        let path = format!("{}[{}]", v.path, i);
        let span = item.span();
        out.push(f(Val {
            src: v.src,
            path: &path,
            span: (span.start, span.end),
            value: item.get_ref(),
        })?);
    }
    Ok(out)
}

/// A table being read; remembers which keys were read.
#[derive(Debug)]
pub struct Tbl<'a, 's> {
    pub src: Text<'s>,
    pub path: String,
    span: (usize, usize),
    map: &'a DeTable<'s>,
    used: RefCell<Vec<String>>,
}

/// Levenshtein distance, for suggestions.
fn distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            let cost = usize::from(ca != *cb);
            cur[j + 1] = (prev[j] + cost).min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

/// The closest candidate within a small edit distance.
pub fn suggest<'c>(word: &str, candidates: impl Iterator<Item = &'c str>) -> Option<&'c str> {
    candidates
        .map(|c| (distance(word, c), c))
        .filter(|(d, c)| *d <= 2.max(c.len() / 3))
        .min_by_key(|(d, _)| *d)
        .map(|(_, c)| c)
}

/// The hint " (did you mean `NAME`?)" for the closest candidate within a small
/// edit distance (see [`suggest`]), or nothing.
pub fn did_you_mean<'c>(word: &str, candidates: impl Iterator<Item = &'c str>) -> String {
    suggest(word, candidates)
        .map(|c| format!(" (did you mean `{c}`?)"))
        .unwrap_or_default()
}

impl<'a, 's> Tbl<'a, 's> {
    /// The root table of a document.
    pub fn root(src: Text<'s>, doc: &'a Spanned<DeTable<'s>>) -> Self {
        let span = doc.span();
        Tbl {
            src,
            path: String::new(),
            span: (span.start, span.end),
            map: doc.get_ref(),
            used: RefCell::new(Vec::new()),
        }
    }

    /// Path of a child key.
    pub fn child_path(&self, key: &str) -> String {
        if self.path.is_empty() {
            key.to_string()
        } else {
            format!("{}.{}", self.path, key)
        }
    }

    /// An error about the table itself.
    pub fn error(&self, message: impl Into<String>) -> ScenarioError {
        self.src
            .error(&self.path, self.span.0..self.span.1, message)
    }

    /// Look a key up, marking it read. The closure receives the value.
    pub fn with<T>(
        &self,
        key: &str,
        f: impl FnOnce(Val<'_, 's>) -> Result<T, ScenarioError>,
    ) -> Result<Option<T>, ScenarioError> {
        self.used.borrow_mut().push(key.to_string());
        match self.map.get(key) {
            None => Ok(None),
            Some(v) => {
                let path = self.child_path(key);
                let span = v.span();
                f(Val {
                    src: self.src,
                    path: &path,
                    span: (span.start, span.end),
                    value: v.get_ref(),
                })
                .map(Some)
            }
        }
    }

    /// A key that must be present.
    pub fn need<T>(
        &self,
        key: &str,
        what: &str,
        f: impl FnOnce(Val<'_, 's>) -> Result<T, ScenarioError>,
    ) -> Result<T, ScenarioError> {
        match self.with(key, f)? {
            Some(v) => Ok(v),
            None => {
                // A misspelt key is the likelier story: point at it.
                for (k, _) in self.map.iter() {
                    let found: &str = k.get_ref().as_ref();
                    if suggest(found, std::iter::once(key)).is_some() {
                        return Err(self.src.error(
                            &self.child_path(found),
                            k.span(),
                            format!(
                                "unknown field `{found}` (did you mean `{key}`?); `{key}` is required: {what}"
                            ),
                        ));
                    }
                }
                Err(self.error(format!("missing field `{}`: {what}", self.child_path(key))))
            }
        }
    }

    /// True if the key is present.
    pub fn has(&self, key: &str) -> bool {
        self.map.get(key).is_some()
    }

    /// Every key in document order, with a closure for its value (marks all read).
    pub fn entries<T>(
        &self,
        mut f: impl FnMut(&str, Val<'_, 's>) -> Result<T, ScenarioError>,
    ) -> Result<Vec<T>, ScenarioError> {
        let mut items: Vec<_> = self.map.iter().collect();
        items.sort_by_key(|(k, _)| k.span().start);
        let mut out = Vec::with_capacity(items.len());
        for (k, v) in items {
            let key: &str = k.get_ref().as_ref();
            self.used.borrow_mut().push(key.to_string());
            let path = self.child_path(key);
            let span = v.span();
            out.push(f(
                key,
                Val {
                    src: self.src,
                    path: &path,
                    span: (span.start, span.end),
                    value: v.get_ref(),
                },
            )?);
        }
        Ok(out)
    }

    /// Fail on any key that was never read, suggesting a close known key.
    pub fn finish(&self, known: &[&str]) -> Result<(), ScenarioError> {
        let used = self.used.borrow();
        let mut items: Vec<_> = self.map.iter().collect();
        items.sort_by_key(|(k, _)| k.span().start);
        for (k, _) in items {
            let key: &str = k.get_ref().as_ref();
            if !used.iter().any(|u| u == key) {
                let hint = did_you_mean(key, known.iter().copied());
                let span = k.span();
                return Err(self.src.error(
                    &self.child_path(key),
                    span,
                    format!(
                        "unknown field `{key}`{hint}; allowed here: {}",
                        known.join(", ")
                    ),
                ));
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn suggestions_find_close_keys() {
        assert_eq!(
            suggest("horizon_hour", ["horizon_hours", "seed"].into_iter()),
            Some("horizon_hours")
        );
        assert_eq!(suggest("zzz", ["horizon_hours", "seed"].into_iter()), None);
    }

    #[test]
    fn integers_with_underscores_and_radix() {
        assert_eq!(parse_integer("30_000"), Some(30000));
        assert_eq!(parse_integer("-0x10"), Some(-16));
    }
}
