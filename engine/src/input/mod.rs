//! Reading input files in two stages: [`schema`] mirrors what the user
//! typed (serde, unknown keys rejected), [`validate`] turns it into a
//! [`crate::SectionSpec`] whose every value has been checked.

pub mod locate;
mod plausibility;
pub mod post;
pub mod schema;
mod validate;
mod validate_section;

pub(crate) use validate::round_section;

use crate::error::{InputError, InputErrorKind, InputWarning};
use crate::registry::ElementRegistry;
use crate::spec::SectionSpec;
use locate::{line_of, KeyPath, SpanIndex};
use std::path::Path;

/// Reads, parses and validates an input file.
pub fn load(path: &Path, registry: &ElementRegistry) -> Result<SectionSpec, InputError> {
    let text = std::fs::read_to_string(path).map_err(|e| InputError {
        file: path.to_path_buf(),
        line: 0,
        key: "(file)".into(),
        message: format!("cannot read the input file: {e}"),
        kind: InputErrorKind::Unreadable,
    })?;
    load_str(path, &text, registry)
}

/// Parses and validates input text that came from `path`. Legal but
/// implausible values are kept as located warnings in
/// [`SectionSpec::warnings`].
pub fn load_str(path: &Path, text: &str, registry: &ElementRegistry) -> Result<SectionSpec, InputError> {
    let locator = Locator::new(path, text);
    let raw: schema::RawInput = toml::from_str(text).map_err(|e| locator.toml_error(&e))?;
    validate::validate(raw, &locator, registry)
}

/// Turns key paths and byte spans into located [`InputError`]s.
pub struct Locator<'a> {
    path: &'a Path,
    text: &'a str,
    index: Option<SpanIndex<'a>>,
}

impl<'a> Locator<'a> {
    /// Indexes `text` (read from `path`).
    pub fn new(path: &'a Path, text: &'a str) -> Self {
        Self { path, text, index: SpanIndex::new(text) }
    }

    /// The full input text.
    pub fn text(&self) -> &'a str {
        self.text
    }

    /// The input file path.
    pub fn path(&self) -> &'a Path {
        self.path
    }

    /// 1-based line of `key` (or of its nearest existing ancestor).
    pub fn line(&self, key: &str) -> usize {
        match &self.index {
            Some(index) => line_of(self.text, index.span_of(&KeyPath::parse(key)).start),
            None => 1,
        }
    }

    /// An error at `key`.
    pub fn error(&self, kind: InputErrorKind, key: &str, message: impl Into<String>) -> InputError {
        InputError {
            file: self.path.to_path_buf(),
            line: self.line(key),
            key: key.to_string(),
            message: message.into(),
            kind,
        }
    }

    /// A warning at `key`.
    pub fn warning(&self, key: &str, message: impl Into<String>) -> InputWarning {
        InputWarning {
            file: self.path.to_path_buf(),
            line: self.line(key),
            key: key.to_string(),
            message: message.into(),
        }
    }

    /// A located error for a TOML parse or schema error of this text.
    pub fn toml_error(&self, e: &toml::de::Error) -> InputError {
        let message = e.message().trim().to_string();
        let offset = e.span().map(|s| s.start).unwrap_or(0);
        let line = line_of(self.text, offset);
        let Some(index) = &self.index else {
            return InputError {
                file: self.path.to_path_buf(),
                line,
                key: "(syntax)".into(),
                message: format!("not valid TOML: {message}"),
                kind: InputErrorKind::Syntax,
            };
        };
        let mut key = index.path_at(self.text, offset);
        let kind = if message.starts_with("unknown field") {
            InputErrorKind::UnknownKey
        } else if message.starts_with("missing field") {
            if let Some(name) = message.split('`').nth(1) {
                key.0.push(locate::PathStep::Key(name.to_string()));
            }
            InputErrorKind::MissingKey
        } else {
            InputErrorKind::InvalidValue
        };
        if kind == InputErrorKind::UnknownKey {
            // The span points at the unknown key itself; name it in the path.
            if let Some(name) = message.split('`').nth(1) {
                if !matches!(key.0.last(), Some(locate::PathStep::Key(k)) if k == name) {
                    key.0.push(locate::PathStep::Key(name.to_string()));
                }
            }
        }
        InputError { file: self.path.to_path_buf(), line, key: key.to_string(), message, kind }
    }
}
