//! A checked walk over the parsed TOML tree that keeps every value's place in the file.
//!
//! Each accessor names the key it reads, so every error can say `FILE:LINE:COL: key:
//! reason`. Tables remember which keys were read; [`Table::finish`] turns any other key
//! into an "unknown key" error with a "did you mean" hint.

use crate::error::InputError;
use std::cell::RefCell;
use std::ops::Range;
use toml::Spanned;
use toml::de::{DeTable, DeValue};

mod plausible;
mod value;

/// Largest length (m) a scene may give: 1000 km.
pub const MAX_LENGTH: f64 = 1e6;

/// The file being read: its name for messages and where its lines start.
pub struct Doc {
    name: String,
    line_starts: Vec<usize>,
    text_len: usize,
    text: String,
    /// Warnings about values read so far, each `FILE:LINE:COL: key: reason`.
    warnings: RefCell<Vec<String>>,
}

impl Doc {
    /// A document called `name` (as it should appear in messages) with contents `text`.
    pub fn new(name: &str, text: &str) -> Self {
        let mut line_starts = vec![0];
        line_starts.extend(text.match_indices('\n').map(|(i, _)| i + 1));
        Doc {
            name: name.to_string(),
            line_starts,
            text_len: text.len(),
            text: text.to_string(),
            warnings: RefCell::new(Vec::new()),
        }
    }

    /// Records a warning at byte span `span` about `key` (once per place and text).
    pub fn warn(&self, span: &Range<usize>, key: &str, reason: impl Into<String>) {
        let w = self.error(span, key, reason).to_string();
        let mut all = self.warnings.borrow_mut();
        if !all.contains(&w) {
            all.push(w);
        }
    }

    /// The warnings recorded so far, in the order they were found; they are removed.
    pub fn take_warnings(&self) -> Vec<String> {
        self.warnings.take()
    }

    /// One-based line and column (in characters) of byte `offset`.
    pub fn line_col(&self, offset: usize) -> (usize, usize) {
        let offset = offset.min(self.text_len);
        let line = self.line_starts.partition_point(|&s| s <= offset) - 1;
        let start = self.line_starts[line];
        let col = self.text[start..offset].chars().count();
        (line + 1, col + 1)
    }

    /// An error at byte span `span` about `key`.
    pub fn error(&self, span: &Range<usize>, key: &str, reason: impl Into<String>) -> InputError {
        let (line, col) = self.line_col(span.start);
        InputError {
            file: self.name.clone(),
            line,
            col,
            key: key.to_string(),
            reason: reason.into(),
        }
    }
}

/// A located TOML value with the dotted key path that led to it.
#[derive(Clone)]
pub struct Value<'a, 'i> {
    doc: &'a Doc,
    key: String,
    span: Range<usize>,
    value: &'a DeValue<'i>,
}

/// A located TOML table whose keys are tracked.
pub struct Table<'a, 'i> {
    doc: &'a Doc,
    key: String,
    span: Range<usize>,
    table: &'a DeTable<'i>,
    read: RefCell<Vec<String>>,
    valid: RefCell<Vec<String>>,
}

impl<'a, 'i> Table<'a, 'i> {
    /// Declares keys that are valid in this table (whether or not this kind reads
    /// them), so that a missing key is never blamed on a present, valid one.
    pub fn declare(&self, keys: &[&str]) {
        self.valid
            .borrow_mut()
            .extend(keys.iter().map(|k| k.to_string()));
    }

    /// The document's root table.
    pub fn root(doc: &'a Doc, root: &'a Spanned<DeTable<'i>>) -> Self {
        Table::new(doc, String::new(), root.span(), root.get_ref())
    }

    fn new(doc: &'a Doc, key: String, span: Range<usize>, table: &'a DeTable<'i>) -> Self {
        Table {
            doc,
            key,
            span,
            table,
            read: RefCell::new(Vec::new()),
            valid: RefCell::new(Vec::new()),
        }
    }

    /// The key path of this table (`source[2]`).
    pub fn key(&self) -> &str {
        &self.key
    }

    /// The full key path of a key in this table.
    /// A key that is not a bare TOML key (empty, or with other characters than
    /// letters, digits, `_` and `-`) is shown quoted, as it is written in TOML.
    pub fn path_of(&self, name: &str) -> String {
        let bare = !name.is_empty()
            && name
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-');
        let name = if bare {
            name.to_string()
        } else {
            format!("{name:?}")
        };
        if self.key.is_empty() {
            name
        } else {
            format!("{}.{}", self.key, name)
        }
    }

    /// An error about the table as a whole (located at its header).
    pub fn error(&self, reason: impl Into<String>) -> InputError {
        self.doc.error(&self.span, &self.key, reason)
    }

    /// An error about `name` in this table, at the key if present, else at the table.
    pub fn error_at(&self, name: &str, reason: impl Into<String>) -> InputError {
        let span = self
            .table
            .get_key_value(name)
            .map(|(k, _)| k.span())
            .unwrap_or_else(|| self.span.clone());
        self.doc.error(&span, &self.path_of(name), reason)
    }

    /// The value of `name` if present; the key counts as read.
    pub fn get(&self, name: &str) -> Option<Value<'a, 'i>> {
        self.read.borrow_mut().push(name.to_string());
        let v = self.table.get(name)?;
        Some(Value {
            doc: self.doc,
            key: self.path_of(name),
            span: v.span(),
            value: v.get_ref(),
        })
    }

    /// The value of `name`, or a "missing key" error naming `what` it should hold. When
    /// a present key looks like a misspelling of `name`, the error points at it instead.
    pub fn require(&self, name: &str, what: &str) -> Result<Value<'a, 'i>, InputError> {
        if let Some(v) = self.get(name) {
            return Ok(v);
        }
        let valid = self.valid.borrow();
        let read = self.read.borrow();
        let typo = self
            .table
            .keys()
            .map(|k| k.get_ref().as_ref())
            .filter(|p: &&str| !valid.iter().any(|v| v == p) && !read.iter().any(|r| r == p))
            .filter(|p| did_you_mean(p, &[name]).is_some())
            .min_by_key(|p| strsim::damerau_levenshtein(p, name));
        if let Some(typo) = typo
            && let Some((k, _)) = self.table.get_key_value(typo)
        {
            return Err(self.doc.error(
                &k.span(),
                &self.path_of(typo),
                format!("unknown key `{typo}`; did you mean `{name}` ({what})?"),
            ));
        }
        Err(self.doc.error(
            &self.span,
            &self.path_of(name),
            format!("missing key `{name}` ({what})"),
        ))
    }

    /// The value of `name`, which must be one of `options`; the first option when the
    /// key is absent.
    pub fn one_of(&self, name: &str, options: &[&'static str]) -> Result<&'static str, InputError> {
        let Some(v) = self.get(name) else {
            return Ok(options[0]);
        };
        let text = v.string()?;
        options.iter().copied().find(|o| *o == text).ok_or_else(|| {
            let list: Vec<String> = options.iter().map(|o| format!("\"{o}\"")).collect();
            v.error(format!(
                "unknown {name} \"{text}\"; expected {}",
                list.join(" or ")
            ))
        })
    }

    /// Whether `name` is present (does not count as read).
    pub fn has(&self, name: &str) -> bool {
        self.table.contains_key(name)
    }

    /// Refuses the first of `keys` present in this table: each names a feature a user
    /// may expect but the program does not model, and `reason` says so and what to do
    /// instead. The error is at the key, not an "unknown key" one.
    pub fn refuse_unmodelled(&self, keys: &[&str], reason: &str) -> Result<(), InputError> {
        match self
            .table
            .iter()
            .find(|(k, _)| keys.contains(&k.get_ref().as_ref()))
        {
            Some((k, _)) => {
                let name: &str = k.get_ref().as_ref();
                Err(self.doc.error(&k.span(), &self.path_of(name), reason))
            }
            None => Ok(()),
        }
    }

    /// Fails on the first key that was never read. `also` lists keys valid elsewhere in
    /// this kind of table (other kinds' keys) to explain why they do not apply here,
    /// with `context` saying what the table is (`kind "loop"`).
    pub fn finish(&self, also: &[&str], context: &str) -> Result<(), InputError> {
        let read = self.read.borrow();
        for (k, _) in self.table.iter() {
            let name: &str = k.get_ref().as_ref();
            if read.iter().any(|r| r == name) {
                continue;
            }
            let reason = if also.contains(&name) {
                format!("`{name}` is not a key of {context}")
            } else {
                let mut candidates: Vec<&str> = read.iter().map(String::as_str).collect();
                candidates.extend_from_slice(also);
                match did_you_mean(name, &candidates) {
                    Some(s) => format!("unknown key `{name}` in {context}; did you mean `{s}`?"),
                    None => format!(
                        "unknown key `{name}` in {context} (keys read here: {})",
                        read.join(", ")
                    ),
                }
            };
            return Err(self.doc.error(&k.span(), &self.path_of(name), reason));
        }
        Ok(())
    }
}

/// The closest candidate to a misspelt key, if it is close enough to be a typo.
pub fn did_you_mean<'c>(name: &str, candidates: &[&'c str]) -> Option<&'c str> {
    candidates
        .iter()
        .map(|c| (strsim::damerau_levenshtein(name, c), *c))
        .filter(|(d, c)| *d <= 2.max(c.len() / 3) && *d < c.len())
        .min_by_key(|(d, _)| *d)
        .map(|(_, c)| c)
}
