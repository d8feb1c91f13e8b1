//! `glaze post RESULT.h5`: clearances, galloping envelope, loads and
//! fatigue from a results file, printed as a summary and written as JSON
//! and CSV into an output folder.

use super::CAUTION;
use glaze_report::{post_process, PostOptions, ReportError};
use std::path::{Path, PathBuf};

fn m(v: Option<f64>) -> String {
    v.map_or("—".into(), |v| format!("{v:.2}"))
}

/// Runs `glaze post`.
pub fn post(
    results: &Path,
    out: Option<&PathBuf>,
    allow_incomplete: bool,
    xdmf: bool,
    quiet: bool,
) -> Result<(), ReportError> {
    let outcome = post_process(results, &PostOptions { out_dir: out.cloned(), allow_incomplete, xdmf })?;
    let r = &outcome.report;
    if quiet {
        return Ok(());
    }
    out!(
        "post-processing of {}: {} records over {:.1} s; steady part from {:.1} s ({}){}",
        results.display(),
        r.records,
        r.duration_s,
        r.steady_from_s,
        r.steady_from,
        if r.complete { "" } else { "; INCOMPLETE file" }
    );
    if r.steady_from == "not settled" {
        out!(
            "  the galloping amplitude has not settled within the record: run longer, or set post.transient"
        );
    }
    if !r.clearance.pairs.is_empty() || !r.clearance.ground.is_empty() {
        out!();
        out!(
            "clearances (required: phase to phase {} m, to ground {} m; the local code sets these values)",
            m(r.clearance.required_phase_to_phase_m),
            m(r.clearance.required_phase_to_ground_m)
        );
        out!(
            "{:<14} {:>10} {:>10} {:>8} {:>10} {:>9}",
            "pair",
            "at rest m",
            "least m",
            "t s",
            "chainage m",
            "margin m"
        );
        for p in &r.clearance.pairs {
            out!(
                "{:<14} {:>10.2} {:>10.2} {:>8.2} {:>10.1} {:>9}",
                format!("{}–{}", p.phases[0], p.phases[1]),
                p.initial_distance_m,
                p.min_distance_m,
                p.time_s,
                p.chainage_m,
                m(p.margin_m)
            );
        }
        for g in &r.clearance.ground {
            out!(
                "{:<14} {:>10} {:>10.2} {:>8.2} {:>10.1} {:>9}",
                format!("{}–ground", g.phase),
                "",
                g.min_clearance_m,
                g.time_s,
                g.chainage_m,
                m(g.margin_m)
            );
        }
    }
    out!();
    out!("galloping envelope (bundle centre, steady part)");
    out!(
        "{:<6} {:<10} {:>9} {:>9} {:>10} {:>8} {:>17} {:>7}",
        "span",
        "phase",
        "vert p-p",
        "horiz p-p",
        "station m",
        "f Hz",
        "ellipse a×b m",
        "tilt °"
    );
    for e in &r.spans {
        let (f, ab, tilt) = match &e.orbit {
            Some(o) => (
                format!("{:.3}", o.frequency_hz),
                format!("{:.2}×{:.2}", o.semi_major_m, o.semi_minor_m),
                format!("{:.0}", o.tilt_deg),
            ),
            None => ("—".into(), "—".into(), "—".into()),
        };
        out!(
            "{:<6} {:<10} {:>9.3} {:>9.3} {:>10.1} {:>8} {:>17} {:>7}",
            e.span,
            e.phase,
            e.vertical_peak_to_peak_m,
            e.horizontal_peak_to_peak_m,
            e.worst_station_m,
            f,
            ab,
            tilt
        );
    }
    out!();
    out!("loads at the attachments (steady part)");
    out!("{:<16} {:>11} {:>11} {:>7}", "support", "static kN", "peak kN", "ratio");
    for l in &r.supports {
        let stat = (l.static_n[0].powi(2) + l.static_n[1].powi(2) + l.static_n[2].powi(2)).sqrt();
        out!(
            "{:<16} {:>11.2} {:>11.2} {:>7.2}",
            l.label,
            stat / 1e3,
            l.peak_magnitude_n / 1e3,
            l.dynamic_ratio
        );
    }
    if let Some(c) = r.conductors.iter().max_by(|a, b| a.share_of_rated.total_cmp(&b.share_of_rated)) {
        out!(
            "highest conductor tension: {:.1} kN in span {} phase {} subconductor {} ({:.1} % of rated strength; static {:.1} kN)",
            c.peak_n / 1e3,
            c.span,
            c.phase,
            c.subconductor,
            100.0 * c.share_of_rated,
            c.static_n / 1e3
        );
    }
    if !r.fatigue.is_empty() {
        out!();
        out!("fatigue of the attachments (rainflow, Miner)");
        out!("{:<16} {:<16} {:>9} {:>12} {:>14}", "curve", "support", "cycles", "damage/h", "hours to 1");
        for f in &r.fatigue {
            out!(
                "{:<16} {:<16} {:>9.1} {:>12.3e} {:>14.3e}",
                f.curve,
                f.support,
                f.cycles,
                f.damage_per_hour,
                f.hours_to_failure
            );
        }
    }
    if !r.clamp_fatigue.is_empty() {
        out!();
        out!("bending stress at the suspension clamps (Poffenberger–Swart, free clamp, static tension; rainflow, Miner)");
        let mut curves: Vec<&str> = r.clamp_fatigue.iter().map(|f| f.curve.as_str()).collect();
        curves.dedup();
        for curve in curves {
            let worst = r.clamp_fatigue.iter().filter(|f| f.curve == curve).max_by(|a, b| {
                a.damage_per_hour
                    .total_cmp(&b.damage_per_hour)
                    .then(a.max_range_mpa.total_cmp(&b.max_range_mpa))
            });
            if let Some(f) = worst {
                out!(
                    "{curve}: worst clamp {} phase {} subconductor {} ({} plane): stress range {:.2} MPa, damage/h {:.3e}, hours to 1 {:.3e}",
                    f.tower,
                    f.phase,
                    f.subconductor,
                    f.plane,
                    f.max_range_mpa,
                    f.damage_per_hour,
                    f.hours_to_failure
                );
            }
        }
    }
    if let Some(captured) = r.modes_captured_share {
        out!();
        out!(
            "motion in the linear modes about the start state (steady part; {:.1} % of the mean ΔᵀMΔ in these modes)",
            100.0 * captured
        );
        out!("{:>4} {:>9} {:>8} {:>10}  {}", "mode", "f Hz", "share %", "peak m", "label");
        for m in r.modes.iter().filter(|m| m.share >= 0.01) {
            out!(
                "{:>4} {:>9.4} {:>8.1} {:>10.4}  {}",
                m.mode,
                m.frequency_hz,
                100.0 * m.share,
                m.peak_displacement_m,
                m.label
            );
        }
    }
    out!();
    for w in &outcome.written {
        out!("wrote {}", w.display());
    }
    out!(
        "clearance search: {} segments, {:.0} segment pairs tested and {:.0} µs per record",
        outcome.clearance_work.0,
        outcome.clearance_work.1,
        1e6 * outcome.clearance_seconds_per_record
    );
    out!("{CAUTION}");
    Ok(())
}
