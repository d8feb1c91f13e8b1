//! Reading the CSV text of a coefficient table into rows with line numbers.
//!
//! Format: UTF-8 text; blank lines and lines whose first non-blank character
//! is `#` are skipped, except the metadata comment
//! `# reference_diameter = <number>` (metres). The first other line is the
//! header: comma-separated column names, matched after trimming blanks and
//! surrounding double quotes, ignoring ASCII case. `alpha_deg`, `cd` and `cl`
//! are required, `cm` is optional, other columns are ignored. Every following
//! non-comment line is a data row with as many fields as the header. Quoted
//! fields with embedded commas are not supported (a numeric table needs none).

use std::path::Path;

use super::TableError;

/// Name of the metadata key giving the reference diameter (m).
const DIAMETER_KEY: &str = "reference_diameter";

/// The rows of a table as read, before any check on their order.
#[derive(Debug)]
pub(super) struct RawTable {
    /// 1-based line of the header row.
    pub header_line: usize,
    /// α of each row, in degrees as written.
    pub alpha_deg: Vec<f64>,
    /// C_D, C_L, C_M of each row (C_M zero when the column is absent).
    pub values: [Vec<f64>; 3],
    /// Whether a `cm` column is present.
    pub has_moment: bool,
    /// 1-based line of each row.
    pub lines: Vec<usize>,
    /// `reference_diameter` from the metadata comment, with its line.
    pub diameter: Option<(f64, usize)>,
}

/// Parse the table text; `path` names it in errors.
pub(super) fn parse(text: &str, path: &Path) -> Result<RawTable, TableError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut diameter: Option<(f64, usize)> = None;
    let mut header: Option<Columns> = None;
    let mut raw = RawTable {
        header_line: 0,
        alpha_deg: Vec::new(),
        values: [Vec::new(), Vec::new(), Vec::new()],
        has_moment: false,
        lines: Vec::new(),
        diameter: None,
    };
    let mut last_line = 0;
    for (index, line_text) in text.lines().enumerate() {
        let line = index + 1;
        last_line = line;
        let trimmed = line_text.trim();
        if trimmed.is_empty() {
            continue;
        }
        if let Some(comment) = trimmed.strip_prefix('#') {
            read_metadata(comment, line, path, &mut diameter)?;
            continue;
        }
        let fields: Vec<&str> = trimmed.split(',').map(clean).collect();
        let Some(columns) = header else {
            let columns = read_header(&fields, line, path)?;
            raw.header_line = line;
            raw.has_moment = columns.cm.is_some();
            header = Some(columns);
            continue;
        };
        if fields.len() != columns.width {
            return Err(TableError::FieldCount {
                path: path.to_path_buf(),
                line,
                header_line: raw.header_line,
                expected: columns.width,
                found: fields.len(),
            });
        }
        raw.alpha_deg.push(number(fields[columns.alpha], "alpha_deg", line, path)?);
        raw.values[0].push(number(fields[columns.cd], "cd", line, path)?);
        raw.values[1].push(number(fields[columns.cl], "cl", line, path)?);
        let cm = match columns.cm {
            Some(col) => number(fields[col], "cm", line, path)?,
            None => 0.0,
        };
        raw.values[2].push(cm);
        raw.lines.push(line);
    }
    if header.is_none() {
        return Err(TableError::NoHeader { path: path.to_path_buf(), line: last_line });
    }
    raw.diameter = diameter;
    Ok(raw)
}

/// Trim blanks and one pair of surrounding double quotes.
fn clean(field: &str) -> &str {
    let f = field.trim();
    f.strip_prefix('"').and_then(|f| f.strip_suffix('"')).map_or(f, str::trim)
}

/// Read a `reference_diameter = value` comment; other comments are ignored.
fn read_metadata(
    comment: &str,
    line: usize,
    path: &Path,
    diameter: &mut Option<(f64, usize)>,
) -> Result<(), TableError> {
    let Some((key, value)) = comment.split_once('=') else {
        return Ok(());
    };
    if !key.trim().eq_ignore_ascii_case(DIAMETER_KEY) {
        return Ok(());
    }
    let text = value.trim();
    let value: f64 = text.parse().map_err(|_| TableError::NotANumber {
        path: path.to_path_buf(),
        line,
        column: DIAMETER_KEY.to_string(),
        text: text.to_string(),
    })?;
    if !(value.is_finite() && value > 0.0) {
        return Err(TableError::InvalidReferenceDiameter {
            path: path.to_path_buf(),
            line: Some(line),
            value,
        });
    }
    if let Some((other, other_line)) = *diameter {
        return Err(TableError::ConflictingReferenceDiameter {
            path: path.to_path_buf(),
            line,
            value,
            other,
            other_origin: format!("on line {other_line} (give it once)"),
        });
    }
    *diameter = Some((value, line));
    Ok(())
}

/// Positions of the known columns in the header row.
#[derive(Clone, Copy, Debug)]
struct Columns {
    alpha: usize,
    cd: usize,
    cl: usize,
    cm: Option<usize>,
    /// Number of fields of the header (every row must have as many).
    width: usize,
}

/// Locate the columns in the header row.
fn read_header(fields: &[&str], line: usize, path: &Path) -> Result<Columns, TableError> {
    let names: Vec<String> = fields.iter().map(|f| f.to_ascii_lowercase()).collect();
    for (i, name) in names.iter().enumerate() {
        if !name.is_empty() && names[..i].contains(name) {
            return Err(TableError::DuplicateColumn { path: path.to_path_buf(), line, column: name.clone() });
        }
    }
    let find = |column: &str| names.iter().position(|n| n == column);
    let require = |column: &str| {
        find(column).ok_or_else(|| TableError::MissingColumn {
            path: path.to_path_buf(),
            line,
            column: column.to_string(),
        })
    };
    Ok(Columns {
        alpha: require("alpha_deg")?,
        cd: require("cd")?,
        cl: require("cl")?,
        cm: find("cm"),
        width: fields.len(),
    })
}

/// Parse one finite number.
fn number(text: &str, column: &str, line: usize, path: &Path) -> Result<f64, TableError> {
    let value: f64 = text.parse().map_err(|_| TableError::NotANumber {
        path: path.to_path_buf(),
        line,
        column: column.to_string(),
        text: text.to_string(),
    })?;
    if !value.is_finite() {
        return Err(TableError::NonFinite {
            path: path.to_path_buf(),
            line,
            column: column.to_string(),
            value,
        });
    }
    Ok(value)
}
