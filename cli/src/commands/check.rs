//! `glaze check FILE`: validate and summarise.

use glaze_engine::spec::{MeshDensity, StringingTarget};
use glaze_engine::summary::ModelSummary;
use glaze_engine::{input, model, ElementRegistry, GlazeError};
use std::path::Path;

/// `glaze check FILE`.
pub fn check(file: &Path, quiet: bool) -> Result<(), GlazeError> {
    let registry = ElementRegistry::with_builtin();
    let spec = input::load(file, &registry)?;
    super::print_warnings(&spec, quiet);
    let model = model::build(&spec, &registry)?;
    if quiet {
        return Ok(());
    }
    let s = ModelSummary::of(&spec, &model);
    out!("{}: valid", file.display());
    if !spec.title.is_empty() {
        out!("title: {}", spec.title);
    }
    let density = match spec.mesh {
        MeshDensity::ElementsPerSpan(n) => format!("{n} per span"),
        MeshDensity::ElementLength(l) => format!("at most {l} m long"),
    };
    out!(
        "model: {} conductor spans, {} nodes, {} elements, conductors of type `{}` ({density}), {} free DOF, {} supported nodes",
        s.spans.len(),
        s.nodes,
        s.elements,
        spec.element_kind,
        s.dofs,
        s.supports
    );
    if let Some(section) = &spec.section {
        out!(
            "section: {} towers, {} spans, {} phases and earth wires, {} insulator strings, layout `{}` with {} devices",
            section.towers.len(),
            section.span_count(),
            section.phases.len(),
            model.strings.len(),
            section.layout,
            section.devices.len()
        );
        for d in &section.devices {
            out!("  device {}: {}", d.key, d.kind);
        }
    }
    let ice = spec.load_case.ice.map_or("no ice".to_string(), |i| {
        format!("radial ice {:.1} mm at {:.0} kg/m³", i.thickness * 1e3, i.density)
    });
    out!(
        "stringing at {:.1} °C; load case `{}`: {:.1} °C, {ice}",
        spec.stringing_temperature,
        spec.load_case.name,
        spec.load_case.temperature
    );
    out!();
    out!(
        "{:>4}  {:<6} {:<10} {:<10} {:<12} {:>9} {:>8}  {:<22} {:>12} {:>10}",
        "span",
        "wire",
        "from",
        "to",
        "conductor",
        "length m",
        "Δh m",
        "stringing target",
        "conductor kg",
        "ice kg"
    );
    for l in &s.spans {
        let target = match l.target {
            StringingTarget::HorizontalTension(h) => format!("H = {h:.0} N"),
            StringingTarget::Sag(d) => format!("sag = {d:.3} m"),
            StringingTarget::CatenaryParameter(c) => format!("H/w = {c:.1} m"),
        };
        out!(
            "{:>4}  {:<6} {:<10} {:<10} {:<12} {:>9.2} {:>8.2}  {:<22} {:>12.1} {:>10.1}",
            l.route_span + 1,
            l.wire,
            l.supports[0],
            l.supports[1],
            l.conductor,
            l.horizontal_length,
            l.height_difference,
            target,
            l.conductor_mass,
            l.ice_mass
        );
    }
    Ok(())
}
