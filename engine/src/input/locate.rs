//! Mapping between TOML key paths, byte spans and line numbers, so that
//! every input error can name the file, the key path and the line.

use toml::de::{DeTable, DeValue};
use toml::Spanned;

/// One step of a key path: a table key or an array index.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum PathStep {
    /// A key of a table.
    Key(String),
    /// An index into an array (0-based).
    Index(usize),
}

/// A key path such as `spans[2].sag`.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct KeyPath(pub Vec<PathStep>);

impl KeyPath {
    /// The root of the document.
    pub fn root() -> Self {
        Self(Vec::new())
    }

    /// Parses a dotted path with optional indices, e.g. `spans[2].sag`.
    pub fn parse(text: &str) -> Self {
        let mut steps = Vec::new();
        for part in text.split('.').filter(|p| !p.is_empty()) {
            let mut rest = part;
            if let Some(open) = rest.find('[') {
                steps.push(PathStep::Key(rest[..open].to_string()));
                rest = &rest[open..];
                while let Some(stripped) = rest.strip_prefix('[') {
                    let Some(close) = stripped.find(']') else {
                        break;
                    };
                    if let Ok(i) = stripped[..close].parse() {
                        steps.push(PathStep::Index(i));
                    }
                    rest = &stripped[close + 1..];
                }
            } else {
                steps.push(PathStep::Key(rest.to_string()));
            }
        }
        Self(steps)
    }
}

impl std::fmt::Display for KeyPath {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.0.is_empty() {
            return write!(f, "(document root)");
        }
        for (i, step) in self.0.iter().enumerate() {
            match step {
                PathStep::Key(k) if i == 0 => write!(f, "{k}")?,
                PathStep::Key(k) => write!(f, ".{k}")?,
                PathStep::Index(n) => write!(f, "[{n}]")?,
            }
        }
        Ok(())
    }
}

/// 1-based line number of a byte offset in `text`.
pub fn line_of(text: &str, offset: usize) -> usize {
    let end = offset.min(text.len());
    text.as_bytes()[..end].iter().filter(|&&b| b == b'\n').count() + 1
}

/// A parsed document with spans, used only to locate keys.
pub struct SpanIndex<'i> {
    root: Spanned<DeTable<'i>>,
}

impl<'i> SpanIndex<'i> {
    /// Parses `text`; `None` when it is not valid TOML (the serde pass reports that).
    pub fn new(text: &'i str) -> Option<Self> {
        DeTable::parse(text).ok().map(|root| Self { root })
    }

    /// Byte span of the value at `path` (or of the deepest existing
    /// ancestor when the path does not exist, e.g. for a missing key).
    pub fn span_of(&self, path: &KeyPath) -> std::ops::Range<usize> {
        let mut span = self.root.span();
        let mut table: Option<&DeTable<'i>> = Some(self.root.get_ref());
        let mut array: Option<&[Spanned<DeValue<'i>>]> = None;
        for step in &path.0 {
            let next: Option<&Spanned<DeValue<'i>>> = match (step, table, array) {
                (PathStep::Key(k), Some(t), _) => {
                    t.iter().find(|(key, _)| key.get_ref().as_ref() == k.as_str()).map(|(key, v)| {
                        // Point at the key itself: its line is where the user wrote it.
                        span = key.span();
                        v
                    })
                }
                (PathStep::Index(i), _, Some(a)) => a.get(*i),
                _ => None,
            };
            let Some(value) = next else { break };
            if matches!(step, PathStep::Index(_)) {
                span = value.span();
            }
            table = value.get_ref().as_table();
            array = value.get_ref().as_array().map(|a| &a[..]);
        }
        span
    }

    /// Key path of the value or key at byte `offset`.
    ///
    /// Tables opened by `[header]` lines carry only the header's span in the
    /// parsed tree, so the enclosing table is found from the header lines
    /// of the text, and the key from the line at `offset`.
    pub fn path_at(&self, text: &str, offset: usize) -> KeyPath {
        let offset = offset.min(text.len());
        let mut path = KeyPath::root();
        let mut counts: std::collections::BTreeMap<String, usize> = std::collections::BTreeMap::new();
        let mut line_start = 0;
        let mut body_key: Option<String> = None;
        for line in text.split_inclusive('\n') {
            let line_end = line_start + line.len();
            let trimmed = strip_comment(line).trim();
            if line_start > offset {
                break;
            }
            if let Some(header) = trimmed.strip_prefix("[[").and_then(|h| h.strip_suffix("]]")) {
                let n = counts.entry(header.trim().to_string()).or_insert(0);
                *n += 1;
                path = KeyPath(split_dotted(header).into_iter().map(PathStep::Key).collect());
                path.0.push(PathStep::Index(*n - 1));
                body_key = None;
            } else if let Some(header) = trimmed.strip_prefix('[').and_then(|h| h.strip_suffix(']')) {
                path = KeyPath(split_dotted(header).into_iter().map(PathStep::Key).collect());
                body_key = None;
            } else if offset < line_end {
                // The line holding `offset`: its leading key, then an inner
                // inline-table key before the offset, if any.
                let before = &text[line_start..offset];
                if let Some(eq) = line.find('=') {
                    body_key = Some(line[..eq].trim().to_string());
                    let inner = before.rfind('{').map(|b| &before[b + 1..]);
                    if let Some(inner) = inner {
                        if let Some(eq2) = inner.rfind('=') {
                            let key_part = inner[..eq2].rsplit([',', '{']).next().unwrap_or("").trim();
                            if !key_part.is_empty() {
                                body_key = Some(format!("{}.{key_part}", line[..eq].trim()));
                            }
                        }
                    }
                } else {
                    body_key = Some(before.trim().to_string()).filter(|k| !k.is_empty());
                }
            }
            line_start = line_end;
        }
        if let Some(key) = body_key {
            path.0.extend(split_dotted(&key).into_iter().map(PathStep::Key));
        }
        path
    }
}

fn strip_comment(line: &str) -> &str {
    // Good enough for headers and keys: a `#` outside quotes starts a comment.
    let mut in_str = false;
    for (i, c) in line.char_indices() {
        match c {
            '"' => in_str = !in_str,
            '#' if !in_str => return &line[..i],
            _ => {}
        }
    }
    line
}

fn split_dotted(key: &str) -> Vec<String> {
    key.split('.').map(|k| k.trim().trim_matches('"').to_string()).filter(|k| !k.is_empty()).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    const DOC: &str =
        "[glaze]\nschema_version = 1\n\n[[spans]]\nfrom = \"A\"\n\n[[spans]]\nfrom = \"B\"\nsag = 12.0\n";

    #[test]
    fn span_of_array_of_tables_key_gives_its_line() {
        let index = SpanIndex::new(DOC).unwrap();
        let span = index.span_of(&KeyPath::parse("spans[1].sag"));
        assert_eq!(line_of(DOC, span.start), 9);
        let span = index.span_of(&KeyPath::parse("glaze.schema_version"));
        assert_eq!(line_of(DOC, span.start), 2);
    }

    #[test]
    fn path_at_offset_round_trips() {
        let index = SpanIndex::new(DOC).unwrap();
        let offset = DOC.find("12.0").unwrap();
        assert_eq!(index.path_at(DOC, offset).to_string(), "spans[1].sag");
        let offset = DOC.find("[glaze]").unwrap();
        assert_eq!(index.path_at(DOC, offset).to_string(), "glaze");
        let inline = "[load_case]\nice = { thickness = \"x\" }\n";
        let index = SpanIndex::new(inline).unwrap();
        let offset = inline.find("\"x\"").unwrap();
        assert_eq!(index.path_at(inline, offset).to_string(), "load_case.ice.thickness");
    }

    #[test]
    fn key_path_parse_and_display() {
        let p = KeyPath::parse("a.b[3].c");
        assert_eq!(p.to_string(), "a.b[3].c");
    }
}
