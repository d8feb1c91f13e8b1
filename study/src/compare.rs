//! `glaze compare STUDY_DIR`: gathers the case summaries of a study folder
//! into one table per layout and wind case, ranks the layouts, and draws
//! the worst galloping amplitude and the least phase distance against wind
//! speed per layout. Cases of the study that are missing, stale (their
//! input changed after they ran) or failed are named, never silently left
//! out, and a layout with any of them is ranked after the complete ones.
//!
//! Ranking, best first, compared in this order:
//! 1. every case of the layout complete;
//! 2. fewer cases inside a required clearance (phase-to-phase or ground
//!    margin below zero);
//! 3. a larger worst clearance margin (the least of both margins; without
//!    required values, the least phase-to-phase distance);
//! 4. a smaller worst vertical peak-to-peak motion;
//! 5. a smaller largest fatigue damage per hour.

use crate::summary::CaseSummary;
use crate::sweep::{case_dir, CaseFailure, Manifest, STUDY_FORMAT};
use crate::{write_atomic, StudyError};
use glaze_report::CAUTION;
use serde::Serialize;
use std::cmp::Ordering;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

/// State of one case in the folder.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum CaseStatus {
    /// `case.json` matches the study's input.
    Complete,
    /// `failed.json` says why it failed.
    Failed,
    /// Not run yet.
    Missing,
    /// Started but stopped before it finished (a partial results file is there).
    Incomplete,
    /// Ran with an input the study no longer generates.
    Stale,
}

/// One case of the study with what the folder holds of it.
#[derive(Debug, Clone, Serialize)]
pub struct CaseRow {
    /// Case identifier.
    pub id: String,
    /// Layout.
    pub layout: String,
    /// Ice case.
    pub ice: String,
    /// Wind speed, m/s.
    pub wind_speed_m_s: f64,
    /// Wind direction, degrees.
    pub wind_direction_deg: f64,
    /// State.
    pub status: CaseStatus,
    /// The summary of a complete case.
    pub summary: Option<CaseSummary>,
    /// Why a failed case failed.
    pub failure: Option<String>,
}

/// One layout over all its cases.
#[derive(Debug, Clone, Serialize)]
pub struct LayoutRank {
    /// 1 = best.
    pub rank: usize,
    /// Layout.
    pub layout: String,
    /// Cases of the layout in the study.
    pub cases: usize,
    /// Of which complete.
    pub complete: usize,
    /// Complete cases with a clearance margin below zero.
    pub inside_clearance: usize,
    /// Least clearance margin over its cases, m (none without required values).
    pub worst_margin_m: Option<f64>,
    /// Least phase-to-phase distance over its cases, m.
    pub min_phase_distance_m: Option<f64>,
    /// Largest vertical peak-to-peak motion over its cases, m, and the case.
    pub max_vertical_peak_to_peak_m: f64,
    /// The case of that motion.
    pub max_vertical_case: String,
    /// Largest conductor tension as a share of rated strength.
    pub peak_tension_share_of_rated: f64,
    /// Largest fatigue damage per hour.
    pub max_damage_per_hour: Option<f64>,
}

/// The comparison of a study folder.
#[derive(Debug, Clone, Serialize)]
pub struct Comparison {
    /// The caution every report carries.
    pub caution: &'static str,
    /// Study name.
    pub study: String,
    /// Study folder.
    pub folder: String,
    /// Every case of the study, in study order.
    pub cases: Vec<CaseRow>,
    /// Layouts, best first.
    pub layouts: Vec<LayoutRank>,
}

impl Comparison {
    /// Cases that are not complete, with their state.
    pub fn incomplete(&self) -> impl Iterator<Item = &CaseRow> {
        self.cases.iter().filter(|c| c.status != CaseStatus::Complete)
    }
}

fn read_json<T: serde::de::DeserializeOwned>(path: &Path) -> Result<Option<T>, StudyError> {
    match std::fs::read_to_string(path) {
        Ok(text) => serde_json::from_str(&text).map(Some).map_err(|e| StudyError::Folder {
            path: path.to_path_buf(),
            message: format!("not readable: {e}"),
        }),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(None),
        Err(e) => Err(StudyError::Folder { path: path.to_path_buf(), message: e.to_string() }),
    }
}

fn worst_margin(s: &CaseSummary) -> Option<f64> {
    match (s.phase_margin_m, s.ground_margin_m) {
        (Some(a), Some(b)) => Some(a.min(b)),
        (a, b) => a.or(b),
    }
}

fn min_opt(a: Option<f64>, b: Option<f64>) -> Option<f64> {
    match (a, b) {
        (Some(a), Some(b)) => Some(a.min(b)),
        (a, b) => a.or(b),
    }
}

fn max_opt(a: Option<f64>, b: Option<f64>) -> Option<f64> {
    match (a, b) {
        (Some(a), Some(b)) => Some(a.max(b)),
        (a, b) => a.or(b),
    }
}

/// Larger is better; `None` (unknown) last.
fn cmp_larger(a: Option<f64>, b: Option<f64>) -> Ordering {
    match (a, b) {
        (Some(a), Some(b)) => b.total_cmp(&a),
        (Some(_), None) => Ordering::Less,
        (None, Some(_)) => Ordering::Greater,
        (None, None) => Ordering::Equal,
    }
}

fn rank_layouts(cases: &[CaseRow]) -> Vec<LayoutRank> {
    let mut names: Vec<&str> = Vec::new();
    for c in cases {
        if !names.contains(&c.layout.as_str()) {
            names.push(&c.layout);
        }
    }
    let mut ranks: Vec<LayoutRank> = names
        .iter()
        .map(|&name| {
            let mine: Vec<&CaseRow> = cases.iter().filter(|c| c.layout == name).collect();
            let done: Vec<&CaseSummary> = mine.iter().filter_map(|c| c.summary.as_ref()).collect();
            let mut r = LayoutRank {
                rank: 0,
                layout: name.to_string(),
                cases: mine.len(),
                complete: done.len(),
                inside_clearance: 0,
                worst_margin_m: None,
                min_phase_distance_m: None,
                max_vertical_peak_to_peak_m: 0.0,
                max_vertical_case: String::new(),
                peak_tension_share_of_rated: 0.0,
                max_damage_per_hour: None,
            };
            for s in done {
                let m = worst_margin(s);
                if m.is_some_and(|m| m < 0.0) {
                    r.inside_clearance += 1;
                }
                r.worst_margin_m = min_opt(r.worst_margin_m, m);
                r.min_phase_distance_m = min_opt(r.min_phase_distance_m, s.min_phase_distance_m);
                if s.max_vertical_peak_to_peak_m > r.max_vertical_peak_to_peak_m
                    || r.max_vertical_case.is_empty()
                {
                    r.max_vertical_peak_to_peak_m = s.max_vertical_peak_to_peak_m;
                    r.max_vertical_case = s.id.clone();
                }
                r.peak_tension_share_of_rated =
                    r.peak_tension_share_of_rated.max(s.peak_tension_share_of_rated);
                r.max_damage_per_hour = max_opt(r.max_damage_per_hour, s.max_damage_per_hour);
            }
            r
        })
        .collect();
    ranks.sort_by(|a, b| {
        let whole = |r: &LayoutRank| r.complete < r.cases;
        whole(a)
            .cmp(&whole(b))
            .then(a.inside_clearance.cmp(&b.inside_clearance))
            .then(cmp_larger(
                a.worst_margin_m.or(a.min_phase_distance_m),
                b.worst_margin_m.or(b.min_phase_distance_m),
            ))
            .then(a.max_vertical_peak_to_peak_m.total_cmp(&b.max_vertical_peak_to_peak_m))
            .then(cmp_larger(a.max_damage_per_hour.map(|d| -d), b.max_damage_per_hour.map(|d| -d)))
    });
    for (i, r) in ranks.iter_mut().enumerate() {
        r.rank = i + 1;
    }
    ranks
}

/// Reads the study folder `dir` (written by `glaze sweep`).
///
/// # Errors
/// [`StudyError::Folder`] when `dir` holds no `study.json` or a file in it
/// cannot be read.
pub fn gather(dir: &Path) -> Result<Comparison, StudyError> {
    let manifest_path = dir.join("study.json");
    let manifest: Manifest = read_json(&manifest_path)?.ok_or_else(|| StudyError::Folder {
        path: dir.to_path_buf(),
        message: "no study.json here: give the output folder of `glaze sweep STUDY.toml`".into(),
    })?;
    if manifest.format != STUDY_FORMAT {
        return Err(StudyError::Folder {
            path: manifest_path,
            message: format!("format `{}`, expected `{STUDY_FORMAT}`", manifest.format),
        });
    }
    let mut cases = Vec::new();
    for m in &manifest.cases {
        let cdir = case_dir(dir, &m.id);
        let summary: Option<CaseSummary> = read_json(&cdir.join("case.json"))?;
        let failure: Option<CaseFailure> = read_json(&cdir.join("failed.json"))?;
        let (status, summary, failure) = match (summary, failure) {
            (Some(s), _) if s.input_hash == m.input_hash => (CaseStatus::Complete, Some(s), None),
            (Some(_), _) => (CaseStatus::Stale, None, None),
            (None, Some(f)) => (CaseStatus::Failed, None, Some(format!("{}: {}", f.stage, f.message))),
            (None, None) if cdir.join("result.h5.partial").exists() || cdir.join("result.h5").exists() => {
                (CaseStatus::Incomplete, None, None)
            }
            (None, None) => (CaseStatus::Missing, None, None),
        };
        cases.push(CaseRow {
            id: m.id.clone(),
            layout: m.layout.clone(),
            ice: m.ice.clone(),
            wind_speed_m_s: m.wind_speed_m_s,
            wind_direction_deg: m.wind_direction_deg,
            status,
            summary,
            failure,
        });
    }
    let layouts = rank_layouts(&cases);
    Ok(Comparison {
        caution: CAUTION,
        study: manifest.name,
        folder: dir.display().to_string(),
        cases,
        layouts,
    })
}

/// A number with `digits` decimals, or `–` for none.
pub(crate) fn fmt_opt(v: Option<f64>, digits: usize) -> String {
    v.filter(|v| v.is_finite()).map_or("–".into(), |v| format!("{v:.digits$}"))
}

/// Wind cases (ice, direction) in study order.
pub(crate) fn wind_groups(c: &Comparison) -> Vec<(String, f64)> {
    let mut g: Vec<(String, f64)> = Vec::new();
    for row in &c.cases {
        if !g.iter().any(|(i, d)| *i == row.ice && *d == row.wind_direction_deg) {
            g.push((row.ice.clone(), row.wind_direction_deg));
        }
    }
    g
}

fn markdown(c: &Comparison, plots: &[(String, String)]) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# Layout comparison: {}\n", c.study);
    let _ = writeln!(s, "> {}\n", c.caution);
    let _ = writeln!(s, "Study folder: `{}`.\n", c.folder);
    let _ = writeln!(s, "## Ranking of the layouts\n");
    let _ = writeln!(
        s,
        "Best first: complete layouts before incomplete ones, then fewer cases inside a required clearance, \
         a larger worst clearance margin (or least phase distance), a smaller worst vertical peak-to-peak \
         motion, and a smaller fatigue damage per hour.\n"
    );
    let _ = writeln!(
        s,
        "| rank | layout | cases complete | inside clearance | worst margin (m) | least phase distance (m) | worst vertical p-p (m) | in case | peak tension / RTS | max damage per hour |"
    );
    let _ = writeln!(s, "|---:|---|---:|---:|---:|---:|---:|---|---:|---:|");
    for r in &c.layouts {
        let _ = writeln!(
            s,
            "| {} | {} | {}/{} | {} | {} | {} | {:.3} | {} | {:.3} | {} |",
            r.rank,
            r.layout,
            r.complete,
            r.cases,
            r.inside_clearance,
            fmt_opt(r.worst_margin_m, 3),
            fmt_opt(r.min_phase_distance_m, 3),
            r.max_vertical_peak_to_peak_m,
            r.max_vertical_case,
            r.peak_tension_share_of_rated,
            r.max_damage_per_hour.map_or("–".into(), |d| format!("{d:.3e}")),
        );
    }
    let missing: Vec<&CaseRow> = c.incomplete().collect();
    if !missing.is_empty() {
        let _ = writeln!(s, "\n## Cases not complete\n");
        for m in missing {
            let why = match m.status {
                CaseStatus::Failed => format!("failed: {}", m.failure.as_deref().unwrap_or("")),
                CaseStatus::Stale => "stale: the study changed after it ran; run the sweep again".into(),
                CaseStatus::Incomplete => {
                    "incomplete: stopped before it finished; run the sweep again".into()
                }
                _ => "missing: not run yet; run the sweep again".into(),
            };
            let _ = writeln!(s, "- `{}`: {why}", m.id);
        }
    }
    for (ice, dir) in wind_groups(c) {
        let _ = writeln!(s, "\n## Ice `{ice}`, wind towards {dir}°\n");
        let _ = writeln!(
            s,
            "| layout | wind (m/s) | vertical p-p (m) | where | horizontal p-p (m) | least phase distance (m) | pair | phase margin (m) | ground margin (m) | peak tension / RTS | support peak / static | max damage per hour | energy error |"
        );
        let _ = writeln!(s, "|---|---:|---:|---|---:|---:|---|---:|---:|---:|---:|---:|---:|");
        for row in c.cases.iter().filter(|r| r.ice == ice && r.wind_direction_deg == dir) {
            match &row.summary {
                Some(x) => {
                    let _ = writeln!(
                        s,
                        "| {} | {} | {:.3} | {} | {:.3} | {} | {} | {} | {} | {:.3} | {:.3} | {} | {:.1e} |",
                        row.layout,
                        row.wind_speed_m_s,
                        x.max_vertical_peak_to_peak_m,
                        x.max_vertical_at,
                        x.max_horizontal_peak_to_peak_m,
                        fmt_opt(x.min_phase_distance_m, 3),
                        x.min_phase_distance_pair.as_deref().unwrap_or("–"),
                        fmt_opt(x.phase_margin_m, 3),
                        fmt_opt(x.ground_margin_m, 3),
                        x.peak_tension_share_of_rated,
                        x.peak_support_ratio,
                        x.max_damage_per_hour.map_or("–".into(), |d| format!("{d:.3e}")),
                        x.energy_balance_error,
                    );
                }
                None => {
                    let _ = writeln!(
                        s,
                        "| {} | {} | {:?} | | | | | | | | | | |",
                        row.layout, row.wind_speed_m_s, row.status
                    );
                }
            }
        }
        for (title, file) in
            plots.iter().filter(|(t, _)| t.contains(&format!("ice {ice}, wind towards {dir}°")))
        {
            let _ = writeln!(s, "\n![{title}]({file})");
        }
    }
    s
}

fn cases_csv(c: &Comparison) -> String {
    let mut s = String::from(
        "id,layout,ice,wind_speed_m_s,wind_direction_deg,status,max_vertical_peak_to_peak_m,max_horizontal_peak_to_peak_m,min_phase_distance_m,phase_margin_m,min_ground_clearance_m,ground_margin_m,peak_tension_share_of_rated,peak_support_ratio,max_damage_per_hour,energy_balance_error\n",
    );
    let o = |v: Option<f64>| v.map_or(String::new(), |v| v.to_string());
    for r in &c.cases {
        let _ = write!(
            s,
            "{},{},{},{},{},{:?}",
            r.id, r.layout, r.ice, r.wind_speed_m_s, r.wind_direction_deg, r.status
        );
        match &r.summary {
            Some(x) => {
                let _ = writeln!(
                    s,
                    ",{},{},{},{},{},{},{},{},{},{}",
                    x.max_vertical_peak_to_peak_m,
                    x.max_horizontal_peak_to_peak_m,
                    o(x.min_phase_distance_m),
                    o(x.phase_margin_m),
                    o(x.min_ground_clearance_m),
                    o(x.ground_margin_m),
                    x.peak_tension_share_of_rated,
                    x.peak_support_ratio,
                    o(x.max_damage_per_hour),
                    x.energy_balance_error
                );
            }
            None => s.push_str(",,,,,,,,,,\n"),
        }
    }
    s
}

/// Gathers `dir` and writes `compare.md`, `compare.html` (self-contained:
/// styles and plots inline, nothing fetched), `compare.json`,
/// `compare.csv` and one SVG per plot into it, each atomically.
///
/// # Errors
/// As [`gather`], and [`StudyError::Output`] for a file that cannot be written.
pub fn compare_study(dir: &Path) -> Result<(Comparison, Vec<PathBuf>), StudyError> {
    let c = gather(dir)?;
    let mut written = Vec::new();
    let charts = crate::compare_plots::charts(&c)?;
    let mut plot_files = Vec::new();
    for (name, title, svg) in &charts {
        let path = dir.join(format!("{name}.svg"));
        write_atomic(&path, svg.as_bytes())?;
        plot_files.push((title.clone(), format!("{name}.svg")));
        written.push(path);
    }
    let json = serde_json::to_string_pretty(&c).map_err(|e| StudyError::Internal(e.to_string()))?;
    for (name, text) in [
        ("compare.csv", cases_csv(&c)),
        ("compare.json", json),
        ("compare.md", markdown(&c, &plot_files)),
        ("compare.html", crate::compare_html::page(&c, &charts)),
    ] {
        let path = dir.join(name);
        write_atomic(&path, text.as_bytes())?;
        written.push(path);
    }
    Ok((c, written))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn row(layout: &str, speed: f64, amp: f64, margin: Option<f64>) -> CaseRow {
        let summary = CaseSummary {
            format: crate::summary::CASE_FORMAT.into(),
            id: format!("{layout}-{speed}"),
            layout: layout.into(),
            ice: "base".into(),
            wind_speed_m_s: speed,
            wind_direction_deg: 90.0,
            input_hash: String::new(),
            duration_s: 10.0,
            steady_from_s: 5.0,
            steady_from: "given".into(),
            max_vertical_peak_to_peak_m: amp,
            max_vertical_at: "span 1".into(),
            max_horizontal_peak_to_peak_m: 0.0,
            min_phase_distance_m: Some(5.0),
            min_phase_distance_pair: Some("A-B".into()),
            phase_margin_m: margin,
            min_ground_clearance_m: None,
            ground_margin_m: None,
            peak_tension_share_of_rated: 0.3,
            peak_support_ratio: 1.2,
            max_damage_per_hour: None,
            max_damage_at: None,
            energy_balance_error: 0.0,
            steps: 1,
        };
        CaseRow {
            id: summary.id.clone(),
            layout: layout.into(),
            ice: "base".into(),
            wind_speed_m_s: speed,
            wind_direction_deg: 90.0,
            status: CaseStatus::Complete,
            summary: Some(summary),
            failure: None,
        }
    }

    #[test]
    fn ranking_follows_the_stated_order() {
        let mut cases = vec![
            row("a", 6.0, 1.0, Some(-0.1)), // inside clearance once
            row("a", 9.0, 1.0, Some(0.5)),
            row("b", 6.0, 3.0, Some(0.2)),
            row("b", 9.0, 3.0, Some(0.3)),
            row("c", 6.0, 2.0, Some(0.2)),
            row("c", 9.0, 2.0, Some(0.4)),
            row("d", 6.0, 0.1, Some(2.0)),
        ];
        let mut missing = row("d", 9.0, 0.0, None);
        missing.status = CaseStatus::Missing;
        missing.summary = None;
        cases.push(missing);
        let ranks = rank_layouts(&cases);
        let order: Vec<&str> = ranks.iter().map(|r| r.layout.as_str()).collect();
        // c and b tie on margin 0.2; c moves less. a has a case inside the
        // clearance; d is incomplete.
        assert_eq!(order, ["c", "b", "a", "d"]);
        assert_eq!(ranks[2].inside_clearance, 1);
        assert_eq!(ranks[3].complete, 1);
    }
}
