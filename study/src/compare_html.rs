//! The comparison as one self-contained HTML page: styles and SVG plots
//! inline, no script, nothing fetched from anywhere, so the page opens the
//! same on a machine without a network.

use crate::compare::{fmt_opt, wind_groups, CaseStatus, Comparison};
use std::fmt::Write as _;

/// Escapes text for HTML.
fn esc(s: &str) -> String {
    s.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;").replace('"', "&quot;")
}

const STYLE: &str = "body{font-family:sans-serif;margin:2em;max-width:80em;color:#222}\
table{border-collapse:collapse;margin:1em 0}th,td{border:1px solid #bbb;padding:.3em .6em;text-align:right}\
th{background:#eee}td.t,th.t{text-align:left}.caution{border-left:4px solid #c60;padding:.5em 1em;background:#fff6ee}\
.bad{color:#b00}figure{margin:1em 0}svg{max-width:100%;height:auto}";

/// The page for `c` with its `charts` (file stem, title, SVG).
pub(crate) fn page(c: &Comparison, charts: &[(String, String, String)]) -> String {
    let mut s = String::new();
    let _ = write!(
        s,
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>Layout comparison: {}</title><style>{STYLE}</style></head><body>\n",
        esc(&c.study)
    );
    let _ = writeln!(s, "<h1>Layout comparison: {}</h1>", esc(&c.study));
    let _ = writeln!(s, "<p class=\"caution\">{}</p>", esc(c.caution));
    let _ = writeln!(s, "<p>Study folder: <code>{}</code></p>", esc(&c.folder));
    let _ = writeln!(s, "<h2>Ranking of the layouts</h2>");
    let _ = writeln!(
        s,
        "<p>Best first: complete layouts before incomplete ones, then fewer cases inside a required clearance, a larger worst clearance margin (or least phase distance), a smaller worst vertical peak-to-peak motion, and a smaller fatigue damage per hour.</p>"
    );
    let _ = writeln!(
        s,
        "<table id=\"ranking\"><thead><tr><th>rank</th><th class=\"t\">layout</th><th>cases complete</th><th>inside clearance</th><th>worst margin (m)</th><th>least phase distance (m)</th><th>worst vertical p-p (m)</th><th class=\"t\">in case</th><th>peak tension / RTS</th><th>max damage per hour</th></tr></thead><tbody>"
    );
    for r in &c.layouts {
        let _ = writeln!(
            s,
            "<tr class=\"layout\"><td>{}</td><td class=\"t\">{}</td><td>{}/{}</td><td{}>{}</td><td>{}</td><td>{}</td><td>{:.3}</td><td class=\"t\">{}</td><td>{:.3}</td><td>{}</td></tr>",
            r.rank,
            esc(&r.layout),
            r.complete,
            r.cases,
            if r.inside_clearance > 0 { " class=\"bad\"" } else { "" },
            r.inside_clearance,
            fmt_opt(r.worst_margin_m, 3),
            fmt_opt(r.min_phase_distance_m, 3),
            r.max_vertical_peak_to_peak_m,
            esc(&r.max_vertical_case),
            r.peak_tension_share_of_rated,
            r.max_damage_per_hour.map_or("–".into(), |d| format!("{d:.3e}")),
        );
    }
    let _ = writeln!(s, "</tbody></table>");
    let missing: Vec<_> = c.incomplete().collect();
    if !missing.is_empty() {
        let _ = writeln!(s, "<h2>Cases not complete</h2><ul id=\"incomplete\">");
        for m in missing {
            let why = match m.status {
                CaseStatus::Failed => format!("failed: {}", m.failure.as_deref().unwrap_or("")),
                CaseStatus::Stale => "stale: the study changed after it ran".into(),
                CaseStatus::Incomplete => "incomplete: stopped before it finished".into(),
                _ => "missing: not run yet".into(),
            };
            let _ = writeln!(s, "<li><code>{}</code>: {}</li>", esc(&m.id), esc(&why));
        }
        let _ = writeln!(s, "</ul>");
    }
    for (ice, dir) in wind_groups(c) {
        let group = format!("ice {ice}, wind towards {dir}°");
        let _ = writeln!(s, "<section class=\"wind-case\"><h2>Ice {}, wind towards {dir}°</h2>", esc(&ice));
        let _ = writeln!(
            s,
            "<table><thead><tr><th class=\"t\">layout</th><th>wind (m/s)</th><th>vertical p-p (m)</th><th class=\"t\">where</th><th>least phase distance (m)</th><th>phase margin (m)</th><th>ground margin (m)</th><th>peak tension / RTS</th><th>max damage per hour</th></tr></thead><tbody>"
        );
        for row in c.cases.iter().filter(|r| r.ice == ice && r.wind_direction_deg == dir) {
            match &row.summary {
                Some(x) => {
                    let _ = writeln!(
                        s,
                        "<tr><td class=\"t\">{}</td><td>{}</td><td>{:.3}</td><td class=\"t\">{}</td><td>{}</td><td{}>{}</td><td>{}</td><td>{:.3}</td><td>{}</td></tr>",
                        esc(&row.layout),
                        row.wind_speed_m_s,
                        x.max_vertical_peak_to_peak_m,
                        esc(&x.max_vertical_at),
                        fmt_opt(x.min_phase_distance_m, 3),
                        if x.phase_margin_m.is_some_and(|m| m < 0.0) { " class=\"bad\"" } else { "" },
                        fmt_opt(x.phase_margin_m, 3),
                        fmt_opt(x.ground_margin_m, 3),
                        x.peak_tension_share_of_rated,
                        x.max_damage_per_hour.map_or("–".into(), |d| format!("{d:.3e}")),
                    );
                }
                None => {
                    let _ = writeln!(
                        s,
                        "<tr><td class=\"t\">{}</td><td>{}</td><td colspan=\"7\" class=\"t bad\">{:?}</td></tr>",
                        esc(&row.layout),
                        row.wind_speed_m_s,
                        row.status
                    );
                }
            }
        }
        let _ = writeln!(s, "</tbody></table>");
        for (stem, title, svg) in charts.iter().filter(|(_, t, _)| t.ends_with(&group)) {
            let body = svg.find("<svg").map_or(svg.as_str(), |i| &svg[i..]);
            let _ = writeln!(
                s,
                "<figure class=\"plot\" id=\"{}\">{body}<figcaption>{}</figcaption></figure>",
                esc(stem),
                esc(title)
            );
        }
        let _ = writeln!(s, "</section>");
    }
    let _ = writeln!(s, "</body></html>");
    s
}
