//! Generating the input file of each case from the base input: the base
//! text edited in place (comments and layout kept, `toml_edit`) with the
//! case's wind speed and direction, ice table, layout and duration, and
//! every coefficient-table path made absolute so the case file reads the
//! same tables wherever it lies.

use crate::spec::RawOverlay;
use crate::StudyError;
use glaze_engine::input::Locator;
use glaze_engine::InputErrorKind;
use std::path::Path;
use toml_edit::{value, DocumentMut, Item};

/// The key every coefficient-table path sits under, in input and study files.
const TABLE_KEY: &str = "aero_table";

/// The ice of a case.
#[derive(Debug, Clone)]
pub enum IceCase {
    /// The base's `[load_case.ice]`, as it is.
    Base,
    /// No ice.
    None,
    /// This table replaces `[load_case.ice]`.
    Table(toml::Table),
}

/// The device layout of a case.
#[derive(Debug, Clone)]
pub enum LayoutCase {
    /// A layout of the base (or `none`).
    Base(String),
    /// A layout of the study: its name and its devices.
    Overlay {
        /// Layout name.
        name: String,
        /// The devices, as tables of a layout's `devices` list.
        devices: Vec<toml::Table>,
        /// Where each device comes from, for error messages.
        origin: Vec<DeviceOrigin>,
    },
}

/// Where a device of an overlay comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DeviceOrigin {
    /// Position (0-based) in the from-layout of the base.
    Base(usize),
    /// Position (0-based) in the overlay's `add` list.
    Added(usize),
}

impl LayoutCase {
    /// Layout name.
    pub fn name(&self) -> &str {
        match self {
            LayoutCase::Base(n) | LayoutCase::Overlay { name: n, .. } => n,
        }
    }
}

/// What a case changes in the base.
pub struct CaseChange<'a> {
    /// Case identifier.
    pub id: &'a str,
    /// Study name.
    pub study: &'a str,
    /// Folder of the base file (its relative paths start there).
    pub base_dir: &'a Path,
    /// Mean wind speed, m/s.
    pub wind_speed: f64,
    /// Wind direction, degrees.
    pub wind_direction: f64,
    /// Ice.
    pub ice: &'a IceCase,
    /// Layout.
    pub layout: &'a LayoutCase,
    /// Simulated time, s (`None`: the base's).
    pub duration: Option<f64>,
}

/// Makes every relative `aero_table` path in `table` (at any depth) absolute from `dir`.
pub fn absolute_paths(table: &toml::Table, dir: &Path) -> toml::Table {
    fn fix(v: &mut toml::Value, dir: &Path, is_path: bool) {
        match v {
            toml::Value::String(s) if is_path && Path::new(s.as_str()).is_relative() => {
                *s = dir.join(s.as_str()).to_string_lossy().into_owned();
            }
            toml::Value::Table(t) => {
                for (k, v) in t.iter_mut() {
                    fix(v, dir, k == TABLE_KEY);
                }
            }
            toml::Value::Array(a) => a.iter_mut().for_each(|v| fix(v, dir, false)),
            _ => {}
        }
    }
    let mut v = toml::Value::Table(table.clone());
    fix(&mut v, dir, false);
    match v {
        toml::Value::Table(t) => t,
        _ => table.clone(),
    }
}

fn absolute_paths_edit(item: &mut Item, dir: &Path) {
    fn fix_value(v: &mut toml_edit::Value, dir: &Path, is_path: bool) {
        match v {
            toml_edit::Value::String(s) if is_path && Path::new(s.value().as_str()).is_relative() => {
                let abs = dir.join(s.value()).to_string_lossy().into_owned();
                let decor = s.decor().clone();
                *s = toml_edit::Formatted::new(abs);
                *s.decor_mut() = decor;
            }
            toml_edit::Value::InlineTable(t) => {
                for (k, v) in t.iter_mut() {
                    fix_value(v, dir, k.get() == TABLE_KEY);
                }
            }
            toml_edit::Value::Array(a) => a.iter_mut().for_each(|v| fix_value(v, dir, false)),
            _ => {}
        }
    }
    match item {
        Item::Value(v) => fix_value(v, dir, false),
        Item::Table(t) => {
            for (k, it) in t.iter_mut() {
                match it {
                    Item::Value(v) => fix_value(v, dir, k.get() == TABLE_KEY),
                    other => absolute_paths_edit(other, dir),
                }
            }
        }
        Item::ArrayOfTables(a) => {
            for t in a.iter_mut() {
                for (k, it) in t.iter_mut() {
                    match it {
                        Item::Value(v) => fix_value(v, dir, k.get() == TABLE_KEY),
                        other => absolute_paths_edit(other, dir),
                    }
                }
            }
        }
        Item::None => {}
    }
}

/// The base input, parsed twice: as an editable document and as plain values.
pub struct BaseInput {
    path: std::path::PathBuf,
    doc: DocumentMut,
    values: toml::Table,
}

impl BaseInput {
    /// Parses the base text (syntax only; the engine checks each case in full).
    pub fn parse(path: &Path, text: &str) -> Result<Self, StudyError> {
        let loc = Locator::new(path, text);
        let values: toml::Table = toml::from_str(text).map_err(|e| StudyError::Input(loc.toml_error(&e)))?;
        let doc: DocumentMut = text.parse().map_err(|e: toml_edit::TomlError| {
            StudyError::Input(glaze_engine::InputError {
                file: path.to_path_buf(),
                line: 1,
                key: "(syntax)".into(),
                message: format!("not valid TOML: {e}"),
                kind: InputErrorKind::Syntax,
            })
        })?;
        let base = Self { path: path.to_path_buf(), doc, values };
        if base.get(&["dynamics"]).is_none() {
            return Err(StudyError::Input(loc.error(
                InputErrorKind::MissingKey,
                "dynamics",
                "a study runs every case in time: the base input needs a [dynamics] table",
            )));
        }
        Ok(base)
    }

    fn get(&self, keys: &[&str]) -> Option<&toml::Value> {
        let mut t = &self.values;
        for (i, k) in keys.iter().enumerate() {
            let v = t.get(*k)?;
            if i + 1 == keys.len() {
                return Some(v);
            }
            t = v.as_table()?;
        }
        None
    }

    /// Whether the base has a `[load_case.wind]` table.
    pub fn has_wind(&self) -> bool {
        matches!(self.get(&["load_case", "wind"]), Some(toml::Value::Table(_)))
    }

    /// The base wind direction, degrees.
    pub fn wind_direction(&self) -> Option<f64> {
        let v = self.get(&["load_case", "wind", "direction"])?;
        v.as_float().or_else(|| v.as_integer().map(|i| i as f64))
    }

    /// Names of the base's layouts.
    pub fn layout_names(&self) -> Vec<String> {
        match self.get(&["layouts"]) {
            Some(toml::Value::Table(t)) => t.keys().cloned().collect(),
            _ => Vec::new(),
        }
    }

    /// The layout the base models (`none` without `[section] layout`).
    pub fn current_layout(&self) -> String {
        self.get(&["section", "layout"]).and_then(|v| v.as_str()).unwrap_or("none").to_string()
    }

    /// The devices of a base layout (`none`: no devices), with absolute paths.
    pub fn layout_devices(&self, name: &str) -> Option<Vec<toml::Table>> {
        if name == "none" {
            return Some(Vec::new());
        }
        let layout = self.get(&["layouts", name])?.as_table()?;
        let dir = self.path.parent().unwrap_or(Path::new("."));
        let devices = match layout.get("devices") {
            Some(toml::Value::Array(a)) => {
                a.iter().filter_map(|d| d.as_table()).map(|t| absolute_paths(t, dir)).collect()
            }
            _ => Vec::new(),
        };
        Some(devices)
    }

    /// The input file of one case.
    pub fn case_input(&self, c: &CaseChange<'_>) -> Result<String, StudyError> {
        let mut doc = self.doc.clone();
        let fail = |key: &str, message: String| {
            StudyError::Input(glaze_engine::InputError {
                file: self.path.clone(),
                line: 0,
                key: key.into(),
                message,
                kind: InputErrorKind::InvalidValue,
            })
        };
        {
            let wind = doc["load_case"]["wind"]
                .as_table_like_mut()
                .ok_or_else(|| fail("load_case.wind", "not a table".into()))?;
            wind.insert("speed", value(c.wind_speed));
            wind.insert("direction", value(c.wind_direction));
        }
        let load_case =
            doc["load_case"].as_table_like_mut().ok_or_else(|| fail("load_case", "not a table".into()))?;
        let name = load_case.get("name").and_then(|v| v.as_str()).unwrap_or("").to_string();
        let label = if name.is_empty() { c.id.to_string() } else { format!("{name} | {}", c.id) };
        load_case.insert("name", value(label));
        match c.ice {
            IceCase::Base => {}
            IceCase::None => {
                load_case.remove("ice");
            }
            IceCase::Table(t) => {
                load_case.insert("ice", inline_item(t)?);
            }
        }
        if let Some(d) = c.duration {
            doc["dynamics"]
                .as_table_like_mut()
                .ok_or_else(|| fail("dynamics", "not a table".into()))?
                .insert("duration", value(d));
        }
        if let LayoutCase::Overlay { name, devices, .. } = c.layout {
            let mut list = toml_edit::Array::new();
            for d in devices {
                match inline_item(d)? {
                    Item::Value(v) => list.push_formatted(v.decorated("\n  ", "")),
                    _ => return Err(fail("layouts", "a device is not a table".into())),
                }
            }
            list.set_trailing("\n");
            list.set_trailing_comma(true);
            if doc.get("layouts").is_none() {
                let mut t = toml_edit::Table::new();
                t.set_implicit(true);
                doc.insert("layouts", Item::Table(t));
            }
            let mut layout = toml_edit::Table::new();
            layout.insert("devices", value(list));
            doc["layouts"]
                .as_table_mut()
                .ok_or_else(|| fail("layouts", "not a table".into()))?
                .insert(name, Item::Table(layout));
        }
        if doc.get("section").is_none() && c.layout.name() != "none" {
            doc.insert("section", Item::Table(toml_edit::Table::new()));
        }
        if let Some(section) = doc.get_mut("section").and_then(|s| s.as_table_like_mut()) {
            section.insert("layout", value(c.layout.name()));
        }
        for (_, item) in doc.iter_mut() {
            absolute_paths_edit(item, c.base_dir);
        }
        Ok(format!(
            "# Case {} of study \"{}\", generated by glaze sweep from {}\n# (wind, ice, layout and duration set for the case; table paths made absolute).\n{}",
            c.id,
            c.study.replace('\n', " "),
            self.path.display(),
            doc
        ))
    }
}

/// A table as an inline-table item.
fn inline_item(t: &toml::Table) -> Result<Item, StudyError> {
    let text = toml::to_string(&toml::Value::Table(t.clone()))
        .map_err(|e| StudyError::Internal(format!("cannot write a table: {e}")))?;
    let doc: DocumentMut =
        text.parse().map_err(|e| StudyError::Internal(format!("cannot re-read a table: {e}")))?;
    let mut inline = doc.as_table().clone().into_inline_table();
    inline.fmt();
    Ok(Item::Value(toml_edit::Value::InlineTable(inline)))
}

/// A checked layout overlay.
pub struct Overlay<'a> {
    raw: &'a RawOverlay,
}

impl<'a> Overlay<'a> {
    /// Checks positions against a from-layout of `count` devices.
    pub fn check(
        raw: &'a RawOverlay,
        count: usize,
        key: &str,
        loc: &Locator<'_>,
    ) -> Result<Self, StudyError> {
        let bad = |k: String, m: String| StudyError::Input(loc.error(InputErrorKind::InvalidValue, &k, m));
        for (i, &p) in raw.remove.iter().enumerate() {
            if p == 0 || p > count {
                return Err(bad(
                    format!("{key}.remove[{i}]"),
                    format!("device {p}: the from-layout has devices 1…{count}"),
                ));
            }
            if raw.remove[..i].contains(&p) {
                return Err(bad(format!("{key}.remove[{i}]"), format!("device {p} is removed twice")));
            }
        }
        for (i, m) in raw.moves.iter().enumerate() {
            let k = format!("{key}.move[{i}]");
            if m.device == 0 || m.device > count {
                return Err(bad(
                    format!("{k}.device"),
                    format!("device {}: the from-layout has devices 1…{count}", m.device),
                ));
            }
            if raw.remove.contains(&m.device) {
                return Err(bad(format!("{k}.device"), format!("device {} is also removed", m.device)));
            }
            if m.span.is_none() && m.distance.is_none() {
                return Err(bad(k, "give a new `span`, `distance` or both".into()));
            }
            if let Some(s) = m.span {
                if s < 1 {
                    return Err(bad(format!("{k}.span"), format!("span {s}: spans are numbered from 1")));
                }
            }
            if let Some(d) = m.distance {
                if !d.is_finite() || d < 0.0 {
                    return Err(bad(
                        format!("{k}.distance"),
                        format!("{d} m: give a distance ≥ 0 from the span's first tower"),
                    ));
                }
            }
        }
        for (i, d) in raw.add.iter().enumerate() {
            if !matches!(d.get("type"), Some(toml::Value::String(_))) {
                return Err(bad(format!("{key}.add[{i}].type"), "each added device names its `type`".into()));
            }
        }
        if raw.remove.is_empty() && raw.moves.is_empty() && raw.add.is_empty() {
            return Err(bad(
                key.to_string(),
                "the overlay changes nothing: give `remove`, `move` or `add`".into(),
            ));
        }
        Ok(Self { raw })
    }

    /// The overlay's devices: the from-layout less the removed, with the
    /// moves applied, then the added ones (paths absolute from `study_dir`).
    pub fn apply(&self, from: Vec<toml::Table>, study_dir: &Path) -> (Vec<toml::Table>, Vec<DeviceOrigin>) {
        let mut out = Vec::new();
        let mut origin = Vec::new();
        for (i, mut d) in from.into_iter().enumerate() {
            let pos = i + 1;
            if self.raw.remove.contains(&pos) {
                continue;
            }
            for m in self.raw.moves.iter().filter(|m| m.device == pos) {
                if let Some(s) = m.span {
                    d.insert("span".into(), toml::Value::Integer(s));
                }
                if let Some(x) = m.distance {
                    d.insert("distance".into(), toml::Value::Float(x));
                }
            }
            out.push(d);
            origin.push(DeviceOrigin::Base(i));
        }
        out.extend(self.raw.add.iter().map(|t| absolute_paths(t, study_dir)));
        origin.extend((0..self.raw.add.len()).map(DeviceOrigin::Added));
        (out, origin)
    }
}
