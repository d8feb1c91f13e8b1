//! The study file of `glaze sweep STUDY.toml`: a base section input and the
//! wind speeds, wind directions, ice cases and device layouts to run it
//! with. Read in two stages like an input file: [`RawStudyFile`] mirrors
//! what the user typed (unknown keys rejected), [`load_study`] checks every
//! value and builds the case list, with file, key path and line in every
//! error.
//!
//! ```toml
//! [study]
//! name = "iced section, three layouts"
//! base = "section_five_spans.toml"   # relative to this file
//! output = "iced_study"              # results folder, relative to this file
//! duration = 20.0                    # s; overrides [dynamics] duration of the base
//!
//! [cases]
//! wind_speeds = [6.0, 9.0, 12.0]     # m/s at the base wind's reference height
//! wind_directions = [90.0]           # degrees, as [load_case.wind] direction
//! ice = ["base", "light"]            # "base", "none" or a name from [ice]
//! layouts = ["none", "interphase_spacers", "pendulums_shifted"]
//!
//! [ice.light]                        # replaces [load_case.ice] of the base
//! thickness = 0.006
//! aero_table = "aero/crescent_ice.csv"
//!
//! [layouts.pendulums_shifted]        # an overlay on a layout of the base
//! from = "pendulums"
//! remove = [5, 6]                    # 1-based positions in the from-layout
//! move = [{ device = 1, distance = 140.0 }]
//! add = [{ type = "lumped_mass", span = 3, distance = 100.0, phase = "A", mass = 20.0 }]
//! ```

use crate::cases::{self, IceCase, LayoutCase, Overlay};
use crate::StudyError;
use glaze_engine::input::Locator;
use glaze_engine::InputErrorKind;
use serde::Deserialize;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// Largest wind speed a study accepts, m/s (beyond any design wind; common practice).
pub const MAX_WIND_SPEED: f64 = 100.0;

/// The whole study file, as typed.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawStudyFile {
    /// Name, base input and output folder.
    pub study: RawStudy,
    /// What varies between cases.
    pub cases: RawCases,
    /// Ice cases by name: each replaces `[load_case.ice]` of the base.
    #[serde(default)]
    pub ice: BTreeMap<String, toml::Table>,
    /// Layout overlays by name.
    #[serde(default)]
    pub layouts: BTreeMap<String, RawOverlay>,
}

/// `[study]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawStudy {
    /// Name shown in the comparison.
    pub name: String,
    /// Base input file (a section or row with `[dynamics]` and
    /// `[load_case.wind]`), relative to the study file.
    pub base: String,
    /// Output folder, relative to the study file (default: the study
    /// file's stem beside it).
    pub output: Option<String>,
    /// Simulated time of every case, s (default: the base's `[dynamics] duration`).
    pub duration: Option<f64>,
}

/// `[cases]`: the case matrix is every combination of these lists.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCases {
    /// Mean wind speeds at the reference height of the base's wind, m/s.
    pub wind_speeds: Vec<f64>,
    /// Wind directions, degrees from +X (default: the base's).
    pub wind_directions: Option<Vec<f64>>,
    /// Ice cases: `base`, `none` or names of `[ice]` (default `["base"]`).
    pub ice: Option<Vec<String>>,
    /// Layouts: `none`, layouts of the base or overlays of `[layouts]`
    /// (default: the base's `[section] layout`).
    pub layouts: Option<Vec<String>>,
}

/// `[layouts.NAME]`: a layout made from a layout of the base.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawOverlay {
    /// Layout of the base it starts from (`none` for no devices).
    pub from: String,
    /// Devices to leave out: 1-based positions in the from-layout's list.
    #[serde(default)]
    pub remove: Vec<usize>,
    /// Devices to move: a position and a new `span` and/or `distance`.
    #[serde(default, rename = "move")]
    pub moves: Vec<RawMove>,
    /// Devices to add, as in a layout's `devices` list.
    #[serde(default)]
    pub add: Vec<toml::Table>,
}

/// One moved device.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawMove {
    /// 1-based position in the from-layout's list.
    pub device: usize,
    /// New span (1-based).
    pub span: Option<i64>,
    /// New distance from the span's first tower, m.
    pub distance: Option<f64>,
}

/// A checked study with its cases in study order.
#[derive(Debug, Clone)]
pub struct Study {
    /// The study file.
    pub file: PathBuf,
    /// Study name.
    pub name: String,
    /// The base input file.
    pub base: PathBuf,
    /// Output folder.
    pub out_dir: PathBuf,
    /// Cases: layouts outermost, then ice, direction and speed.
    pub cases: Vec<Case>,
}

/// One case: a base input with its wind, ice and layout set.
#[derive(Debug, Clone, PartialEq)]
pub struct Case {
    /// Folder-safe identifier, unique in the study.
    pub id: String,
    /// Layout name.
    pub layout: String,
    /// Ice case name.
    pub ice: String,
    /// Mean wind speed at the reference height, m/s.
    pub wind_speed: f64,
    /// Wind direction, degrees from +X.
    pub wind_direction: f64,
    /// The generated input file of the case.
    pub input: String,
}

/// `path` with `.` and `..` resolved lexically (the base is canonical already).
fn normalise(path: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for c in path.components() {
        match c {
            std::path::Component::CurDir => {}
            std::path::Component::ParentDir => {
                out.pop();
            }
            other => out.push(other),
        }
    }
    out
}

/// Whether `name` is usable in a folder name: ASCII letters, digits, `_` and `-`.
fn is_plain_name(name: &str) -> bool {
    !name.is_empty() && name.chars().all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
}

fn located(loc: &Locator<'_>, key: &str, message: impl Into<String>) -> StudyError {
    StudyError::Input(loc.error(InputErrorKind::InvalidValue, key, message))
}

fn check_list(
    loc: &Locator<'_>,
    key: &str,
    values: &[f64],
    lo: f64,
    hi: f64,
    unit: &str,
) -> Result<(), StudyError> {
    if values.is_empty() {
        return Err(located(loc, key, "the list is empty; give at least one value"));
    }
    for (i, v) in values.iter().enumerate() {
        if !v.is_finite() || *v < lo || *v > hi {
            return Err(located(loc, &format!("{key}[{i}]"), format!("{v} is outside {lo}…{hi} {unit}")));
        }
        if values[..i].iter().any(|w| (w - v).abs() < 1e-9) {
            return Err(located(loc, &format!("{key}[{i}]"), format!("{v} is listed twice")));
        }
    }
    Ok(())
}

fn check_names(loc: &Locator<'_>, key: &str, names: &[String]) -> Result<(), StudyError> {
    if names.is_empty() {
        return Err(located(loc, key, "the list is empty; give at least one name"));
    }
    for (i, n) in names.iter().enumerate() {
        if names[..i].contains(n) {
            return Err(located(loc, &format!("{key}[{i}]"), format!("`{n}` is listed twice")));
        }
    }
    Ok(())
}

/// Reads and checks `path`, generating the input of every case from the
/// base file.
///
/// # Errors
/// [`StudyError::Input`] with file, key path and line for a bad study file,
/// and for a base file that cannot take the study's changes.
pub fn load_study(path: &Path) -> Result<Study, StudyError> {
    let unreadable = |file: &Path, e: std::io::Error| {
        StudyError::Input(glaze_engine::InputError {
            file: file.to_path_buf(),
            line: 0,
            key: "(file)".into(),
            message: format!("cannot read the file: {e}"),
            kind: InputErrorKind::Unreadable,
        })
    };
    let text = std::fs::read_to_string(path).map_err(|e| unreadable(path, e))?;
    let loc = Locator::new(path, &text);
    let raw: RawStudyFile = toml::from_str(&text).map_err(|e| StudyError::Input(loc.toml_error(&e)))?;
    let study_dir = path.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    let study_dir = study_dir.canonicalize().map_err(|e| unreadable(study_dir, e))?;

    if raw.study.name.trim().is_empty() {
        return Err(located(&loc, "study.name", "give the study a name"));
    }
    let base = normalise(&study_dir.join(&raw.study.base));
    let base_text = std::fs::read_to_string(&base).map_err(|e| {
        located(&loc, "study.base", format!("cannot read the base input {}: {e}", base.display()))
    })?;
    let base_dir = base.parent().unwrap_or(Path::new(".")).to_path_buf();
    let out_dir = match &raw.study.output {
        Some(o) if o.trim().is_empty() => {
            return Err(located(&loc, "study.output", "the output folder is empty"))
        }
        Some(o) => normalise(&study_dir.join(o)),
        None => {
            let stem = path.file_stem().map_or("study".into(), |s| s.to_string_lossy().to_string());
            study_dir.join(stem)
        }
    };
    if let Some(d) = raw.study.duration {
        if !d.is_finite() || d <= 0.0 {
            return Err(located(&loc, "study.duration", format!("{d} s: give a positive simulated time")));
        }
    }

    let base_doc = cases::BaseInput::parse(&base, &base_text)?;
    check_list(&loc, "cases.wind_speeds", &raw.cases.wind_speeds, 0.0, MAX_WIND_SPEED, "m/s")?;
    if !base_doc.has_wind() {
        return Err(located(
            &loc,
            "cases.wind_speeds",
            format!("the base input {} has no [load_case.wind] table to vary", base.display()),
        ));
    }
    let directions = match &raw.cases.wind_directions {
        Some(d) => {
            check_list(&loc, "cases.wind_directions", d, -360.0, 360.0, "degrees")?;
            d.clone()
        }
        None => vec![base_doc.wind_direction().ok_or_else(|| {
            located(
                &loc,
                "cases.wind_directions",
                "the base wind has no numeric direction; list the directions",
            )
        })?],
    };

    let ice_names = raw.cases.ice.clone().unwrap_or_else(|| vec!["base".into()]);
    check_names(&loc, "cases.ice", &ice_names)?;
    for name in raw.ice.keys() {
        if name == "base" || name == "none" {
            return Err(located(
                &loc,
                &format!("ice.{name}"),
                format!("`{name}` is built in; choose another name"),
            ));
        }
        if !is_plain_name(name) {
            return Err(located(
                &loc,
                &format!("ice.{name}"),
                "use only letters, digits, `_` and `-` in names",
            ));
        }
    }
    let mut ice_cases = Vec::new();
    for (i, name) in ice_names.iter().enumerate() {
        let case = match name.as_str() {
            "base" => IceCase::Base,
            "none" => IceCase::None,
            other => match raw.ice.get(other) {
                Some(t) => IceCase::Table(cases::absolute_paths(t, &study_dir)),
                None => {
                    return Err(StudyError::Input(loc.error(
                        InputErrorKind::UnknownName,
                        &format!("cases.ice[{i}]"),
                        format!("no ice case `{other}`: use `base`, `none` or a name of [ice]"),
                    )))
                }
            },
        };
        ice_cases.push((name.clone(), case));
    }

    let base_layouts = base_doc.layout_names();
    for name in raw.layouts.keys() {
        if name == "none" || base_layouts.contains(name) {
            return Err(located(
                &loc,
                &format!("layouts.{name}"),
                format!("`{name}` is already a layout of the base; choose another name"),
            ));
        }
        if !is_plain_name(name) {
            return Err(located(
                &loc,
                &format!("layouts.{name}"),
                "use only letters, digits, `_` and `-` in names",
            ));
        }
    }
    let layout_names = match &raw.cases.layouts {
        Some(l) => l.clone(),
        None => vec![base_doc.current_layout()],
    };
    check_names(&loc, "cases.layouts", &layout_names)?;
    let mut layout_cases = Vec::new();
    for (i, name) in layout_names.iter().enumerate() {
        let key = format!("cases.layouts[{i}]");
        let case = if name == "none" || base_layouts.contains(name) {
            if !is_plain_name(name) {
                return Err(located(
                    &loc,
                    &key,
                    format!("layout `{name}`: rename it with only letters, digits, `_` and `-`"),
                ));
            }
            LayoutCase::Base(name.clone())
        } else if let Some(o) = raw.layouts.get(name) {
            let okey = format!("layouts.{name}");
            let from = base_doc.layout_devices(&o.from).ok_or_else(|| {
                StudyError::Input(loc.error(
                    InputErrorKind::UnknownName,
                    &format!("{okey}.from"),
                    format!(
                        "the base has no layout `{}` (it has: none, {})",
                        o.from,
                        base_layouts.join(", ")
                    ),
                ))
            })?;
            let overlay = Overlay::check(o, from.len(), &okey, &loc)?;
            let (devices, origin) = overlay.apply(from, &study_dir);
            LayoutCase::Overlay { name: name.clone(), devices, origin }
        } else {
            return Err(StudyError::Input(loc.error(
                InputErrorKind::UnknownName,
                &key,
                format!(
                    "no layout `{name}`: the base has none, {} and the study defines {}",
                    base_layouts.join(", "),
                    raw.layouts.keys().cloned().collect::<Vec<_>>().join(", ")
                ),
            )));
        };
        layout_cases.push(case);
    }

    let mut all = Vec::new();
    for layout in &layout_cases {
        for (ice_name, ice) in &ice_cases {
            for &direction in &directions {
                for &speed in &raw.cases.wind_speeds {
                    let id = format!("{}-{}-d{:03.0}-v{:04.1}", layout.name(), ice_name, direction, speed);
                    let input = base_doc.case_input(&cases::CaseChange {
                        id: &id,
                        study: &raw.study.name,
                        base_dir: &base_dir,
                        wind_speed: speed,
                        wind_direction: direction,
                        ice,
                        layout,
                        duration: raw.study.duration,
                    })?;
                    check_case(
                        &input,
                        &id,
                        layout,
                        (ice_name, ice),
                        &loc,
                        (&base, &base_text),
                        raw.layouts.get(layout.name()),
                    )?;
                    all.push(Case {
                        id,
                        layout: layout.name().to_string(),
                        ice: ice_name.clone(),
                        wind_speed: speed,
                        wind_direction: direction,
                        input,
                    });
                }
            }
        }
    }
    for (i, c) in all.iter().enumerate() {
        if all[..i].iter().any(|d| d.id == c.id) {
            return Err(located(
                &loc,
                "cases",
                format!(
                    "two cases share the name {} (speeds or directions closer than the name shows)",
                    c.id
                ),
            ));
        }
    }
    Ok(Study { file: path.to_path_buf(), name: raw.study.name, base, out_dir, cases: all })
}

/// Validates a case's generated input with the engine, and reports an error
/// where the user can mend it: at the study's overlay key for a device the
/// study adds or moves, else at the key of the base file.
fn check_case(
    input: &str,
    id: &str,
    layout: &LayoutCase,
    (ice_name, ice): (&str, &IceCase),
    loc: &Locator<'_>,
    (base, base_text): (&Path, &str),
    overlay: Option<&RawOverlay>,
) -> Result<(), StudyError> {
    let registry = glaze_engine::ElementRegistry::with_builtin();
    let Err(e) = glaze_engine::input::load_str(base, input, &registry) else { return Ok(()) };
    if let LayoutCase::Overlay { name, origin, .. } = layout {
        let prefix = format!("layouts.{name}.devices[");
        if let Some(rest) = e.key.strip_prefix(&prefix) {
            if let Some((j, tail)) = rest.split_once(']') {
                if let Some(o) = j.parse::<usize>().ok().and_then(|j| origin.get(j)) {
                    let (key, what) = match *o {
                        cases::DeviceOrigin::Added(k) => {
                            (format!("layouts.{name}.add[{k}]{tail}"), String::new())
                        }
                        cases::DeviceOrigin::Base(b) => {
                            let moved =
                                overlay.and_then(|ov| ov.moves.iter().position(|m| m.device == b + 1));
                            match moved {
                                Some(m) => (
                                    format!("layouts.{name}.move[{m}]"),
                                    format!(" (device {} of the from-layout, moved)", b + 1),
                                ),
                                None => (
                                    format!("layouts.{name}.from"),
                                    format!(" (device {} of the from-layout)", b + 1),
                                ),
                            }
                        }
                    };
                    return Err(StudyError::Input(loc.error(
                        e.kind,
                        &key,
                        format!("case {id}{what}: {}", e.message),
                    )));
                }
            }
        }
    }
    if let (IceCase::Table(_), Some(rest)) = (ice, e.key.strip_prefix("load_case.ice")) {
        return Err(StudyError::Input(loc.error(
            e.kind,
            &format!("ice.{ice_name}{rest}"),
            format!("case {id}: {}", e.message),
        )));
    }
    let base_loc = Locator::new(base, base_text);
    let line = if e.key.starts_with('(') { e.line } else { base_loc.line(&e.key) };
    Err(StudyError::Input(glaze_engine::InputError {
        file: base.to_path_buf(),
        line,
        key: e.key,
        message: format!("in case {id} of study {}: {}", loc.path().display(), e.message),
        kind: e.kind,
    }))
}
