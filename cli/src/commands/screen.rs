//! `glaze screen FILE`: galloping-onset screening table.

use super::CAUTION;
use glaze_engine::analysis::{run_screening, ScreeningResult};
use glaze_engine::{input, ElementRegistry, GlazeError};
use std::path::Path;

/// Output format of `glaze screen`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum ScreenFormat {
    /// A table for people.
    Table,
    /// One row per mode and wind speed.
    Csv,
    /// The whole result as one JSON document.
    Json,
}

/// Runs the screening of `file` and prints it in `format`.
pub fn run_screen(file: &Path, format: ScreenFormat) -> Result<(), GlazeError> {
    let registry = ElementRegistry::with_builtin();
    let spec = input::load(file, &registry)?;
    super::print_warnings(&spec, false);
    let r = run_screening(&spec, &registry)?;
    match format {
        ScreenFormat::Table => print_table(file, &r),
        ScreenFormat::Csv => print_csv(&r),
        ScreenFormat::Json => out!("{}", json(&r)),
    }
    Ok(())
}

fn speed(u: Option<f64>) -> String {
    u.map_or("—".to_string(), |u| format!("{u:.2}"))
}

fn print_table(file: &Path, r: &ScreeningResult) {
    let speeds: Vec<String> = r.wind_speeds.iter().map(|u| format!("{u:.1}")).collect();
    out!(
        "galloping-onset screening of {}: wind speeds {} m/s, structural damping ξ_s = {:.4}",
        file.display(),
        speeds.join(", "),
        r.structural_damping
    );
    out!("ξ_a: quasi-steady aerodynamic damping ratio at each speed (negative feeds the mode)");
    out!();
    let critical = r.critical();
    out_part!("{:>4} {:>9}  {:<34} {:>9} {:>9}", "mode", "f Hz", "description", "onset m/s", "DH m/s");
    for u in &r.wind_speeds {
        out_part!(" {:>9}", format!("ξ_a@{u:.0}"));
    }
    out!();
    for (i, m) in r.modes.iter().enumerate() {
        let first = &m.at_speed[0];
        let mark = if critical.map(|c| c.0) == Some(i) { " ◀ lowest critical speed" } else { "" };
        out_part!(
            "{:>4} {:>9.4}  {:<34} {:>9} {:>9}",
            m.mode,
            first.frequency_hz,
            first.label,
            speed(m.onset_speed),
            speed(m.den_hartog_speed)
        );
        for s in &m.at_speed {
            out_part!(" {:>9.5}", s.aero_damping);
        }
        out!("{mark}");
    }
    out!();
    if let Some((u, why)) = &r.stopped_at {
        out!("the sweep stops at {u:.1} m/s: no static equilibrium there ({why})");
    }
    match critical {
        Some((i, u)) => out!("lowest critical wind speed: {u:.2} m/s, mode {}", r.modes[i].mode),
        None => out!("no mode reaches galloping onset in the speeds screened"),
    }
    out!("onset: sweep crossing of ξ_s + ξ_a = 0; DH: Den Hartog estimate −ξ_s U/ξ_a from the first state with ξ_a < 0");
    out!("{CAUTION}");
}

fn print_csv(r: &ScreeningResult) {
    out!("mode,wind_speed_m_s,frequency_hz,aero_damping,den_hartog_speed_m_s,mac,label,onset_speed_m_s");
    for m in &r.modes {
        for (s, u) in m.at_speed.iter().zip(&r.wind_speeds) {
            out!(
                "{},{},{},{},{},{},\"{}\",{}",
                m.mode,
                u,
                s.frequency_hz,
                s.aero_damping,
                s.den_hartog_speed.map_or(String::new(), |v| v.to_string()),
                s.mac,
                s.label.replace('"', "'"),
                m.onset_speed.map_or(String::new(), |v| v.to_string())
            );
        }
    }
}

fn json(r: &ScreeningResult) -> serde_json::Value {
    let modes: Vec<serde_json::Value> = r
        .modes
        .iter()
        .map(|m| {
            serde_json::json!({
                "mode": m.mode,
                "onset_speed_m_s": m.onset_speed,
                "den_hartog_speed_m_s": m.den_hartog_speed,
                "at_speed": m.at_speed.iter().zip(&r.wind_speeds).map(|(s, u)| serde_json::json!({
                    "wind_speed_m_s": u,
                    "frequency_hz": s.frequency_hz,
                    "label": s.label,
                    "aero_damping": s.aero_damping,
                    "den_hartog_speed_m_s": s.den_hartog_speed,
                    "mac": s.mac,
                })).collect::<Vec<_>>(),
            })
        })
        .collect();
    serde_json::json!({
        "wind_speeds_m_s": r.wind_speeds,
        "structural_damping": r.structural_damping,
        "critical": r.critical().map(|(i, u)| serde_json::json!({"mode": r.modes[i].mode, "speed_m_s": u})),
        "modes": modes,
        "stopped_at": r.stopped_at.as_ref().map(|(u, why)| serde_json::json!({"speed_m_s": u, "reason": why})),
        "caution": CAUTION,
    })
}
